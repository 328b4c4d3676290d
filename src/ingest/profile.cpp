#include "vzero/profile.hpp"
#include "core/files.hpp"

#include <re2/re2.h>

#include <fmt/format.h>
#include <toml++/toml.h>
#include <algorithm>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <set>
#include <sstream>

#include "core/text.hpp"
#include "vzero/error.hpp"

namespace vzero {

std::string_view to_string(Shape s) {
  switch (s) {
    case Shape::wide:
      return "wide";
    case Shape::grid:
      return "grid";
    case Shape::long_form:
      return "long";
  }
  return "wide";
}

std::string_view to_string(TimeUnit t) {
  switch (t) {
    case TimeUnit::seconds:
      return "s";
    case TimeUnit::minutes:
      return "min";
    case TimeUnit::hours:
      return "h";
    case TimeUnit::milliseconds:
      return "ms";
  }
  return "s";
}

namespace {

// Reads one profile; every accessor reports errors with the TOML line of the value.
class ProfileParser {
 public:
  ProfileParser(const toml::table& root, std::string source) : root_(root), source_(std::move(source)) {}

  Profile parse(const std::string& name) {
    Profile p;
    p.name = name;
    p.source = source_;
    check_keys(root_, "",
               {"name", "description", "shape", "delimiter", "decimal", "plate", "time_unit", "overflow", "missing",
                "columns", "signal", "section", "grid", "capture"});
    if (auto v = string_at(root_, "name", "")) p.name = *v;
    if (auto v = string_at(root_, "description", "")) p.description = *v;
    parse_shape(p);
    parse_text_format(p);
    parse_plate(p);
    parse_time_unit(p);
    if (auto v = strings_at(root_, "overflow", "")) p.overflow_tokens = *v;
    if (auto v = strings_at(root_, "missing", "")) p.missing_tokens = *v;
    parse_columns(p);
    parse_sections(p);
    parse_grid(p);
    parse_captures(p);
    if (p.shape == Shape::grid && p.grid_read_label.empty()) {
      fail(root_, "a grid profile needs [grid] read_label",
           "add [grid] read_label = '<regex whose group 1 is the read time>'");
    }
    return p;
  }

 private:
  // shape = "wide" | "grid" | "long" (required).
  void parse_shape(Profile& p) const {
    auto shape = string_at(root_, "shape", "");
    if (!shape) fail(root_, "the profile has no `shape`", "add shape = \"wide\", \"grid\" or \"long\"");
    if (*shape == "wide")
      p.shape = Shape::wide;
    else if (*shape == "grid")
      p.shape = Shape::grid;
    else if (*shape == "long")
      p.shape = Shape::long_form;
    else
      bad_value(root_, "shape", *shape, "\"wide\", \"grid\" or \"long\"");
  }

  // delimiter and decimal, which must differ.
  void parse_text_format(Profile& p) const {
    if (auto v = string_at(root_, "delimiter", "")) {
      if (*v == "auto")
        p.delimiter = 0;
      else if (*v == "," || *v == ";")
        p.delimiter = (*v)[0];
      else if (*v == "tab" || *v == "\t")
        p.delimiter = '\t';
      else
        bad_value(root_, "delimiter", *v, "\"auto\", \",\", \";\" or \"tab\"");
    }
    if (auto v = string_at(root_, "decimal", "")) {
      if (*v == "." || *v == ",")
        p.decimal = (*v)[0];
      else
        bad_value(root_, "decimal", *v, "\".\" or \",\"");
    }
    if (p.decimal == p.delimiter) {
      fail(*root_.get(root_.contains("delimiter") ? "delimiter" : "decimal"),
           fmt::format("profile keys `decimal` and `delimiter` are both \"{}\"", p.decimal),
           "set delimiter = \";\" or \"tab\" when decimal = \",\"");
    }
  }

  // plate = 0 (infer) or a plate format's well count.
  void parse_plate(Profile& p) const {
    if (auto n = root_.get("plate")) {
      // toml++ 3.3 casts a float to int64 without a range check (undefined for 1e80), so a
      // float is converted here, and only when it is a small whole number (96.0).
      std::optional<int64_t> v;
      if (n->is_integer()) v = n->value<int64_t>();
      if (auto d = n->as_floating_point(); d && std::fabs(d->get()) <= 1e6 && d->get() == std::floor(d->get()))
        v = static_cast<int64_t>(d->get());
      // Range first: the int cast of 2^32 + 96 would be 96.
      if (!v || *v < 0 || *v > 1536 || (*v != 0 && !plate_format_for(static_cast<int>(*v))))
        bad_value(root_, "plate",
                  n->is_integer()          ? std::to_string(*v)
                  : n->is_floating_point() ? fmt::format("{}", n->as_floating_point()->get())
                                           : "not a number",
                  "0 (infer) or one of 6, 12, 24, 48, 96, 384, 1536");
      p.plate_wells = static_cast<int>(*v);
    }
  }

