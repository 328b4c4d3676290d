// The per-plate warnings of `vzero rates` (run_warnings.hpp).
#include "rates_run/run_warnings.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <string>
#include <vector>

#include "vzero/plate_quality.hpp"

namespace vzero::detail {
namespace {

// A plate whose controls drift or differ at the edge: each significant coordinate with its
// p and fitted change.
void add_trend_warning(const std::string& plate, const PlateTrends& t, std::vector<std::string>& warnings) {
  std::string found;
  const std::pair<const char*, const Trend*> axes[] = {
      {"row", &t.row}, {"column", &t.column}, {"position", &t.position}, {"edge", &t.edge}};
  for (const auto& [name, trend] : axes)
    if (trend->p < t.level)
      found += fmt::format("{}{} (p = {:.2g}, {:+.1f} activity points {})", found.empty() ? "" : ", ", name, trend->p,
                           trend->change_pct,
                           std::string_view(name) == "edge" ? "at the edge" : "across the plate");
  if (!found.empty())
    warnings.push_back(fmt::format(
        "{}: the controls' rates trend with {} (below --trend-level {}): an edge or drift effect may bias this "
        "plate's % activity; see the trend_* columns of --plate-quality",
        plate, found, t.level));
}

}  // namespace

void add_quality_warnings(const RunSettings& s, RatesOutputs& out) {
  for (const auto& ra : out.analyses)
    for (const auto& ca : ra.channels) {
      const PlateQuality q = plate_quality(ca.controls.full, ca.controls.none, s.screen.min_z_prime);
      const std::string plate = fmt::format("{}, channel {}", ra.run->source, ca.channel->name);
      if (q.verdict == QualityVerdict::below)
        out.warnings.push_back(fmt::format(
            "{}: Z' = {:.3f} is below --min-z-prime {} (plate quality below-threshold): its controls overlap "
            "too much for its % activity and hit calls to be trusted",
            plate, q.z_prime, s.screen.min_z_prime));
      else if (q.verdict == QualityVerdict::undetermined)
        out.warnings.push_back(fmt::format(
            "{}: Z' cannot be computed (unflagged full-activity wells {}, no-activity wells {}; two of each with "
            "different means are needed): plate quality undetermined",
            plate, ca.controls.full.n, ca.controls.none.n));
      add_trend_warning(plate, channel_trends(ra, ca, s.screen.trend_level), out.warnings);
    }
}

void add_blank_trend_warnings(const RunSettings& s, RatesOutputs& out) {
  constexpr double k_shown_pct = 1;
  std::vector<std::string> lines;
  int flagged_all = 0;
  for (const auto& ra : out.analyses)
    for (const auto& ca : ra.channels) {
      const BlankSubstrateTrend& tr = ca.blank.substrate_trend;
      if (!tr.significant || tr.mismatched == 0) continue;
      std::vector<double> pct;
      int flagged = 0;
      for (const auto& row : ca.rows)
        if (std::isfinite(row.blank_substrate_pct)) {
          pct.push_back(row.blank_substrate_pct);
          flagged += std::find(row.flags.begin(), row.flags.end(), "blank-substrate") != row.flags.end();
        }
      if (pct.empty() || *std::max_element(pct.begin(), pct.end()) < k_shown_pct) continue;
      std::nth_element(pct.begin(), pct.begin() + static_cast<std::ptrdiff_t>(pct.size() / 2), pct.end());
      const double median = pct[pct.size() / 2], top = *std::max_element(pct.begin(), pct.end());
      flagged_all += flagged;
      lines.push_back(fmt::format(
          "{}, channel {}: the blank wells' rates change with their substrate ({:+.3g} {} per {}, t = {:.3g}; "
          "{} blanks at {} levels) and samples subtract blanks of other levels: that shifts their rates by "
          "{:.1f} % at the median, up to {:.0f} % ({} flagged blank-substrate above 5 %), and biases a Km fitted to "
          "them; subtract blanks per level: --blank matched --match-column substrate",
          ra.run->source, ca.channel->name, tr.slope * 60, ca.slope_unit,
          s.analysis.convert.conc_unit, tr.t, tr.blanks, tr.levels, median, top, flagged));
    }
  const std::size_t shown = lines.size() > 3 ? 2 : lines.size();
  for (std::size_t i = 0; i < shown; ++i) out.warnings.push_back(lines[i]);
  if (lines.size() > shown)
    out.warnings.push_back(fmt::format(
        "{} more exports have the same blank trend ({} wells flagged blank-substrate in all); subtract blanks per "
        "level: --blank matched --match-column substrate",
        lines.size() - shown, flagged_all));
}

void add_direction_warnings(RatesOutputs& out) {
  constexpr double k_share = 0.75;  // of the rated sample wells: more than a plate of inhibitors gives
  constexpr int k_least = 4;        // (their noise-only rates fall either way)
  std::vector<std::string> lines;
  for (const auto& ra : out.analyses)
    for (const auto& ca : ra.channels) {
      int rated = 0, negative = 0;
      for (const auto& row : ca.rows) {
        if (row.role != Role::sample || !std::isfinite(row.v0)) continue;
        ++rated;
        negative += std::find(row.flags.begin(), row.flags.end(), "negative") != row.flags.end();
      }
      if (rated < k_least || negative < k_share * rated) continue;
      const bool up = ca.direction_sign > 0;
      lines.push_back(fmt::format(
          "{}, channel {}: {} of {} sample wells have negative rates (their signal {} as the reaction runs): if the "
          "reaction {} what is read{}, pass --direction {} (or `direction` in a method file)",
          ra.run->source, ca.channel->name, negative, rated, up ? "falls" : "rises", up ? "uses up" : "makes",
          up ? " (NADH or NADPH at 340 nm)" : "", up ? "down" : "up"));
    }
  const std::size_t shown = lines.size() > 3 ? 2 : lines.size();
  for (std::size_t i = 0; i < shown; ++i) out.warnings.push_back(lines[i]);
  if (lines.size() > shown)
    out.warnings.push_back(fmt::format("{} more exports have mostly negative rates the same way", lines.size() - shown));
}

}  // namespace vzero::detail
