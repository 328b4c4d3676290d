#include "vzero/report.hpp"

#include <fmt/format.h>

#include "core/files.hpp"
#include "report/report_campaign.hpp"
#include "report/report_model.hpp"
#include "vzero/error.hpp"
#include "vzero/svg.hpp"

namespace vzero {

namespace {

std::string read_text(const std::string& path) {
  return detail::read_whole_file(path, "check the path and that the file is readable").text;
}

// What the page says about itself: how to read it and why it holds no clock time.
std::string about_section() {
  return "<section id=\"about\">\n<h2>About this page</h2>\n<ul class=\"notes\">"
         "<li>One self-contained file: styles and drawings are inline; it loads nothing and runs no script, so it "
         "opens offline and from removable media.</li>"
         "<li>The page carries no clock time unless a date was passed (vzero report --date), so the same inputs give "
         "the same bytes. Checksums above identify the inputs.</li>"
         "<li>Heat-map colours come from a sequential palette whose lightness falls with the rate, readable in grey "
         "and with any colour vision; marks and curves use the colours of Okabe &amp; Ito (2008).</li>"
         "<li>Confidence bands of fitted curves are pointwise 95 % intervals of the mean rate from the fit's "
         "covariance (delta method, Student t with the fit's degrees of freedom). Linearised plots are diagnostics "
         "drawn from the nonlinear estimate, never the estimate itself.</li>"
         "<li>Hover over a well panel or a heat-map cell for its plate-map entries, v0 with its standard error, the "
         "window and the flags.</li>"
         "</ul>\n</section>\n";
}

}  // namespace

std::string ReportOptions::validate() const {
  if (panel_wells < 1) return fmt::format("panel_wells is {}; it must be at least 1", panel_wells);
  if (block_rows < 1) return fmt::format("block_rows is {}; a block needs at least one row", block_rows);
  if (block_columns < 1) return fmt::format("block_columns is {}; a block needs at least one column", block_columns);
  return {};
}

ReportInput read_report_input(const ReportFiles& f) {
  if (f.rates.empty()) throw UsageError("the report needs the rates table (--rates rates.csv, or the run folder)");
  ReportInput in;
  in.rates = read_table(f.rates);
  in.traces_file = f.traces;
  if (!f.summary.empty()) in.summary = read_table(f.summary);
  for (const auto& path : f.fits) in.fits.push_back({read_text(path), path, std::nullopt});
  if (!f.diagnostics.empty()) {
    if (in.fits.empty()) throw UsageError("--diagnostics belongs to a fit: give the fit too (--fit fit.json)");
    in.fits.front().diagnostics = read_table(f.diagnostics);
  }
  if (!f.package.empty()) {
    in.package_json = read_text(f.package);
    in.package_source = f.package;
  }
  return in;
}

std::string render_report(const ReportInput& input, const ReportOptions& options) {
  if (auto why = options.validate(); !why.empty()) throw UsageError(why);
  namespace r = detail::report;
  const r::PageData m = r::build_model(input, options.scale);
  return r::render_page(m, input.summary ? &*input.summary : nullptr, &input, options);
}

namespace detail::report {

std::string render_page(const PageData& m, const Table* summary, const ReportInput* fits_from,
                        const ReportOptions& options) {
  const std::string title = options.title.empty() ? "Run report: " + export_names(m) : options.title;
  std::string h;
  h.reserve(1 << 20);
  h += "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n"
       "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/>\n";
  h += "<meta name=\"generator\" content=\"vzero " + std::string(VZERO_VERSION) + "\"/>\n";
  h += "<title>" + svg::escape(title) + "</title>\n<style>" + page_css() + "</style>\n</head>\n<body>\n<main>\n";
  h += render_header(m, options);
  h += render_flags(m);
  h += render_campaign(campaigns_of(m));  // "" unless several exports hold both controls
  for (const auto& p : m.plates) h += render_plate(p, options);
  h += render_standard_curves(m);
  if (summary)
    h += render_summary(m, *summary);
  else
    h += "<section id=\"summary\">\n<h2>Replicates</h2>\n<p class=\"note\">No summary table was given (pass "
         "--summary).</p>\n</section>\n";
  if (fits_from) h += render_fits(m, *fits_from);
  h += about_section();
  h += "</main>\n</body>\n</html>\n";
  return h;
}

}  // namespace detail::report

}  // namespace vzero
