// One parameter estimate as JSON, the shape `vzero fit --json` and `vzero progress --json`
// share: name, estimate, se, wald [low, high], profile [low, high], unit. Internal to the fit
// stage (src/fit).
#pragma once

#include <nlohmann/json.hpp>
#include <string>

#include "vzero/fit.hpp"

namespace vzero::detail {

inline nlohmann::json estimate_json(const ParameterEstimate& e, const std::string& unit) {
  return {{"name", e.name},
          {"estimate", e.estimate},
          {"se", e.se},
          {"wald", {e.ci_low, e.ci_high}},
          {"profile", {e.profile_low, e.profile_high}},
          {"unit", unit}};
}

}  // namespace vzero::detail
