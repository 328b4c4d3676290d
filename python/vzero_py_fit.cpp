// `vzero fit` for the Python module: the same FitTableOptions the command line builds
// (src/cli/cmd_fit.cpp), the same column checks, the same tables as CSV text.
#include <fmt/format.h>
#include <pybind11/stl.h>

#include <map>
#include <string>
#include <vector>

#include "vzero/error.hpp"
#include "vzero/fit.hpp"
#include "vzero/table.hpp"
#include "vzero_py.hpp"

namespace py = pybind11;

namespace vzero::python {

namespace {

struct FitArgs {
  std::string x, y, inhibitor, enzyme, weight = "none", sd, role = "sample";
  std::vector<std::string> groups, models{"mm"};
  std::vector<double> start;
  double confidence = 0.95;
  int max_iterations = 200;
  bool include_flagged = false, profile = true;
  std::map<std::string, std::string> units;
};

std::vector<const KineticModel*> models_named(const std::vector<std::string>& names, bool have_inhibitor) {
  std::vector<const KineticModel*> out;
  const auto add = [&](const KineticModel* m) {
    for (const KineticModel* e : out)
      if (e == m) return;
    out.push_back(m);
  };
  for (const auto& name : names) {
    if (name == "all") {
      for (const KineticModel* m : kinetic_models())
        if (!m->needs_inhibitor() || have_inhibitor) add(m);
      continue;
    }
    const KineticModel* m = find_model(name);
    if (!m) {
      std::string choices;
      for (const KineticModel* k : kinetic_models()) choices += (choices.empty() ? "" : ", ") + k->name;
      throw UsageError(fmt::format("model {}: unknown model; choose {} or all", name, choices));
    }
    if (m->needs_inhibitor() && !have_inhibitor)
      throw UsageError(fmt::format("model {} needs inhibitor=COLUMN (the inhibitor concentration)", name));
    add(m);
  }
  if (out.empty()) out.push_back(&kinetic_model("mm"));
  return out;
}

FitTableOptions table_options(const FitArgs& a) {
  if (a.x.empty()) throw UsageError("x=COLUMN is required: the substrate concentration column");
  FitTableOptions o;
  o.x_column = a.x;
  o.y_column = a.y;
  o.group_columns = a.groups;
  o.inhibitor_column = a.inhibitor;
  o.enzyme_column = a.enzyme;
  o.models = models_named(a.models, !a.inhibitor.empty());
  if (!parse_weighting(a.weight, o.weighting))
    throw UsageError(fmt::format("weight={}: choose none, replicate-sd or relative", a.weight));
  if (!a.sd.empty() && o.weighting != Weighting::replicate_sd)
    throw UsageError("sd is used only with weight=\"replicate-sd\"");
  o.sd_column = a.sd;
  o.include_flagged = a.include_flagged;
  o.role = a.role == "any" ? "" : a.role;
  o.column_units = a.units;
  o.fit.start = a.start;
  o.fit.confidence = a.confidence;
  o.fit.max_iterations = a.max_iterations;
  o.fit.profile = a.profile;
  if (!o.fit.start.empty()) {
    if (o.models.size() != 1) throw UsageError("start needs exactly one model");
    const auto names = o.models.front()->parameter_names();
    if (o.fit.start.size() != names.size())
      throw UsageError(fmt::format("start has {} values; the {} model has {} parameters in this order: {}",
                                   o.fit.start.size(), o.models.front()->name, names.size(),
                                   fmt::format("{}", fmt::join(names, ", "))));
  }
  if (auto why = o.fit.validate(); !why.empty()) throw UsageError(why);
  return o;
}

// The command line's column checks, so a missing column names the argument that chose it.
void check_columns(const Table& table, const FitArgs& a) {
  table.require_column(a.x, "pass x= the substrate concentration column");
  if (!a.y.empty())
    table.require_column(a.y, "pass y= the rate column");
  else if (table.column("v0") < 0 && table.column("v0_mean") < 0)
    table.require_column("v0", "pass y= the rate column (v0 in a rates table, v0_mean in a summary)");
  if (!a.inhibitor.empty()) table.require_column(a.inhibitor, "pass inhibitor= the inhibitor concentration column");
  if (!a.enzyme.empty()) table.require_column(a.enzyme, "pass enzyme= the enzyme concentration column");
  if (!a.sd.empty()) table.require_column(a.sd, "pass sd= the standard deviation column");
  for (const auto& g : a.groups) table.require_column(g, "pass group= existing column names");
}

// Fits the table at `path` (read as `vzero fit` reads it) or, when `path` is empty, the CSV
// `text` named `name` in messages. As the command line: no fit succeeding is an InputError.
py::dict fit_text(const std::string& path, const std::string& name, const std::string& text, const FitArgs& a) {
  FitTableOptions o = table_options(a);
  Table table = path.empty() ? parse_table(name, text) : read_table(path);
  check_columns(table, a);
  TableFit result;
  {
    py::gil_scoped_release release;
    result = fit_table(table, o);
  }
  const GroupFit* first_failure = nullptr;
  bool any_ok = false;
  for (const auto& g : result.fits) {
    any_ok = any_ok || g.result.ok;
    if (!g.result.ok && !first_failure) first_failure = &g;
  }
  if (!any_ok && first_failure)
    throw InputError(
        Where{table.source},
        fmt::format("no fit succeeded; the first ({}): {}", first_failure->model->name, first_failure->result.message),
        {"see the message of each group in the output"});
  py::dict d;
  d["fit"] = py::bytes(fit_csv(result));
  d["json"] = fit_json(result, o);
  d["diagnostics"] = py::bytes(fit_diagnostics_csv(result));
  d["notes"] = result.notes;
  return d;
}

}  // namespace

void add_fit(py::module_& m) {
  m.def(
      "fit_text",
      [](const std::string& path, const std::string& name, const std::string& text, py::dict kw) {
        FitArgs a;
        for (auto [key, value] : kw) {
          const auto k = key.cast<std::string>();
          if (k == "x") a.x = value.cast<std::string>();
          else if (k == "y") a.y = value.cast<std::string>();
          else if (k == "inhibitor") a.inhibitor = value.cast<std::string>();
          else if (k == "enzyme") a.enzyme = value.cast<std::string>();
          else if (k == "weight") a.weight = value.cast<std::string>();
          else if (k == "sd") a.sd = value.cast<std::string>();
          else if (k == "role") a.role = value.cast<std::string>();
          else if (k == "group") a.groups = value.cast<std::vector<std::string>>();
          else if (k == "model") a.models = value.cast<std::vector<std::string>>();
          else if (k == "start") a.start = value.cast<std::vector<double>>();
          else if (k == "confidence") a.confidence = value.cast<double>();
          else if (k == "max_iterations") a.max_iterations = value.cast<int>();
          else if (k == "include_flagged") a.include_flagged = value.cast<bool>();
          else if (k == "profile") a.profile = value.cast<bool>();
          else if (k == "units") a.units = value.cast<std::map<std::string, std::string>>();
          else throw UsageError(fmt::format("fit: unknown argument {}", k));
        }
        return fit_text(path, name, text, a);
      },
      py::arg("path"), py::arg("name"), py::arg("text"), py::arg("options"));
}

}  // namespace vzero::python
