// Internals of the run report: the tables of a ReportInput turned into what the page
// draws (plates of wells with their traces, standard curves, fits), and the renderers of
// each section. Only the report stage (src/report/) uses this.
#pragma once

#include <map>
#include <nlohmann/json.hpp>
#include <string>
#include <vector>

#include "vzero/report.hpp"
#include "vzero/run.hpp"
#include "vzero/table.hpp"

namespace vzero::detail::report {

// One well of one plate: its rates.csv row and its trace.
struct WellView {
  std::string name;  // "A1"
  WellId id;
  std::string anchor;  // fragment id of its panel, e.g. "p1-A1"
  std::string role;    // sample, blank, standard, empty
  std::vector<std::string> flags;
  std::vector<std::pair<std::string, std::string>> map_values;  // plate-map columns that have a value
  double v0 = NAN, v0_se = NAN, slope_per_min = NAN, intercept = NAN, r2 = NAN, conversion_pct = NAN;
  double t_start_s = NAN, t_end_s = NAN;
  std::string t_start_text, t_end_text;  // the cells as written in rates.csv
  int n_points = 0, n_outliers = 0;
  std::string tangent;  // "slope" or "parabola"
  int line = 0;         // rates.csv line
  // The trace, as drawn: `y` is the concentration, or the blank-corrected signal in the
  // reaction direction when the channel was not converted.
  std::vector<double> time_s, y, raw;
  std::vector<std::string> status;
  std::vector<char> used;
  double factor = NAN;  // drawn units per signal unit (for the fitted line)

  bool flagged() const;  // any flag other than "empty"
  // The fitted line in drawn units at time t: factor·(intercept + slope·t).
  double line_at(double t_s) const { return factor * (intercept + slope_per_min / 60.0 * t_s); }
};

struct PlateView {
  std::string id;  // "p1", "p2", … in order of first appearance
  std::string source, channel;
  PlateFormat format;
  std::string v0_unit;                  // as in rates.csv ("uM/min")
  std::string y_unit;                   // unit of the drawn trace ("uM" or "AU")
  std::string signal_unit;              // the channel's signal unit ("AU"), from slope_unit
  bool converted = false;               // the trace is a concentration
  double sign = 1;                      // −1 when the reaction makes the signal fall
  std::vector<WellView> wells;          // rates.csv order
  std::map<int, std::size_t> by_index;  // plate index → position in wells
  double t_min_s = 0, t_max_s = 1;      // shared time axis
  bool has_traces = false;
};

struct PageData {
  std::vector<PlateView> plates;
  std::vector<std::string> map_columns;  // rates.csv columns between role and v0
  nlohmann::json package;                // null when not given
  nlohmann::json fit;                    // null when not given
  // Finds the plate of (source, channel); nullptr if none.
  const PlateView* plate(const std::string& source, const std::string& channel) const;
  // The anchor of `well` in the first plate of `channel` that holds it, "" if none.
  std::string anchor_of(const std::string& channel, const std::string& well) const;
};

// Builds the model; InputError for missing columns or bad cells (file:line:column).
PageData build_model(const ReportInput& input);

// j[key] when j is an object holding key, else a null value (never inserts, never throws).
const nlohmann::json& member(const nlohmann::json& j, const char* key);

// "uM" → "µM", "uM/min" → "µM/min" (display only; the files keep ASCII).
std::string display_unit(const std::string& unit);
// "uM/min" → "uM"; "" when there is no "/min".
std::string per_min_stem(const std::string& unit);
// The export names joined for a title ("a.csv, b.csv").
std::string export_names(const PageData& m);

// Section renderers; each returns an HTML fragment.
std::string render_header(const PageData& m, const ReportOptions& o);
std::string render_flags(const PageData& m);
std::string render_plate(const PlateView& p, const ReportOptions& o);
std::string render_standard_curves(const PageData& m);
std::string render_summary(const PageData& m, const Table& summary);
std::string render_fits(const PageData& m, const ReportInput& input);
std::string page_css();

// What each flag word means, in the report's words; "" for an unknown flag.
std::string flag_meaning(const std::string& flag);

}  // namespace vzero::detail::report
