// vzero progress: Km and Vmax (or kcat) from whole progress curves, fitted globally to the
// traces of one run, beside the initial-rate fit of the same wells.
#include <fmt/format.h>
#include <boost/program_options.hpp>
#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>

#include "cli/commands.hpp"
#include "cli/options.hpp"
#include "core/files.hpp"
#include "vzero/error.hpp"
#include "vzero/progress.hpp"
#include "vzero/progress_report.hpp"
#include "vzero/table.hpp"

namespace vzero::cli {

namespace {

constexpr const char* k_usage = R"(usage: vzero progress RATES.csv --traces TRACES.csv --x COLUMN [--group COL,...]
                 [--enzyme COLUMN | --enzyme-levels COLUMN] [--lead fit|SECONDS] [--product-inhibition]
                 [--x-factor F] [--kcat-per-min] [-o progress.csv] [--residuals FILE]
                 [--stability FILE] [--json FILE] [--report FILE.html]

Fits the integrated Michaelis–Menten equation to every read of every sample well of a
substrate series at once (the closed form through the Lambert W function):
  S(t) = Km·W((S0/Km)·exp((S0 − Vmax·t)/Km)),  product = S0 − S(t) + offset of the well
with Km and Vmax shared by the wells (kcat with --enzyme: Vmax = kcat·[E] per well; one
Vmax per enzyme amount with --enzyme-levels, Km shared), one baseline offset per well,
and t = read time + lead (the reaction started `lead` seconds before time 0; estimated by
default, as ignoring it biases Km; --lead SECONDS fixes it). RATES.csv and TRACES.csv are
the rates table and the --traces table of one `vzero rates` run with a concentration
conversion; S0 is the --x column of the plate map.

Reads used: every ok read of a well from the start of its automatic window (reads before it
were set aside by the rate finder); only the reads the rate finder trusted (used = 1) in
wells noted for outliers, overflow, a disturbed start, a lag or the signal ceiling, or
flagged rising; none of wells flagged saturated, ceiling, too-few-reads, blank-missing,
blank-substrate, no-path, negative or outside-standards (the console lists them).

Beside it, the same group's unflagged initial rates fitted to Michaelis–Menten, as
vzero fit does. --product-inhibition also fits competitive product inhibition (Kp, its
integrated form) and says which model the data support (AIC and a likelihood-ratio test).

Enzyme stability (Selwyn's test, with --enzyme or --enzyme-levels): at each S0 read at two
or more enzyme amounts, product against [E]·t must be one curve while the enzyme keeps its
activity. A nested-model F test (one curve per enzyme level against one for all, up to the
[E]·t every level reaches; generalized least squares for the noise the reads of one time
share, and the scatter between replicate wells as its error when a level has two) and the
[E]·t ratio the lowest level needs to make the same product; p < 0.01 with a ratio above
1.05 prints "[flag: enzyme-unstable]".

Output: a table on stdout (not with -q); -o the tidy CSV (one row per group, method,
model and parameter, each well's offset a row: estimate, SE, 95 % Wald-t and profile-t
intervals, the model-based and the cluster-robust SE (clusters: wells sharing a blank set),
which of the two intervals is printed (the wider), unit, n, df, RSS, residual SD, AIC);
--residuals every read's fitted value and
residual; --stability Selwyn's tests, one row per S0 (F, df, p, the [E]·t ratio, the
flag, the verdict); --json the same fits as one JSON document (the shape of vzero fit --json, with
the model comparison, the initial-rate fit and the stability tests); --report a standalone
HTML page drawing each well's reads and fitted curves. Exit status 0 when a progress fit
succeeded, 1 when none did or the input is bad.

example:
  vzero progress out/rates.csv --traces out/traces.csv --x substrate --group inhibitor_uM

options)";

std::vector<std::string> split_list(const std::vector<std::string>& values) {
  std::vector<std::string> out;
  for (const auto& v : values) {
    std::stringstream in(v);
    for (std::string item; std::getline(in, item, ',');)
      if (!item.empty()) out.push_back(item);
  }
  return out;
}

double number_option(const std::string& name, const std::string& text) {
  try {
    std::size_t used = 0;
    const double v = std::stod(text, &used);
    if (used == text.size() && std::isfinite(v)) return v;
  } catch (const std::exception&) {
  }
  throw UsageError(fmt::format("{} {}: expected a number", name, text));
}

// The traces' concentration unit per unit of the x column: datapackage.json beside the rates
// table records it for the substrate column (vzero.map_column_uses[].factor_to_conc_unit).
double package_x_factor(const std::string& rates_path, const std::string& x) {
  namespace fs = std::filesystem;
  const fs::path pkg_path = fs::path(rates_path).parent_path() / "datapackage.json";
  std::ifstream in(pkg_path, std::ios::binary);
  std::ostringstream text;
  if (in) text << in.rdbuf();
  const nlohmann::json pkg = nlohmann::json::parse(text.str(), nullptr, false);
  if (pkg.is_object() && pkg.contains("vzero") && pkg["vzero"].contains("map_column_uses"))
    for (const auto& u : pkg["vzero"]["map_column_uses"])
      if (u.value("column", "") == x && u.contains("factor_to_conc_unit") && u["factor_to_conc_unit"].is_number())
        return u["factor_to_conc_unit"].get<double>();
  throw InputError(Where{pkg_path.string()},
                   fmt::format("expected the unit factor of column \"{}\" (map_column_uses), found {}", x,
                               in ? "none for that column" : "no datapackage.json"),
                   {"pass --x-factor F (the traces' concentration unit per unit of the --x column; 1 when they "
                    "are the same)"});
}

}  // namespace

