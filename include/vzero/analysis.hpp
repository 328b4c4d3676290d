// One run through the pipeline: blank → convert → rate finder, for every well of every
// channel. Each well gets a row, whatever happens to it. Wells are processed in parallel
// and stored by index, so the result does not depend on the thread count.
//
// **Example**:
//   vzero::AnalysisOptions opt;          // plate blank, signal only, auto window, Theil–Sen
//   vzero::RunAnalysis a = vzero::analyse_run(run, map, opt);
//   for (const auto& ch : a.channels) for (const auto& row : ch.rows) use(row.v0);
#pragma once

#include <functional>
#include <memory>
#include <string>
#include <utility>
#include <vector>

#include "vzero/blank.hpp"
#include "vzero/convert.hpp"
#include "vzero/enum_names.hpp"
#include "vzero/plate_map.hpp"
#include "vzero/plate_quality.hpp"
#include "vzero/rates.hpp"
#include "vzero/run.hpp"

namespace vzero {

enum class Direction { up, down };  // product formation (signal rises) or consumption (falls)
template <>
std::span<const EnumName<Direction>> enum_names<Direction>();  // up, down

// The settings of one channel from a method file's [channel.NAME] table: the run's with the
// table's keys applied (src/settings/settings.cpp makes them).
struct ChannelSettings {
  std::string channel;
  ConvertOptions convert;
  Direction direction = Direction::up;
  double signal_ceiling = NAN;
  double absorbance_limit = 1.5;
  std::vector<std::pair<std::string, std::string>> given;  // the table's keys and values as written
  std::string file;                                        // the method file and the table's first key
  int line = 0, column = 0;
};

struct AnalysisOptions {
  BlankOptions blank;
  ConvertOptions convert;
  RateOptions rates;
  Direction direction = Direction::up;
  std::vector<std::string> channels;  // channels to analyse; empty = all except water-peak channels
  double well_volume_ul = NAN;        // for enzyme activity (U, nkat); NaN = not reported
  std::string enzyme_mg_column;       // plate-map column with enzyme mass per well, mg: specific activity (U/mg)
  // Inner-filter correction of fluorescence channels, F·10^((A_ex + A_em)/2), from the mean
  // absorbance of each well in these two channels (empty = no correction).
  std::string inner_filter_ex, inner_filter_em;
  int threads = 0;                                // 0 = all cores
  std::vector<ChannelSettings> channel_settings;  // per-channel overrides; a named channel must be in every run
};

// `options` with the [channel.NAME] settings of channel `name` applied (unchanged when none).
AnalysisOptions options_for_channel(const AnalysisOptions& options, const std::string& name);

struct RateRow {
  WellId well;
  int plate_index = 0;
  Role role = Role::empty;
  const WellInfo* info = nullptr;                                   // plate-map entry, nullptr when unmapped
  RateResult rate;                                                  // the rate finder's result, signal units per second
  double v0 = NAN, v0_se = NAN, v0_ci_low = NAN, v0_ci_high = NAN;  // concentration (or signal) per minute
  double slope_per_min = NAN;       // blank-corrected signal per minute (direction applied)
  double blank_rate_per_min = NAN;  // the blank's rate subtracted in `rate` mode, else the blank's own slope
  double blank_substrate_pct = NAN; // samples: how far the subtracted blank misses the blanks' substrate trend at
                                    // this well's substrate, % of |slope| (WellBlank::substrate_mismatch)
  double activity_u = NAN;          // enzyme activity, µmol/min, when a well volume is given
  double specific_activity = NAN;   // activity_u per mg of enzyme (U/mg), with enzyme_mg_column
  double path_cm = NAN;
  std::vector<std::string> flags;  // reasons to distrust v0 (blank, rate, "empty"); empty = trusted
  std::vector<std::string> notes;  // what was done to get v0 that does not withhold trust:
                                   // "lag" skipped, "outliers" removed, "overflow"/"ceiling" reads left out
};

struct ChannelAnalysis {
  const Channel* channel = nullptr;          // the run's channel, or `corrected` when a correction applied
  std::shared_ptr<const Channel> corrected;  // inner-filter corrected copy, when made
  BlankResult blank;
  Conversion conversion;
  std::string v0_unit;          // e.g. "uM/min" or "AU/min"
  std::string slope_unit;       // e.g. "AU/min"
  double direction_sign = 1.0;  // −1 when the reaction makes the signal fall
  std::vector<RateRow> rows;    // one per channel column (plate index order)
  // The screening controls' rates (full-activity, no-activity wells; unflagged ones counted):
  // plate quality and each well's % activity come from them. n = 0 when the map has none.
  PlateControls controls;
  // The channel's [channel.NAME] method table: its keys as written ("" / empty when none).
  std::vector<std::pair<std::string, std::string>> method_settings;
  std::string method_table;  // "FILE:LINE"
};

struct RunAnalysis {
  const Run* run = nullptr;
  std::vector<ChannelAnalysis> channels;
};

// Sorts the words find_rate raised for a well of `role` into rates.csv's `flags` (trust
// withheld) and `notes` (corrections made): lag, outliers, overflow, a disturbed start and
// ceiling reads the window left out (`used_high` false) are notes; blanks are judged as
// blanks (nonlinear becomes blank-drift, too-few-reads blank-too-few-reads), standards as
// levels (too-few-reads, ceiling, saturated), empty wells not at all; no-activity controls as samples whose rate is expected
// near zero (imprecise, noise and negative are notes). Words already present are not repeated.
void sort_rate_words(const std::vector<std::string>& words, Role role, bool used_high, std::vector<std::string>& flags,
                     std::vector<std::string>& notes);

// Throws InputError for conversion problems (no standards, missing water channels, …) and
// UsageError for a requested channel the run lacks. The options must pass
// check_analysis_options (include/vzero/settings.hpp), which resolve_settings and
// analyse_files run once where a run starts; here they are assumed.
RunAnalysis analyse_run(const Run& run, const PlateMap& map, const AnalysisOptions& options);

}  // namespace vzero
