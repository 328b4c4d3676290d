// The kinetic-model registry, the contract checks on a model object, and the search boxes
// and start grids that follow from each parameter's unit role.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <deque>
#include <mutex>
#include <stdexcept>

#include "core/text.hpp"
#include "fit/kinetic_models.hpp"
#include "vzero/error.hpp"

namespace vzero {

std::string_view to_string(UnitRole role) {
  switch (role) {
    case UnitRole::rate:
      return "rate";
    case UnitRole::substrate:
      return "substrate";
    case UnitRole::inhibitor:
      return "inhibitor";
    case UnitRole::none:
      return "none";
  }
  return "none";
}

bool KineticModel::needs_inhibitor() const {
  return std::any_of(parameters.begin(), parameters.end(),
                     [](const KineticParameter& p) { return p.unit_role == UnitRole::inhibitor; });
}

std::vector<std::string> KineticModel::parameter_names() const {
  std::vector<std::string> names;
  for (const auto& p : parameters) names.push_back(p.name);
  return names;
}

std::size_t KineticModel::substrate_levels_needed() const {
  return static_cast<std::size_t>(std::count_if(parameters.begin(), parameters.end(), [](const KineticParameter& p) {
    return p.unit_role != UnitRole::inhibitor;
  }));
}

namespace {

struct Registry {
  std::mutex lock;
  std::deque<KineticModel> models;  // a deque: registering never moves the others
};

// Why `m` cannot be registered next to `known`, or "".
std::string contract_problem(const KineticModel& m, const std::deque<KineticModel>& known) {
  std::vector<std::string> words = m.aliases;
  words.insert(words.begin(), m.name);
  for (const auto& w : words) {
    if (w.empty()) return "the model has no name";
    if (detail::iequals(w, "all")) return "\"all\" is the --model word for every model; choose another name";
    for (const auto& k : known) {
      if (detail::iequals(w, k.name)) return fmt::format("the name \"{}\" is taken", w);
      for (const auto& a : k.aliases)
        if (detail::iequals(w, a)) return fmt::format("the name \"{}\" is taken (an alias of {})", w, k.name);
    }
  }
  if (m.formula.empty()) return "the formula is empty";
  if (!m.rate) return "the model has no rate function";
  if (m.parameters.size() < 2) return "a model needs at least 2 parameters (Vmax, then the substrate constant)";
  if (m.dose_response && !m.start) return "a dose-response model needs its own start rule";
  if (!m.dose_response && m.parameters[0].unit_role != UnitRole::rate)
    return fmt::format("parameter 1 ({}) must be the limiting rate (unit role rate)", m.parameters[0].name);
  if (!m.dose_response && m.parameters[1].unit_role != UnitRole::substrate)
    return fmt::format("parameter 2 ({}) must be the substrate constant (unit role substrate)", m.parameters[1].name);
  for (std::size_t k = 0; k < m.parameters.size(); ++k) {
    const KineticParameter& p = m.parameters[k];
    if (p.name.empty()) return fmt::format("parameter {} has no name", k + 1);
    for (std::size_t j = 0; j < k; ++j)
      if (m.parameters[j].name == p.name) return fmt::format("two parameters are called {}", p.name);
    if (p.any_sign && p.unit_role != UnitRole::rate)
      return fmt::format("parameter {} may take any sign only with unit role rate", p.name);
    if (!m.dose_response && (p.any_sign || p.known))
      return fmt::format("parameter {}: any_sign and known are for dose-response models", p.name);
    if (k > 0 && p.unit_role == UnitRole::rate && !m.dose_response)
      return fmt::format("parameter {} has unit role rate; only Vmax (the first) may", p.name);
    if (p.unit_role == UnitRole::none &&
        (!(p.lo > 0) || !(p.hi > p.lo) || !std::isfinite(p.hi) || p.grid.empty() ||
         std::any_of(p.grid.begin(), p.grid.end(), [&](double g) { return !(g >= p.lo && g <= p.hi); })))
      return fmt::format(
          "parameter {} has no data unit, so it needs its own search box 0 < lo < hi and grid "
          "values inside it",
          p.name);
  }
  if (m.linearisation) {
    const Linearisation& l = *m.linearisation;
    if (l.method.empty() || l.columns < 1 || !l.row || !l.parameters)
      return "the linearisation needs a method name, columns >= 1, a row and a parameters function";
  }
  return {};
}

Registry& registry() {
  static Registry* r = [] {
    auto* made = new Registry;  // never destroyed: models stay valid during static destruction
    for (auto& m : detail::builtin_kinetic_models()) {
      if (auto why = contract_problem(m, made->models); !why.empty())
        throw std::logic_error("built-in kinetic model " + m.name + ": " + why);
      made->models.push_back(std::move(m));
    }
    return made;
  }();
  return *r;
}

std::string known_names() {
  std::string out;
  for (const KineticModel* m : kinetic_models()) out += (out.empty() ? "" : ", ") + m->name;
  return out;
}

}  // namespace

std::vector<const KineticModel*> kinetic_models() {
  Registry& r = registry();
  std::lock_guard guard(r.lock);
  std::vector<const KineticModel*> out;
  for (const auto& m : r.models) out.push_back(&m);
  return out;
}

const KineticModel* find_model(std::string_view name) {
  for (const KineticModel* m : kinetic_models()) {
    if (detail::iequals(name, m->name)) return m;
    for (const auto& a : m->aliases)
      if (detail::iequals(name, a)) return m;
  }
  return nullptr;
}

const KineticModel& kinetic_model(std::string_view name) {
  if (const KineticModel* m = find_model(name)) return *m;
  throw UsageError(fmt::format("unknown kinetic model \"{}\"; the models are {}", name, known_names()));
}

const KineticModel& register_kinetic_model(KineticModel model) {
  Registry& r = registry();
  std::lock_guard guard(r.lock);
  if (auto why = contract_problem(model, r.models); !why.empty())
    throw UsageError(fmt::format("register_kinetic_model({}): {}", model.name, why));
  r.models.push_back(std::move(model));
  return r.models.back();
}

ParameterBox parameter_bounds(const KineticModel& model, const DataScale& d) {
  // Wide enough never to bind a real optimum; a parameter that reaches one is reported as
  // not determined by the data (e.g. Km → ∞ when the rates never level off).
  constexpr double k_span = 1e6;
  ParameterBox b;
  for (const auto& p : model.parameters) {
    switch (p.unit_role) {
      case UnitRole::rate:
        b.lo.push_back(p.any_sign ? -d.v_max * k_span : d.v_max / k_span), b.hi.push_back(d.v_max * k_span);
        break;
      case UnitRole::substrate:
        b.lo.push_back(d.s_min / k_span), b.hi.push_back(d.s_max * k_span);
        break;
      case UnitRole::inhibitor:
        b.lo.push_back(d.i_min / k_span), b.hi.push_back(d.i_max * k_span);
        break;
      case UnitRole::none:
        b.lo.push_back(p.lo), b.hi.push_back(p.hi);
        break;
    }
  }
  return b;
}

namespace {
std::vector<double> geometric(double from, double to, int count) {
  std::vector<double> g;
  for (int k = 0; k < count; ++k) g.push_back(from * std::pow(to / from, static_cast<double>(k) / (count - 1)));
  return g;
}
}  // namespace

std::vector<std::vector<double>> start_grid_axes(const KineticModel& model, const DataScale& d) {
  std::vector<std::vector<double>> axes;
  for (std::size_t k = 1; k < model.parameters.size(); ++k) {
    const KineticParameter& p = model.parameters[k];
    switch (p.unit_role) {
      case UnitRole::rate:  // not registrable after Vmax; kept for a complete switch
      case UnitRole::substrate:
        axes.push_back(geometric(d.s_min / 10, 10 * d.s_max, 9));
        break;
      case UnitRole::inhibitor:
        axes.push_back(geometric(d.i_min / 10, 10 * d.i_max, 9));
        break;
      case UnitRole::none:
        axes.push_back(p.grid);
        break;
    }
  }
  return axes;
}

}  // namespace vzero
