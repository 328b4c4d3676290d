// The built-in kinetic models, one object each: rate law with analytic gradient, parameters
// with their unit roles, linearisation for starting values. Rate laws as in Cornish-Bowden,
// Fundamentals of Enzyme Kinetics (Kic, Kiu: competitive and uncompetitive inhibition
// constants); the Hill equation as there too.
#include <cmath>

#include "fit/dose_response.hpp"
#include "fit/kinetic_models.hpp"

namespace vzero::detail {

namespace {

using P = std::span<const double>;
using G = std::span<double>;

const KineticParameter k_vmax{"Vmax", UnitRole::rate, "limiting rate at saturating substrate"};
const KineticParameter k_km{"Km", UnitRole::substrate, "substrate concentration at half Vmax"};

// Every Hanes–Woolf form: S/v is linear in the design row (see each model).
Linearisation hanes_woolf(int columns, std::function<void(double s, double i, std::span<double> x)> fill,
                          std::function<std::vector<double>(std::span<const double> b)> back) {
  Linearisation l;
  l.method = "Hanes-Woolf";
  l.columns = columns;
  l.row = [fill](double s, double i, double v, double, std::span<double> x, double& y) {
    y = s / v;
    x[0] = 1.0;
    fill(s, i, x);
    return true;
  };
  l.parameters = [back](std::span<const double> b, double) { return back(b); };
  return l;
}

KineticModel michaelis_menten() {
  KineticModel m;
  m.name = "mm";
  m.aliases = {"michaelis-menten"};
  m.description = "Michaelis-Menten: one substrate, hyperbolic saturation";
  m.formula = "v = Vmax*S/(Km + S)";
  m.parameters = {k_vmax, k_km};
  m.rate = [](P p, double s, double, G g) {
    const double vmax = p[0], km = p[1];
    const double d = km + s;
    if (!g.empty()) {
      g[0] = s / d;
      g[1] = -vmax * s / (d * d);
    }
    return vmax * s / d;
  };
  // S/v = Km/Vmax + S/Vmax.
  m.linearisation = hanes_woolf(
      2, [](double s, double, std::span<double> x) { x[1] = s; },
      [](std::span<const double> b) {
        return std::vector<double>{1 / b[1], b[0] / b[1]};
      });
  return m;
}

KineticModel substrate_inhibition() {
  KineticModel m;
  m.name = "substrate-inhibition";
  m.description = "substrate inhibition: a second substrate molecule binds and blocks (rates fall at high S)";
  m.formula = "v = Vmax*S/(Km + S*(1 + S/Ki))";
  KineticParameter ki{"Ki", UnitRole::substrate, "dissociation constant of the blocking substrate"};
  ki.runaway =
      "no substrate inhibition: Ki runs off to infinity (the rates do not fall at high substrate); fit the "
      "mm model instead";
  m.parameters = {k_vmax, k_km, ki};
  m.rate = [](P p, double s, double, G g) {
    const double vmax = p[0], km = p[1], k_i = p[2];
    const double d = km + s + s * s / k_i;
    if (!g.empty()) {
      g[0] = s / d;
      g[1] = -vmax * s / (d * d);
      g[2] = vmax * s * (s * s) / (k_i * k_i * d * d);
    }
    return vmax * s / d;
  };
  // S/v = Km/Vmax + S/Vmax + S²/(Vmax·Ki).
  m.linearisation = hanes_woolf(
      3, [](double s, double, std::span<double> x) { x[1] = s, x[2] = s * s; },
      [](std::span<const double> b) {
        return std::vector<double>{1 / b[1], b[0] / b[1], b[1] / b[2]};
      });
  m.saturates = false;
  return m;
}

KineticModel hill() {
  KineticModel m;
  m.name = "hill";
  m.description = "Hill: cooperative binding, sigmoid saturation";
  m.formula = "v = Vmax*S^n/(K_half^n + S^n)";
  KineticParameter n{"n", UnitRole::none, "Hill coefficient (cooperativity)"};
  n.lo = 0.05;
  n.hi = 20.0;
  n.grid = {0.5, 0.75, 1.0, 1.5, 2.0, 3.0, 4.0};
  m.parameters = {k_vmax, {"K_half", UnitRole::substrate, "substrate concentration at half Vmax"}, n};
  m.rate = [](P p, double s, double, G g) {
    const double vmax = p[0], km = p[1], hn = p[2];
    if (s <= 0) {
      if (!g.empty()) g[0] = g[1] = g[2] = 0.0;
      return 0.0;
    }
    // Written with r = (K/S)^n so that large n or S do not overflow S^n.
    const double log_ratio = std::log(km / s);
    const double r = std::exp(hn * log_ratio);
    const double d = 1.0 + r;
    if (!g.empty()) {
      g[0] = 1.0 / d;
      g[1] = -vmax * r * hn / (km * d * d);
      g[2] = -vmax * r * log_ratio / (d * d);
    }
    return vmax / d;
  };
  // Hill plot: ln(v/(Vmax₀ − v)) = n·ln S − n·ln K_half, Vmax₀ the data's rate ceiling.
  Linearisation l;
  l.method = "Hill plot";
  l.columns = 2;
  l.row = [](double s, double, double v, double ceiling, std::span<double> x, double& y) {
    if (!(v < ceiling)) return false;
    x[0] = 1.0;
    x[1] = std::log(s);
    y = std::log(v / (ceiling - v));
    return true;
  };
  l.parameters = [](std::span<const double> b, double ceiling) {
    return std::vector<double>{ceiling, std::exp(-b[0] / b[1]), b[1]};
  };
  m.linearisation = l;
  return m;
}

KineticParameter kic(std::string runaway) {
  KineticParameter k{"Kic", UnitRole::inhibitor, "competitive inhibition constant (inhibitor binding free enzyme)"};
  k.runaway = std::move(runaway);
  return k;
}
KineticParameter kiu(std::string runaway) {
  KineticParameter k{"Kiu", UnitRole::inhibitor,
                     "uncompetitive inhibition constant (inhibitor binding the enzyme-substrate complex)"};
  k.runaway = std::move(runaway);
  return k;
}

KineticModel competitive() {
  KineticModel m;
  m.name = "competitive";
  m.description = "competitive inhibition: the inhibitor raises the apparent Km";
  m.formula = "v = Vmax*S/(Km*(1 + I/Kic) + S)";
  m.parameters = {k_vmax, k_km,
                  kic("no competitive inhibition: Kic runs off to infinity (the inhibitor does not raise the apparent "
                      "Km)")};
  m.rate = [](P p, double s, double inh, G g) {
    const double vmax = p[0], km = p[1], k_ic = p[2];
    const double a = 1.0 + inh / k_ic;
    const double d = km * a + s;
    if (!g.empty()) {
      g[0] = s / d;
      g[1] = -vmax * s * a / (d * d);
      g[2] = vmax * s * km * inh / (k_ic * k_ic * d * d);
    }
    return vmax * s / d;
  };
  // S/v = Km/Vmax + Km/(Vmax·Kic)·I + S/Vmax.
  m.linearisation = hanes_woolf(
      3, [](double s, double i, std::span<double> x) { x[1] = i, x[2] = s; },
      [](std::span<const double> b) {
        return std::vector<double>{1 / b[2], b[0] / b[2], b[0] / b[1]};
      });
  return m;
}

KineticModel uncompetitive() {
  KineticModel m;
  m.name = "uncompetitive";
  m.description = "uncompetitive inhibition: the inhibitor lowers the apparent Vmax and Km alike";
  m.formula = "v = Vmax*S/(Km + S*(1 + I/Kiu))";
  m.parameters = {k_vmax, k_km,
                  kiu("no uncompetitive inhibition: Kiu runs off to infinity (the inhibitor does not lower the "
                      "apparent Vmax)")};
  m.rate = [](P p, double s, double inh, G g) {
    const double vmax = p[0], km = p[1], k_iu = p[2];
    const double d = km + s * (1.0 + inh / k_iu);
    if (!g.empty()) {
      g[0] = s / d;
      g[1] = -vmax * s / (d * d);
      g[2] = vmax * s * s * inh / (k_iu * k_iu * d * d);
    }
    return vmax * s / d;
  };
  // S/v = Km/Vmax + S/Vmax + S·I/(Vmax·Kiu).
  m.linearisation = hanes_woolf(
      3, [](double s, double i, std::span<double> x) { x[1] = s, x[2] = s * i; },
      [](std::span<const double> b) {
        return std::vector<double>{1 / b[1], b[0] / b[1], b[1] / b[2]};
      });
  return m;
}

KineticModel mixed() {
  KineticModel m;
  m.name = "mixed";
  m.description = "mixed inhibition: competitive and uncompetitive parts together";
  m.formula = "v = Vmax*S/(Km*(1 + I/Kic) + S*(1 + I/Kiu))";
  m.parameters = {
      k_vmax, k_km,
      kic("Kic runs off to infinity: the inhibition has no competitive part; fit the uncompetitive model instead"),
      kiu("Kiu runs off to infinity: the inhibition has no uncompetitive part; fit the competitive model instead")};
  m.rate = [](P p, double s, double inh, G g) {
    const double vmax = p[0], km = p[1], k_ic = p[2], k_iu = p[3];
    const double a = 1.0 + inh / k_ic;
    const double d = km * a + s * (1.0 + inh / k_iu);
    if (!g.empty()) {
      g[0] = s / d;
      g[1] = -vmax * s * a / (d * d);
      g[2] = vmax * s * km * inh / (k_ic * k_ic * d * d);
      g[3] = vmax * s * s * inh / (k_iu * k_iu * d * d);
    }
    return vmax * s / d;
  };
  // S/v = Km/Vmax + Km/(Vmax·Kic)·I + S/Vmax + S·I/(Vmax·Kiu).
  m.linearisation = hanes_woolf(
      4, [](double s, double i, std::span<double> x) { x[1] = i, x[2] = s, x[3] = s * i; },
      [](std::span<const double> b) {
        return std::vector<double>{1 / b[2], b[0] / b[2], b[0] / b[1], b[2] / b[3]};
      });
  return m;
}

}  // namespace

std::vector<KineticModel> builtin_kinetic_models() {
  std::vector<KineticModel> out{michaelis_menten(), substrate_inhibition(), hill(),
                                competitive(),      uncompetitive(),        mixed()};
  for (auto& m : dose_response_models()) out.push_back(std::move(m));
  return out;
}

}  // namespace vzero::detail
