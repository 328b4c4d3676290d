// The building blocks of the option table (option_table*.cpp): one OptionSpec per call,
// the groups of `--help`, the usual number ranges. Internal to src/settings/.
#pragma once
#include <fmt/format.h>
#include <cmath>
#include <string>
#include <string_view>

#include "core/text.hpp"
#include "vzero/convert.hpp"
#include "vzero/settings.hpp"

namespace vzero::detail::options {

using S = RunSettings;
using V = OptionValue;

constexpr std::string_view k_io = "inputs and outputs";
constexpr std::string_view k_conv = "conversion to concentration";
constexpr std::string_view k_blank = "blanks and direction";
constexpr std::string_view k_rate = "rate finder";

constexpr NumberRange k_any{};
constexpr NumberRange k_positive{0, 1e300, true, false};
constexpr NumberRange k_non_negative{0, 1e300, false, false};
constexpr NumberRange k_alpha{0, 0.5, false, true};

inline OptionSpec number(std::string_view name, std::string_view group, std::string_view def, std::string_view unit,
                         NumberRange range, double* (*field)(S&), std::string_view help, double scale = 1) {
  OptionSpec o;
  o.name = name;
  o.group = group;
  o.kind = OptionKind::number;
  o.default_text = def;
  o.unit = unit;
  o.range = range;
  o.number_field = field;
  o.scale = scale;
  o.help = help;
  return o;
}

inline OptionSpec text(std::string_view name, char short_name, std::string_view group, OptionRole role,
                       std::string_view def, std::string* (*field)(S&), std::string_view help) {
  OptionSpec o;
  o.name = name;
  o.short_name = short_name;
  o.group = group;
  o.kind = OptionKind::text;
  o.role = role;
  o.default_text = def;
  o.text_field = field;
  o.help = help;
  return o;
}

inline OptionSpec choice(std::string_view name, std::string_view group, std::string_view def,
                         std::vector<std::string_view> words, std::string (*apply)(S&, const V&),
                         std::string (*current)(const S&), std::string_view help) {
  OptionSpec o;
  o.name = name;
  o.group = group;
  o.kind = OptionKind::choice;
  o.default_text = def;
  o.choices = std::move(words);
  o.apply = apply;
  o.current = current;
  o.help = help;
  return o;
}

// A choice among an enum's words (its one table, include/vzero/enum_names.hpp), stored in
// the field `Field` returns.
template <class E, E& (*Field)(S&)>
inline OptionSpec enum_choice(std::string_view name, std::string_view group, std::string_view def,
                              std::string_view help) {
  return choice(
      name, group, def, enum_words<E>(),
      [](S& s, const V& v) -> std::string { return parse_enum(v.text, Field(s)) ? "" : "?"; },
      [](const S& s) { return std::string(enum_text(Field(const_cast<S&>(s)))); }, help);
}
inline BlankStrategy& blank_strategy_of(S& s) { return s.analysis.blank.strategy; }
inline BlankMode& blank_mode_of(S& s) { return s.analysis.blank.mode; }
inline Direction& direction_of(S& s) { return s.analysis.direction; }
inline WindowMethod& window_of(S& s) { return s.analysis.rates.window; }
inline Estimator& estimator_of(S& s) { return s.analysis.rates.estimator; }
inline TangentMode& tangent_of(S& s) { return s.analysis.rates.tangent; }

inline OptionSpec special(std::string_view name, std::string_view group, OptionKind kind, OptionRole role,
                          std::string_view def, std::string (*apply)(S&, const V&), std::string_view help) {
  OptionSpec o;
  o.name = name;
  o.group = group;
  o.kind = kind;
  o.role = role;
  o.default_text = def;
  o.apply = apply;
  o.help = help;
  return o;
}

inline std::string epsilon_preset_names() {
  std::string out;
  for (const auto& p : epsilon_presets()) out += (out.empty() ? "" : ", ") + std::string(p.name);
  return out;
}

}  // namespace vzero::detail::options
