#include "ingest/reader_common.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cctype>
#include <cmath>
#include <map>
#include <mutex>
#include <numeric>

#include "vzero/error.hpp"

namespace vzero::detail {

namespace {

std::shared_ptr<const RE2> compiled(const std::string& pattern) {
  RE2::Options opt;
  opt.set_log_errors(false);
  static std::mutex lock;
  static std::map<std::string, std::shared_ptr<const RE2>> cache;
  std::lock_guard<std::mutex> hold(lock);
  if (auto it = cache.find(pattern); it != cache.end()) return it->second;
  auto re = std::make_shared<const RE2>(pattern, opt);
  if (cache.size() < 256) cache.emplace(pattern, re);
  return re;
}

}  // namespace

CompiledProfile::CompiledProfile(const Profile& p) : profile(p) {
  for (const auto& s : p.sections) sections.push_back(compiled(s.label));
  for (const auto& c : p.captures) captures.push_back(compiled(c.pattern));
  if (!p.grid_read_label.empty()) read_label = compiled(p.grid_read_label);
  for (const auto* tokens : {&p.overflow_tokens, &p.missing_tokens})
    for (const auto& t : *tokens) numeric_token |= parse_number(trim(t), p.decimal).has_value();
}

void guess_quantity(const std::string& name, Quantity& quantity, std::string& unit) {
  std::string l = lower(name);
  bool abs_like = (l.size() >= 2 && l[0] == 'a' && std::isdigit(static_cast<unsigned char>(l[1]))) ||
                  l.rfind("abs", 0) == 0 || l.rfind("od", 0) == 0;
  if (abs_like) {
    quantity = Quantity::absorbance;
    if (unit.empty()) unit = "AU";
  } else if (l.find("ex") != std::string::npos || l.find("em") != std::string::npos || l.rfind("fl", 0) == 0) {
    quantity = Quantity::fluorescence;
    if (unit.empty()) unit = "RFU";
  } else if (l.find("lum") != std::string::npos) {
    quantity = Quantity::luminescence;
    if (unit.empty()) unit = "RLU";
  }
}

SectionStart default_section(const Profile& p) {
  SectionStart s{p.signal_name, p.signal_quantity, p.signal_unit};
  if (s.quantity == Quantity::other) guess_quantity(s.name, s.quantity, s.unit);
  return s;
}

std::optional<SectionStart> match_section(const CompiledProfile& cp, std::string_view line) {
  for (std::size_t i = 0; i < cp.sections.size(); ++i) {
    const RE2& re = *cp.sections[i];
    const SectionRule& rule = cp.profile.sections[i];
    std::string name;
    bool hit = re.NumberOfCapturingGroups() >= 1 ? RE2::PartialMatch(line, re, &name) : RE2::PartialMatch(line, re);
    if (!hit) continue;
    SectionStart s;
    s.name = name.empty() ? (rule.name.empty() ? cp.profile.signal_name : rule.name) : name;
    // An absorbance section that captures a bare wavelength ("340" of "Wavelength: 340 nm")
    // is named as absorbance channels are, A340.
    if (rule.quantity == Quantity::absorbance && !name.empty() &&
        name.find_first_not_of("0123456789") == std::string::npos)
      s.name = "A" + name;
    s.unit = rule.unit;
    if (rule.quantity) {
      s.quantity = *rule.quantity;
    } else {
      s.quantity = Quantity::other;
      guess_quantity(s.name, s.quantity, s.unit);
      if (s.quantity == Quantity::other) {
        s.quantity = cp.profile.signal_quantity;
        if (s.unit.empty()) s.unit = cp.profile.signal_unit;
      }
    }
    return s;
  }
  return std::nullopt;
}

bool match_capture(const CompiledProfile& cp, std::string_view line,
                   std::vector<std::pair<std::string, std::string>>& metadata) {
  for (std::size_t i = 0; i < cp.captures.size(); ++i) {
    const RE2& re = *cp.captures[i];
    const CaptureRule& rule = cp.profile.captures[i];
    std::string a, b;
    if (rule.key == "$1") {
      if (!RE2::PartialMatch(line, re, &a, &b)) continue;
      metadata.emplace_back(std::string(trim(a)), std::string(trim(b)));
    } else {
      if (!RE2::PartialMatch(line, re, &a)) continue;
      metadata.emplace_back(rule.key, std::string(trim(a)));
    }
    return true;
  }
  return false;
}

std::optional<double> parse_time(std::string_view text, TimeUnit unit, char decimal) {
  text = trim(text);
  if (!text.empty() && std::isalpha(static_cast<unsigned char>(text.back()))) return worded_time(text, decimal);
  if (text.find(':') != std::string_view::npos) {
    // h:mm:ss(.s) or mm:ss(.s)
    std::vector<std::string_view> parts;
    std::size_t start = 0;
    while (true) {
      auto c = text.find(':', start);
      parts.push_back(text.substr(start, c == std::string_view::npos ? std::string_view::npos : c - start));
      if (c == std::string_view::npos) break;
      start = c + 1;
    }
    if (parts.size() < 2 || parts.size() > 3) return std::nullopt;
    double total = 0;
    for (std::size_t i = 0; i < parts.size(); ++i) {
      bool last = i + 1 == parts.size();
      auto v = parse_number(parts[i], decimal);
      if (!v || *v < 0) return std::nullopt;
      if (!last && *v != std::floor(*v)) return std::nullopt;
      if (i > 0 && *v >= 60) return std::nullopt;
      total = total * 60 + *v;
    }
    // 1e308 hours is a number but no time (nor finite in seconds).
    if (!(total <= k_max_time_s)) return std::nullopt;
    return total;
  }
  auto v = parse_number(text, decimal);
  if (!v) return std::nullopt;
  double s = *v;
  switch (unit) {
    case TimeUnit::seconds:
      break;
    case TimeUnit::minutes:
      s *= 60;
      break;
    case TimeUnit::hours:
      s *= 3600;
      break;
    case TimeUnit::milliseconds:
      s /= 1000;
      break;
  }
  if (!(std::fabs(s) <= k_max_time_s)) return std::nullopt;
  return s;
}

bool time_out_of_range(std::string_view text, TimeUnit unit, char decimal) {
  text = trim(text);
  if (parse_time(text, unit, decimal)) return false;
  const auto colon = text.find(':');
  if (colon == std::string_view::npos)
    return number_too_large(text, decimal) || parse_number(text, decimal).has_value();
  // A clock time is out of range when it reads as one with 0 as its first part, and that
  // part is a whole number of hours (or minutes) >= 0.
  const std::string_view first = trim(text.substr(0, colon));
  const auto v = parse_number(first, decimal);
  const bool whole =
      v ? *v >= 0 && *v == std::floor(*v) : !first.empty() && first.front() != '-' && number_too_large(first, decimal);
  if (!whole) return false;
  std::string small(text);
  small.replace(0, colon, "0");
  return parse_time(small, unit, decimal).has_value();
}

std::string bad_time_message(std::string_view text, TimeUnit unit, char decimal, std::string_view what) {
  text = trim(text);
  if (!time_out_of_range(text, unit, decimal)) return fmt::format("expected {}, found \"{}\"", what, text);
  static_assert(k_max_time_s == 1e10, "the message below states the limit");
  const bool clock = text.find(':') != std::string_view::npos;
  return fmt::format("expected {} between -1e10 and 1e10 s (about 317 years), found \"{}\"{}, which is out of range",
                     what, text, clock ? "" : fmt::format(" {}", to_string(unit)));
}

void bad_time_error(Where where, std::string_view text, TimeUnit unit, char decimal, std::string_view what,
                    std::vector<std::string> fixes) {
  if (time_out_of_range(text, unit, decimal))
    fixes = {
        "check the unit of the times (in the time header, e.g. \"Time [min]\", or the profile's `time_unit`) "
        "and that the column holds read times"};
  throw InputError(std::move(where), bad_time_message(text, unit, decimal, what), std::move(fixes));
}

std::optional<TimeUnit> unit_in_header(std::string_view header) {
  std::string h = lower(trim(header));
  auto ends = [&](std::string_view suffix) {
    return h.size() >= suffix.size() && h.compare(h.size() - suffix.size(), suffix.size(), suffix) == 0;
  };
  for (auto s : {"[ms]", "(ms)", "_ms", " ms"})
    if (ends(s)) return TimeUnit::milliseconds;
  for (auto s : {"[s]", "(s)", "_s", "[sec]", "(sec)", " s", "[secs]", "(secs)", "[seconds]", "(seconds)"})
    if (ends(s)) return TimeUnit::seconds;
  for (auto s : {"[min]", "(min)", "_min", " min", "[mins]", "(mins)", "[minutes]", "(minutes)"})
    if (ends(s)) return TimeUnit::minutes;
  for (auto s : {"[h]", "(h)", "_h", " h", "[hr]", "(hr)", "[hrs]", "(hrs)", "[hours]", "(hours)"})
    if (ends(s)) return TimeUnit::hours;
  return std::nullopt;
}

std::string quoted_list(const std::vector<std::string>& names) {
  std::string out;
  for (const auto& n : names) out += (out.empty() ? "\"" : ", \"") + n + "\"";
  return out;
}

InputError missing_column_error(Where where, std::string_view what, const std::vector<std::string>& names,
                                std::string_view context, std::string_view unknown) {
  const bool time = what == "time";
  const std::string_view holds = time ? "read times" : "values";
  const std::string_view suggested = time ? "\"Time [s]\" (or \"Time [min]\")" : "\"value\"";
  std::string message = fmt::format("expected a {} column ({}) in this header{}, found ", what, quoted_list(names),
                                    context.empty() ? "" : fmt::format(" {}", context));
  message += unknown.empty() ? std::string("none") : fmt::format("\"{}\"", unknown);
  // A cycle or read number counts reads; it is no clock, and renaming it would make one. (A
  // header that says time, "Read time [s]", is a time column under another name.)
  const std::string u = lower(unknown);
  const bool counts = u.rfind("cycle", 0) == 0 || u.rfind("read", 0) == 0 || u.rfind("kinetic", 0) == 0 || u == "#";
  if (time && counts && u.find("time") == std::string::npos)
    return InputError(std::move(where), std::move(message),
                      {fmt::format("\"{}\" counts reads, it does not time them: export the read times with the data "
                                   "(a \"Time [s]\" column); renaming it would make every interval one second",
                                   unknown)});
  // Clock times of hours and minutes only: "1:30" reads as mm:ss, so a rename would read them
  // 60 times too short.
  if (time && (u.find("hh:mm") != std::string::npos || u.find("h:mm") != std::string::npos) &&
      u.find(":ss") == std::string::npos)
    return InputError(std::move(where), std::move(message),
                      {fmt::format("\"{}\" holds hours and minutes, which vzero would read as minutes and seconds: "
                                   "write the times as h:mm:ss (0:01:00) or as minutes under \"Time [min]\"",
                                   unknown)});
  // A time header with a unit vzero does not read ("Time [days]", "Time [µs]"): renaming it
  // would keep the numbers in their own unit.
  if (time && u.rfind("time", 0) == 0 && (u.back() == ']' || u.back() == ')'))
    return InputError(std::move(where), std::move(message),
                      {fmt::format("if \"{}\" holds the read times in a unit vzero does not read, convert them to s, "
                                   "min, h or ms and name that unit in the header (\"Time [s]\"); renaming the "
                                   "header alone would read the numbers in the wrong unit",
                                   unknown)});
  std::string fix = unknown.empty()
                        ? fmt::format("add the column of {} to the export, with a header such as {}", holds, suggested)
                        : fmt::format(
                              "if \"{}\" holds the {}, name it {} in the header, or add it to `columns.{}` in a "
                              "profile of your own (instrument-profiles/README.md)",
                              unknown, holds, suggested, what);
  return InputError(std::move(where), std::move(message), {std::move(fix)});
}

CellKind read_cell(const Profile& p, std::string_view text, double& value) {
  std::string_view t = trim(text);
  for (const auto& tok : p.overflow_tokens)
    if (iequals(t, tok)) return CellKind::overflow;
  for (const auto& tok : p.missing_tokens)
    if (iequals(t, tok)) return CellKind::missing;
  if (auto v = parse_number(t, p.decimal)) {
    value = *v;
    return CellKind::number;
  }
  return overflow_form(t, p.decimal) ? CellKind::overflow : CellKind::bad;
}

CellKind read_cell(const CompiledProfile& cp, std::string_view text, double& value) {
  if (!cp.numeric_token) {
    if (auto v = parse_number(text, cp.profile.decimal)) {
      value = *v;
      return CellKind::number;
    }
  }
  return read_cell(cp.profile, text, value);
}

double temperature_cell(const CompiledProfile& cp, const Profile& p, const std::string& file, int line, int column,
                        std::string_view line_text, std::string_view cell) {
  double v = 0;
  const CellKind k = read_cell(cp, cell, v);
  if (k == CellKind::bad) bad_value_error(p, file, line, column, line_text, cell, "the temperature");
  return k == CellKind::number ? v : std::nan("");
}

ChannelBuilder::ChannelBuilder(SectionStart start, std::vector<WellId> wells)
    : start_(std::move(start)), wells_(std::move(wells)) {}

int ChannelBuilder::add_read(double time_s, double temperature_c, const Where& where) {
  if (!time_s_.empty()) {
    double prev = time_s_.back();
    if (time_s == prev) {
      throw InputError(where,
                       fmt::format("read time {} s appears twice in channel {} (first at line {})", time_s, start_.name,
                                   time_line_.back()),
                       {"remove the duplicated read, or check that two exports were not pasted together"});
    }
    if (time_s < prev) {
      throw InputError(where,
                       fmt::format("read time goes backwards in channel {}: {} s after {} s at line {}", start_.name,
                                   time_s, prev, time_line_.back()),
                       {"check the time column and the profile's `time_unit`; reads must be in time order"});
    }
  }
  time_s_.push_back(time_s);
  temperature_c_.push_back(temperature_c);
  time_line_.push_back(where.line);
  values_.resize(values_.size() + wells_.size(), std::nan(""));
  status_.resize(status_.size() + wells_.size(), ReadStatus::missing);
  return static_cast<int>(time_s_.size()) - 1;
}

void ChannelBuilder::set(int read, int slot, double value, ReadStatus status) {
  std::size_t k = static_cast<std::size_t>(read) * wells_.size() + static_cast<std::size_t>(slot);
  values_[k] = status == ReadStatus::ok ? value : std::nan("");
  status_[k] = status;
}

Channel ChannelBuilder::finish(PlateFormat format) && {
  Channel c;
  c.name = start_.name;
  c.quantity = start_.quantity;
  c.unit = start_.unit;
  c.time_s = std::move(time_s_);
  if (std::any_of(temperature_c_.begin(), temperature_c_.end(), [](double t) { return !std::isnan(t); }))
    c.temperature_c = std::move(temperature_c_);
  const std::size_t nw = wells_.size();
  std::vector<std::size_t> order(nw);
  std::iota(order.begin(), order.end(), std::size_t{0});
  std::sort(order.begin(), order.end(),
            [&](std::size_t a, std::size_t b) { return format.index(wells_[a]) < format.index(wells_[b]); });
  const auto reads = static_cast<Eigen::Index>(c.time_s.size());
  c.values.resize(reads, static_cast<Eigen::Index>(nw));
  c.status.resize(reads, static_cast<Eigen::Index>(nw));
  c.wells.resize(nw);
  for (std::size_t j = 0; j < nw; ++j) c.wells[j] = format.index(wells_[order[j]]);
  // Read-major to column-major in tiles of 16 reads, so the rows read stay in cache.
  constexpr Eigen::Index k_tile = 16;
  for (Eigen::Index r0 = 0; r0 < reads; r0 += k_tile) {
    const Eigen::Index r1 = std::min(reads, r0 + k_tile);
    for (std::size_t j = 0; j < nw; ++j) {
      const std::size_t slot = order[j];
      for (Eigen::Index r = r0; r < r1; ++r) {
        const std::size_t k = static_cast<std::size_t>(r) * nw + slot;
        c.values(r, static_cast<Eigen::Index>(j)) = values_[k];
        c.status(r, static_cast<Eigen::Index>(j)) = status_[k];
      }
    }
  }
  return c;
}

std::optional<PlateFormat> fixed_format(const Profile& p) {
  if (p.plate_wells > 0) return plate_format_for(p.plate_wells);
  return std::nullopt;
}

namespace {

std::string plate_text(const PlateFormat& f) {
  return fmt::format("a {}-well plate (rows A–{}, columns 1–{})", f.wells(), row_label(f.rows - 1), f.columns);
}

std::vector<std::string> plate_fixes(const PlateFormat& f) {
  return {fmt::format("set `plate` in the profile to the plate used (now {}), or 0 to infer it", f.wells())};
}

}  // namespace

void off_plate_error(const PlateFormat& f, WellId w, Where where) {
  throw InputError(std::move(where), fmt::format("well {} does not exist on {}", well_name(w), plate_text(f)),
                   plate_fixes(f));
}

void off_plate_row_error(const PlateFormat& f, int row, Where where) {
  throw InputError(std::move(where), fmt::format("row {} does not exist on {}", row_label(row), plate_text(f)),
                   plate_fixes(f));
}

void off_plate_column_error(const PlateFormat& f, int column, Where where) {
  throw InputError(std::move(where), fmt::format("column {} does not exist on {}", column + 1, plate_text(f)),
                   plate_fixes(f));
}

PlateFormat decide_format(const Profile& p, const std::vector<WellId>& wells, const std::string& file, bool& inferred) {
  if (auto f = fixed_format(p)) {
    // The readers refuse a well off a fixed plate where they meet it, with its place.
    for (const auto& w : wells)
      if (!f->holds(w)) off_plate_error(*f, w, Where{file});
    inferred = false;
    return *f;
  }
  inferred = true;
  if (auto f = smallest_format_holding(wells)) return *f;
  throw InputError(Where{file}, "wells lie beyond a 1536-well plate (rows A–AF, columns 1–48)",
                   {"check the well names in the file"});
}

}  // namespace vzero::detail
