// `vzero fit` for the Python module: the options of the one fit option table
// (include/vzero/fit_settings.hpp), the same checks, the same tables as CSV text.
#include <fmt/format.h>
#include <pybind11/stl.h>

#include <map>
#include <string>
#include <vector>

#include "vzero/error.hpp"
#include "vzero/fit.hpp"
#include "vzero/fit_settings.hpp"
#include "vzero/table.hpp"
#include "vzero_py.hpp"

namespace py = pybind11;

namespace vzero::python {

namespace {

// vzero.fit's keywords as the fit option table's options (`_` for `-`; lists one value each,
// booleans as flags; `profile=False` is --no-profile), and `units`.
struct FitArgs {
  FitSettings settings;
  std::map<std::string, std::string> units;
};

std::string number_text(const py::handle& v) {
  if (py::isinstance<py::bool_>(v)) return v.cast<bool>() ? "true" : "false";
  if (py::isinstance<py::int_>(v)) return fmt::format("{}", v.cast<long long>());
  if (py::isinstance<py::float_>(v)) return fmt::format("{}", v.cast<double>());
  return v.cast<std::string>();
}

FitArgs fit_args(const py::dict& kw) {
  FitArgs a;
  std::vector<GivenOption> given;
  for (auto [key, value] : kw) {
    std::string k = key.cast<std::string>();
    if (k == "units") {
      a.units = value.cast<std::map<std::string, std::string>>();
      continue;
    }
    if (k == "profile") {
      given.push_back({"no-profile", value.cast<bool>() ? "false" : "true"});
      continue;
    }
    for (char& c : k)
      if (c == '_') c = '-';
    if (py::isinstance<py::list>(value) || py::isinstance<py::tuple>(value)) {
      for (const auto& item : value) given.push_back({k, number_text(item)});
    } else {
      given.push_back({k, number_text(value)});
    }
  }
  for (const GivenOption& g : given)
    for (const FitOptionSpec& o : fit_option_table())
      if (o.name == g.name && o.output)
        throw UsageError(fmt::format("fit: {} is an output of the command line, not an argument", g.name));
  a.settings = resolve_fit_settings(given, Spelling::keyword);
  return a;
}

// Fits the table at `path` (read as `vzero fit` reads it) or, when `path` is empty, the CSV
// `text` named `name` in messages. As the command line: no fit succeeding is an InputError.
py::dict fit_text(const std::string& path, const std::string& name, const std::string& text, const FitArgs& a) {
  FitTableOptions o = fit_table_options(a.settings, Spelling::keyword);
  o.column_units = a.units;
  Table table = path.empty() ? parse_table(name, text) : read_table(path);
  check_fit_columns(table, a.settings, Spelling::keyword);
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
        const FitArgs a = fit_args(kw);
        return fit_text(path, name, text, a);
      },
      py::arg("path"), py::arg("name"), py::arg("text"), py::arg("options"));
}

}  // namespace vzero::python
