// The progress-curve fit as a standalone HTML page (`vzero progress --report`): per group the
// parameter table (progress curves beside the initial rates), the model comparison and
// Selwyn's tests in words, product against [E]·t per enzyme level, and per well the reads
// (used, and those left out) with the fitted curve. Offline: inline CSS and SVG, no URL.
//
// **Example**:
//   const vzero::ProgressTable t = vzero::fit_progress_tables(rates, traces, o);
//   vzero::write_file_atomic("progress.html", vzero::progress_report_html(t, o, "rates.csv", "traces.csv"));
#pragma once

#include <string>

#include "vzero/progress.hpp"

namespace vzero {

// `source` and `traces` are the paths shown in the header; `title` "" = "Progress curves: " + source.
std::string progress_report_html(const ProgressTable& t, const ProgressTableOptions& o, const std::string& source,
                                 const std::string& traces, const std::string& title = "");

}  // namespace vzero
