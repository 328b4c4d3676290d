// Internals of the dose-response models (dose_response.cpp): the models the registry lists
// after the kinetic ones, and pIC50 from a fit's IC50.
#pragma once

#include <string>
#include <string_view>
#include <vector>

#include "vzero/fit.hpp"

namespace vzero::detail {

// 4pl (four-parameter logistic) and morrison (tight binding).
std::vector<KineticModel> dose_response_models();

// Molar value of one concentration unit ("uM" → 1e-6), or NaN when `unit` is not molar.
double molar_factor(std::string_view unit);

// pIC50 = −log10(IC50 in M) from a fit with an "IC50" parameter, its unit `x_unit`: SE by the
// delta method (se/(IC50·ln 10)), the Wald-t interval around it, the profile interval mapped
// through −log10. Empty, with `why` saying so, when the unit is not molar or not known.
std::vector<ParameterEstimate> p_ic50(const FitResult& fit, std::string_view x_unit, std::string& why);

}  // namespace vzero::detail
