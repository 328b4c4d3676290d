// Checks shared by the tests of kinetic models (fit_test, kinetic_model_test).
#pragma once

#include <cmath>
#include <vector>

#include "test_support.hpp"
#include "vzero/kinetic_model.hpp"

namespace vzero::test {

// Parameter values to probe a model at, from the unit roles: Vmax 12; substrate constants
// 50, 300, ...; inhibitor constants 25, 60, ...; a unitless one the middle value of its grid.
inline std::vector<double> probe_parameters(const KineticModel& m) {
  std::vector<double> p;
  int substrate = 0, inhibitor = 0;
  for (const auto& q : m.parameters) {
    switch (q.unit_role) {
      case UnitRole::rate:
        p.push_back(12);
        break;
      case UnitRole::substrate:
        p.push_back(substrate++ == 0 ? 50 : 300.0 * substrate);
        break;
      case UnitRole::inhibitor:
        p.push_back(inhibitor++ == 0 ? 25 : 60.0 * inhibitor);
        break;
      case UnitRole::none:
        p.push_back(q.grid.at(q.grid.size() / 2));
        break;
    }
  }
  return p;
}

// The analytic gradient against central finite differences, step 1e-6 relative, over a
// spread of substrate and inhibitor levels (as Ceres checks its cost functions).
inline void check_gradient(const KineticModel& m, const std::vector<double>& p) {
  CAPTURE(m.name);
  for (double s : {3.0, 45.0, 700.0}) {
    for (double inh : {0.0, 20.0}) {
      std::vector<double> g(p.size());
      m.rate(p, s, inh, g);
      for (std::size_t k = 0; k < p.size(); ++k) {
        const double h = 1e-6 * p[k];
        auto up = p, down = p;
        up[k] += h;
        down[k] -= h;
        const double fd = (m.rate(up, s, inh, {}) - m.rate(down, s, inh, {})) / (2 * h);
        CAPTURE(k);
        CAPTURE(s);
        CAPTURE(inh);
        if (std::fabs(g[k]) < 1e-12)
          CHECK_ABS(fd, 0.0, 1e-9);
        else
          CHECK_REL(g[k], fd, 1e-6);
      }
    }
  }
}

}  // namespace vzero::test
