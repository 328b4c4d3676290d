// Internals of the model registry: the built-in models (kinetic_models.cpp).
#pragma once

#include <vector>

#include "vzero/kinetic_model.hpp"

namespace vzero::detail {

// mm, substrate-inhibition, hill, competitive, uncompetitive, mixed: the registry's first six.
std::vector<KineticModel> builtin_kinetic_models();

}  // namespace vzero::detail
