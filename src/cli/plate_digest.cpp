// The console's per-plate block of `vzero rates`: for a screen (control wells in the map) or
// a run of many conditions, one line per plate and channel instead of one per condition.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <string>
#include <vector>

#include "cli/rates_settings.hpp"
#include "vzero/plate_quality.hpp"

namespace vzero::cli {

namespace {

// One plate and channel: its wells counted and, with controls, judged.
struct PlateLine {
  std::string plate, channel, wells, verdict;
};

PlateLine plate_line(const RunAnalysis& ra, const ChannelAnalysis& ca, const RunSettings& s) {
  int wells = 0, samples = 0, flagged = 0, controls = 0, hits = 0, called = 0;
  for (const RateRow& row : ca.rows) {
    ++wells;
    controls += is_control(row.role);
    if (row.role != Role::sample) continue;
    ++samples;
    flagged += !row.flags.empty();
    const double inhibition = 100 - ca.controls.activity_pct(row.v0);
    if (!row.flags.empty() || !std::isfinite(inhibition)) continue;
    ++called;
    hits += inhibition >= s.screen.hit_threshold_pct;
  }
  PlateLine l{ra.run->source, ca.channel->name,
              fmt::format("{} wells, {} sample{} ({} flagged)", wells, samples, samples == 1 ? "" : "s", flagged), ""};
  if (controls) l.wells += fmt::format(", {} control{}", controls, controls == 1 ? "" : "s");
  if (!controls) return l;
  const PlateQuality q = plate_quality(ca.controls.full, ca.controls.none, s.screen.min_z_prime);
  l.verdict = std::isnan(q.z_prime) ? std::string(to_string(q.verdict))
                                    : fmt::format("Z' {:.3f} {}", q.z_prime, to_string(q.verdict));
  if (!std::isnan(s.screen.hit_threshold_pct))
    l.verdict += fmt::format(" | {} hit{} of {}", hits, hits == 1 ? "" : "s", called);
  if (std::string t = channel_trends(ra, ca, s.screen.trend_level).significant(); !t.empty())
    l.verdict += " | trend: " + t;
  return l;
}

}  // namespace

bool per_plate_digest(const std::vector<RunAnalysis>& runs, std::size_t conditions) {
  if (conditions > k_plate_digest_conditions) return true;
  for (const auto& ra : runs)
    for (const auto& ca : ra.channels)
      for (const RateRow& row : ca.rows)
        if (is_control(row.role)) return true;
  return false;
}

std::string plate_digest(const std::vector<RunAnalysis>& runs, const RunSettings& s) {
  std::vector<PlateLine> lines;
  for (const auto& ra : runs)
    for (const auto& ca : ra.channels) lines.push_back(plate_line(ra, ca, s));
  std::size_t wp = 0, wc = 0, ww = 0;
  for (const auto& l : lines) {
    wp = std::max(wp, l.plate.size());
    wc = std::max(wc, l.channel.size());
    ww = std::max(ww, l.wells.size());
  }
  std::string out = "per plate and channel";
  if (!std::isnan(s.screen.hit_threshold_pct))
    out += fmt::format(" (hits: unflagged samples with inhibition_pct ≥ {:g})", s.screen.hit_threshold_pct);
  out += fmt::format("; every well in {}{}:\n", s.output, s.plate_quality.empty() ? "" : ", " + s.plate_quality);
  for (const auto& l : lines) {
    std::string line = fmt::format("  {:<{}}  {:<{}}  {:<{}}", l.plate, wp, l.channel, wc, l.wells, ww);
    if (!l.verdict.empty()) line += " | " + l.verdict;
    while (!line.empty() && line.back() == ' ') line.pop_back();
    out += line + "\n";
  }
  return out;
}

}  // namespace vzero::cli
