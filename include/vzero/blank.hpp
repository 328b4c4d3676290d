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
enum class BlankMode { trace, rate };
template <>
std::span<const EnumName<BlankStrategy>> enum_names<BlankStrategy>();  // plate, matched, none
template <>
std::span<const EnumName<BlankMode>> enum_names<BlankMode>();  // trace, rate
std::string_view to_string(BlankStrategy s);
std::string_view to_string(BlankMode m);
bool parse_blank_strategy(std::string_view t, BlankStrategy& out);
bool parse_blank_mode(std::string_view t, BlankMode& out);

struct BlankOptions {
  BlankStrategy strategy = BlankStrategy::plate;
  BlankMode mode = BlankMode::trace;
  // A blank well is "noisy" when its scatter about its own straight line exceeds this many
  // times the median scatter of the channel's blank wells (needs 3 or more blank wells).
  double noisy_factor = 3.0;
};

struct WellBlank {
  std::string blank_wells;         // wells averaged for this well (well_set_text: "D1;D2", "A45:AF48"), "" when none
  double blank_rate = NAN;         // slope of the blank trace, signal units per second (OLS, all reads)
  double blank_noise_sd = NAN;     // residual SD of the blank wells about their lines, signal units
  double blank_rate_sd = NAN;      // how far the channel's blank wells' own rates scatter (robust SD, 3 or more
                                   // blanks), times √(1 + 1/blanks used): the well-to-well drift no rate beats
  std::vector<std::string> flags;  // "blank-missing" (no blank to subtract), "blank-noisy"; on blank
                                   // wells also "blank-disturbed" (its start jumps or decays)
  std::vector<std::string> notes;  // e.g. "blank-line": a blank used here had a disturbed start, so its
                                   // fitted line (reads after the disturbance) was subtracted instead
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
  // Per channel column, for blank wells with a disturbed start: the line (signal = intercept
  // + slope·t) of their reads after it, which stands in for their reads; NaN elsewhere.
  std::vector<double> line_slope, line_intercept;
};

// One blank well's start, screened as a sample's is (src/core/start_screen.hpp: a jump or a
// decay over the first reads that the rest does not continue), with the well's own robust
// read noise (second differences). Returns how many of its first ok reads are disturbed (0 =
// clean); `slope` and `intercept` receive the OLS line of the ok reads after them. A blank with
// a disturbed start is never subtracted read by read: its line stands in for its reads.
int screen_blank_start(const std::vector<double>& time_s, const double* y, const ReadStatus* status, double& slope,
                       double& intercept);

// Well-to-well drift: how far blank wells' own rates scatter about the other blanks of the
// set a sample subtracts (one set per `match` value for `matched`, every blank for `plate`).
// Within each set of 2 or more rates, each rate's distance from the set's median, scaled by
// √(n/(n−1)) (exact for a mean, so that a pair gives |r₁ − r₂|/√2); the robust SD (1.4826 ×
// median absolute value) of those distances pooled over the sets. Differences between sets
// (a substrate that hydrolyses faster at a higher concentration) are not scatter: matched
// blanks subtract them. Needs 2 or more degrees of freedom (Σ(n − 1) ≥ 2), else NaN.
double within_set_rate_sd(const std::vector<std::vector<double>>& sets);

BlankResult apply_blank(const Channel& channel, const PlateMap& map, PlateFormat format, const BlankOptions& options);


// Mean blank trace's OLS slope over [t0_s, t1_s] for channel column `column` (signal units
// per second), used by the `rate` mode; NaN when the well has no blank or too few reads. A
// blank with a disturbed start enters by its line (`blanks`, from apply_blank), as in the
// trace mode, so its disturbance never reaches a sample.
double blank_rate_between(const Channel& channel, const PlateMap& map, PlateFormat format, const BlankOptions& options,
                          const BlankResult& blanks, int column, double t0_s, double t1_s);

}  // namespace vzero
