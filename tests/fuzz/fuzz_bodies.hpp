// Bodies of the fuzz targets, shared by the libFuzzer programs (tests/fuzz/fuzz_*.cpp)
// and by tests/fuzz_regressions_test.cpp, which replays every saved input under
// tests/fuzz/regressions/ in the ordinary (and sanitized) test builds.
//
// Each body feeds one input to one reader. An InputError is the expected answer to bad
// input; any other exception escapes (libFuzzer reports it as a crash). When a reader
// returns, the result is checked against the invariants its header promises; a body
// returns "" when all hold, else what broke.
#pragma once

#include <unistd.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstring>
#include <string>
#include <string_view>
#include <vector>

#include "ingest/xlsx.hpp"
#include "vzero/error.hpp"
#include "vzero/ingest.hpp"
#include "vzero/method.hpp"
#include "vzero/plate_map.hpp"
#include "vzero/profile.hpp"
#include "vzero/run.hpp"

namespace vzero::fuzz {

inline std::string_view as_text(const std::uint8_t* data, std::size_t size) {
  return {reinterpret_cast<const char*>(data), size};
}

// Invariants of run.hpp that every reader must keep: a standard plate format, at least one
// channel, finite strictly increasing times, matrices of reads × wells, wells ascending and
// on the plate, and a value that is finite exactly when its status is ok (NaN otherwise).
inline std::string check_run(const Run& run) {
  auto f = plate_format_for(run.format.wells());
  if (!f || !(*f == run.format)) return "plate format is not a standard one";
  if (run.channels.empty()) return "no channels";
  for (const auto& c : run.channels) {
    const auto reads = static_cast<Eigen::Index>(c.time_s.size());
    const auto wells = static_cast<Eigen::Index>(c.wells.size());
    if (reads == 0) return "channel " + c.name + " has no reads";
    if (wells == 0) return "channel " + c.name + " has no wells";
    for (std::size_t r = 0; r < c.time_s.size(); ++r) {
      if (!std::isfinite(c.time_s[r])) return "channel " + c.name + " has a time that is not finite";
      if (r > 0 && !(c.time_s[r] > c.time_s[r - 1])) return "channel " + c.name + " times do not increase";
    }
    if (!c.temperature_c.empty() && c.temperature_c.size() != c.time_s.size())
      return "channel " + c.name + " temperature count differs from the read count";
    if (c.values.rows() != reads || c.values.cols() != wells || c.status.rows() != reads || c.status.cols() != wells)
      return "channel " + c.name + " matrices are not reads × wells";
    for (std::size_t j = 0; j < c.wells.size(); ++j) {
      if (c.wells[j] < 0 || c.wells[j] >= run.format.wells()) return "channel " + c.name + " has a well off the plate";
      if (j > 0 && c.wells[j] <= c.wells[j - 1]) return "channel " + c.name + " wells are not ascending";
    }
    for (Eigen::Index r = 0; r < reads; ++r) {
      for (Eigen::Index j = 0; j < wells; ++j) {
        bool ok = c.status(r, j) == ReadStatus::ok;
        double v = c.values(r, j);
        if (ok && !std::isfinite(v)) return "channel " + c.name + " has an ok value that is not finite";
        if (!ok && !std::isnan(v)) return "channel " + c.name + " stores a number under a non-ok status";
      }
    }
  }
  for (std::size_t i = 0; i < run.channels.size(); ++i)
    for (std::size_t k = 0; k < i; ++k)
      if (run.channels[i].name == run.channels[k].name) return "two channels are named " + run.channels[i].name;
  return {};
}

// Small exports of each shape, used to exercise a fuzzed profile's regexes and options.
inline const std::vector<std::string_view>& sample_exports() {
  static const std::vector<std::string_view> all = {
      "Operator: fuzz\nChannel: A405\nTime [s],Temp [C],A1,A2,B1\n0,25.0,0.1,0.2,OVER\n30,25.1,0.15,,0.3\n\n"
      "Channel: A340\nTime [s],A1,A2,B1\n0,1,2,3\n60,1.5,2.5,NA\n",
      "Channel: A405\nRead 1 at 0:00:00 (25.0 C)\n\t1\t2\n A\t0.1\t0.2\nB\t0.3\tOVER\n\n"
      "Read 2 at 0:00:30 (25.1 C)\n\t1\t2\nA\t0.2\t0.3\nB\t0.4\t-\n",
      "# Note: fuzz\nwell;channel;time_min;temperature_c;value\nA1;A405;0;25,0;0,1\nA1;A405;0,5;25,1;0,2\n"
      "B2;A405;0;25,0;OVER\n",
      "well,time,value\nA1,0,1\nA1,1:00,2\nP24,0,3\n",
  };
  return all;
}

// One read attempt; "" on success or InputError, else the broken invariant.
inline std::string read_one(std::string_view text, const Profile& p) {
  try {
    Run run = read_run_text("fuzz-input", text, p);
    std::string why = check_run(run);
    return why.empty() ? why : p.name + ": " + why;
  } catch (const InputError&) {
    return {};
  }
}

// Profile TOML: parse it, then run the profile on the sample exports.
inline std::string fuzz_profile(std::string_view text) {
  Profile p;
  try {
    p = parse_profile(text, "fuzz.toml", "fuzz");
  } catch (const InputError&) {
    return {};
  }
  for (auto sample : sample_exports())
    if (auto why = read_one(sample, p); !why.empty()) return why;
  return {};
}

// The built-in profiles of one shape, plus a variant of the first with other options
// (plate fixed at 96, plain-number times in minutes, delimiter guessed) so that those
// code paths see the fuzzed input too.
inline const std::vector<Profile>& profiles_of(Shape shape) {
  static const std::vector<std::vector<Profile>> by_shape = [] {
    std::vector<std::vector<Profile>> out(3);
    for (const auto& name : builtin_profile_names()) {
      Profile p = load_profile(name);
      out[static_cast<std::size_t>(p.shape)].push_back(p);
    }
    for (auto& list : out) {
      if (list.empty()) continue;
      Profile v = list.front();
      v.name += "+variant";
      v.plate_wells = 96;
      v.time_unit = TimeUnit::minutes;
      if (v.decimal == '.') v.delimiter = 0;
      list.push_back(v);
    }
    return out;
  }();
  return by_shape[static_cast<std::size_t>(shape)];
}

// A read's outcome in full: the error's place and message, or every field of the run but
// its source and digest (values by their bits).
inline std::string outcome_of(std::string_view text, const Profile& p) {
  auto bits = [](double v) {
    std::uint64_t b = 0;
    std::memcpy(&b, &v, sizeof b);
    return std::to_string(b);
  };
  try {
    Run run = read_run_text("fuzz-input", text, p);
    std::string s = std::to_string(run.format.rows) + "x" + std::to_string(run.format.columns);
    for (const auto& [k, v] : run.metadata) s += "|" + k + "=" + v;
    for (const auto& c : run.channels) {
      s += "|" + c.name + " " + std::to_string(static_cast<int>(c.quantity)) + " " + c.unit + ":";
      for (double t : c.time_s) s += bits(t) + ",";
      for (double t : c.temperature_c) s += bits(t) + ",";
      for (int w : c.wells) s += std::to_string(w) + ",";
      for (Eigen::Index j = 0; j < c.values.size(); ++j)
        s += bits(c.values.data()[j]) + "/" + std::to_string(static_cast<int>(c.status.data()[j])) + ",";
    }
    return s;
  } catch (const InputError& e) {
    return e.what();
  }
}

// A file with LF line ends reads exactly as its copy with every LF made a lone CR (the same
// lines, so the same run or the same error at the same place), unless its first line is not
// text (NUL, bytes that are not UTF-8): then the CR copy is one line, refused as binary.
inline std::string cr_copy_differs(std::string_view text, const Profile& p) {
  if (text.find('\r') != std::string_view::npos || text.find('\n') == std::string_view::npos) return {};
  std::string cr(text);
  std::replace(cr.begin(), cr.end(), '\n', '\r');
  const std::string lf_outcome = outcome_of(text, p);
  if (lf_outcome.find("found a NUL byte") != std::string::npos ||
      lf_outcome.find("found bytes that are not UTF-8") != std::string::npos)
    return {};
  const std::string cr_outcome = outcome_of(cr, p);
  if (lf_outcome == cr_outcome) return {};
  return p.name + ": the CR-only copy reads otherwise: " + cr_outcome.substr(0, 200) + " instead of " +
         lf_outcome.substr(0, 200);
}

inline std::string fuzz_shape(Shape shape, std::string_view text) {
  for (const auto& p : profiles_of(shape)) {
    if (auto why = read_one(text, p); !why.empty()) return why;
    if (auto why = cr_copy_differs(text, p); !why.empty()) return why;
  }
  return {};
}

// A run holding every well of a 96-well plate except H12, to check mapped wells against.
inline const Run& plate_96_run() {
  static const Run run = [] {
    Run r;
    r.source = "run-96";
    r.format = PlateFormat{8, 12};
    Channel c;
    c.name = "A405";
    c.time_s = {0, 30};
    for (int i = 0; i + 1 < 96; ++i) c.wells.push_back(i);
    c.values = Eigen::MatrixXd::Zero(2, 95);
    c.status = StatusMatrix::Constant(2, 95, ReadStatus::ok);
    r.channels.push_back(std::move(c));
    return r;
  }();
  return run;
}

// Plate map, either form; then the map is checked against a 96-well run.
inline std::string fuzz_plate_map(std::string_view text) {
  PlateMap map;
  try {
    map = parse_plate_map("fuzz-map.csv", text);
  } catch (const InputError&) {
    return {};
  }
  for (const auto& [w, info] : map.wells) {
    if (!(info.well == w)) return "map key differs from the well it holds";
    if (w.row < 0 || w.row >= 32 || w.column < 0 || w.column >= 48) return "mapped well beyond AF48";
    if (info.values.size() != map.columns.size()) return "pass-through values differ from the columns";
    if (info.substrate < 0 || info.standard_conc < 0) return "negative concentration accepted";
    if (info.role == Role::standard && std::isnan(info.standard_conc)) return "standard without standard_conc";
  }
  try {
    check_plate_map(map, plate_96_run());
  } catch (const InputError&) {}
  // Blanks matched by substrate level (--match-column substrate): every well with a substrate
  // carries it as its match, the same value as text.
  MapColumnOptions by_substrate;
  by_substrate.match_column = "substrate";
  try {
    const PlateMap m = parse_plate_map("fuzz-map.csv", text, by_substrate);
    for (const auto& [w, info] : m.wells)
      if (std::isfinite(info.substrate) != !info.match.empty()) return "substrate match without a substrate value";
  } catch (const InputError&) {}
  return {};
}

// Auto-detection works on a path: the input goes to a file of this process first.
inline std::string fuzz_detect(std::string_view text) {
  static const std::string path = "/tmp/vzero-fuzz-detect-" + std::to_string(::getpid()) + ".csv";
  if (std::FILE* f = std::fopen(path.c_str(), "wb")) {
    bool ok = std::fwrite(text.data(), 1, text.size(), f) == text.size();
    ok = std::fclose(f) == 0 && ok;
    if (!ok) return {};
  } else {
    return {};
  }
  try {
    ProfileChoice choice = choose_profile(path, "");
    Run run = read_run(path, choice.profile);
    std::string why = check_run(run);
    return why.empty() ? why : "detected " + choice.profile.name + ": " + why;
  } catch (const InputError&) {
    return {};
  }
}

// A rendered sheet (xlsx.hpp) read by every built-in profile: a reader's error must be moved
// into the sheet (`fuzz.xlsx[Sheet]...`), never left at a line of the rendered text.
inline std::string check_sheet(const detail::SheetText& book) {
  static const std::vector<Profile> profiles = [] {
    std::vector<Profile> v;
    for (const auto& name : builtin_profile_names()) v.push_back(load_profile(name));
    return v;
  }();
  if (!book.text.empty() && book.text.back() != '\n') return "rendered sheet does not end in a newline";
  for (const Profile& p : profiles) {
    try {
      const Run run = detail::in_sheet(book, [&] { return read_run_text(book.file, book.text, p); });
      std::string why = check_run(run);
      if (!why.empty()) return p.name + ": " + why;
    } catch (const InputError& e) {
      if (e.where().file.rfind("fuzz.xlsx[", 0) != 0 || e.where().line != 0)
        return p.name + ": error not placed in the sheet: " + e.formatted();
    }
  }
  return {};
}

// Workbook bytes (.xlsx, an input starting "PK" or as an OLE file does): render_workbook
// (libzip, the workbook parts, the first sheet). Any other input is the XML of a worksheet,
// rendered with a fixed book (render_sheet): zip checksums keep most mutations of a whole
// workbook from reaching its cells. Errors must name the workbook; then check_sheet.
inline std::string fuzz_xlsx(std::string_view bytes) {
  detail::SheetText book{"fuzz.xlsx", "Sheet1", {}, {}, {}};
  try {
    if (bytes.substr(0, 2) == "PK" || bytes.substr(0, 2) == "\xD0\xCF") {
      book = detail::render_workbook("fuzz.xlsx", bytes, "", {});
    } else {
      using K = detail::xlsx::NumberKind;
      static const detail::xlsx::Book fixed{{"Sheet1"},
                                            {"xl/worksheets/sheet1.xml"},
                                            {"Time [s]", "Temp [C]", "A1", "A2", "B1", "Channel: A405", "OVER", "well",
                                             "time_s", "value", "Read 1 at 0:00:10 (25.0 C)", "#N/A", ""},
                                            {K::number, K::time, K::date_time, K::date},
                                            false};
      detail::render_sheet(fixed, bytes, book);
    }
  } catch (const InputError& e) {
    return e.where().file.rfind("fuzz.xlsx", 0) == 0 ? "" : "workbook error names another file: " + e.formatted();
  }
  return check_sheet(book);
}

// Assay method TOML (parse_method) with the long option names of `vzero rates` as keys.
inline std::string fuzz_method(std::string_view text) {
  static const std::vector<std::string> keys = {
      "profile", "epsilon",    "path-cm",        "volume-ul", "well-diameter-mm", "signal-only", "blank",   "direction",
      "skip-s",  "min-points", "max-conversion", "estimator", "signal-ceiling",   "conc-unit",   "threads", "channel"};
  std::vector<MethodEntry> entries;
  try {
    entries = parse_method(text, "fuzz-method.toml", keys);
  } catch (const InputError&) {
    return {};
  }
  for (const auto& e : entries) {
    if (e.line < 1) return "method entry " + e.key + " has no line";
    if (std::find(keys.begin(), keys.end(), e.key) == keys.end()) return "unknown method key accepted: " + e.key;
    if (e.type != "string" && e.type != "integer" && e.type != "float" && e.type != "boolean")
      return "method entry " + e.key + " has type " + e.type;
  }
  return {};
}

}  // namespace vzero::fuzz
