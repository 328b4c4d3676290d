// vzero fit --enzymeml: the fitted rate laws added to the document vzero rates --enzymeml
// wrote (include/vzero/enzymeml.hpp).
#include <fmt/format.h>

#include <cmath>

#include "core/text.hpp"
#include "enzymeml/enzymeml_parts.hpp"
#include "vzero/enzymeml.hpp"
#include "vzero/error.hpp"
#include "vzero/fit.hpp"

namespace vzero {

namespace {

using detail::Json;

// The reaction's observed species in the document: p1 (signal rises) or c1 (falls).
std::string observed_species(const Json& doc) {
  for (const auto& m : doc.value("small_molecules", Json::array()))
    if (m.value("id", "") == "p1" || m.value("id", "") == "c1") return m.value("id", "");
  return {};
}

// "Km of mm (enzyme_nM = 5)".
std::string fit_label(const TableFit& t, const GroupFit& g) {
  std::string s = g.model->name;
  for (std::size_t k = 0; k < t.group_columns.size(); ++k)
    s += fmt::format("{}{} = {}", k == 0 ? " (" : ", ", t.group_columns[k], g.group_values[k]);
  return t.group_columns.empty() ? s : s + ")";
}

Json rate_law(const TableFit& t, const GroupFit& g, const std::string& species) {
  std::string rhs = g.model->formula;
  if (const auto eq = rhs.find('='); eq != std::string::npos) rhs = std::string(detail::trim(rhs.substr(eq + 1)));
  Json vars = Json::array({{{"id", "s1"}, {"name", "substrate (" + t.x_column + ")"}, {"symbol", "S"}}});
  if (!t.inhibitor_column.empty())
    vars.push_back({{"id", "I"}, {"name", "inhibitor (" + t.inhibitor_column + ")"}, {"symbol", "I"}});
  Json e;
  if (!species.empty()) e["species_id"] = species;
  e["equation"] = rhs;
  e["equation_type"] = "rateLaw";
  e["variables"] = vars;
  return e;
}

void add_parameters(Json& list, const TableFit& t, const GroupFit& g, std::size_t index) {
  const auto& r = g.result;
  std::vector<const ParameterEstimate*> all;
  for (const auto& p : r.parameters) all.push_back(&p);
  for (const auto& p : g.derived) all.push_back(&p);
  for (std::size_t k = 0; k < all.size(); ++k) {
    const ParameterEstimate& p = *all[k];
    Json j;
    j["id"] = detail::id_part(fmt::format("{}_{}_{}", p.name, g.model->name, index + 1));
    j["name"] = p.name + " of " + fit_label(t, g);
    j["symbol"] = p.name;
    if (std::isfinite(p.estimate)) j["value"] = p.estimate;
    if (k < g.units.size() && !g.units[k].empty())
      if (Json u = detail::unit_from_text(g.units[k]); !u.is_null()) j["unit"] = std::move(u);
    if (std::isfinite(p.se)) j["stderr"] = p.se;
    if (k < r.start.size() && std::isfinite(r.start[k])) j["initial_value"] = r.start[k];
    j["constant"] = true;
    list.push_back(std::move(j));
  }
}

}  // namespace

std::string enzymeml_with_fit(const std::string& document, const std::string& document_name, const TableFit& fit) {
  Json doc = Json::parse(document, nullptr, false);
  if (doc.is_discarded() || !doc.is_object() || doc.value("version", "").rfind("2.", 0) != 0 ||
      !doc.contains("reactions") || !doc["reactions"].is_array() || doc["reactions"].empty())
    throw InputError(Where{document_name, 1, 1, ""},
                     "expected the EnzymeML 2 document vzero rates --enzymeml wrote, found another file",
                     {"pass the document of the run the fitted table comes from (vzero rates ... --enzymeml FILE)"});
  const std::string species = observed_species(doc);
  Json equations = doc.value("equations", Json::array());
  Json parameters = doc.value("parameters", Json::array());
  int fitted = 0;
  for (std::size_t i = 0; i < fit.fits.size(); ++i) {
    const GroupFit& g = fit.fits[i];
    if (!g.result.ok) continue;
    ++fitted;
    equations.push_back(rate_law(fit, g, species));
    add_parameters(parameters, fit, g, i);
  }
  if (fitted == 1) doc["reactions"][0]["kinetic_law"] = equations.back();
  doc["equations"] = std::move(equations);
  doc["parameters"] = std::move(parameters);
  doc["description"] = doc.value("description", "") +
                       fmt::format(" vzero fit of {} ({} against {}): {} fitted rate law{} with {} as parameters{}.",
                                   fit.source, fit.y_column, fit.x_column, fitted, fitted == 1 ? "" : "s",
                                   "estimates and standard errors",
                                   fitted == 1   ? ", the reaction's kinetic law"
                                   : fitted == 0 ? ""
                                                 : " (several groups or models: each is an equation, the reaction "
                                                   "has no single kinetic law)");
  return doc.dump(2) + "\n";
}

}  // namespace vzero
