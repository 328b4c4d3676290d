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
  // Thinned to what the panel can show once the plate's time axis is known (thin_plate).
  std::vector<double> time_s, y;
  std::vector<char> read_ok;  // status "ok" (a value was read)
  std::vector<char> used;
  double factor = NAN;  // drawn units per signal unit (for the fitted line): the recorded
                        // conversion factor, 1 when unconverted
  // Taken from every read before thinning: the time of the last used read, and a tangent
  // well's least-squares parabola through its used reads (drawn units, time centred on tm).
  double last_used_s = NAN;
  struct Parabola {
    bool ok = false;
    double tm = 0, c0 = NAN, c1 = NAN, c2 = NAN;
    double at(double t) const { return c0 + c1 * (t - tm) + c2 * (t - tm) * (t - tm); }
  } parabola;

  bool flagged() const;  // any flag other than "empty"
  // A sample well with a flag: its rate is not to be trusted as it stands (blanks,
  // standards and empty wells carry flags that describe them, not a rate in doubt).
  bool distrusted() const {
    return (role == "sample" || role == "full-activity" || role == "no-activity") && flagged();
  }
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
  double factor = NAN;                  // concentration per signal unit; NaN when it varies per well
  std::vector<WellView> wells;          // rates.csv order
  std::map<int, std::size_t> by_index;  // plate index → position in wells
  double t_min_s = 0, t_max_s = 1;      // shared time axis
  bool has_traces = false;
};

// What datapackage.json records about one channel of one export.
struct ChannelFacts {
  std::string source, channel;
  PlateFormat format;
  double sign = 1;         // direction: −1 down
  bool converted = false;  // conversion other than signal-only
  double factor = NAN;     // conc_per_signal; NaN when per well
  std::string signal_unit;
};

// One fit document (fit.json, or a fit table turned into the same shape).
struct FitView {
  nlohmann::json doc;
  std::string source;
  const Table* diagnostics = nullptr;  // the fit's points, when given
  bool from_table = false;             // read from a fit CSV: no covariance, no source lines
};

struct PageData {
  std::vector<PlateView> plates;
  std::vector<ChannelFacts> channels;    // from datapackage.json
  std::vector<std::string> map_columns;  // datapackage.json's map_columns
  nlohmann::json package;
  std::vector<FitView> fits;
  // Finds the plate of (source, channel); nullptr if none.
  const PlateView* plate(const std::string& source, const std::string& channel) const;
  // The anchor of `well` in the first plate of `channel` that holds it, "" if none.
  std::string anchor_of(const std::string& channel, const std::string& well) const;
};

// Builds the model, each well's reads thinned to what its panel shows on `scale`; InputError for missing columns or bad cells (file:line:column).
PageData build_model(const ReportInput& input, PanelScale scale = PanelScale::plate);

// Sets the plate's y unit and time axis from the earliest and latest time drawn (reads and
// windows; ±INFINITY when none).
void set_axes(PlateView& p, double t_lo, double t_hi);
// The page of a model: `summary` and `fits_from` (the input the fits were read with) may be null.
std::string render_page(const PageData& m, const Table* summary, const ReportInput* fits_from,
                        const ReportOptions& options);

// JSON text parsed, or InputError naming `name`.
nlohmann::json parse_json(const std::string& text, const std::string& name);
// Fills m.channels and m.map_columns from m.package; InputError naming `source` for a
// missing or mistyped field.
void read_package(PageData& m, const std::string& source);
// A fit document from fit.json text, or from a fit table (vzero fit -o).
FitView read_fit(const ReportFit& fit);

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
std::string heat_map(const PlateView& p);
// A well's hover text: plate-map entries, v0, window, flags.
std::string tooltip(const PlateView& p, const WellView& w);
std::string render_standard_curves(const PageData& m);
std::string render_summary(const PageData& m, const Table& summary);
std::string render_fits(const PageData& m, const ReportInput& input);
std::string render_fit(const PageData& m, const FitView& fit, const ReportInput& input);
std::string page_css();

// What each flag word means, as HTML (escaped; option names in a span.opt kept on one line);
// "" for an unknown flag.
std::string flag_meaning(const std::string& flag);

}  // namespace vzero::detail::report
