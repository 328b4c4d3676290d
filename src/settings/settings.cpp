// Given options → checked RunSettings, by the rules of the option table.
#include <fmt/format.h>
#include <cmath>
#include <map>

#include "core/text.hpp"
#include "vzero/error.hpp"
#include "vzero/method.hpp"
#include "vzero/settings.hpp"

namespace vzero {

std::string describe_range(const NumberRange& r, OptionKind kind) {
  const char* what = kind == OptionKind::integer ? "a whole number" : "a number";
  const bool has_lo = r.lo > -1e299, has_hi = r.hi < 1e299;
  if (has_lo && has_hi && !r.lo_open && !r.hi_open) return fmt::format("{} from {:g} to {:g}", what, r.lo, r.hi);
  std::string out = what;
  if (has_lo) out += fmt::format(" {} {:g}", r.lo_open ? "above" : "of at least", r.lo);
  if (has_hi) out += fmt::format("{} {} {:g}", has_lo ? " and" : "", r.hi_open ? "below" : "at most", r.hi);
  return out;
}

namespace {

bool in_range(double v, const NumberRange& r) {
  if (r.lo_open ? !(v > r.lo) : !(v >= r.lo)) return false;
  if (r.hi_open ? !(v < r.hi) : !(v <= r.hi)) return false;
  return true;
}

std::string choice_list(const OptionSpec& o) {
  std::string out;
  for (std::size_t i = 0; i < o.choices.size(); ++i)
    out += std::string(i == 0 ? "" : (i + 1 == o.choices.size() ? " or " : ", ")) + std::string(o.choices[i]);
  return out;
}

// Parses `text` by the option's kind and range and stores it. Returns "" or the reason.
std::string store(const OptionSpec& o, const std::string& text, bool from_method, RunSettings& s) {
  OptionValue v;
  v.text = text;
  switch (o.kind) {
    case OptionKind::flag:
      if (from_method && text != "true" && text != "false") return "expected true or false";
      v.on = text != "false";
      break;
    case OptionKind::number:
    case OptionKind::integer: {
      const auto n = detail::parse_number(text);
      if (!n || !std::isfinite(*n)) return "expected " + describe_range(o.range, o.kind);
      if (o.kind == OptionKind::integer && (*n != std::floor(*n) || std::fabs(*n) > 1e9))
        return "expected " + describe_range(o.range, o.kind);
      if (!in_range(*n, o.range)) return "expected " + describe_range(o.range, o.kind);
      v.number = *n;
      break;
    }
    case OptionKind::choice: {
      bool known = false;
      for (auto c : o.choices) known = known || c == text;
      if (!known) return "use " + choice_list(o);
      break;
    }
    case OptionKind::list:
      for (const auto& f : detail::split_fields(text, ',')) {
        auto t = detail::trim(f.text);
        if (!t.empty()) v.list.emplace_back(t);
      }
      break;
    case OptionKind::text:
      break;
  }
  if (o.number_field) *o.number_field(s) = v.number / o.scale;
  if (o.integer_field) *o.integer_field(s) = static_cast<int>(v.number);
  if (o.text_field) *o.text_field(s) = v.text;
  if (o.apply) return o.apply(s, v);
  return {};
}

[[noreturn]] void refuse(const GivenOption& g, const std::string& why, std::vector<std::string> fixes = {}) {
  if (g.file.empty()) throw UsageError(fmt::format("--{} is \"{}\"; {}", g.name, g.text, why));
  if (fixes.empty()) fixes.push_back("correct the value in the method file, or remove the key to use the default");
  throw InputError(Where{g.file, g.line, g.column}, fmt::format("method key `{}` is \"{}\"; {}", g.name, g.text, why),
                   fixes);
}

// A problem with a combination of options: at the method file's line when one of `names`
// came from it, else a usage error.
[[noreturn]] void refuse_combination(const std::map<std::string, const GivenOption*>& given,
                                     std::initializer_list<const char*> names, const std::string& why) {
  for (const char* n : names) {
    auto it = given.find(n);
    if (it != given.end() && !it->second->file.empty())
      throw InputError(Where{it->second->file, it->second->line, it->second->column}, why,
                       {"remove one of the keys from the method file, or override it on the command line"});
  }
  throw UsageError(why);
}

// `channel_epsilon`: a method file's [channel.NAME] table gives an ε, which a path given for
// the whole run serves.
void check_conversion_choice(const std::map<std::string, const GivenOption*>& given, RunSettings& s,
                             bool channel_epsilon) {
  auto has = [&](const char* n) {
    auto it = given.find(n);
    return it != given.end() && it->second->text != "false";
  };
  const bool beer = has("epsilon") || has("epsilon-preset");
  if (has("signal-only") + beer + has("standards") > 1)
    refuse_combination(given, {"signal-only", "standards", "epsilon", "epsilon-preset"},
                       "choose one conversion: --epsilon/--epsilon-preset, --standards or --signal-only");
  if (has("epsilon") && has("epsilon-preset"))
    refuse_combination(given, {"epsilon", "epsilon-preset"}, "give --epsilon or --epsilon-preset, not both");
  if (beer) s.analysis.convert.mode = ConvertMode::beer_lambert;
  if ((has("path-cm") || has("volume-ul") || has("well-diameter-mm") || has("water-peak")) && !beer &&
      !channel_epsilon)
    refuse_combination(given, {"path-cm", "volume-ul", "well-diameter-mm", "water-peak"},
                       "a path length (--path-cm, --volume-ul, --well-diameter-mm, --water-peak) needs --epsilon or "
                       "--epsilon-preset");
}

// The checks across options that the table's per-option rules cannot make. "" = fine.
std::string check_combinations(const AnalysisOptions& a) {
  const ConvertOptions& c = a.convert;
  if (c.mode == ConvertMode::beer_lambert) {
    if (std::isnan(c.epsilon_per_m_cm)) return "Beer–Lambert needs the molar absorption coefficient: give --epsilon";
    int ways = !std::isnan(c.path_cm) + (!std::isnan(c.volume_ul) || !std::isnan(c.well_diameter_mm)) + c.water_peak;
    if (ways == 0)
      return "Beer–Lambert needs a path length: give --path-cm, or --volume-ul with --well-diameter-mm, or "
             "--water-peak";
    if (ways > 1)
      return "give only one way to the path length: --path-cm, --volume-ul/--well-diameter-mm, or --water-peak";
    if (std::isnan(c.volume_ul) != std::isnan(c.well_diameter_mm))
      return "the cylinder path needs both --volume-ul and --well-diameter-mm above 0";
  }
  if (!a.enzyme_mg_column.empty() && std::isnan(a.well_volume_ul))
    return "specific activity (--enzyme-mg-column) needs the well volume (--well-volume-ul)";
  if (a.inner_filter_ex.empty() != a.inner_filter_em.empty())
    return "the inner-filter correction needs two channels, EX and EM";
  return {};
}

}  // namespace

namespace {

// The method file's keys as given options, after the caller's.
std::vector<GivenOption> with_method_file(std::vector<GivenOption> given, std::string& sha256) {
  const GivenOption* method = nullptr;
  for (const auto& g : given)
    if (g.name == "method") method = &g;
  if (!method) return given;
  const std::string path = method->text;
  std::vector<std::string> known;
  for (const OptionSpec& o : option_table())
    if (o.name != "method") known.emplace_back(o.name);
  MethodFile file = read_method(path, known, per_channel_options());
  sha256 = file.sha256;
  for (const auto& e : file.entries) {
    const OptionSpec* o = find_option(e.key);
    if (o->kind == OptionKind::flag && e.type != "boolean")
      throw InputError(Where{path, e.line, e.column}, fmt::format("method key `{}` must be true or false", e.key),
                       {fmt::format("write {} = true", e.key)});
    if (o->kind != OptionKind::flag && e.type == "boolean")
      throw InputError(Where{path, e.line, e.column},
                       fmt::format("method key `{}` takes a value, not true/false", e.key), {"see vzero rates --help"});
    given.push_back({e.key, e.value, path, e.line, e.column, e.channel});
  }
  return given;
}

}  // namespace

namespace {

// One [channel.NAME] table: the run's settings with its keys applied, checked.
ChannelSettings channel_settings(const std::vector<const GivenOption*>& keys, const RunSettings& run) {
  RunSettings s = run;
  const GivenOption& first = *keys.front();
  ChannelSettings cs;
  cs.channel = first.channel;
  cs.file = first.file;
  cs.line = first.line;
  cs.column = first.column;
  std::map<std::string, const GivenOption*> by_name;
  for (const GivenOption* g : keys) {
    if (std::string why = store(*find_option(g->name), g->text, true, s); !why.empty()) refuse(*g, why);
    cs.given.emplace_back(g->name, g->text);
    by_name.emplace(g->name, g);
  }
  ConvertOptions& c = s.analysis.convert;
  const auto at = [&](const char* n) { return by_name.count(n) ? by_name.at(n) : nullptr; };
  if (at("epsilon") && at("epsilon-preset"))
    refuse(*at("epsilon-preset"), fmt::format("[channel.{}] also gives epsilon; give one of them", cs.channel));
  if (at("epsilon") || at("epsilon-preset")) c.mode = ConvertMode::beer_lambert;
  if (at("path-cm")) {  // the table's path replaces the run's way to the path length
    c.volume_ul = c.well_diameter_mm = NAN;
    c.water_peak = false;
    if (c.mode != ConvertMode::beer_lambert)
      refuse(*at("path-cm"), fmt::format("a path length needs an ε: give epsilon in [channel.{}] or for the run",
                                         cs.channel));
  }
  if (std::string why = check_combinations(s.analysis); !why.empty())
    throw InputError(Where{first.file, first.line, first.column}, fmt::format("[channel.{}]: {}", cs.channel, why),
                     {"complete the channel's table (epsilon with path-cm), or give the missing option for the run"});
  cs.convert = c;
  cs.direction = s.analysis.direction;
  cs.signal_ceiling = s.analysis.rates.signal_ceiling;
  cs.absorbance_limit = s.analysis.rates.absorbance_limit;
  return cs;
}

void resolve_channel_settings(const std::vector<GivenOption>& given, RunSettings& s) {
  std::vector<std::string> order;
  std::map<std::string, std::vector<const GivenOption*>> by_channel;
  for (const auto& g : given) {
    if (g.channel.empty()) continue;
    if (!by_channel.count(g.channel)) order.push_back(g.channel);
    by_channel[g.channel].push_back(&g);
  }
  for (const auto& name : order) s.analysis.channel_settings.push_back(channel_settings(by_channel[name], s));
}

}  // namespace

const std::vector<std::string>& per_channel_options() {
  static const std::vector<std::string> k_keys{"epsilon",        "epsilon-preset",  "path-cm",
                                               "direction",      "signal-ceiling", "absorbance-limit"};
  return k_keys;
}

ResolvedSettings resolve_settings(const std::vector<GivenOption>& caller_given) {
  ResolvedSettings r;
  const std::vector<GivenOption> all_given = with_method_file(caller_given, r.method_sha256);
  std::vector<GivenOption> given;
  for (const auto& g : all_given)
    if (g.channel.empty()) given.push_back(g);
  std::map<std::string, const GivenOption*> by_name;
  for (const auto& g : given) {
    if (!find_option(g.name)) {
      if (g.file.empty()) throw UsageError(fmt::format("unknown option --{}", g.name));
      throw InputError(Where{g.file, g.line, g.column}, fmt::format("unknown method key `{}`", g.name),
                       {"method keys are the long option names of vzero rates (see vzero rates --help)"});
    }
    by_name.emplace(g.name, &g);  // the first of a name wins
  }
  for (const auto& o : option_table()) {
    auto it = by_name.find(std::string(o.name));
    if (it == by_name.end()) {
      if (!o.default_text.empty()) store(o, std::string(o.default_text), false, r.settings);
    } else {
      const GivenOption& g = *it->second;
      if (std::string why = store(o, g.text, !g.file.empty(), r.settings); !why.empty()) refuse(g, why);
      r.given.emplace_back(o.name);
    }
    if (o.role != OptionRole::analysis) continue;
    if (it != by_name.end())
      r.recorded.emplace_back(
          o.name, o.kind == OptionKind::flag ? (it->second->text == "false" ? "false" : "true") : it->second->text);
    else if (o.kind == OptionKind::flag)
      r.recorded.emplace_back(o.name, "false");
    else if (!o.default_text.empty())
      r.recorded.emplace_back(o.name, o.default_text);
  }
  bool channel_epsilon = false;
  for (const auto& g : all_given)
    channel_epsilon |= !g.channel.empty() && (g.name == "epsilon" || g.name == "epsilon-preset");
  check_conversion_choice(by_name, r.settings, channel_epsilon);
  if (std::string why = check_combinations(r.settings.analysis); !why.empty())
    refuse_combination(
        by_name,
        {"epsilon", "path-cm", "volume-ul", "well-diameter-mm", "water-peak", "enzyme-mg-column", "well-volume-ul"},
        why);
  resolve_channel_settings(all_given, r.settings);
  return r;
}

std::string check_analysis_options(const AnalysisOptions& a) {
  RunSettings s;
  s.analysis = a;
  for (const auto& o : option_table()) {
    if (o.role == OptionRole::io) continue;
    if (o.number_field) {
      const double v = *o.number_field(s);
      if (std::isnan(v) && o.default_text.empty()) continue;  // unset
      const double shown = v * o.scale;
      if (!std::isfinite(v) || !in_range(shown, o.range))
        return fmt::format("{} is {:g}; expected {}", o.name, shown, describe_range(o.range, o.kind));
    } else if (o.integer_field) {
      const int v = *o.integer_field(s);
      if (!in_range(v, o.range))
        return fmt::format("{} is {}; expected {}", o.name, v, describe_range(o.range, o.kind));
    } else if (o.kind == OptionKind::choice && o.current) {
      const std::string v = o.current(s);
      bool known = false;
      for (auto c : o.choices) known = known || c == v;
      if (!known) return fmt::format("{} is \"{}\"; use {}", o.name, v, choice_list(o));
    }
  }
  for (const ChannelSettings& cs : a.channel_settings) {
    AnalysisOptions one = options_for_channel(a, cs.channel);
    one.channel_settings.clear();
    if (std::string why = check_analysis_options(one); !why.empty())
      return fmt::format("[channel.{}]: {}", cs.channel, why);
  }
  return check_combinations(a);
}

}  // namespace vzero
