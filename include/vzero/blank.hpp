// Blank subtraction: what the signal would have been without the enzyme.
//
// Strategies: `plate` — the mean of every blank well of the channel at each read;
// `matched` — the mean of the blank wells sharing the sample's plate-map `match` value
// (for example a substrate-only blank per substrate concentration, since a substrate that
// hydrolyses on its own must be subtracted per concentration); `none`.
// Modes: `trace` subtracts the blank read by read; `rate` leaves the trace alone and
// subtracts the blank's own rate over the sample's window from the sample's rate (less
// noise when blanks are few).
//
// **Example**:
//   vzero::BlankOptions opt;  opt.strategy = vzero::BlankStrategy::matched;
//   vzero::BlankResult b = vzero::apply_blank(run.channels[0], map, run.format, opt);
//   // b.corrected(read, column) = raw − blank; b.wells[column].blank_wells == "D1;D2"
#pragma once

#include <Eigen/Core>
#include <string>
#include <string_view>
#include <vector>

#include "vzero/enum_names.hpp"
#include "vzero/plate_map.hpp"
#include "vzero/run.hpp"

namespace vzero {

enum class BlankStrategy { plate, matched, none };
// How a blank set is subtracted: `smooth`, each blank as its own least-squares line plus the
// plate's shared bend (blank/screen.hpp; needs 4 or more blank wells in the channel, else as
// `trace`), so a blank's read noise, spikes and small disturbed starts stay out of the
// samples while the plate's read-to-read changes still cancel; `trace`, the blank reads as
// read; `rate`, the blank's rate over the sample's window.
enum class BlankMode { smooth, trace, rate };
template <>
std::span<const EnumName<BlankStrategy>> enum_names<BlankStrategy>();  // plate, matched, none
template <>
std::span<const EnumName<BlankMode>> enum_names<BlankMode>();  // smooth, trace, rate
std::string_view to_string(BlankStrategy s);
std::string_view to_string(BlankMode m);
bool parse_blank_strategy(std::string_view t, BlankStrategy& out);
bool parse_blank_mode(std::string_view t, BlankMode& out);

struct BlankOptions {
  BlankStrategy strategy = BlankStrategy::plate;
  BlankMode mode = BlankMode::smooth;
  // A blank well is "noisy" when its scatter about its own straight line exceeds this many
  // times the median scatter of the channel's blank wells (needs 3 or more blank wells).
  double noisy_factor = 3.0;
};

struct WellBlank {
  std::string blank_wells;         // wells averaged for this well (well_set_text: "D1;D2", "A45:AF48"), "" when none
  double blank_rate = NAN;         // slope of the blank trace, signal units per second (OLS, all reads)
  double blank_noise_sd = NAN;     // read noise the well keeps after subtraction, signal units: for a blank
                                   // well its own scatter about its line; for the others the blanks' scatter
                                   // once their shared bend is off, plus what the subtracted mean carries
                                   // (rate mode: their scatter about their straight lines)
  double blank_rate_sd = NAN;      // how far the channel's blank wells' own rates scatter (within_set_rate_sd:
                                   // the pooled SD within their sets), times √(1 + 1/blanks used): the
                                   // well-to-well drift no rate beats
  int blank_rate_dof = 0;          // degrees of freedom of blank_rate_sd (0: none known)
  std::vector<std::string> flags;  // "blank-missing" (no blank to subtract), "blank-noisy"; on blank
                                   // wells also "blank-disturbed" (its start jumps or decays)
  std::vector<std::string> notes;  // e.g. "blank-line": every blank used here had a disturbed start, so
                                   // their disturbed reads were replaced (BlankResult::blank_reads)
  // When the blanks' rates change with their substrate (BlankSubstrateTrend significant): the
  // trend's rate at this well's substrate less its mean over the blanks subtracted here, signal
  // units per second — how far the subtracted blank is off this well's own background. NaN
  // when there is no such trend or the well or a blank used has no substrate.
  double substrate_mismatch = NAN;
};

// Blank wells at several substrate levels whose own rates change with the substrate (a
// substrate that reacts, absorbs or fluoresces on its own): their rates (each blank's line,
// after a disturbed start) against their plate-map substrate, by least squares. Needs 3 or
// more blanks with a rate and a substrate, at 2 or more levels. `significant` when the
// slope's |t| exceeds Student's t(0.995, n − 2): a two-sided test at 1 %.
struct BlankSubstrateTrend {
  int blanks = 0, levels = 0;
  double intercept = NAN, slope = NAN;  // signal units per second; per substrate unit (the map's)
  double t = NAN;                       // slope / its standard error
  bool significant = false;
  int mismatched = 0;  // wells whose blanks sit at other levels (substrate_mismatch ≠ 0) under a significant trend
};

struct BlankResult {
  Eigen::MatrixXd blank;         // reads × wells subtracted (0 in rate mode and for none)
  Eigen::MatrixXd corrected;     // raw − blank; NaN where unusable
  StatusMatrix status;           // raw status; `excluded` where the blank has no value at that read
  std::vector<WellBlank> wells;  // one per channel column
  BlankSubstrateTrend substrate_trend;
  // The channel's blank wells (columns) and their reads as subtracted: each one's disturbed
  // first reads (blank_disturbed of them; 0 = clean) replaced by what it would have read
  // undisturbed — its line after them plus the bend all blanks share (src/blank/screen.hpp),
  // reads it lacked between its first and last filled the same way; reads × blank_columns,
  // NaN where not ok and not filled.
  std::vector<int> blank_columns;
  std::vector<int> blank_disturbed;
  Eigen::MatrixXd blank_reads;
};

// Well-to-well drift: how far blank wells' own rates scatter about the other blanks of the
// set a sample subtracts (one set per `match` value for `matched`, every blank for `plate`).
// The pooled within-set SD: √(Σ_sets Σ (r − r̄_set)² / Σ_sets (n − 1)) over the sets of 2 or
// more rates (a pair gives (r₁ − r₂)²/2 on one degree of freedom). Differences between sets
// (a substrate that hydrolyses faster at a higher concentration) are not scatter: matched
// blanks subtract them. Needs 2 or more degrees of freedom (Σ(n − 1) ≥ 2), else NaN. Until
// 2026-12-03 this was the robust SD (1.4826 × median) of the distances from each set's
// median: with 8 pairs (a 96-well plate) it scattered so widely (about a third of the
// efficiency) that a plate's intervals came out too narrow or too wide by chance; on the
// accuracy harness the pooled SD cut the unflagged artefact wells above 15 % (10/19/17/9 ->
// 7/17/14/8 on four seed sets) and the clean wells flagged (2.7/1.7/2.2/1.7 -> 2.0/1.1/2.3/1.5 %).
// A single blank far off its set now widens every interval of the channel: the safe side.
// `dof`, when given, receives the degrees of freedom, Σ(n − 1) (0 when too few).
double within_set_rate_sd(const std::vector<std::vector<double>>& sets, int* dof = nullptr);

BlankResult apply_blank(const Channel& channel, const PlateMap& map, PlateFormat format, const BlankOptions& options);


// Mean blank trace's OLS slope over [t0_s, t1_s] for channel column `column` (signal units
// per second), used by the `rate` mode; NaN when the well has no blank or too few reads. A
// blank with a disturbed start enters with its disturbed reads replaced (`blanks`, from
// apply_blank), as in the trace mode, so its disturbance never reaches a sample.
double blank_rate_between(const Channel& channel, const PlateMap& map, PlateFormat format, const BlankOptions& options,
                          const BlankResult& blanks, int column, double t0_s, double t1_s);

}  // namespace vzero
