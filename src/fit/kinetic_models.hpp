// Internals of the model registry: the built-in models (kinetic_models.cpp).
#pragma once

#include <vector>

#include "vzero/kinetic_model.hpp"

namespace vzero::detail {

// mm, substrate-inhibition, hill, competitive, uncompetitive, mixed, then the dose-response
// models 4pl and morrison (dose_response.cpp): the registry's first eight.
std::vector<KineticModel> builtin_kinetic_models();

}  // namespace vzero::detail
