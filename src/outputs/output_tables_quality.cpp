// The plate-quality table's declaration (--plate-quality): one row per plate and channel,
// each column one entry, as for rates.csv (src/outputs/output_tables.cpp, core/columns.hpp).
#include "outputs/output_tables.hpp"

#include "vzero/outputs.hpp"

namespace vzero {

namespace detail {

namespace {

constexpr FieldType number = FieldType::number, integer = FieldType::integer, text = FieldType::string;

using Quality = const QualityRowRef&;

// The control a two-column entry's cell is of: arg 0 full-activity, 1 no-activity.
const ControlStats& control(Quality x, std::size_t i) {
  return i == 0 ? x.channel.controls.full : x.channel.controls.none;
}

// Cell i of the trend columns: p and change of row, column, position, edge in turn.
double trend_cell(const PlateTrends& t, std::size_t i) {
  const Trend* axes[] = {&t.row, &t.column, &t.position, &t.edge};
  const Trend& a = *axes[i / 2];
  return i % 2 ? a.change_pct : a.p;
}

// An entry giving one statistic of both controls: columns NAME_full and NAME_no (`names`).
constexpr QualityEntry both(FieldType type, std::string_view unit, std::string_view description,
                            CellWriter<QualityRowRef> write,
                            const std::vector<std::string>& (*names)(const NoContext&)) {
  return {.name = "", .type = type, .unit = unit, .description = description, .write = write, .each = names};
}

#define VZERO_BOTH(A, B)                                    \
  [](const NoContext&) -> const std::vector<std::string>& { \
    static const std::vector<std::string> v{A, B};          \
    return v;                                               \
  }

constexpr QualityEntry k_quality_columns[] = {
    {"source", text, "", "export file (the plate)",
     [](CsvOut& o, Quality x, std::size_t) { o.field(x.run.run->source); }},
    {"channel", text, "", "channel", [](CsvOut& o, Quality x, std::size_t) { o.field(x.channel.channel->name); }},
    {"v0_unit", text, "", "unit of the controls' v0",
     [](CsvOut& o, Quality x, std::size_t) { o.field(x.channel.v0_unit); }},
    both(
        integer, "", "unflagged control wells used (full-activity, no-activity)",
        [](CsvOut& o, Quality x, std::size_t i) { o.integer(control(x, i).n); }, VZERO_BOTH("n_full", "n_no")),
    both(
        integer, "", "control wells left out: flagged or without a rate",
        [](CsvOut& o, Quality x, std::size_t i) { o.integer(control(x, i).n_flagged); },
        VZERO_BOTH("n_full_left_out", "n_no_left_out")),
    both(
        number, "", "mean v0 of the control's unflagged wells, unit in v0_unit",
        [](CsvOut& o, Quality x, std::size_t i) { o.number(control(x, i).mean); }, VZERO_BOTH("mean_full", "mean_no")),
    both(
        number, "", "sample standard deviation (n − 1) of the control's v0",
        [](CsvOut& o, Quality x, std::size_t i) { o.number(control(x, i).sd); }, VZERO_BOTH("sd_full", "sd_no")),
    both(
        number, "%", "coefficient of variation of the control, 100·sd/|mean|",
        [](CsvOut& o, Quality x, std::size_t i) { o.number(control(x, i).cv_pct); },
        VZERO_BOTH("cv_full_pct", "cv_no_pct")),
    both(
        number, "", "robust: median v0 of the control",
        [](CsvOut& o, Quality x, std::size_t i) { o.number(control(x, i).median); },
        VZERO_BOTH("median_full", "median_no")),
    both(
        number, "", "robust: 1.4826 × the median absolute deviation of the control's v0",
        [](CsvOut& o, Quality x, std::size_t i) { o.number(control(x, i).robust_sd); },
        VZERO_BOTH("robust_sd_full", "robust_sd_no")),
    both(
        number, "%", "robust: 100·robust_sd/|median|",
        [](CsvOut& o, Quality x, std::size_t i) { o.number(control(x, i).robust_cv_pct); },
        VZERO_BOTH("robust_cv_full_pct", "robust_cv_no_pct")),
    {"z_prime", number, "", "Z' = 1 − 3(sd_full + sd_no)/|mean_full − mean_no| (Zhang, Chung & Oldenburg 1999)",
     [](CsvOut& o, Quality x, std::size_t) { o.number(x.quality.z_prime); }},
    {"signal_window", number, "", "(|mean_full − mean_no| − 3(sd_full + sd_no))/sd_full (Iversen et al. 2006)",
     [](CsvOut& o, Quality x, std::size_t) { o.number(x.quality.signal_window); }},
    {"signal_to_background", number, "", "mean_full/mean_no; empty unless mean_no > 0",
     [](CsvOut& o, Quality x, std::size_t) { o.number(x.quality.signal_to_background); }},
    {"robust_z_prime", number, "", "robust: Z' with medians and robust_sd",
     [](CsvOut& o, Quality x, std::size_t) { o.number(x.quality.robust_z_prime); }},
    {"robust_signal_window", number, "", "robust: signal window with medians and robust_sd",
     [](CsvOut& o, Quality x, std::size_t) { o.number(x.quality.robust_signal_window); }},
    {"robust_signal_to_background", number, "", "robust: median_full/median_no; empty unless median_no > 0",
     [](CsvOut& o, Quality x, std::size_t) { o.number(x.quality.robust_signal_to_background); }},
    {.name = "",
     .type = number,
     .unit = "",
     .description = "edge and drift: the controls' v0 (in % of mean_full − mean_no) against row, column, position "
                    "(row-major well index) and edge (outer wells 1, inner 0), one least-squares slope shared by both "
                    "controls: *_p the two-sided t-test p of the slope, *_change_pct the fitted change across the plate "
                    "(activity points); empty when the coordinate does not vary within a control",
     .write = [](CsvOut& o, Quality x, std::size_t i) { o.number(trend_cell(x.trends, i)); },
     .each = [](const NoContext&) -> const std::vector<std::string>& {
       static const std::vector<std::string> v{"trend_row_p",           "trend_row_change_pct",
                                               "trend_column_p",        "trend_column_change_pct",
                                               "trend_position_p",      "trend_position_change_pct",
                                               "trend_edge_p",          "trend_edge_change_pct"};
       return v;
     }},
    {"trend_level", number, "", "a trend with p below this is significant (--trend-level)",
     [](CsvOut& o, Quality x, std::size_t) { o.number(x.trends.level); }},
    {"trends", text, "", "the coordinates with a significant trend, ';'-separated (row, column, position, edge)",
     [](CsvOut& o, Quality x, std::size_t) { o.field(x.trends.significant()); }},
    {"min_z_prime", number, "", "the threshold (--min-z-prime)",
     [](CsvOut& o, Quality x, std::size_t) { o.number(x.quality.min_z_prime); }},
    {"quality", text, "",
     "pass (z_prime ≥ min_z_prime), below-threshold, or undetermined (fewer than 2 unflagged wells of a control, "
     "or equal means)",
     [](CsvOut& o, Quality x, std::size_t) { o.field(to_string(x.quality.verdict)); }},
};
#undef VZERO_BOTH

}  // namespace

std::span<const QualityEntry> quality_declaration() { return k_quality_columns; }

}  // namespace detail

std::vector<FieldSpec> plate_quality_fields() {
  return detail::schema_fields(detail::columns_for(detail::quality_declaration(), detail::NoContext{}));
}

std::string plate_quality_csv(const std::vector<RunAnalysis>& runs, double min_z_prime, double trend_level) {
  const auto columns = detail::columns_for(detail::quality_declaration(), detail::NoContext{});
  detail::CsvOut out;
  detail::write_header(out, columns);
  for (const auto& ra : runs)
    for (const auto& ca : ra.channels) {
      const PlateQuality q = plate_quality(ca.controls.full, ca.controls.none, min_z_prime);
      detail::write_row(out, columns, detail::QualityRowRef{ra, ca, q, channel_trends(ra, ca, trend_level)});
    }
  return out.str();
}

}  // namespace vzero