int cmd_progress(const Args& args) {
  namespace po = boost::program_options;
  std::string file, traces, x, enzyme, enzyme_levels, lead = "fit", x_factor, role = "sample", output, residuals;
  std::string json, report, stability;
  std::vector<std::string> groups;
  ProgressTableOptions o;
  po::options_description opts(k_usage);
  opts.add_options()("traces", po::value(&traces), "the traces table of the same run (required)")(
      "x", po::value(&x), "initial substrate column (required)")(
      "group", po::value(&groups)->composing(), "fit each combination of these columns separately (COL,COL,...)")(
      "enzyme", po::value(&enzyme), "enzyme concentration column: fit kcat shared by all enzyme levels")(
      "enzyme-levels", po::value(&enzyme_levels), "enzyme amount column: one Vmax per enzyme level, Km shared")(
      "lead", po::value(&lead), "seconds the reaction ran before time 0, or fit (default: fit)")(
      "product-inhibition", "also fit competitive product inhibition (Kp) and compare the models")(
      "x-factor", po::value(&x_factor), "traces' concentration unit per --x unit (default: from datapackage.json)")(
      "role", po::value(&role), "rows to use (default: sample)")(
      "output,o", po::value(&output), "write the tidy fit table here")(
      "residuals", po::value(&residuals), "write each read's fitted value and residual here")(
      "stability", po::value(&stability), "write Selwyn's tests here, one row per S0 (with --enzyme or --enzyme-levels)")(
      "kcat-per-min", "kcat in 1/min (default: 1/s) when the units reduce")(
      "json", po::value(&json), "write the fits as a JSON document here")(
      "report", po::value(&report), "write a standalone HTML page of the fits here")(
      "confidence", po::value(&o.fit.confidence), "level of the intervals (default: 0.95)")(
      "no-profile", "skip the profile-t intervals (faster)")("quiet,q", "do not print the table on stdout")(
      "help,h", "show this help");
  auto vm = parse_with_file(args, opts, file);
  if (vm.count("help")) {
    print_out(help_text(opts));
    return 0;
  }
  if (file.empty()) throw UsageError("expected a RATES.csv (the rates table of a vzero rates run)");
  if (traces.empty()) throw UsageError("--traces TRACES.csv is required: the traces table of the same run");
  if (x.empty()) throw UsageError("--x COLUMN is required: the initial substrate column");
  o.x_column = x;
  o.group_columns = split_list(groups);
  if (!enzyme.empty() && !enzyme_levels.empty())
    throw UsageError("--enzyme (kcat) and --enzyme-levels (Vmax per level) exclude each other; pass one");
  o.enzyme_column = enzyme.empty() ? enzyme_levels : enzyme;
  o.fit.use_enzyme = !enzyme.empty();
  o.fit.vmax_per_level = !enzyme_levels.empty();
  o.fit.fit_lead = lead == "fit";
  if (!o.fit.fit_lead) o.fit.lead_s = number_option("--lead", lead);
  o.both_models = vm.count("product-inhibition") > 0;
  o.kcat_per_min = vm.count("kcat-per-min") > 0;
  if (!stability.empty() && o.enzyme_column.empty())
    throw UsageError("--stability needs --enzyme or --enzyme-levels: Selwyn's test compares enzyme amounts");
  o.fit.profile = vm.count("no-profile") == 0;
  o.role = role;
  {
    std::vector<detail::NamedPath> outs;
    if (!output.empty()) outs.push_back({"-o", output});
    if (!residuals.empty()) outs.push_back({"--residuals", residuals});
    if (!stability.empty()) outs.push_back({"--stability", stability});
    if (!json.empty()) outs.push_back({"--json", json});
    if (!report.empty()) outs.push_back({"--report", report});
    detail::check_outputs({{"the rates table", file}, {"--traces", traces}}, outs);
  }
  o.x_factor = x_factor.empty() ? package_x_factor(file, x) : number_option("--x-factor", x_factor);
  if (auto why = o.validate(); !why.empty()) throw UsageError(why);
  const Table rates_table = read_table(file);
  const Table traces_table = read_table(traces);
  const ProgressTable result = fit_progress_tables(rates_table, traces_table, o);
  if (!output.empty()) write_file_atomic(output, progress_csv(result, enzyme));
  if (!residuals.empty()) write_file_atomic(residuals, progress_residuals_csv(result));
  if (!stability.empty()) write_file_atomic(stability, progress_stability_csv(result));
  if (!json.empty()) write_file_atomic(json, progress_json(result, o, file, traces));
  if (!report.empty()) write_file_atomic(report, progress_report_html(result, o, file, traces));
  if (vm.count("quiet") == 0) print_out(progress_text(result, enzyme));
  for (const auto& g : result.groups)
    if (g.mm.ok) return 0;
  throw InputError(Where{file}, "no progress fit succeeded; the first group's: " +
                                    (result.groups.empty() ? std::string("no wells") : result.groups[0].mm.message),
                   {"see the message of each group in the output"});
}

}  // namespace vzero::cli
