// vzero report: one self-contained HTML page from the files a run wrote.
#include <fmt/format.h>
#include <boost/program_options.hpp>
#include <filesystem>

#include "cli/commands.hpp"
#include "cli/options.hpp"
#include "vzero/error.hpp"
#include "vzero/report.hpp"
#include "vzero/table.hpp"

namespace vzero::cli {

namespace {

constexpr const char* k_usage = R"(usage: vzero report RUN_FOLDER|rates.csv [--fit FILE]... [--y-scale plate|well]
                    [--title TEXT] [--date TEXT] [-o report.html]
       vzero report --rates rates.csv --package datapackage.json [--traces traces.csv]
                    [--summary summary.csv] [--fit FILE [--diagnostics diag.csv]] ... -o report.html

Writes one HTML file that holds everything it shows (inline styles and SVG drawings; no
script, no font, no image, no link outside the page): it opens offline, from a USB stick,
and prints on A4. `vzero rates ... --report report.html` writes the same page in the same
call as the rates, and `vzero fit ... --report report.html` the run's page with that fit.

Given the folder `vzero rates` wrote into (or its rates.csv), the report reads
datapackage.json there and the rates, traces and summary tables it names, and adds every
fit.json in the folder that records one of those tables as its source. datapackage.json is
required: it records each channel's plate, reaction direction and conversion factor, and
which columns came from the plate map. Without -o the page is RUN_FOLDER/report.html.

The page shows: the run's provenance (inputs with sha256 and what each export says of
itself, profiles, the options that applied, tool version); how many wells carry each
flag and what it means; per export and channel a rate heat map in plate geometry and one
panel per well with the processed trace, the accepted window shaded, its fitted line (or,
for a curving well, the parabola and its initial tangent), the reads left out and the
flags in words (plates above 96 wells show the heat map as the overview and the panels in
blocks of 8 rows x 12 columns; every heat-map cell links to its panel); the standard curve
when one was used; the replicate summary; and per fit the parameter table, v against S
with the fitted curve and its 95 % confidence band, the residuals and a double-reciprocal
diagnostic plot, with the rows the fit left out drawn apart. --fit takes the JSON (vzero
fit --json) or the table (vzero fit -o; it has no covariance, so no band).

Panels share one vertical scale per plate (--y-scale plate, the default: a flat well looks
flat, a scale bar beside each row) or have their own, labelled (--y-scale well).

The page holds no clock time unless --date is given, so the same inputs always give the
same bytes.

example:
  vzero rates run.csv --layout map.csv -o out/rates.csv --traces out/traces.csv --summary out/summary.csv
  vzero fit out/rates.csv --x substrate --json out/fit.json
  vzero report out

options)";

}  // namespace

PanelScale parse_scale(const std::string& text) {
  if (text == "plate") return PanelScale::plate;
  if (text == "well") return PanelScale::well;
  throw UsageError(fmt::format("--y-scale is \"{}\"; expected plate or well", text));
}

int cmd_report(const Args& args) {
  namespace po = boost::program_options;
  ReportFiles given;
  ReportOptions options;
  std::string output, run, scale = "plate";
  po::options_description opts(k_usage);
  opts.add_options()("rates", po::value(&given.rates), "rates table written by vzero rates (instead of RUN_FOLDER)")(
      "traces", po::value(&given.traces), "traces table (vzero rates --traces); without it panels show no curve")(
      "summary", po::value(&given.summary), "replicate summary (vzero rates --summary)")(
      "fit", po::value(&given.fits), "a fit: vzero fit --json or -o output (repeat for several)")(
      "diagnostics", po::value(&given.diagnostics), "diagnostics of the first --fit (vzero fit --diagnostics)")(
      "package", po::value(&given.package), "datapackage.json written beside rates.csv (with --rates)")(
      "y-scale", po::value(&scale), "plate (one scale per plate, default) or well (each panel its own)")(
      "title", po::value(&options.title), "page title (default: \"Run report: \" and the export names)")(
      "date", po::value(&options.date), "text shown as the report's date, e.g. \"2026-03-14\" (default: none)")(
      "output,o", po::value(&output), "the HTML file to write ('-' writes to stdout; default RUN_FOLDER/report.html)")(
      "quiet,q", "print nothing on success")("help,h", "show this help");
  po::options_description hidden;
  hidden.add_options()("run", po::value(&run));
  po::positional_options_description pos;
  pos.add("run", 1);
  po::variables_map vm = parse_command_line(args, opts, hidden, pos);
  if (vm.count("help")) {
    print_out(help_text(opts));
    return 0;
  }
  options.scale = parse_scale(scale);
  ReportFiles files = given;
  if (!run.empty()) {
    if (!given.rates.empty() || !given.package.empty() || !given.traces.empty() || !given.summary.empty())
      throw UsageError("give the run folder or --rates/--package/--traces/--summary, not both");
    files = find_run_files(run);
    if (!given.fits.empty()) files.fits = given.fits;  // the fits named replace the ones found
    files.diagnostics = given.diagnostics;
    if (output.empty()) {
      const std::filesystem::path p(run);
      output = ((std::filesystem::is_directory(p) ? p : p.parent_path()) / "report.html").string();
    }
  } else {
    if (files.rates.empty()) throw UsageError("give the run folder (vzero report RUN_FOLDER) or --rates rates.csv");
    if (files.package.empty())
      throw UsageError("--rates needs --package datapackage.json (written beside it by vzero rates)");
  }
  if (output.empty()) throw UsageError("-o report.html is required with --rates");
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