  void parse_time_unit(Profile& p) const {
    if (auto v = string_at(root_, "time_unit", "")) {
      if (*v == "s")
        p.time_unit = TimeUnit::seconds;
      else if (*v == "min")
        p.time_unit = TimeUnit::minutes;
      else if (*v == "h")
        p.time_unit = TimeUnit::hours;
      else if (*v == "ms")
        p.time_unit = TimeUnit::milliseconds;
      else
        bad_value(root_, "time_unit", *v, "\"s\", \"min\", \"h\" or \"ms\"");
      p.time_unit_from = "profile " + source_;
    }
  }

  // [columns] (the wide and long shapes' column names) and [signal].
  void parse_columns(Profile& p) const {
    if (const auto* cols = table_at(root_, "columns")) {
      check_keys(*cols, "columns.", {"time", "temperature", "well", "value", "channel", "ignore"});
      if (auto v = strings_at(*cols, "time", "columns.")) p.time_columns = *v;
      if (auto v = strings_at(*cols, "temperature", "columns.")) p.temperature_columns = *v;
      if (auto v = strings_at(*cols, "well", "columns.")) p.well_columns = *v;
      if (auto v = strings_at(*cols, "value", "columns.")) p.value_columns = *v;
      if (auto v = strings_at(*cols, "channel", "columns.")) p.channel_columns = *v;
      if (auto v = strings_at(*cols, "ignore", "columns.")) p.ignore_columns = *v;
    }
    if (const auto* sig = table_at(root_, "signal")) {
      check_keys(*sig, "signal.", {"name", "quantity", "unit"});
      if (auto v = string_at(*sig, "name", "signal.")) p.signal_name = *v;
      if (auto v = string_at(*sig, "quantity", "signal.")) p.signal_quantity = quantity(*sig, "signal.quantity", *v);
      if (auto v = string_at(*sig, "unit", "signal.")) p.signal_unit = *v;
    }
  }

  // [[section]]: a block's label line and what its reads measure.
  void parse_sections(Profile& p) const {
    for (const auto* t : tables_at(root_, "section")) {
      check_keys(*t, "section.", {"label", "name", "quantity", "unit"});
      SectionRule r;
      r.line = line_of(*t);
      auto label = string_at(*t, "label", "section.");
      if (!label) fail(*t, "a [[section]] has no `label`", "add label = '<regex matching the section line>'");
      r.label = *label;
      if (auto v = string_at(*t, "name", "section.")) r.name = *v;
      if (auto v = string_at(*t, "quantity", "section.")) r.quantity = quantity(*t, "section.quantity", *v);
      if (auto v = string_at(*t, "unit", "section.")) r.unit = *v;
      regex(*t, "section.label", r.label);
      p.sections.push_back(std::move(r));
    }
  }

  // [grid] read_label: the line above each read's grid, its group 1 the read time.
  void parse_grid(Profile& p) const {
    if (const auto* g = table_at(root_, "grid")) {
      check_keys(*g, "grid.", {"read_label"});
      if (auto v = string_at(*g, "read_label", "grid.")) {
        p.grid_read_label = *v;
        p.grid_read_line = line_of(*g->get("read_label"));
        regex(*g, "grid.read_label", *v, 2);
        if (RE2(*v, RE2::Quiet).NumberOfCapturingGroups() < 1)
          fail(*g->get("read_label"), "profile key `grid.read_label` needs a capture group for the read time",
               "put the time in parentheses, e.g. 'Read \\d+ at ([0-9:.]+)'");
      }
    }
  }

