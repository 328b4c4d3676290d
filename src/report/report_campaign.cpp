// The campaign across plates: each plate's controls, Z′, hit calls and read time, worked
// from the page model (report_campaign.hpp).
#include "report/report_campaign.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cctype>
#include <charconv>
#include <cmath>
#include <map>
#include <set>

#include "report/report_fit.hpp"

namespace vzero::detail::report {

namespace {

// A recorded option as a number; NaN when absent or not a number.
double recorded_number(const PageData& m, const char* option) {
  const std::string text = text_of(member(member(member(m.package, "vzero"), "options"), option));
  double v = NAN;
  if (text.empty()) return v;
  const auto [end, ec] = std::from_chars(text.data(), text.data() + text.size(), v);
  return ec == std::errc() && end == text.data() + text.size() ? v : NAN;
}

// The statistics one plate's wells give, as analyse_run and rates.csv work them: controls
// from unflagged wells with a rate, a hit call for each unflagged sample with an activity.
CampaignPlate plate_stats(const PlateView& p, double min_z_prime, double hit_threshold_pct) {
  CampaignPlate c;
  c.plate = &p;
  std::vector<double> full, none;
  int full_left = 0, none_left = 0;
  for (const auto& w : p.wells) {
    const bool is_full = w.role == "full-activity";
    if (!is_full && w.role != "no-activity") continue;
    if (w.flags.empty() && std::isfinite(w.v0))
      (is_full ? full : none).push_back(w.v0);
    else
      ++(is_full ? full_left : none_left);
  }
  c.controls.full = control_stats(std::move(full));
  c.controls.none = control_stats(std::move(none));
  c.controls.full.n_flagged = full_left;
  c.controls.none.n_flagged = none_left;
  c.quality = plate_quality(c.controls.full, c.controls.none, min_z_prime);
  if (std::isnan(min_z_prime)) c.quality.verdict = QualityVerdict::undetermined;  // no threshold recorded
  for (const auto& w : p.wells) {
    if (w.role != "sample" || !w.flags.empty()) continue;
    const double inhibition = 100 - c.controls.activity_pct(w.v0);
    if (!std::isfinite(inhibition)) continue;
    ++c.called;
    if (inhibition >= hit_threshold_pct) ++c.hits;  // false for a NaN threshold: no calls asked for
  }
  return c;
}

bool has_both_controls(const PlateView& p) {
  bool full = false, none = false;
  for (const auto& w : p.wells) full |= w.role == "full-activity", none |= w.role == "no-activity";
  return full && none;
}

std::string lower(std::string s) {
  for (char& ch : s) ch = static_cast<char>(std::tolower(static_cast<unsigned char>(ch)));
  return s;
}

// An export's start time from its recorded metadata: the entry whose value is a date and time,
// preferring a key that names the start; {key, value}, or empty when none or ambiguous.
std::pair<std::string, std::string> start_of(const nlohmann::json& input) {
  std::vector<std::pair<std::string, std::string>> dated;
  for (const auto& kv : member(input, "metadata")) {
    const std::string value = text_of(member(kv, "value"));
    if (std::isfinite(parse_read_time(value))) dated.emplace_back(text_of(member(kv, "key")), value);
  }
  std::vector<std::pair<std::string, std::string>> start;
  for (const auto& d : dated)
    if (lower(d.first).find("start") != std::string::npos) start.push_back(d);
  if (start.size() == 1) return start.front();
  if (dated.size() == 1) return dated.front();
  return {};
}

// Read times of the campaign's plates when every export records one under the same key.
void set_read_times(const PageData& m, Campaign& c) {
  std::map<std::string, std::pair<std::string, std::string>> by_path;
  for (const auto& in : member(member(m.package, "vzero"), "inputs"))
    if (text_of(member(in, "kind")) == "export") by_path[text_of(member(in, "path"))] = start_of(in);
  std::set<std::string> keys;
  std::size_t known = 0;
  for (auto& p : c.plates) {
    const auto it = by_path.find(p.plate->source);
    if (it == by_path.end() || it->second.first.empty()) continue;
    ++known;
    keys.insert(it->second.first);
    p.read_time = it->second.second;
  }
  if (known == 0) return;
  if (known < c.plates.size() || keys.size() > 1) {
    c.time_note = known < c.plates.size()
                      ? fmt::format("read times are recorded for {} of the {} exports", known, c.plates.size())
                      : "the exports record their read times under different keys";
    return;
  }
  c.time_key = *keys.begin();
  double first = INFINITY;
  for (const auto& p : c.plates) first = std::min(first, parse_read_time(p.read_time));
  for (auto& p : c.plates) p.hours = parse_read_time(p.read_time) - first;
}

// Days from 1970-01-01 of a proleptic Gregorian date (H. Hinnant's days_from_civil).
long days_from_civil(long y, long mo, long d) {
  y -= mo <= 2;
  const long era = (y >= 0 ? y : y - 399) / 400;
  const long yoe = y - era * 400;
  const long doy = (153 * (mo + (mo > 2 ? -3 : 9)) + 2) / 5 + d - 1;
  const long doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
  return era * 146097 + doe - 719468;
}

// Digits s[at, at + n) as a number, or −1.
long digits(const std::string& s, std::size_t at, std::size_t n) {
  if (at + n > s.size()) return -1;
  long v = 0;
  for (std::size_t k = at; k < at + n; ++k) {
    if (!std::isdigit(static_cast<unsigned char>(s[k]))) return -1;
    v = 10 * v + (s[k] - '0');
  }
  return v;
}

}  // namespace

double parse_read_time(const std::string& t) {
  if (t.size() != 16 && t.size() != 19) return NAN;
  if (t[4] != '-' || t[7] != '-' || (t[10] != ' ' && t[10] != 'T') || t[13] != ':') return NAN;
  if (t.size() == 19 && t[16] != ':') return NAN;
  const long y = digits(t, 0, 4), mo = digits(t, 5, 2), d = digits(t, 8, 2), h = digits(t, 11, 2),
             mi = digits(t, 14, 2), s = t.size() == 19 ? digits(t, 17, 2) : 0;
  if (y < 0 || mo < 1 || mo > 12 || d < 1 || d > 31 || h < 0 || h > 23 || mi < 0 || mi > 59 || s < 0 || s > 59)
    return NAN;
  const bool leap = (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
  static constexpr long k_month_days[12] = {31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
  if (d > k_month_days[mo - 1] + (mo == 2 && leap ? 1 : 0)) return NAN;  // no such day in that month
  return static_cast<double>(days_from_civil(y, mo, d)) * 24 + static_cast<double>(h) + static_cast<double>(mi) / 60 +
         static_cast<double>(s) / 3600;
}

std::vector<double> xs_of(const Campaign& c) {
  std::vector<double> xs;
  for (std::size_t k = 0; k < c.plates.size(); ++k)
    xs.push_back(c.by_time() ? c.plates[k].hours : static_cast<double>(k + 1));
  return xs;
}

std::vector<Campaign> campaigns_of(const PageData& m) {
  const double min_z = recorded_number(m, "min-z-prime"), hit = recorded_number(m, "hit-threshold");
  std::vector<Campaign> out;
  std::vector<std::string> channels;
  for (const auto& p : m.plates)
    if (std::find(channels.begin(), channels.end(), p.channel) == channels.end()) channels.push_back(p.channel);
  for (const auto& ch : channels) {
    Campaign c;
    c.channel = ch;
    c.min_z_prime = min_z;
    c.hit_threshold_pct = hit;
    std::set<std::string> sources;
    for (const auto& p : m.plates) {
      if (p.channel != ch || !has_both_controls(p)) continue;
      c.plates.push_back(plate_stats(p, min_z, hit));
      sources.insert(p.source);
      if (c.plates.size() == 1) c.v0_unit = p.v0_unit;
      c.mixed_units |= p.v0_unit != c.v0_unit;
    }
    if (c.plates.size() < 2 || sources.size() < 2) continue;
    set_read_times(m, c);
    out.push_back(std::move(c));
  }
  return out;
}

}  // namespace vzero::detail::report
