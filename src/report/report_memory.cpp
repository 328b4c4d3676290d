// The report's page model drawn from analyses in memory (vzero rates --report): the plates,
// wells and thinned traces that build_model makes of the tables the run writes, value for
// value, so that both give the same page. Each number is taken as it reads back from the
// tables (shortest round-trip text: the same double; -0 is written "0", a value that is not
// finite an empty cell), each read's drawn value is worked as the traces table's
// `concentration` (or direction × `corrected`), and a cell of text as written (a plate-map
// value that would start a formula with its leading apostrophe).
//
// Memory: a plate is read twice from its analysis, one well at a time. The first pass finds
// each well's drawn extent and the plate's time axis, the second thins each well's reads on
// the plate's scales as soon as they are taken; no more than one well's reads are held.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "core/csv_write.hpp"
#include "core/text.hpp"
#include "report/report_model.hpp"
#include "report/report_panel.hpp"
#include "vzero/error.hpp"
#include "vzero/outputs.hpp"

namespace vzero {

namespace {

using detail::report::PageData;
using detail::report::PlateView;
using detail::report::WellView;
using detail::report::YRange;

// A number as the tables give it back.
double as_written(double v) {
  if (!std::isfinite(v)) return NAN;
  return v == 0 ? 0.0 : v;
}

// A text cell as the tables give it back (read_table trims cells).
std::string text_as_written(const std::string& s) { return detail::starts_formula(s) ? "'" + s : s; }

// The plate's facts as datapackage.json records them (read_package).
PlateView plate_of(const RunAnalysis& run, const ChannelAnalysis& ca, std::size_t number) {
  PlateView p;
  p.id = fmt::format("p{}", number);
  p.source = run.run->source;
  p.channel = ca.channel->name;
  p.v0_unit = ca.v0_unit;
  p.signal_unit = detail::report::per_min_stem(ca.slope_unit);
  p.format.rows = run.run->format.rows;
  p.format.columns = run.run->format.columns;
  p.sign = ca.direction_sign < 0 ? -1 : 1;
  p.converted = ca.conversion.mode != ConvertMode::signal_only;
  const auto& f = ca.conversion.factor;
  const bool uniform = !f.empty() && std::all_of(f.begin(), f.end(), [&](double x) { return x == f.front(); });
  p.factor = uniform && std::isfinite(f.front()) ? std::fabs(f.front()) : NAN;
  return p;
}

// A well's rates row as the report reads it (read_rates).
WellView well_of(const PlateView& p, const RateRow& row, const std::vector<std::string>& map_columns, int line) {
  WellView w;
  w.name = well_name(row.well);
  w.id = row.well;
  w.anchor = p.id + "-" + w.name;
  w.role = std::string(to_string(row.role));
  for (const auto& f : row.flags)
    if (!detail::trim(f).empty()) w.flags.emplace_back(detail::trim(f));
  for (std::size_t k = 0; k < map_columns.size(); ++k) {
    if (!row.info || k >= row.info->values.size()) continue;
    const std::string cell(detail::trim(text_as_written(row.info->values[k])));
    if (!cell.empty()) w.map_values.emplace_back(map_columns[k], cell);
  }
  w.v0 = as_written(row.v0);
  w.v0_se = as_written(row.v0_se);
  w.slope_per_min = as_written(row.slope_per_min);
  w.intercept = as_written(row.rate.intercept);
  w.r2 = as_written(row.rate.r2);
  w.conversion_pct = as_written(row.rate.conversion * 100);
  w.t_start_s = as_written(row.rate.t_start_s);
  w.t_end_s = as_written(row.rate.t_end_s);
  w.t_start_text = format_number(row.rate.t_start_s);
  w.t_end_text = format_number(row.rate.t_end_s);
  w.n_points = row.rate.n_points;
  w.n_outliers = row.rate.n_outliers;
  w.tangent = row.rate.tangent;
  w.line = line;
  w.factor = p.converted ? p.factor : 1;
  return w;
}

// Every read of one well, as the report reads the traces table (TraceRows).
void take_reads(WellView& w, const PlateView& p, const ChannelAnalysis& ca, const RateRow& row) {
  const int j = ca.channel->column_of(row.plate_index);
  const double factor = ca.conversion.factor[static_cast<std::size_t>(j)];
  const int n = ca.channel->reads();
  w.time_s.resize(static_cast<std::size_t>(n));
  w.y.resize(static_cast<std::size_t>(n));
  w.read_ok.resize(static_cast<std::size_t>(n));
  w.used.resize(static_cast<std::size_t>(n));
  for (int i = 0; i < n; ++i) {
    const auto k = static_cast<std::size_t>(i);
    const double raw = ca.blank.corrected(i, j);
    const double corr = as_written(raw);
    w.time_s[k] = as_written(ca.channel->time_s[k]);
    w.read_ok[k] = ca.blank.status(i, j) == ReadStatus::ok;
    w.used[k] = !row.rate.used.empty() && row.rate.used[k] ? 1 : 0;
    if (!p.converted) {
      w.y[k] = p.sign * corr;
      continue;
    }
    const double y = as_written(ca.direction_sign * raw * factor);
    w.y[k] = y;
    // A factor that varies per well (a path per well) is the ratio the trace records.
    if (std::isnan(w.factor) && std::isfinite(y) && std::isfinite(corr) && corr != 0) w.factor = std::fabs(y / corr);
  }
}

void drop_reads(WellView& w) {
  std::vector<double>().swap(w.time_s);
  std::vector<double>().swap(w.y);
  std::vector<char>().swap(w.read_ok);
  std::vector<char>().swap(w.used);
}

// One channel of one export as a plate: wells, then the time axis and shared scale from a
// first pass over the reads, then each well's reads taken again and thinned.
void add_plate(PageData& m, const RunAnalysis& run, const ChannelAnalysis& ca,
               const std::vector<std::string>& map_columns, int& line, PanelScale scale) {
  PlateView p = plate_of(run, ca, m.plates.size() + 1);
  double t0 = INFINITY, t1 = -INFINITY;
  std::vector<double> lows, highs;
  for (const auto& row : ca.rows) {
    WellView w = well_of(p, row, map_columns, ++line);
    take_reads(w, p, ca, row);
    p.has_traces |= !w.time_s.empty();
    for (double t : w.time_s)
      if (std::isfinite(t)) t0 = std::min(t0, t), t1 = std::max(t1, t);
    for (double t : {w.t_start_s, w.t_end_s})
      if (std::isfinite(t)) t0 = std::min(t0, t), t1 = std::max(t1, t);
    const auto [lo, hi] = detail::report::drawn_extent(w);
    if (w.role != "standard" && std::isfinite(lo)) lows.push_back(lo), highs.push_back(hi);
    drop_reads(w);
    p.by_index[p.format.index(w.id)] = p.wells.size();
    p.wells.push_back(std::move(w));
  }
  detail::report::set_axes(p, t0, t1);
  const YRange shared = detail::report::shared_y_range(std::move(lows), std::move(highs));
  const svg::Scale sx{p.t_min_s, p.t_max_s, 0, detail::report::k_panel_w - 6};
  for (std::size_t i = 0; i < ca.rows.size(); ++i) {
    WellView& w = p.wells[i];
    take_reads(w, p, ca, ca.rows[i]);
    detail::report::take_from_all_reads(w);
    detail::report::thin_well(w, sx, shared, scale);
  }
  m.plates.push_back(std::move(p));
}

}  // namespace

RunReport::RunReport(std::vector<std::string> map_columns, ReportOptions options)
    : map_columns_(std::move(map_columns)), options_(std::move(options)), page_(std::make_unique<PageData>()) {
  if (auto why = options_.validate(); !why.empty()) throw UsageError(why);
}

RunReport::~RunReport() = default;
RunReport::RunReport(RunReport&&) noexcept = default;
RunReport& RunReport::operator=(RunReport&&) noexcept = default;

void RunReport::add(const RunAnalysis& run) {
  for (const auto& ca : run.channels) add_plate(*page_, run, ca, map_columns_, line_, options_.scale);
}

std::string RunReport::render(const SummaryTable& summary, const std::string& package_json) const {
  PageData& m = *page_;
  m.package = detail::report::parse_json(package_json, "datapackage.json");
  m.channels.clear();
  m.map_columns.clear();
  detail::report::read_package(m, "datapackage.json");
  // The replicate summary (a row per condition) as its table reads back.
  const Table table = parse_table("summary table", summary_csv(summary));
  return detail::report::render_page(m, &table, nullptr, options_);
}

}  // namespace vzero