  // [[capture]]: header lines kept as metadata.
  void parse_captures(Profile& p) const {
    for (const auto* t : tables_at(root_, "capture")) {
      check_keys(*t, "capture.", {"pattern", "key"});
      CaptureRule r;
      r.line = line_of(*t);
      auto pat = string_at(*t, "pattern", "capture.");
      auto key = string_at(*t, "key", "capture.");
      if (!pat || !key) fail(*t, "a [[capture]] needs both `pattern` and `key`", "add the missing key");
      r.pattern = *pat;
      r.key = *key;
      regex(*t, "capture.pattern", r.pattern, r.key == "$1" ? 2 : 1);
      if (r.key == "$1" && RE2(r.pattern, RE2::Quiet).NumberOfCapturingGroups() != 2)
        fail(*t->get("pattern"), "a [[capture]] with key = \"$1\" needs two capture groups (key, value)",
             "add a second group for the value, or give a fixed key");
      p.captures.push_back(std::move(r));
    }
  }

  [[noreturn]] void fail(const toml::node& n, const std::string& what, const std::string& fix) const {
    throw InputError(Where{source_, line_of(n), column_of(n)}, what, {fix});
  }
  static int line_of(const toml::node& n) { return static_cast<int>(n.source().begin.line); }
  static int column_of(const toml::node& n) { return static_cast<int>(n.source().begin.column); }

  void check_keys(const toml::table& t, const std::string& prefix, std::set<std::string> allowed) const {
    for (const auto& [k, v] : t) {
      std::string key(k.str());
      if (!allowed.count(key)) {
        std::string list;
        for (const auto& a : allowed) list += (list.empty() ? "" : ", ") + a;
        throw InputError(
            Where{source_, static_cast<int>(k.source().begin.line), static_cast<int>(k.source().begin.column)},
            fmt::format("unknown profile key `{}{}`", prefix, key), {fmt::format("use one of: {}", list)});
      }
    }
  }
  [[noreturn]] void bad_value(const toml::table& t, const std::string& key, const std::string& found,
                              const std::string& expected) const {
    const toml::node* n = t.get(key);
    fail(n ? *n : static_cast<const toml::node&>(t),
         fmt::format("profile key `{}` is \"{}\"; expected {}", key, found, expected),
         fmt::format("set {} to {}", key, expected));
  }
  std::optional<std::string> string_at(const toml::table& t, const std::string& key, const std::string& prefix) const {
    const toml::node* n = t.get(key);
    if (!n) return std::nullopt;
    if (auto s = n->value<std::string>(); s && n->is_string()) return *s;
    fail(*n, fmt::format("profile key `{}{}` must be a string", prefix, key), fmt::format("write {} = \"...\"", key));
  }
  std::optional<std::vector<std::string>> strings_at(const toml::table& t, const std::string& key,
                                                     const std::string& prefix) const {
    const toml::node* n = t.get(key);
    if (!n) return std::nullopt;
    std::vector<std::string> out;
    if (n->is_string()) return std::vector<std::string>{*n->value<std::string>()};
    if (const auto* a = n->as_array()) {
      for (const auto& e : *a) {
        if (!e.is_string())
          fail(e, fmt::format("profile key `{}{}` must be a list of strings", prefix, key),
               fmt::format("write {} = [\"...\", \"...\"]", key));
        out.push_back(*e.value<std::string>());
      }
      return out;
    }
    fail(*n, fmt::format("profile key `{}{}` must be a list of strings", prefix, key),
         fmt::format("write {} = [\"...\", \"...\"]", key));
  }
  const toml::table* table_at(const toml::table& t, const std::string& key) const {
    const toml::node* n = t.get(key);
    if (!n) return nullptr;
    if (const auto* tt = n->as_table()) return tt;
    fail(*n, fmt::format("profile key `{}` must be a table ([{}])", key, key),
         fmt::format("write [{}] on its own line", key));
  }
  std::vector<const toml::table*> tables_at(const toml::table& t, const std::string& key) const {
    std::vector<const toml::table*> out;
    const toml::node* n = t.get(key);
    if (!n) return out;
    const auto* a = n->as_array();
    if (!a)
      fail(*n, fmt::format("profile key `{}` must be an array of tables ([[{}]])", key, key),
           fmt::format("write [[{}]] before each entry", key));
    for (const auto& e : *a) {
      if (!e.is_table())
        fail(e, fmt::format("`{}` entries must be tables", key), fmt::format("write [[{}]] before each entry", key));
      out.push_back(e.as_table());
    }
    return out;
  }
  Quantity quantity(const toml::table& t, const std::string& key, const std::string& v) const {
    if (auto q = parse_quantity(v)) return *q;
    const toml::node* n = t.get(key.substr(key.find('.') + 1));
    fail(n ? *n : static_cast<const toml::node&>(t),
         fmt::format("profile key `{}` is \"{}\"; expected absorbance, fluorescence, luminescence or other", key, v),
         fmt::format("set {} to one of absorbance, fluorescence, luminescence, other", key));
  }
  void regex(const toml::table& t, const std::string& key, const std::string& pattern, int max_groups = 1) const {
    RE2 re(pattern, RE2::Quiet);
    const toml::node* n = t.get(key.substr(key.find('.') + 1));
    const toml::node& where = n ? *n : static_cast<const toml::node&>(t);
    if (!re.ok()) {
      fail(where, fmt::format("profile key `{}` is not a valid RE2 regex: {}", key, re.error()),
           "fix the regex (RE2 syntax: no look-around or back-references)");
    }
    if (re.NumberOfCapturingGroups() > max_groups) {
      fail(where,
           fmt::format("profile key `{}` has {} capture groups; expected at most {}", key, re.NumberOfCapturingGroups(),
                       max_groups),
           "make other groups non-capturing: (?:...)");
    }
  }

