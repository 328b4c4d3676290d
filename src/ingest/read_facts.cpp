// What a reader inferred about a file, and the time unit rule (docs/inputs.md, "What vzero
// infers, and says").
#include <fmt/format.h>
#include <algorithm>
#include <cctype>
#include <cmath>
#include <string>

#include "core/stats.hpp"
#include "ingest/reader_common.hpp"
#include "vzero/error.hpp"

namespace vzero::detail {

namespace {

// The least time a plate reader needs between two reads of `wells` wells, in seconds: 0.02 s
// per well, at most 2 s (the cap leaves room for imaging readers that read a whole plate at
// once). Source: common practice, from memory: a reader moves the plate (or its optics) from
// well to well, and the quickest take about 5 s for 96 wells (about 0.05 s a well); 0.02 s a
// well is well below that, so a step under it is not seconds.
double least_step_s(std::size_t wells) { return std::min(2.0, 0.02 * static_cast<double>(wells)); }

std::string delimiter_name(char d) {
  switch (d) {
    case ',':
      return "',' (comma)";
    case ';':
      return "';' (semicolon)";
    case '\t':
      return "tab";
    case ' ':
      return "space";
    default:
      return fmt::format("'{}'", d);
  }
}

// Why plain-number times cannot be seconds, or "" when they can: steps below the least a
// reader needs for the wells read, or sub-second steps over less than a minute in all.
std::string not_seconds(const Channel& c) {
  if (c.reads() < 2) return "";
  const double step = median_step(c.time_s), span = c.time_s.back() - c.time_s.front();
  const double least = least_step_s(c.wells.size());
  if (step < least)
    return fmt::format(
        "a median step of {:.4g} between reads of {} well{} (a plate reader needs at least {} s for "
        "that many wells)",
        step, c.wells.size(), c.wells.size() == 1 ? "" : "s", least);
  if (step < 1 && span < 60)
    return fmt::format(
        "a median step of {:.4g} with all {} reads within {:.4g} (a whole run under a minute at "
        "sub-second steps, more likely minutes or hours)",
        step, c.reads(), span);
  return "";
}

// Seconds (stated or inferred) more than an hour apart between reads: milliseconds read as
// seconds give rates 1000 × too slow, and an enzyme kinetic read hours apart is rare enough to
// say out loud (common practice: kinetic plate reads are seconds to minutes apart).
constexpr double k_long_step_s = 3600;
void warn_long_steps(Run& run, std::string_view basis, std::string_view fix) {
  for (const auto& c : run.channels)
    if (c.reads() > 1 && median_step(c.time_s) > k_long_step_s) {
      run.read_warnings.push_back(fmt::format(
          "times read as seconds ({}), with a median step of {:.3g} h between reads: if they are milliseconds, "
          "every rate is 1000 × too slow; {}",
          basis, median_step(c.time_s) / 3600, fix));
      return;
    }
}

void settle_time_unit(Run& run, const ReadInfo& info) {
  if (!info.time_basis.empty()) {
    run.read_facts.push_back({"time_unit", std::string(to_string(info.time_unit)), info.time_basis});
    if (info.time_unit == TimeUnit::seconds)
      warn_long_steps(run, fmt::format("as {} states", info.time_basis), "correct it or re-export");
    // The stated unit stands, but seconds at steps no plate reader makes are said out loud:
    // minutes written under a seconds header give rates 60 × too fast.
    if (info.time_unit == TimeUnit::seconds)
      for (const auto& c : run.channels)
        if (const std::string why = not_seconds(c); !why.empty()) {
          run.read_warnings.push_back(fmt::format(
              "times read as seconds, as {} states, with {}: if they are minutes, every rate is 60 × too fast; "
              "correct the header or re-export",
              info.time_basis, why));
          break;
        }
    return;
  }
  if (!info.plain_times) {
    // Clock times with one ':' are read as minutes and seconds; when no time has hours and the
    // steps are too short for seconds, they may be hours and minutes: 60 × too fast.
    if (info.short_clock && !info.long_clock)
      for (const auto& c : run.channels)
        if (const std::string why = not_seconds(c); !why.empty())
          throw InputError(
              info.time_where,
              fmt::format("expected clock times that can be told apart, found times with one ':' and no hours, read "
                          "as minutes:seconds with {}: if they are hours:minutes, every rate would be 60 × too fast",
                          why),
              {"write the times as h:mm:ss (0:01:00), or as numbers under a header that states the unit, e.g. "
               "\"Time [min]\""});
    run.read_facts.push_back({"time_unit", "clock", "every time is a clock time (h:mm:ss or mm:ss)"});
    return;
  }
  for (const auto& c : run.channels) {
    const std::string why = not_seconds(c);
    if (why.empty()) continue;
    const double step = median_step(c.time_s), span = c.time_s.back() - c.time_s.front();
    throw InputError(
        info.time_where,
        fmt::format(
            "expected read times whose unit is stated, found plain numbers with no unit in the header or "
            "profile, and {}: not seconds. In minutes: a read every {:.4g} s over {:.4g} min; in hours: every {:.4g} "
            "min over {:.4g} h",
            why, step * 60, span, step * 60, span),
        {"state the unit: pass --time-unit min (or h, or s), set `time_unit` in a profile, or name it in the "
         "time header, e.g. \"Time [min]\""});
  }
  std::string basis =
      "no unit in the header or profile: read as seconds, the steps between reads being plausible "
      "for a plate reader (time unit rule, README.md)";
  if (!run.channels.empty() && run.channels.front().reads() > 1) {
    const Channel& c = run.channels.front();
    basis = fmt::format(
        "no unit in the header or profile: read as seconds, a median step of {:.4g} s between reads of "
        "{} well{} being plausible for a plate reader (time unit rule, README.md)",
        median_step(c.time_s), c.wells.size(), c.wells.size() == 1 ? "" : "s");
  }
  run.read_facts.push_back({"time_unit", "s", basis});
  warn_long_steps(run, "no unit stated",
                  "pass --time-unit ms, set `time_unit` in a profile, or name it in the time header (\"Time [ms]\")");
}

}  // namespace

std::string channel_basis(const SectionStart& s, const Profile& p) {
  if (s.line > 0) return fmt::format("the section label at line {}", s.line);
  return fmt::format("no section label: profile {} `signal.name`", p.name);
}

void check_stated_unit(const Profile& p, std::optional<TimeUnit> stated, const Where& where, std::string_view what) {
  // A profile's time_unit is for times whose header names none (instrument-profiles/README.md);
  // --time-unit is said of this file, so a header that says otherwise is a contradiction.
  if (!stated || p.time_unit_from.rfind("--time-unit", 0) != 0 || *stated == p.time_unit) return;
  throw InputError(where,
                   fmt::format("expected times in {} as {} states, found {} stating {}", to_string(p.time_unit),
                               p.time_unit_from, what, to_string(*stated)),
                   {fmt::format("leave out the unit ({} states it), or correct it", what)});
}

void ReadInfo::saw_overflow(std::string_view token) {
  const std::string t(trim(token));
  if (std::find(overflow_seen.begin(), overflow_seen.end(), t) == overflow_seen.end()) overflow_seen.push_back(t);
}

void ReadInfo::saw_preamble(std::string_view line, int ln) {
  if (wavelengths.size() > 8) return;  // enough to know there is more than one
  const auto digit = [&](std::size_t i) { return std::isdigit(static_cast<unsigned char>(line[i])) != 0; };
  for (std::size_t at = line.find("nm"); at != std::string_view::npos; at = line.find("nm", at + 2)) {
    if (at + 2 < line.size() && std::isalnum(static_cast<unsigned char>(line[at + 2]))) continue;  // "nmol"
    std::size_t end = at;
    while (end > 0 && line[end - 1] == ' ') --end;
    std::size_t begin = end;
    while (begin > 0 && digit(begin - 1)) --begin;
    if (end - begin < 3 || end - begin > 4 || (begin > 0 && (line[begin - 1] == '.' || line[begin - 1] == ',')))
      continue;
    const int nm = std::stoi(std::string(line.substr(begin, end - begin)));
    if (nm < 200 || nm > 1000) continue;
    if (std::none_of(wavelengths.begin(), wavelengths.end(), [&](const Wavelength& w) { return w.nm == nm; }))
      wavelengths.push_back({nm, std::string(line.substr(begin, at + 2 - begin)), ln});
  }
}

namespace {
// A file with one channel that no section names, and one wavelength in the lines outside its
// data ("Wavelength: 340 nm"): the channel is named from it, A340 (absorbance, AU), unless the
// profile names the channel (`signal.name`).
void channel_from_wavelength(Run& run, ReadInfo& info, const Profile& p) {
  if (run.channels.size() != 1 || info.channels.size() != 1 || info.wavelengths.size() != 1) return;
  if (p.signal_name != Profile{}.signal_name || run.channels[0].name != p.signal_name) return;
  if (info.channels[0].second.rfind("no section label", 0) != 0) return;
  const auto& w = info.wavelengths[0];
  Channel& c = run.channels[0];
  c.name = fmt::format("A{}", w.nm);
  c.quantity = Quantity::other;
  c.unit.clear();
  guess_quantity(c.name, c.quantity, c.unit);
  info.channels[0] = {c.name, fmt::format("no section label; the wavelength \"{}\" at line {}, the only one "
                                          "outside the data, read as an absorbance channel",
                                          w.text, w.line)};
}
}  // namespace

void settle_reading(Run& run, ReadInfo& info, const Profile& p) {
  settle_time_unit(run, info);
  channel_from_wavelength(run, info, p);
  const std::string from_profile = fmt::format("profile {}", p.name);
  run.read_facts.insert(run.read_facts.begin(), ReadFact{"shape", run.shape, from_profile});
  if (info.delimiter != 0) {
    run.read_facts.insert(
        run.read_facts.begin() + 1,
        ReadFact{"delimiter", delimiter_name(info.delimiter),
                 info.delimiter_line > 0
                     ? fmt::format("guessed from line {} (the most frequent of tab, ';', ',')", info.delimiter_line)
                     : from_profile + " `delimiter`"});
  }
  run.read_facts.insert(run.read_facts.end() - 1,
                        ReadFact{"decimal", fmt::format("'{}'", p.decimal), from_profile + " `decimal`"});
  run.read_facts.push_back(
      {"plate", fmt::format("{} wells ({} × {})", run.format.wells(), run.format.rows, run.format.columns),
       run.format_inferred ? "the smallest standard plate holding every well read" : from_profile + " `plate`"});
  for (const auto& [name, basis] : info.channels) run.read_facts.push_back({"channel", name, basis});
  std::string seen;
  for (const auto& t : info.overflow_seen) seen += (seen.empty() ? "\"" : ", \"") + t + "\"";
  std::string basis = fmt::format("{} `overflow` ({})", from_profile, quoted_list(p.overflow_tokens));
  const auto in_list = [&](const std::string& t) {
    return std::any_of(p.overflow_tokens.begin(), p.overflow_tokens.end(),
                       [&](const std::string& tok) { return iequals(t, tok); });
  };
  if (std::any_of(info.overflow_seen.begin(), info.overflow_seen.end(), [&](const auto& t) { return !in_list(t); }))
    basis += ", and the spellings every profile reads: a value above the range (\">3.5\"), a run of '*', or " +
             quoted_list(std::vector<std::string>(std::begin(k_overflow_words), std::end(k_overflow_words))) +
             " in any case";
  run.read_facts.push_back({"overflow_tokens", seen.empty() ? "none in the file" : seen, basis});
  constexpr std::size_t k_notes = 50;  // a file with a blank line after every row says so once
  if (info.notes.size() > k_notes) {
    const std::size_t more = info.notes.size() - k_notes;
    info.notes.resize(k_notes);
    info.notes.push_back(fmt::format("… and {} more lines read through the same way", more));
  }
  run.read_notes = std::move(info.notes);
}

std::optional<InputError> delimiter_error(Where where, std::string_view line, char used, std::size_t fields,
                                          std::string_view what) {
  const char other = guess_delimiter(line);
  if (other == 0 || other == used) return std::nullopt;
  std::vector<Field> f;
  split_fields_into(line, other, f);
  if (f.size() != fields && !(f.size() == fields + 1 && trim(f.back().text).empty())) return std::nullopt;
  return InputError(std::move(where),
                    fmt::format("expected {} separated by {}, found a line separated by {}: a delimiter problem", what,
                                delimiter_name(used), delimiter_name(other)),
                    {fmt::format("write every line with {} (this line is split with {} into {} fields), or set "
                                 "`delimiter` in the profile (\"auto\" guesses it per file)",
                                 delimiter_name(used), delimiter_name(other), f.size())});
}

bool looks_like_data_row(const CompiledProfile& cp, std::string_view line, char d) {
  if (d == 0) return false;
  thread_local std::vector<FieldView> f;  // views, reused per thread: no allocation per line
  thread_local std::string scratch;
  split_views_into(line, d, f, scratch);
  if (f.size() < 2 || trim(f[0].text).empty()) return false;
  int numbers = 0;
  for (std::size_t i = 1; i < f.size(); ++i) {
    double v = 0;
    switch (read_cell(cp, f[i].text, v)) {
      case CellKind::bad:
        return false;
      case CellKind::number:
        ++numbers;
        break;
      default:
        break;
    }
  }
  return numbers > 0;
}

// A line that reads as an observation: >= 3 fields, exactly one a well name, at most one
// other text (a channel name), the rest numbers or overflow/missing tokens (one number at least).
bool looks_like_observation(const CompiledProfile& cp, std::string_view line, char d) {
  if (d == 0 || trim(line).front() == '#') return false;
  thread_local std::vector<FieldView> f;  // views, reused per thread: no allocation per line
  thread_local std::string scratch;
  split_views_into(line, d, f, scratch);
  if (f.size() < 3) return false;
  // The well names first: only a line with exactly one has its other cells read (a wide
  // export's rows, which detection tries the long profiles on, have none or many).
  int wells = 0, numbers = 0, texts = 0;
  std::size_t well_at = 0;
  for (std::size_t i = 0; i < f.size(); ++i)
    if (parse_well(f[i].text)) {
      if (++wells > 1) return false;
      well_at = i;
    }
  if (wells != 1) return false;
  for (std::size_t i = 0; i < f.size(); ++i) {
    if (i == well_at) continue;
    double v = 0;
    const CellKind k = read_cell(cp, f[i].text, v);
    texts += k == CellKind::bad;
    numbers += k == CellKind::number;
    if (texts > 1) return false;
  }
  return wells == 1 && texts <= 1 && numbers > 0;
}

}  // namespace vzero::detail
