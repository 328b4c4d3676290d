// The declarations of the tables `vzero rates` writes: rates.csv, the traces and the
// replicate summary, each one list of ColumnEntry (src/outputs/output_tables.cpp). The public
// functions of vzero/outputs.hpp (rate_fields, rates_csv, ...) are made from these; tests
// reach them here to add a column and see the header, rows and Table Schema follow.
#pragma once

#include <cmath>
#include <span>
#include <string>
#include <vector>

#include "core/columns.hpp"
#include "vzero/analysis.hpp"
#include "vzero/outputs.hpp"
#include "vzero/summary.hpp"

namespace vzero::detail {

// One row of rates.csv: a well of one channel of one run.
struct RateRowRef {
  const RunAnalysis& run;
  const ChannelAnalysis& channel;
  const RateRow& row;
  double hit_threshold_pct = NAN;  // % inhibition of a hit (ScreenColumns), for the `hit` column
};

// What decides rates.csv's columns beyond the fixed ones.
struct RatesContext {
  const std::vector<std::string>& map_columns;  // plate-map columns passed through, in map order
  bool with_activity = false;                   // activity_U, activity_nkat (a well volume was given)
  bool with_specific = false;                   // specific_activity_U_per_mg (an enzyme column was given)
  ScreenColumns screen = {};                    // activity_pct, inhibition_pct, hit (the map has controls)
};

using RateEntry = ColumnEntry<RateRowRef, RatesContext>;
std::span<const RateEntry> rate_declaration();
// Every row of `run` (channel by channel, wells in plate order), no header.
void write_rate_rows(CsvOut& out, const std::vector<Column<RateRowRef>>& columns, const RunAnalysis& run,
                     double hit_threshold_pct = NAN);

// One row of the traces table: one read of one well.
struct TraceRowRef {
  const RunAnalysis& run;
  const ChannelAnalysis& channel;
  const RateRow& row;
  int read = 0;         // row of the channel's matrices
  int column = 0;       // column of the channel's matrices (the well's)
  double factor = NAN;  // the well's conversion factor
};

using TraceEntry = ColumnEntry<TraceRowRef, NoContext>;
std::span<const TraceEntry> trace_declaration();
void write_trace_rows(CsvOut& out, const std::vector<Column<TraceRowRef>>& columns, const RunAnalysis& run);

// The summary: one row per replicate group; its grouping columns come from the table.
using SummaryEntry = ColumnEntry<SummaryGroup, SummaryTable>;
std::span<const SummaryEntry> summary_declaration();

// One row of the plate-quality table: one channel of one plate (declared in
// src/outputs/output_tables_quality.cpp).
struct QualityRowRef {
  const RunAnalysis& run;
  const ChannelAnalysis& channel;
  const PlateQuality& quality;
  PlateTrends trends = {};  // edge and drift of the controls (--trend-level)
};

using QualityEntry = ColumnEntry<QualityRowRef, NoContext>;
std::span<const QualityEntry> quality_declaration();

}  // namespace vzero::detail
