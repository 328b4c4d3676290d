// rates.csv, the traces and the summary: each table's columns declared once, in order. An
// entry's lambda writes that column's cell of one row; header, rows and Table Schema all
// come from the list (core/columns.hpp).
#include "outputs/output_tables.hpp"

#include <cmath>

#include "core/text.hpp"
#include "vzero/outputs.hpp"

namespace vzero {

namespace detail {

namespace {

constexpr FieldType text = FieldType::string, number = FieldType::number, integer = FieldType::integer;

// The plate-map columns vzero reads as numbers; the others pass through as text.
FieldType map_column_type(std::string_view name) {
  return iequals(name, "substrate") || iequals(name, "standard_conc") ? number : text;
}

// The well name as well_name() gives it, written without a string.
void write_well(CsvOut& o, WellId w) {
  o.field(row_label(w.row));
  o.integer(w.column + 1);
}

using Rate = const RateRowRef&;

// A sample's or control's activity relative to its plate's controls (NaN otherwise).
double activity_pct(Rate x) { return rated_as_sample(x.row.role) ? x.channel.controls.activity_pct(x.row.v0) : NAN; }

constexpr RateEntry k_rate_columns[] = {
    {"source", text, "", "export file the well was read from",
     [](CsvOut& o, Rate x, std::size_t) { o.field(x.run.run->source); }},
    {"channel", text, "", "channel (wavelength pair or read name)",
     [](CsvOut& o, Rate x, std::size_t) { o.field(x.channel.channel->name); }},
    {"well", text, "", "well name, ANSI/SLAS 4-2004 row letter and column number",
     [](CsvOut& o, Rate x, std::size_t) { write_well(o, x.row.well); }},
    {"row", text, "", "row letter", [](CsvOut& o, Rate x, std::size_t) { o.field(row_label(x.row.well.row)); }},
    {"column", integer, "", "column number", [](CsvOut& o, Rate x, std::size_t) { o.integer(x.row.well.column + 1); }},
    {"role", text, "", "sample, blank, standard, empty, full-activity or no-activity (from the plate map)",
     [](CsvOut& o, Rate x, std::size_t) { o.field(to_string(x.row.role)); }},
    {.name = "",
     .type = text,
     .unit = "",
     .description = "plate-map column, passed through",
     .write =
         [](CsvOut& o, Rate x, std::size_t i) {
           if (x.row.info && i < x.row.info->values.size()) o.field(x.row.info->values[i]);
         },
     .each = [](const RatesContext& c) -> const std::vector<std::string>& { return c.map_columns; },
     .type_of = map_column_type},
    {"v0", number, "", "initial rate in the reaction direction, unit in v0_unit",
     [](CsvOut& o, Rate x, std::size_t) { o.number(x.row.v0); }},
    {"v0_se", number, "", "standard error of v0, unit in v0_unit",
     [](CsvOut& o, Rate x, std::size_t) { o.number(x.row.v0_se); }},
    {"v0_unit", text, "", "unit of v0 (concentration or signal per minute)",
     [](CsvOut& o, Rate x, std::size_t) { o.field(x.channel.v0_unit); }},
    {.name = "activity_pct",
     .type = number,
     .unit = "%",
     .description = "100·(v0 − no-activity mean)/(full-activity mean − no-activity mean), the plate's and channel's "
                    "unflagged controls; samples and controls, empty without both controls",
     .write = [](CsvOut& o, Rate x, std::size_t) { o.number(activity_pct(x)); },
     .when = [](const RatesContext& c) { return c.screen.normalised; }},
    {.name = "inhibition_pct",
     .type = number,
     .unit = "%",
     .description = "100 − activity_pct",
     .write = [](CsvOut& o, Rate x, std::size_t) { o.number(100 - activity_pct(x)); },
     .when = [](const RatesContext& c) { return c.screen.normalised; }},
    {.name = "robust_z",
     .type = number,
     .unit = "",
     .description = "samples: (v0 − median)/(1.4826·MAD) of the plate's and channel's unflagged sample v0; empty for "
                    "other roles and when the MAD is 0",
     .write =
         [](CsvOut& o, Rate x, std::size_t) {
           if (x.row.role == Role::sample) o.number(x.channel.controls.robust_z(x.row.v0));
         },
     .when = [](const RatesContext& c) { return c.screen.normalised; }},
    {.name = "hit",
     .type = text,
     .unit = "",
     .description = "yes when an unflagged sample's inhibition_pct is at or above --hit-threshold, else no; empty for "
                    "controls, flagged wells and plates without both controls",
     .write =
         [](CsvOut& o, Rate x, std::size_t) {
           const double inhibition = 100 - activity_pct(x);
           if (x.row.role == Role::sample && x.row.flags.empty() && std::isfinite(inhibition))
             o.field(inhibition >= x.hit_threshold_pct ? "yes" : "no");
         },
     .when = [](const RatesContext& c) { return c.screen.hits(); }},
    {"slope", number, "", "blank-corrected signal slope over the window, unit in slope_unit",
     [](CsvOut& o, Rate x, std::size_t) { o.number(x.row.slope_per_min); }},
    {"slope_unit", text, "", "unit of slope (signal per minute)",
     [](CsvOut& o, Rate x, std::size_t) { o.field(x.channel.slope_unit); }},
    {"intercept", number, "", "fitted signal at t = 0 s, signal units",
     [](CsvOut& o, Rate x, std::size_t) { o.number(x.row.rate.intercept); }},
    {"r2", number, "", "coefficient of determination of the straight line over the window",
     [](CsvOut& o, Rate x, std::size_t) { o.number(x.row.rate.r2); }},
    {"n_points", integer, "", "reads in the window, outliers included",
     [](CsvOut& o, Rate x, std::size_t) { o.integer(x.row.rate.n_points); }},
    {"n_outliers", integer, "", "reads in the window rejected as outliers",
     [](CsvOut& o, Rate x, std::size_t) { o.integer(x.row.rate.n_outliers); }},
    {"t_start_s", number, "s", "time of the window's first read",
     [](CsvOut& o, Rate x, std::size_t) { o.number(x.row.rate.t_start_s); }},
    {"t_end_s", number, "s", "time of the window's last read",
     [](CsvOut& o, Rate x, std::size_t) { o.number(x.row.rate.t_end_s); }},
    {"conversion_pct", number, "%", "percent of the well's substrate converted by the window's end",
     [](CsvOut& o, Rate x, std::size_t) { o.number(x.row.rate.conversion * 100); }},
    {"estimator", text, "", "slope estimator: theil-sen, ols or huber",
     [](CsvOut& o, Rate x, std::size_t) { o.field(to_string(x.row.rate.estimator)); }},
    {"flags", text, "", "';'-separated reasons to distrust the rate; empty when clean",
     [](CsvOut& o, Rate x, std::size_t) { o.joined(x.row.flags, ';'); }},
    {"notes", text, "",
     "';'-separated corrections made on the way to v0 (lag skipped, outliers removed, overflow or ceiling reads left "
     "out)",
     [](CsvOut& o, Rate x, std::size_t) { o.joined(x.row.notes, ';'); }},
    {"v0_ci_low", number, "", "lower end of the 95 % interval of v0, unit in v0_unit",
     [](CsvOut& o, Rate x, std::size_t) { o.number(x.row.v0_ci_low); }},
    {"v0_ci_high", number, "", "upper end of the 95 % interval of v0, unit in v0_unit",
     [](CsvOut& o, Rate x, std::size_t) { o.number(x.row.v0_ci_high); }},
    {"window", text, "", "how the window was chosen: auto, leading or steepest",
     [](CsvOut& o, Rate x, std::size_t) { o.field(to_string(x.row.rate.window)); }},
    {"tangent", text, "", "which estimate v0 is (slope of the line, or an initial tangent)",
     [](CsvOut& o, Rate x, std::size_t) { o.field(x.row.rate.tangent); }},
    {"window_end", text, "",
     "what ended the window: curvature, conversion, ceiling, overflow, reads (ran out) or fixed (leading, "
     "steepest)",
     [](CsvOut& o, Rate x, std::size_t) { o.field(x.row.rate.window_end); }},
    {"lag_s", number, "s", "time skipped at the start as a lag (0 when none)",
     [](CsvOut& o, Rate x, std::size_t) { o.number(x.row.rate.lag_s); }},
    {"disturbed_reads", integer, "", "first reads set aside as a disturbed start (0 when none)",
     [](CsvOut& o, Rate x, std::size_t) { o.integer(x.row.rate.disturbed_reads); }},
    {"blank_wells", text, "",
     "blank wells subtracted, ';'-separated; a rectangle of 3 or more as its corners (A45:AF48 = rows A to AF, columns "
     "45 to 48)",
     [](CsvOut& o, Rate x, std::size_t) {
       o.field(x.channel.blank.wells[static_cast<std::size_t>(x.channel.channel->column_of(x.row.plate_index))]
                   .blank_wells);
     }},
    {"blank_rate", number, "", "the blank's rate, unit in slope_unit (subtracted in rate mode)",
     [](CsvOut& o, Rate x, std::size_t) { o.number(x.row.blank_rate_per_min); }},
    {"path_cm", number, "cm", "optical path length used for Beer–Lambert",
     [](CsvOut& o, Rate x, std::size_t) { o.number(x.row.path_cm); }},
    {.name = "activity_U",
     .type = number,
     .unit = "U",
     .description = "enzyme activity in the well, µmol/min",
     .write = [](CsvOut& o, Rate x, std::size_t) { o.number(x.row.activity_u); },
     .when = [](const RatesContext& c) { return c.with_activity; }},
    {.name = "activity_nkat",
     .type = number,
     .unit = "nkat",
     .description = "enzyme activity in the well, nmol/s",
     .write = [](CsvOut& o, Rate x, std::size_t) { o.number(x.row.activity_u * k_nkat_per_unit); },
     .when = [](const RatesContext& c) { return c.with_activity; }},
    {.name = "specific_activity_U_per_mg",
     .type = number,
     .unit = "U/mg",
     .description = "activity per mg of enzyme",
     .write = [](CsvOut& o, Rate x, std::size_t) { o.number(x.row.specific_activity); },
     .when = [](const RatesContext& c) { return c.with_specific; }},
};

using Trace = const TraceRowRef&;

constexpr TraceEntry k_trace_columns[] = {
    {"source", text, "", "export file", [](CsvOut& o, Trace x, std::size_t) { o.field(x.run.run->source); }},
    {"channel", text, "", "channel", [](CsvOut& o, Trace x, std::size_t) { o.field(x.channel.channel->name); }},
    {"well", text, "", "well name", [](CsvOut& o, Trace x, std::size_t) { write_well(o, x.row.well); }},
    {"time_s", number, "s", "read time",
     [](CsvOut& o, Trace x, std::size_t) { o.number(x.channel.channel->time_s[static_cast<std::size_t>(x.read)]); }},
    {"status", text, "", "ok, overflow, missing or excluded",
     [](CsvOut& o, Trace x, std::size_t) { o.field(to_string(x.channel.blank.status(x.read, x.column))); }},
    {"raw", number, "", "signal as read, channel units",
     [](CsvOut& o, Trace x, std::size_t) { o.number(x.channel.channel->values(x.read, x.column)); }},
    {"blank", number, "", "blank subtracted, channel units",
     [](CsvOut& o, Trace x, std::size_t) { o.number(x.channel.blank.blank(x.read, x.column)); }},
    {"corrected", number, "", "raw − blank, channel units",
     [](CsvOut& o, Trace x, std::size_t) { o.number(x.channel.blank.corrected(x.read, x.column)); }},
    {"concentration", number, "", "corrected signal converted, in the reaction direction, unit as v0 without /min",
     [](CsvOut& o, Trace x, std::size_t) {
       const ChannelAnalysis& c = x.channel;
       if (c.conversion.mode != ConvertMode::signal_only)
         o.number(c.direction_sign * c.blank.corrected(x.read, x.column) * x.factor);
     }},
    {"used", integer, "", "1 when the read is in the rate window and not an outlier",
     [](CsvOut& o, Trace x, std::size_t) {
       const auto& used = x.row.rate.used;
       o.integer(!used.empty() && used[static_cast<std::size_t>(x.read)] ? 1 : 0);
     }},
};

using Group = const SummaryGroup&;

constexpr SummaryEntry k_summary_columns[] = {
    {.name = "source",
     .type = text,
     .unit = "",
     .description = "export file the group's wells were read from (--summary-per-file)",
     .write = [](CsvOut& o, Group g, std::size_t) { o.field(g.source); },
     .when = [](const SummaryTable& s) { return s.per_source; }},
    {"channel", text, "", "channel", [](CsvOut& o, Group g, std::size_t) { o.field(g.channel); }},
    {"role", text, "", "role of the wells", [](CsvOut& o, Group g, std::size_t) { o.field(g.role); }},
    {.name = "",
     .type = text,
     .unit = "",
     .description = "plate-map column",
     .write =
         [](CsvOut& o, Group g, std::size_t i) {
           if (i < g.key.size()) o.field(g.key[i]);
         },
     .each = [](const SummaryTable& s) -> const std::vector<std::string>& { return s.columns; },
     .type_of = map_column_type},
    {"n", integer, "", "clean wells averaged", [](CsvOut& o, Group g, std::size_t) { o.integer(g.n); }},
    {"n_flagged", integer, "", "wells of the group left out because flagged",
     [](CsvOut& o, Group g, std::size_t) { o.integer(g.n_flagged); }},
    {"v0_mean", number, "", "mean v0 of the clean wells, unit in v0_unit",
     [](CsvOut& o, Group g, std::size_t) { o.number(g.v0_mean); }},
    {"v0_sd", number, "", "sample standard deviation (n − 1) of v0",
     [](CsvOut& o, Group g, std::size_t) { o.number(g.v0_sd); }},
    {"v0_sem", number, "", "standard error of the mean, v0_sd / √n",
     [](CsvOut& o, Group g, std::size_t) { o.number(g.v0_sem); }},
    {"cv_pct", number, "%", "coefficient of variation, 100·sd/|mean|",
     [](CsvOut& o, Group g, std::size_t) { o.number(g.cv_pct); }},
    {"v0_unit", text, "", "unit of v0", [](CsvOut& o, Group g, std::size_t) { o.field(g.v0_unit); }},
    {"wells", text, "", "';'-separated wells of the group", [](CsvOut& o, Group g, std::size_t) { o.field(g.wells); }},
};

}  // namespace

std::span<const RateEntry> rate_declaration() { return k_rate_columns; }
std::span<const TraceEntry> trace_declaration() { return k_trace_columns; }
std::span<const SummaryEntry> summary_declaration() { return k_summary_columns; }

void write_rate_rows(CsvOut& out, const std::vector<Column<RateRowRef>>& columns, const RunAnalysis& run,
                     double hit_threshold_pct) {
  for (const auto& ca : run.channels)
    for (const auto& r : ca.rows) write_row(out, columns, RateRowRef{run, ca, r, hit_threshold_pct});
}

void write_trace_rows(CsvOut& out, const std::vector<Column<TraceRowRef>>& columns, const RunAnalysis& run) {
  for (const auto& ca : run.channels) {
    for (const auto& r : ca.rows) {
      const int j = ca.channel->column_of(r.plate_index);
      const double factor = ca.conversion.factor[static_cast<std::size_t>(j)];
      for (int i = 0; i < ca.channel->reads(); ++i) write_row(out, columns, TraceRowRef{run, ca, r, i, j, factor});
    }
  }
}

}  // namespace detail

namespace {

std::vector<detail::Column<detail::RateRowRef>> rate_columns(const std::vector<std::string>& map_columns,
                                                             bool with_activity, bool with_specific,
                                                             const ScreenColumns& screen) {
  return detail::columns_for(detail::rate_declaration(),
                             detail::RatesContext{map_columns, with_activity, with_specific, screen});
}

}  // namespace

std::vector<FieldSpec> rate_fields(const std::vector<std::string>& map_columns, bool with_activity, bool with_specific,
                                   const ScreenColumns& screen) {
  return detail::schema_fields(rate_columns(map_columns, with_activity, with_specific, screen));
}

std::string rates_csv(const std::vector<RunAnalysis>& runs, const std::vector<std::string>& map_columns,
                      bool with_activity, bool with_specific, const ScreenColumns& screen) {
  const auto columns = rate_columns(map_columns, with_activity, with_specific, screen);
  detail::CsvOut out;
  detail::write_header(out, columns);
  for (const auto& ra : runs) detail::write_rate_rows(out, columns, ra, screen.hit_threshold_pct);
  return out.str();
}

std::string rates_csv_rows(const RunAnalysis& run, const std::vector<std::string>& map_columns, bool with_activity,
                           bool with_specific, const ScreenColumns& screen) {
  detail::CsvOut out;
  detail::write_rate_rows(out, rate_columns(map_columns, with_activity, with_specific, screen), run,
                          screen.hit_threshold_pct);
  return out.str();
}

std::vector<FieldSpec> trace_fields() {
  return detail::schema_fields(detail::columns_for(detail::trace_declaration(), detail::NoContext{}));
}

std::string traces_csv(const std::vector<RunAnalysis>& runs) {
  const auto columns = detail::columns_for(detail::trace_declaration(), detail::NoContext{});
  detail::CsvOut out;
  detail::write_header(out, columns);
  for (const auto& ra : runs) detail::write_trace_rows(out, columns, ra);
  return out.str();
}

std::string traces_csv_rows(const RunAnalysis& run) {
  detail::CsvOut out;
  detail::write_trace_rows(out, detail::columns_for(detail::trace_declaration(), detail::NoContext{}), run);
  return out.str();
}

std::vector<FieldSpec> summary_fields(const SummaryTable& s) {
  return detail::schema_fields(detail::columns_for(detail::summary_declaration(), s));
}

std::string summary_csv(const SummaryTable& s) {
  const auto columns = detail::columns_for(detail::summary_declaration(), s);
  detail::CsvOut out;
  detail::write_header(out, columns);
  for (const auto& g : s.groups) detail::write_row(out, columns, g);
  return out.str();
}

}  // namespace vzero
