// vzero report: one self-contained HTML page from the files a run wrote.
#include <fmt/format.h>
#include <boost/program_options.hpp>

#include "cli/commands.hpp"
#include "cli/options.hpp"
#include "vzero/error.hpp"
#include "vzero/report.hpp"
#include "vzero/table.hpp"

namespace vzero::cli {

namespace {

constexpr const char* k_usage = R"(usage: vzero report --rates rates.csv [--traces traces.csv] [--summary summary.csv]
                    [--fit fit.json] [--diagnostics diag.csv] [--package datapackage.json]
                    [--title TEXT] [--date TEXT] -o report.html

Writes one HTML file that holds everything it shows (inline styles and SVG drawings; no
script, no font, no image, no link outside the page): it opens offline, from a USB stick,
and prints on A4. `vzero rates ... --report report.html` writes the same page in the same
call as the rates.

The page shows: the run's provenance (inputs with sha256, profiles, every option, tool
version; from --package); how many wells carry each flag and what it means; per export
and channel a rate heat map in plate geometry and one panel per well with the processed
trace, the accepted window shaded, its fitted line, the reads left out and the flags in
words (plates above 96 wells show the heat map as the overview and the panels in blocks
of 8 rows x 12 columns; every heat-map cell links to its panel); the standard curve when
one was used; the replicate summary; and with --fit the parameter table, v against S
with the fitted curve and its 95 % confidence band, the residuals and a double-reciprocal
diagnostic plot drawn from the nonlinear estimate (points from --diagnostics, or from
the fitted table when it is the --rates or --summary file).

The page holds no clock time unless --date is given, so the same inputs always give the
same bytes.

example:
  vzero rates run.csv --layout map.csv -o out/rates.csv --traces out/traces.csv --summary out/summary.csv
  vzero fit out/rates.csv --x substrate --json out/fit.json --diagnostics out/diag.csv
  vzero report --rates out/rates.csv --traces out/traces.csv --summary out/summary.csv \
               --fit out/fit.json --diagnostics out/diag.csv --package out/datapackage.json -o out/report.html

options)";

}  // namespace

int cmd_report(const Args& args) {
  namespace po = boost::program_options;
  ReportFiles files;
  ReportOptions options;
  std::string output;
  po::options_description opts(k_usage);
  opts.add_options()("rates", po::value(&files.rates), "rates table written by vzero rates (required)")(
      "traces", po::value(&files.traces), "traces table (vzero rates --traces); without it panels show no curve")(
      "summary", po::value(&files.summary), "replicate summary (vzero rates --summary)")(
      "fit", po::value(&files.fit), "fit results (vzero fit --json)")(
      "diagnostics", po::value(&files.diagnostics), "fit diagnostics (vzero fit --diagnostics): the fitted points")(
      "package", po::value(&files.package), "datapackage.json written beside rates.csv: provenance")(
      "title", po::value(&options.title), "page title (default: \"Run report: \" and the export names)")(
      "date", po::value(&options.date), "text shown as the report's date, e.g. \"2026-03-14\" (default: none)")(
      "output,o", po::value(&output), "the HTML file to write (required; '-' writes to stdout)")(
      "quiet,q", "print nothing on success")("help,h", "show this help");
  po::variables_map vm = parse_command_line(args, opts, {}, {});
  if (vm.count("help")) {
    print_out(help_text(opts));
    return 0;
  }
  if (files.rates.empty()) throw UsageError("--rates rates.csv is required (the table vzero rates wrote)");
  if (output.empty()) throw UsageError("-o report.html is required");
  const std::string html = render_report(read_report_input(files), options);
  if (output == "-") {
    print_out(html);
    return 0;
  }
  write_file_atomic(output, html);
  if (!vm.count("quiet")) print_out(fmt::format("wrote {} ({} bytes)\n", output, html.size()));
  return 0;
}

}  // namespace vzero::cli
