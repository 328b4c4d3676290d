// The run report: one self-contained HTML page (inline CSS and SVG; no script, no font,
// no image and no URL of any kind) that a scientist reads after a run.
//
// It is drawn from plain tables — the files `vzero rates` and `vzero fit` write — and
// from what datapackage.json records (each channel's plate, reaction direction and
// conversion factor, the plate-map columns, the standard-curve points): nothing is guessed,
// so datapackage.json is required. The same renderer serves `vzero rates --report`,
// `vzero report` (files found from the run folder by the names datapackage.json records)
// and `vzero fit --report`; the same inputs give the same bytes.
//
// Contents, in order:
//   - header: exports with their sha256 and the metadata each states (operator, plate id,
//     start time…), profiles, the options that applied (those of a path not taken are
//     named apart), tool version, and the date only when ReportOptions::date is set;
//   - flags: how many wells carry each flag, with what the flag means;
//   - per export and channel: a rate heat map in plate geometry with a colour scale
//     (flagged sample wells marked), and one panel per well of the processed trace
//     (concentration, or the blank-corrected signal in the reaction direction) on the
//     plate's time axis, with the accepted window shaded, its fitted line — for a well
//     whose v0 is the initial tangent, the least-squares parabola through its used reads
//     and the tangent (v0) touching it, the parabola's further reads shaded lighter — the
//     reads used, those left out as outliers and those without a value marked, the flags
//     in words, and an orange frame on a sample well with a flag. Panels share one
//     vertical scale per plate (PanelScale::plate: a scale bar left of each row; wells
//     whose trace leaves it, and standards, get their own, labelled) or each has its own
//     labelled scale (PanelScale::well). Plates above ReportOptions::panel_wells wells show
//     the panels in blocks of block_rows × block_columns; heat-map cells link to panels;
//   - the standard curve of each channel that used one;
//   - the replicate summary table (wells link to their panels);
//   - per fit: the parameter table, v against S with the fitted curve, its pointwise 95 %
//     confidence band (delta method from fit.json's covariance; none from a fit table)
//     and the rows of the group the fit left out drawn apart, the residuals, and the
//     double-reciprocal plot as a diagnostic drawn from the nonlinear estimate.
//
// Structure the tests rely on: every well panel is `<g class="well" id="P-WELL"
// data-well="A1" data-t0-s data-t1-s data-x0 data-x1 data-y-lo data-y-hi data-y0 data-y1>`
// (t0..t1 seconds map to x0..x1, y-lo..y-hi to y0..y1), and its accepted window is
// `<rect class="window" data-t-start-s data-t-end-s>` with the cell text of rates.csv.
//
// **Example**:
//   std::string html = vzero::render_report(vzero::read_report_input(vzero::find_run_files("out")));
//   vzero::write_file_atomic("report.html", html);
#pragma once

#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "vzero/analysis.hpp"
#include "vzero/summary.hpp"
#include "vzero/table.hpp"

namespace vzero {

// One fit to show: the text of fit.json, or of the fit table (`vzero fit -o`; it holds no
// covariance, so its curves are drawn without a band), with the fit's points if known.
struct ReportFit {
  std::string text;
  std::string source;                // its name, for messages
  std::optional<Table> diagnostics;  // `vzero fit --diagnostics`: the fitted points
};

struct ReportInput {
  Table rates;                   // rates table (required): one row per well and channel
  std::optional<Table> traces;   // per-read traces; without it panels show no curve
  // Instead of `traces`, the traces file read row by row while the page is drawn, so that
  // the report's memory grows with the wells, not with the reads (read_report_input sets it).
  std::string traces_file;
  std::optional<Table> summary;  // replicate summary
  std::vector<ReportFit> fits;   // fits, in order
  std::string package_json;      // text of datapackage.json (required: plate, direction, factor, map columns)
  std::string package_source;    // its name, for messages
};

// Paths of the files a run wrote; "" = not given. `rates` and `package` are required.
struct ReportFiles {
  std::string rates, traces, summary, package;
  std::vector<std::string> fits;  // fit.json or fit.csv files
  std::string diagnostics;        // diagnostics of the first fit
};

// Reads the given files. InputError for a file that cannot be read or parsed (CSV shape,
// JSON syntax); column checks happen in render_report.
ReportInput read_report_input(const ReportFiles& files);

// The files of one run, found from its folder or its rates table: datapackage.json beside
// it names the rates, traces and summary tables (its resources, paths relative to it), and
// every fit.json in the folder whose recorded source is one of those tables is a fit
// (sorted by name). InputError when there is no datapackage.json or a table it names is
// missing.
ReportFiles find_run_files(const std::string& folder_or_rates);

// How the panels' vertical axes are scaled.
enum class PanelScale {
  plate,  // one scale for the sample, blank and empty wells of a plate (standards get their own)
  well,   // each panel its own range, with tick labels
};

struct ReportOptions {
  std::string title;       // page title; "" = "vzero run report: " + the export names
  std::string date;        // shown in the header as given; "" = no date (byte-identical reruns)
  int panel_wells = 96;    // plates with more wells get a heat-map overview and panel blocks
  int block_rows = 8;      // rows per panel block on large plates
  int block_columns = 12;  // columns per panel block on large plates
  PanelScale scale = PanelScale::plate;
  // Empty if valid, else e.g. "block_rows is 0; a block needs at least one row".
  std::string validate() const;
};

namespace detail::report {
struct PageData;
}

// The report of a run in memory (`vzero rates --report`), drawn from the analyses, not from
// their tables: add() takes each export's plates from its analysis and thins its reads at
// once to what the panels show, so the caller may drop the reads after it; render() ends
// the page with the replicate summary and the run's datapackage.json text. The page is the
// one render_report draws from the files the same run writes (rates, traces, summary,
// datapackage.json), byte for byte.
class RunReport {
 public:
  // `map_columns` as for rates_csv. UsageError for invalid options.
  explicit RunReport(std::vector<std::string> map_columns, ReportOptions options = {});
  ~RunReport();
  RunReport(RunReport&&) noexcept;
  RunReport& operator=(RunReport&&) noexcept;
  // Exports in the order of the rates table.
  void add(const RunAnalysis& run);
  std::string render(const SummaryTable& summary, const std::string& package_json) const;

 private:
  std::vector<std::string> map_columns_;
  ReportOptions options_;
  std::unique_ptr<detail::report::PageData> page_;
  int line_ = 1;  // the rates table's line of the last well added
};

// The whole page. Throws InputError (file:line:column) when a table lacks a column the
// report needs or holds text where a number must be, or when fit.json / datapackage.json
// lacks a field; UsageError for invalid options.
std::string render_report(const ReportInput& input, const ReportOptions& options = {});

}  // namespace vzero
