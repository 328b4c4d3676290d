// Data shared by the fit tests (fit_test, fit_table_test): Puromycin, Misra1d, and noiseless
// curves of a registered model.
#pragma once

#include <map>
#include <string>
#include <string_view>
#include <vector>

#include "vzero/kinetic_model.hpp"

namespace vzero::test {

// A built-in model by its CLI word.
inline const vzero::KineticModel& builtin(std::string_view name) { return vzero::kinetic_model(name); }

// R datasets::Puromycin (Treloar 1974, as given by Bates & Watts 1988, Nonlinear
// Regression Analysis and Its Applications, Appendix A1.3). conc ppm, rate counts/min/min.
inline const std::vector<double> puro_treated_S = {0.02, 0.02, 0.06, 0.06, 0.11, 0.11, 0.22, 0.22, 0.56, 0.56, 1.10, 1.10};
inline const std::vector<double> puro_treated_v = {76, 47, 97, 107, 123, 139, 159, 152, 191, 201, 207, 200};
inline const std::vector<double> puro_untreated_S = {0.02, 0.02, 0.06, 0.06, 0.11, 0.11, 0.22, 0.22, 0.56, 0.56, 1.10};
inline const std::vector<double> puro_untreated_v = {67, 51, 84, 86, 98, 115, 131, 124, 144, 158, 160};

// NIST StRD nonlinear regression Misra1d (as shipped in Eigen 3.4.0's
// unsupported/test/levenberg_marquardt.cpp): y = b1*b2*x/(1 + b2*x) = Vmax*S/(Km + S).
inline const std::vector<double> misra1d_x = {77.6,  114.9, 141.1, 190.8, 239.9, 289.0, 332.8,
                                              378.4, 434.8, 477.3, 536.8, 593.1, 689.1, 760.0};
inline const std::vector<double> misra1d_y = {10.07, 14.73, 17.94, 23.93, 29.61, 35.18, 40.02,
                                              44.82, 50.76, 55.05, 61.01, 66.40, 75.47, 81.78};

struct Truth {
  const vzero::KineticModel& model;
  std::vector<double> p;
  std::map<std::string, double> fixed = {};  // known quantities (morrison's E)
};

inline void make_data(const Truth& t, std::vector<double>& s, std::vector<double>& i, std::vector<double>& v) {
  const std::vector<double> s_levels = {2.5, 5, 10, 20, 40, 80, 160, 320, 640, 1280};
  const std::vector<double> i_levels =
      t.model.needs_inhibitor() ? std::vector<double>{0, 10, 30, 90} : std::vector<double>{0};
  for (double il : i_levels) {
    for (double sl : s_levels) {
      s.push_back(sl);
      i.push_back(il);
      v.push_back(t.model.rate(t.p, sl, il, {}));
    }
  }
}

}  // namespace vzero::test