  const toml::table& root_;
  std::string source_;
};

}  // namespace

std::string Profile::validate() const {
  if (decimal == delimiter)
    return "decimal and delimiter are the same character; set delimiter = \";\" when decimal = \",\"";
  if (shape == Shape::grid && grid_read_label.empty()) return "grid.read_label is empty; a grid profile needs it";
  if (time_columns.empty() && shape != Shape::grid) return "columns.time is empty; list the time column's header names";
  if (shape == Shape::long_form && (well_columns.empty() || value_columns.empty()))
    return "columns.well and columns.value must name the long shape's columns";
  return {};
}

Profile parse_profile(std::string_view text, const std::string& source, const std::string& name) {
  toml::table root;
  try {
    root = toml::parse(text, source);
  } catch (const toml::parse_error& e) {
    throw InputError(Where{source, static_cast<int>(e.source().begin.line), static_cast<int>(e.source().begin.column)},
                     fmt::format("the profile is not valid TOML: {}", e.description()),
                     {"see instrument-profiles/README.md for the profile format"});
  }
  Profile p = ProfileParser(root, source).parse(name);
  if (auto why = p.validate(); !why.empty()) throw InputError(Where{source}, why, {});
  return p;
}

void state_time_unit(Profile& p, const std::string& unit) {
  if (unit == "s")
    p.time_unit = TimeUnit::seconds;
  else if (unit == "min")
    p.time_unit = TimeUnit::minutes;
  else if (unit == "h")
    p.time_unit = TimeUnit::hours;
  else if (unit == "ms")
    p.time_unit = TimeUnit::milliseconds;
  else
    throw UsageError(fmt::format("--time-unit is \"{}\"; use s, min, h or ms", unit));
  p.time_unit_from = "--time-unit " + unit;
}

std::vector<std::string> builtin_profile_names() {
  std::vector<std::string> out;
  for (const auto& e : detail::embedded_profiles()) out.emplace_back(e.name);
  std::sort(out.begin(), out.end());
  return out;
}

std::optional<Profile> builtin_profile(const std::string& name) {
  for (const auto& e : detail::embedded_profiles()) {
    if (name == e.name) {
      Profile p = parse_profile(e.text, std::string("built-in profile ") + e.name, e.name);
      p.source = "built-in";
      p.time_unit_from.clear();  // a built-in's time_unit is a default (see Profile)
      return p;
    }
  }
  return std::nullopt;
}

Profile load_profile(const std::string& name_or_path) {
  namespace fs = std::filesystem;
  // A plain name: the user's profile folders first, as detection tries them.
  if (fs::path(name_or_path).extension() != ".toml") {
    for (auto& p : folder_profiles())
      if (p.name == name_or_path) return std::move(p);
  }
  if (auto p = builtin_profile(name_or_path)) return std::move(*p);
  std::error_code ec;
  if (!fs::is_regular_file(name_or_path, ec)) {
    std::string names;
    for (const auto& n : builtin_profile_names()) names += (names.empty() ? "" : ", ") + n;
    throw InputError(Where{}, fmt::format("no profile named \"{}\" and no such file", name_or_path),
                     {fmt::format("use a built-in profile ({}), one of your profile folders (vzero profile list) or the path of "
                                  "a .toml profile",
                                  names)});
  }
  detail::FileBytes f = detail::read_whole_file(name_or_path, "check the --profile path");
  Profile p = parse_profile(f.text, name_or_path, fs::path(name_or_path).stem().string());
  p.sha256 = std::move(f.sha256);
  return p;
}

}  // namespace vzero
