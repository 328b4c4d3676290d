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
#include "vzero/error.hpp"
#include "vzero/fit.hpp"
#include "vzero/report.hpp"
#include "vzero/table.hpp"

namespace vzero::cli {

namespace {

// The usage text; {models} and {model_lines} come from the kinetic-model registry.
constexpr const char* k_usage = R"(usage: vzero fit TABLE.csv --x COLUMN [--y COLUMN] [--group COL,...]
                 [--model {models}|all]
                 [--inhibitor COLUMN] [--enzyme COLUMN] [--weight none|replicate-sd|relative]
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
iterations; with --enzyme also kcat = Vmax/[E] and kcat/Km (delta-method SE). Units come
from the table (a v0_unit column; "<name>_unit" columns or a unit suffix such as _uM),
else from the datapackage.json beside it (vzero rates gives the substrate --conc-unit there).
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

std::vector<std::string> split_list(const std::vector<std::string>& values) {
  std::vector<std::string> out;
  for (const auto& v : values) {
    std::size_t start = 0;
    while (start <= v.size()) {
      std::size_t comma = v.find(',', start);
      if (comma == std::string::npos) comma = v.size();
      std::string item = v.substr(start, comma - start);
      while (!item.empty() && item.front() == ' ') item.erase(item.begin());
      while (!item.empty() && item.back() == ' ') item.pop_back();
      if (!item.empty()) out.push_back(item);
      start = comma + 1;
    }
  }
  return out;
}

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

std::vector<const KineticModel*> parse_models(const std::vector<std::string>& names, bool have_inhibitor) {
  std::vector<const KineticModel*> out;
  auto add = [&](const KineticModel* m) {
    for (const KineticModel* e : out)
      if (e == m) return;
    out.push_back(m);
  };
  const std::vector<const KineticModel*> known = kinetic_models();
  for (const auto& name : split_list(names)) {
    if (name == "all") {
      for (const KineticModel* m : known)  // the dose-response models take other data: named only
        if (!m->needs_inhibitor() && !m->dose_response) add(m);
      if (have_inhibitor)
        for (const KineticModel* m : known)
          if (m->needs_inhibitor() && !m->dose_response) add(m);
      continue;
    }
    const KineticModel* m = find_model(name);
    if (!m) {
      std::string choices;
      for (const KineticModel* k : known) choices += (choices.empty() ? "" : ", ") + k->name;
      throw UsageError(fmt::format("--model {}: unknown model; choose {} or all", name, choices));
    }
    if (m->needs_inhibitor() && !have_inhibitor)
      throw UsageError(fmt::format("--model {} needs --inhibitor COLUMN (the inhibitor concentration)", name));
    add(m);
  }
  if (out.empty()) out.push_back(&kinetic_model("mm"));
  return out;
}

// --fix NAME=VALUE,...: every name a parameter of every model fitted.
std::map<std::string, double> parse_fixed(const std::vector<std::string>& items,
                                          const std::vector<const KineticModel*>& models) {
  std::map<std::string, double> out;
  for (const auto& item : items) {
    const std::size_t eq = item.find('=');
    const std::string name = item.substr(0, std::min(eq, item.size()));
    double value = NAN;
    try {
      std::size_t used = 0;
      if (eq == std::string::npos) throw std::invalid_argument(item);
      value = std::stod(item.substr(eq + 1), &used);
      if (used != item.size() - eq - 1) throw std::invalid_argument(item);
    } catch (const std::exception&) {
      throw UsageError(fmt::format("--fix: expected NAME=VALUE (e.g. top=100), found \"{}\"", item));
    }
    for (const KineticModel* m : models) {
      const auto names = m->parameter_names();
      if (std::find(names.begin(), names.end(), name) == names.end())
        throw UsageError(
            fmt::format("--fix {}: the {} model has no parameter {} (its parameters: {}); fit a model "
                        "that has it alone",
                        item, m->name, name, fmt::format("{}", fmt::join(names, ", "))));
    }
    out[name] = value;
  }
  return out;
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

}  // namespace

int cmd_fit(const Args& args) {
  namespace po = boost::program_options;
  std::string file, x, y, inhibitor, enzyme, weight = "none", sd, role = "sample", output, json, diag, report;
  std::vector<std::string> groups, models{"mm"}, start, fix;
  FitOptions fit;
  po::options_description opts(usage());
  opts.add_options()("x", po::value(&x), "substrate concentration column (required)")(
      "y", po::value(&y), "rate column (default: v0, or v0_mean in a summary table)")(
      "group", po::value(&groups)->composing(), "fit each combination of these columns separately (COL,COL,...)")(
      "model", po::value(&models)->composing(), "model(s) to fit, comma-separated, or all (default: mm)")(
      "inhibitor", po::value(&inhibitor), "inhibitor concentration column (for the inhibition models)")(
      "enzyme", po::value(&enzyme), "enzyme concentration column: adds kcat and kcat/Km")(
      "weight", po::value(&weight), "none (default), replicate-sd (1/sd^2) or relative (1/v^2)")(
      "sd", po::value(&sd),
      "SD column for replicate-sd (default: v0_sd for v0_mean; else the SD of replicate rows "
      "at each concentration)")("include-flagged", "also use rows whose flags cell is not empty")(
      "role", po::value(&role), "rows to use when the table has a role column (default: sample; any = all rows)")(
      "output,o", po::value(&output), "write the tidy fit table here ('-' = stdout)")(
      "json", po::value(&json), "write all results as JSON here ('-' = stdout)")(
      "diagnostics", po::value(&diag), "write the linearised-plot table here ('-' = stdout)")(
      "report", po::value(&report), "write the run's HTML report with this fit added (the table's run folder)")(
      "fix", po::value(&fix)->composing(),
      "hold parameters at these values, not estimated: NAME=VALUE,... (e.g. top=100,bottom=0; E for morrison)")(
      "start", po::value(&start)->composing(), "starting values in parameter order, e.g. 200,0.05 (one model only)")(
      "confidence", po::value(&fit.confidence), "level of the intervals (default: 0.95)")(
      "max-iterations", po::value(&fit.max_iterations), "Levenberg–Marquardt iterations per fit (default: 200)")(
      "no-profile", "skip the profile-t intervals (faster)")("quiet,q", "do not print the table on stdout")(
      "help,h", "show this help");
  po::options_description hidden;
  hidden.add_options()("file", po::value(&file));
  po::positional_options_description pos;
  pos.add("file", 1);
  auto vm = parse_command_line(args, opts, hidden, pos);
  if (vm.count("help")) {
    print_out(help_text(opts));
    return 0;
  }
  if (file.empty()) throw UsageError("expected a TABLE.csv to fit (a rates or summary table)");
  if (x.empty()) throw UsageError("--x COLUMN is required: the substrate concentration column");
  FitTableOptions o;
  o.x_column = x;
  o.y_column = y;
  o.group_columns = split_list(groups);
  o.inhibitor_column = inhibitor;
  o.enzyme_column = enzyme;
  o.models = parse_models(models, !inhibitor.empty());
  if (!parse_weighting(weight, o.weighting))
    throw UsageError(fmt::format("--weight {}: choose none, replicate-sd or relative", weight));
  if (!sd.empty() && o.weighting != Weighting::replicate_sd)
    throw UsageError("--sd is used only with --weight replicate-sd");
  o.sd_column = sd;
  o.include_flagged = vm.count("include-flagged") > 0;
  o.role = role == "any" ? "" : role;
  fit.profile = vm.count("no-profile") == 0;
  for (const auto& v : split_list(start)) {
    try {
      std::size_t used = 0;
      fit.start.push_back(std::stod(v, &used));
      if (used != v.size()) throw std::invalid_argument(v);
    } catch (const std::exception&) {
      throw UsageError(fmt::format("--start: cannot read \"{}\" as a number", v));
    }
  }
  if (!fit.start.empty()) {
    if (o.models.size() != 1) throw UsageError("--start needs exactly one --model");
    const auto names = o.models.front()->parameter_names();
    if (fit.start.size() != names.size())
      throw UsageError(fmt::format("--start has {} values; the {} model has {} parameters in this order: {}",
                                   fit.start.size(), o.models.front()->name, names.size(),
                                   fmt::format("{}", fmt::join(names, ", "))));
  }
  fit.fixed = parse_fixed(split_list(fix), o.models);
  o.fit = fit;
  if (auto why = fit.validate(); !why.empty()) throw UsageError(why);
  int to_stdout = (output == "-") + (json == "-") + (diag == "-");
  if (to_stdout > 1) throw UsageError("only one of -o, --json and --diagnostics can be '-' (stdout)");

  {
    std::vector<detail::NamedPath> outs;
    if (!output.empty() && output != "-") outs.push_back({"-o", output});
    if (!json.empty() && json != "-") outs.push_back({"--json", json});
    if (!diag.empty() && diag != "-") outs.push_back({"--diagnostics", diag});
    if (!report.empty()) outs.push_back({"--report", report});
    detail::check_outputs({{"the table", file}}, outs);
  }
  Table table = read_table(file);
  o.column_units = package_units(file);
  // Column checks here, so a missing column names the option that chose it.
  table.require_column(x, "pass --x with the substrate concentration column");
  if (!y.empty())
    table.require_column(y, "pass --y with the rate column");
  else if (table.column("v0") < 0 && table.column("v0_mean") < 0)
    table.require_column("v0", "pass --y with the rate column (v0 in a rates table, v0_mean in a summary)");
  if (!inhibitor.empty()) table.require_column(inhibitor, "pass --inhibitor with the inhibitor concentration column");
  if (!enzyme.empty()) table.require_column(enzyme, "pass --enzyme with the enzyme concentration column");
  if (!sd.empty()) table.require_column(sd, "pass --sd with the standard deviation column");
  for (const auto& g : o.group_columns) table.require_column(g, "pass --group with existing column names");
  if (o.group_columns.empty() && table.column("group") >= 0) {
    std::set<std::string> values;
    for (const auto& row : table.rows) values.insert(row[static_cast<std::size_t>(table.column("group"))]);
    if (values.size() > 1)
      print_err(
          fmt::format("vzero fit: note: column \"group\" holds {} values and all rows are fitted together; pass "
                      "--group group to fit each group separately",
                      values.size()));
  }

  TableFit result = fit_table(table, o);
  if (!output.empty()) write_output(output, fit_csv(result));
  if (!json.empty()) write_output(json, fit_json(result, o));
  if (!diag.empty()) write_output(diag, fit_diagnostics_csv(result));
  if (!report.empty()) write_report(file, report, result, o, json);
  if (to_stdout == 0 && vm.count("quiet") == 0) print_out(fit_text(result));

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
