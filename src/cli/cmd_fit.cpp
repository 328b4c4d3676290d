// vzero fit: kinetics fits (Michaelis–Menten and relatives) of a rates or summary table.
#include <fmt/format.h>
#include <algorithm>
#include <boost/program_options.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <map>
#include <nlohmann/json.hpp>
#include <set>
#include <sstream>

#include "cli/commands.hpp"
#include "cli/options.hpp"
#include "core/files.hpp"
#include "vzero/enzymeml.hpp"
#include "vzero/error.hpp"
#include "vzero/fit.hpp"
#include "vzero/fit_settings.hpp"
#include "vzero/report.hpp"
#include "vzero/table.hpp"

namespace vzero::cli {

namespace {

// The usage text; {models} and {model_lines} come from the kinetic-model registry.
constexpr const char* k_usage = R"(usage: vzero fit TABLE.csv --x COLUMN [--y COLUMN] [--group COL,...]
                 [--model {models}|all]
                 [--inhibitor COLUMN] [--enzyme COLUMN [--kcat-per-min]]
                 [--weight none|replicate-sd|relative]
                 [--include-flagged] [--role ROLE] [-o fit.csv] [--json fit.json]
                 [--diagnostics FILE] [--report report.html]

Fits rate laws to initial rates by nonlinear least squares (Levenberg–Marquardt on the
rates themselves, never on a linearised plot). TABLE is a rates table or a summary table
written by vzero rates, or any CSV with a concentration column and a rate column.

Rows used: when the table has a `role` column only rows with --role (default sample);
rows with a non-empty `flags` cell are skipped unless --include-flagged; rows with an empty
x, y (or inhibitor) cell are skipped and counted. Rows at substrate 0 (no-substrate
controls) are kept as points of the curve, where every model gives v = 0: they add to the
residuals and degrees of freedom, not to the parameters; with --weight relative they are
skipped and counted, as 1/v^2 has no weight for a rate near 0. Each combination of the
--group columns is fitted separately.

Models (v rate, S substrate, I inhibitor; all parameters > 0; the dose-response models 4pl
and morrison take x as the inhibitor concentration and y as rate or % activity, with
bottom and top of either sign; --fix holds parameters, e.g. top=100,bottom=0, and gives
morrison's enzyme concentration E in x's unit, or --enzyme COLUMN does):
{model_lines}  all                   the models without an inhibitor, and the inhibition models when
                        --inhibitor is given (not the dose-response models)
--model takes one name or several separated by commas.

Results per group and model: estimate, standard error from s^2 (J'WJ)^-1, 95 % Wald-t and
profile-t intervals, residual SD, df, RSS, AIC (Gaussian log-likelihood form, as R's AIC
for nls: n*(ln 2pi + 1 - ln n + ln RSS) - sum(ln w) + 2(p + 1)), convergence and
iterations; with --enzyme also kcat = Vmax/[E] and kcat/Km (delta-method SE; the profile
interval of kcat/Km from the model refitted with Vmax/Km as a parameter). Units come
from the table (a v0_unit column; "<name>_unit" columns or a unit suffix such as _uM),
else from the datapackage.json beside it (vzero rates gives the substrate --conc-unit there).
kcat is given in 1/s and kcat/Km in 1/s per M (= M^-1 s^-1; --kcat-per-min: 1/min) when the
rate is a molar concentration per time and the enzyme and substrate columns have molar
units; otherwise they keep the table's units and a note says which unit is missing.
Starting values come from a Hanes–Woolf regression of S/v (Hill: a Hill plot) and a coarse
grid; the better converged run is kept. A group that cannot be fitted gets a row with an
empty estimate and a message saying why.

Output: a short table on stdout (not with -q, nor when an output file is '-'); -o writes
the tidy CSV (one row per group x model x parameter), --json the full results (covariance,
correlation, starts, options), --diagnostics the linearised coordinates (1/S, 1/v; S, S/v;
v/S, v) of every point and of the fitted curve. Files are written atomically; '-' writes
that output to stdout instead. --report writes the run's report (vzero report) with this
fit added: the table must sit in the folder vzero rates wrote, beside its datapackage.json.
Exit status 0 when at least one fit succeeded, 1 when none
did (the outputs are still written) or the input is bad, 2 for bad usage.

example:
  vzero fit summary.csv --x substrate --group group --model mm --enzyme enzyme_nM -o fit.csv

options)";

// The usage text with the registered models: their names, and one line each with the formula.
std::string usage() {
  std::string names, lines;
  for (const KineticModel* m : kinetic_models()) {
    names += (names.empty() ? "" : "|") + m->name;
    lines += m->needs_inhibitor() ? fmt::format("  {:<22}{:<44}(needs --inhibitor)\n", m->name, m->formula)
                                  : fmt::format("  {:<22}{}\n", m->name, m->formula);
  }
  return fmt::format(fmt::runtime(k_usage), fmt::arg("models", names), fmt::arg("model_lines", lines));
}

void write_output(const std::string& path, const std::string& content) {
  if (path == "-")
    print_out(content);
  else
    write_file_atomic(path, content);
}

// Units the data package beside the table gives its columns (`vzero rates` writes one next
// to rates.csv; the map's substrate carries --conc-unit there): the fields of the resource
// whose path is this table. No package, an unreadable one, or one that does not list the
// table gives none; the table's own unit columns and name suffixes still apply.
std::map<std::string, std::string> package_units(const std::string& table_path) {
  namespace fs = std::filesystem;
  std::map<std::string, std::string> units;
  const fs::path dir = fs::path(table_path).parent_path();
  std::ifstream in(dir / "datapackage.json", std::ios::binary);
  if (!in) return units;
  std::ostringstream text;
  text << in.rdbuf();
  const nlohmann::json pkg = nlohmann::json::parse(text.str(), nullptr, false);
  if (!pkg.is_object() || !pkg.contains("resources") || !pkg["resources"].is_array()) return units;
  for (const auto& r : pkg["resources"]) {
    if (!r.is_object() || !r.contains("path") || !r["path"].is_string()) continue;
    std::error_code ec;
    if (!fs::equivalent(dir / r["path"].get<std::string>(), table_path, ec) || ec) continue;
    if (!r.contains("schema") || !r["schema"].is_object() || !r["schema"].contains("fields")) continue;
    for (const auto& f : r["schema"]["fields"])
      if (f.is_object() && f.contains("name") && f["name"].is_string() && f.contains("unit") && f["unit"].is_string())
        units[f["name"].get<std::string>()] = f["unit"].get<std::string>();
  }
  return units;
}
// For the dose-response models only (--model 4pl, morrison) and when --x (or --group) is not
// given: the compound concentration (and the compound) the plate map gave, as the
// datapackage.json beside the table records them (vzero.map_column_uses). Said on stderr.
void default_dose_columns(const std::string& table_path, std::vector<GivenOption>& given) {
  bool has_x = false, has_group = false, dose = false, other = false;
  for (const auto& g : given) {
    has_x |= g.name == "x";
    has_group |= g.name == "group";
    if (g.name != "model") continue;
    std::string_view rest = g.text;
    while (!rest.empty()) {
      const std::size_t comma = std::min(rest.find(','), rest.size());
      const std::string_view word = rest.substr(0, comma);
      (word == "4pl" || word == "morrison" ? dose : other) = true;
      rest.remove_prefix(std::min(comma + 1, rest.size()));
    }
  }
  if (has_x || !dose || other) return;
  std::ifstream in(std::filesystem::path(table_path).parent_path() / "datapackage.json", std::ios::binary);
  if (!in) return;
  std::ostringstream text;
  text << in.rdbuf();
  const nlohmann::json pkg = nlohmann::json::parse(text.str(), nullptr, false);
  if (!pkg.is_object() || !pkg.contains("vzero") || !pkg["vzero"].is_object() ||
      !pkg["vzero"].contains("map_column_uses") || !pkg["vzero"]["map_column_uses"].is_array())
    return;
  std::string x, group;
  for (const auto& u : pkg["vzero"]["map_column_uses"]) {
    if (!u.is_object() || !u.contains("column") || !u["column"].is_string() || !u.contains("read_as")) continue;
    if (u["read_as"] == "compound_conc") x = u["column"].get<std::string>();
    if (u["read_as"] == "compound") group = u["column"].get<std::string>();
  }
  if (x.empty()) return;
  given.push_back({"x", x});
  std::string said = fmt::format("x = {}", x);
  if (!has_group && !group.empty()) {
    given.push_back({"group", group});
    said += fmt::format(", group = {}", group);
  }
  print_err(fmt::format("vzero fit: note: {}: the plate map's compound concentration{} as datapackage.json records "
                        "them (--x and --group choose others)",
                        said, has_group || group.empty() ? "" : " and compound"));
}

// The run's report with this fit: the run's tables found beside the fitted table, the fit
// and its points from memory.
void write_report(const std::string& table, const std::string& path, const TableFit& result, const FitTableOptions& o,
                  const std::string& json_path) {
  ReportFiles files = find_run_files(table);
  files.fits.clear();
  ReportInput in = read_report_input(files);
  in.fits.push_back({fit_json(result, o), json_path.empty() || json_path == "-" ? "the fit of this call" : json_path,
                     parse_table("the fit's points", fit_diagnostics_csv(result))});
  write_file_atomic(path, render_report(in));
}

// The command line's options, from the one table of fit options (--help in its order).
void add_fit_options(boost::program_options::options_description& opts) {
  namespace po = boost::program_options;
  for (const FitOptionSpec& o : fit_option_table()) {
    std::string names(o.name);
    if (o.short_name) names += std::string(",") + o.short_name;
    std::string help(o.help);
    if (!o.default_text.empty()) help += fmt::format(" (default: {})", o.default_text);
    if (o.kind == OptionKind::flag)
      opts.add_options()(names.c_str(), help.c_str());
    else if (o.kind == OptionKind::list)
      opts.add_options()(names.c_str(), po::value<std::vector<std::string>>()->composing(), help.c_str());
    else
      opts.add_options()(names.c_str(), po::value<std::string>(), help.c_str());
  }
  opts.add_options()("help,h", "show this help");
}

// What the command line gave, in the table's order (a list's values in the order given).
std::vector<GivenOption> given_fit_options(const boost::program_options::variables_map& vm) {
  std::vector<GivenOption> given;
  for (const FitOptionSpec& o : fit_option_table()) {
    const std::string name(o.name);
    if (!vm.count(name)) continue;
    if (o.kind == OptionKind::flag)
      given.push_back({name, "true"});
    else if (o.kind == OptionKind::list)
      for (const auto& v : vm[name].as<std::vector<std::string>>()) given.push_back({name, v});
    else
      given.push_back({name, vm[name].as<std::string>()});
  }
  return given;
}

// Outputs may not replace the table, the document read, or each other; '-' once at most.
void check_fit_outputs(const std::string& file, const FitSettings& s) {
  const int to_stdout = (s.output == "-") + (s.json == "-") + (s.diagnostics == "-");
  if (to_stdout > 1) throw UsageError("only one of -o, --json and --diagnostics can be '-' (stdout)");
  std::vector<detail::NamedPath> outs;
  if (!s.output.empty() && s.output != "-") outs.push_back({"-o", s.output});
  if (!s.json.empty() && s.json != "-") outs.push_back({"--json", s.json});
  if (!s.diagnostics.empty() && s.diagnostics != "-") outs.push_back({"--diagnostics", s.diagnostics});
  if (!s.report.empty()) outs.push_back({"--report", s.report});
  if (s.enzymeml.empty() != s.enzymeml_from.empty())
    throw UsageError("--enzymeml OUT and --enzymeml-from DOC go together: the fit is added to the document "
                     "vzero rates --enzymeml wrote");
  if (!s.enzymeml.empty()) outs.push_back({"--enzymeml", s.enzymeml});
  std::vector<detail::NamedPath> ins{{"the table", file}};
  if (!s.enzymeml_from.empty()) ins.push_back({"--enzymeml-from", s.enzymeml_from});
  detail::check_outputs(ins, outs);
}

// A note when the table has a `group` column with several values that --group does not name.
void note_ungrouped(const Table& table, const FitTableOptions& o) {
  if (!o.group_columns.empty() || table.column("group") < 0) return;
  std::set<std::string> values;
  for (const auto& row : table.rows) values.insert(row[static_cast<std::size_t>(table.column("group"))]);
  if (values.size() > 1)
    print_err(fmt::format("vzero fit: note: column \"group\" holds {} values and all rows are fitted together; pass "
                          "--group group to fit each group separately",
                          values.size()));
}

}  // namespace

int cmd_fit(const Args& args) {
  namespace po = boost::program_options;
  std::string file;
  po::options_description opts(usage());
  add_fit_options(opts);
  auto vm = parse_with_file(args, opts, file);
  if (vm.count("help")) {
    print_out(help_text(opts));
    return 0;
  }
  if (file.empty()) throw UsageError("expected a TABLE.csv to fit (a rates or summary table)");
  std::vector<GivenOption> given = given_fit_options(vm);
  default_dose_columns(file, given);
  const FitSettings s = resolve_fit_settings(given, Spelling::command_line);
  FitTableOptions o = fit_table_options(s, Spelling::command_line);
  check_fit_outputs(file, s);
  Table table = read_table(file);
  o.column_units = package_units(file);
  // Column checks here, so a missing column names the option that chose it.
  check_fit_columns(table, s, Spelling::command_line);
  note_ungrouped(table, o);

  TableFit result = fit_table(table, o);
  // The document is read and extended before any output is written: a wrong file stops here.
  const std::string enzymeml_text =
      s.enzymeml.empty()
          ? std::string()
          : enzymeml_with_fit(
                detail::read_whole_file(s.enzymeml_from, "pass the document vzero rates --enzymeml wrote").text,
                s.enzymeml_from, result);
  if (!s.output.empty()) write_output(s.output, fit_csv(result));
  if (!s.json.empty()) write_output(s.json, fit_json(result, o));
  if (!s.diagnostics.empty()) write_output(s.diagnostics, fit_diagnostics_csv(result));
  if (!s.report.empty()) write_report(file, s.report, result, o, s.json);
  if (!s.enzymeml.empty()) write_file_atomic(s.enzymeml, enzymeml_text);
  const bool to_stdout = s.output == "-" || s.json == "-" || s.diagnostics == "-";
  if (!to_stdout && !s.quiet) print_out(fit_text(result));

  int ok = 0;
  const GroupFit* first_failure = nullptr;
  for (const auto& g : result.fits) {
    if (g.result.ok)
      ++ok;
    else if (!first_failure)
      first_failure = &g;
  }
  if (ok == 0 && first_failure) {
    throw InputError(
        Where{file},
        fmt::format("no fit succeeded; the first ({}): {}", first_failure->model->name, first_failure->result.message),
        {"see the message of each group in the output"});
  }
  return 0;
}

}  // namespace vzero::cli
