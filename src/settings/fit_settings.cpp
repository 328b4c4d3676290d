// The options of `vzero fit`, each described once (include/vzero/fit_settings.hpp). The
// order here is the order of `--help`.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <map>
#include <optional>

#include "core/text.hpp"
#include "vzero/error.hpp"
#include "vzero/fit_settings.hpp"

namespace vzero {

namespace {

using F = FitSettings;
using V = OptionValue;

FitOptionSpec spec(std::string_view name, OptionKind kind, std::string_view def, std::string_view help,
                   std::string (*apply)(F&, const V&)) {
  FitOptionSpec o;
  o.name = name;
  o.kind = kind;
  o.default_text = def;
  o.help = help;
  o.apply = apply;
  return o;
}
FitOptionSpec output(std::string_view name, char short_name, std::string_view help, std::string (*apply)(F&, const V&)) {
  FitOptionSpec o = spec(name, OptionKind::text, "", help, apply);
  o.short_name = short_name;
  o.output = true;
  return o;
}
using K = OptionKind;

std::vector<FitOptionSpec> make_table() {
  std::vector<FitOptionSpec> t;
  t.push_back(spec("x", K::text, "", "substrate concentration column (required; for --model 4pl or morrison alone, default: the plate map's "
                   "compound concentration column that vzero rates recorded in datapackage.json)",
                   [](F& s, const V& v) { return s.x = v.text, std::string(); }));
  t.push_back(spec("y", K::text, "", "rate column (default: v0, or v0_mean in a summary table)",
                   [](F& s, const V& v) { return s.y = v.text, std::string(); }));
  t.push_back(spec("group", K::list, "", "fit each combination of these columns separately (COL,COL,...)",
                   [](F& s, const V& v) { return s.groups.push_back(v.text), std::string(); }));
  t.push_back(spec("model", K::list, "mm", "model(s) to fit, comma-separated, or all",
                   [](F& s, const V& v) { return s.models.push_back(v.text), std::string(); }));
  t.push_back(spec("inhibitor", K::text, "", "inhibitor concentration column (for the inhibition models)",
                   [](F& s, const V& v) { return s.inhibitor = v.text, std::string(); }));
  t.push_back(spec("enzyme", K::text, "", "enzyme concentration column: adds kcat and kcat/Km",
                   [](F& s, const V& v) { return s.enzyme = v.text, std::string(); }));
  t.push_back(spec("kcat-per-min", K::flag, "", "kcat in 1/min and kcat/Km in 1/min per M (default: per second)",
                   [](F& s, const V& v) { return s.kcat_per_min = v.on, std::string(); }));
  t.push_back(spec("weight", K::text, "none", "none, replicate-sd (1/sd^2) or relative (1/v^2)",
                   [](F& s, const V& v) { return s.weight = v.text, std::string(); }));
  t.push_back(spec("sd", K::text, "",
                   "SD column for replicate-sd (default: v0_sd for v0_mean; else the SD of replicate rows at each "
                   "concentration)",
                   [](F& s, const V& v) { return s.sd = v.text, std::string(); }));
  t.push_back(spec("include-flagged", K::flag, "", "also use rows whose flags cell is not empty",
                   [](F& s, const V& v) { return s.include_flagged = v.on, std::string(); }));
  t.push_back(spec("role", K::text, "sample", "rows to use when the table has a role column (any = all rows)",
                   [](F& s, const V& v) { return s.role = v.text, std::string(); }));
  t.push_back(output("output", 'o', "write the tidy fit table here ('-' = stdout)",
                     [](F& s, const V& v) { return s.output = v.text, std::string(); }));
  t.push_back(output("json", 0, "write all results as JSON here ('-' = stdout)",
                     [](F& s, const V& v) { return s.json = v.text, std::string(); }));
  t.push_back(output("diagnostics", 0, "write the linearised-plot table here ('-' = stdout)",
                     [](F& s, const V& v) { return s.diagnostics = v.text, std::string(); }));
  t.push_back(output("report", 0, "write the run's HTML report with this fit added (the table's run folder)",
                     [](F& s, const V& v) { return s.report = v.text, std::string(); }));
  t.push_back(output("enzymeml", 0, "write the EnzymeML document of --enzymeml-from with the fit added here",
                     [](F& s, const V& v) { return s.enzymeml = v.text, std::string(); }));
  t.push_back(output("enzymeml-from", 0, "the EnzymeML document vzero rates --enzymeml wrote for this table",
                     [](F& s, const V& v) { return s.enzymeml_from = v.text, std::string(); }));
  t.push_back(spec("fix", K::list, "",
                   "hold parameters at these values, not estimated: NAME=VALUE,... (e.g. top=100,bottom=0; E for morrison)",
                   [](F& s, const V& v) { return s.fixed.push_back(v.text), std::string(); }));
  t.push_back(spec("start", K::list, "", "starting values in parameter order, e.g. 200,0.05 (one model only)",
                   [](F& s, const V& v) -> std::string {
                     const auto n = detail::parse_number(v.text);
                     if (!n) return fmt::format("cannot read \"{}\" as a number", v.text);
                     s.start.push_back(*n);
                     return {};
                   }));
  t.push_back(spec("confidence", K::number, "0.95", "level of the intervals",
                   [](F& s, const V& v) { return s.fit.confidence = v.number, std::string(); }));
  t.push_back(spec("max-iterations", K::integer, "200", "Levenberg–Marquardt iterations per fit",
                   [](F& s, const V& v) { return s.fit.max_iterations = static_cast<int>(v.number), std::string(); }));
  t.push_back(spec("no-profile", K::flag, "", "skip the profile-t intervals (faster)",
                   [](F& s, const V& v) { return s.fit.profile = !v.on, std::string(); }));
  FitOptionSpec quiet = spec("quiet", K::flag, "", "do not print the table on stdout",
                             [](F& s, const V& v) { return s.quiet = v.on, std::string(); });
  quiet.short_name = 'q';
  quiet.output = true;
  t.push_back(quiet);
  return t;
}

const FitOptionSpec& find_fit_option(std::string_view name, Spelling sp) {
  for (const FitOptionSpec& o : fit_option_table())
    if (o.name == name) return o;
  throw UsageError(fmt::format("{}: not an option of vzero fit", option_spelled(name, sp)));
}

// The comma-separated items of a list value, trimmed, empty ones dropped.
std::vector<std::string> list_items(std::string_view text) {
  std::vector<std::string> out;
  std::size_t start = 0;
  while (start <= text.size()) {
    std::size_t comma = text.find(',', start);
    if (comma == std::string_view::npos) comma = text.size();
    const std::string_view item = detail::trim(text.substr(start, comma - start));
    if (!item.empty()) out.emplace_back(item);
    start = comma + 1;
  }
  return out;
}

}  // namespace

const std::vector<FitOptionSpec>& fit_option_table() {
  static const std::vector<FitOptionSpec> table = make_table();
  return table;
}

std::string option_spelled(std::string_view name, Spelling spelling) {
  if (spelling == Spelling::command_line) return fmt::format("--{} ", name);
  std::string k(name);
  for (char& c : k)
    if (c == '-') c = '_';
  return k + "=";
}

FitSettings resolve_fit_settings(const std::vector<GivenOption>& given, Spelling sp) {
  FitSettings s;
  bool models_given = false;
  for (const GivenOption& g : given) {
    const FitOptionSpec& o = find_fit_option(g.name, sp);
    const std::string at = option_spelled(o.name, sp);
    OptionValue v;
    v.text = g.text;
    std::string why;
    switch (o.kind) {
      case OptionKind::flag:
        v.on = g.text != "false";
        why = o.apply(s, v);
        break;
      case OptionKind::number:
      case OptionKind::integer: {
        const auto n = detail::parse_number(g.text);
        if (!n || (o.kind == OptionKind::integer && (*n != std::floor(*n) || std::fabs(*n) > 1e9)))
          throw UsageError(fmt::format("{}{}: expected {}", at, g.text,
                                       o.kind == OptionKind::integer ? "a whole number" : "a number"));
        else
          v.number = *n, why = o.apply(s, v);
        break;
      }
      case OptionKind::list:
        // The first models given replace the default one.
        if (o.name == "model" && !models_given) s.models.clear(), models_given = true;
        for (const std::string& item : list_items(g.text)) {
          OptionValue one;
          one.text = item;
          why = o.apply(s, one);
          if (!why.empty()) break;
        }
        break;
      default:
        why = o.apply(s, v);
    }
    if (!why.empty())
      throw UsageError(fmt::format("{}: {}", at.back() == ' ' ? at.substr(0, at.size() - 1) : at + g.text, why));
  }
  return s;
}

namespace {

std::vector<const KineticModel*> models_named(const std::vector<std::string>& names, bool have_inhibitor, Spelling sp) {
  std::vector<const KineticModel*> out;
  const auto add = [&](const KineticModel* m) {
    for (const KineticModel* e : out)
      if (e == m) return;
    out.push_back(m);
  };
  const std::vector<const KineticModel*> known = kinetic_models();
  const std::string at = option_spelled("model", sp), inhibitor = option_spelled("inhibitor", sp);
  for (const auto& name : names) {
    if (name == "all") {
      for (const KineticModel* m : known)  // the dose-response models take other data: named only
        if (!m->needs_inhibitor() && !m->dose_response) add(m);
      if (have_inhibitor)
        for (const KineticModel* m : known)
          if (m->needs_inhibitor() && !m->dose_response) add(m);
      continue;
    }
    const KineticModel* m = find_model(name);
    if (!m) {
      std::string choices;
      for (const KineticModel* k : known) choices += (choices.empty() ? "" : ", ") + k->name;
      throw UsageError(fmt::format("{}{}: unknown model; choose {} or all", at, name, choices));
    }
    if (m->needs_inhibitor() && !have_inhibitor)
      throw UsageError(fmt::format("{}{} needs {}COLUMN (the inhibitor concentration)", at, name, inhibitor));
    add(m);
  }
  if (out.empty()) out.push_back(&kinetic_model("mm"));
  return out;
}

// --fix NAME=VALUE,...: every name a parameter of every model fitted.
std::map<std::string, double> parse_fixed(const std::vector<std::string>& items,
                                          const std::vector<const KineticModel*>& models, Spelling sp) {
  const std::string at = option_spelled("fix", sp);
  std::map<std::string, double> out;
  for (const auto& item : items) {
    const std::size_t eq = item.find('=');
    const std::string name = item.substr(0, std::min(eq, item.size()));
    const auto value = eq == std::string::npos ? std::nullopt : detail::parse_number(item.substr(eq + 1));
    if (!value)
      throw UsageError(fmt::format("{}: expected NAME=VALUE (e.g. top=100), found \"{}\"",
                                   at.back() == ' ' ? at.substr(0, at.size() - 1) : at, item));
    for (const KineticModel* m : models) {
      const auto names = m->parameter_names();
      if (std::find(names.begin(), names.end(), name) == names.end())
        throw UsageError(fmt::format("{}{}: the {} model has no parameter {} (its parameters: {}); fit a model that "
                                     "has it alone",
                                     at, item, m->name, name, fmt::format("{}", fmt::join(names, ", "))));
    }
    out[name] = *value;
  }
  return out;
}

}  // namespace

FitTableOptions fit_table_options(const FitSettings& s, Spelling sp) {
  const auto at = [sp](std::string_view name) { return option_spelled(name, sp); };
  if (s.x.empty()) throw UsageError(fmt::format("{}COLUMN is required: the substrate concentration column", at("x")));
  FitTableOptions o;
  o.x_column = s.x;
  o.y_column = s.y;
  o.group_columns = s.groups;
  o.inhibitor_column = s.inhibitor;
  o.enzyme_column = s.enzyme;
  o.models = models_named(s.models, !s.inhibitor.empty(), sp);
  if (!parse_weighting(s.weight, o.weighting))
    throw UsageError(fmt::format("{}{}: choose none, replicate-sd or relative", at("weight"), s.weight));
  if (!s.sd.empty() && o.weighting != Weighting::replicate_sd)
    throw UsageError(fmt::format("{}is used only with {}replicate-sd", at("sd"), at("weight")));
  o.sd_column = s.sd;
  o.include_flagged = s.include_flagged;
  o.kcat_per_min = s.kcat_per_min;
  o.role = s.role == "any" ? "" : s.role;
  o.fit = s.fit;
  o.fit.start = s.start;
  if (!o.fit.start.empty()) {
    if (o.models.size() != 1) throw UsageError(fmt::format("{}needs exactly one {}", at("start"), sp == Spelling::command_line ? "--model" : "model"));
    const auto names = o.models.front()->parameter_names();
    if (o.fit.start.size() != names.size())
      throw UsageError(fmt::format("{}has {} values; the {} model has {} parameters in this order: {}", at("start"),
                                   o.fit.start.size(), o.models.front()->name, names.size(),
                                   fmt::format("{}", fmt::join(names, ", "))));
  }
  o.fit.fixed = parse_fixed(s.fixed, o.models, sp);
  if (auto why = o.fit.validate(); !why.empty()) throw UsageError(why);
  return o;
}

void check_fit_columns(const Table& table, const FitSettings& s, Spelling sp) {
  const auto pass = [sp](std::string_view name, std::string_view what) {
    return sp == Spelling::command_line ? fmt::format("pass --{} with {}", name, what)
                                        : fmt::format("pass {}{}", option_spelled(name, sp), what);
  };
  table.require_column(s.x, pass("x", "the substrate concentration column"));
  if (!s.y.empty())
    table.require_column(s.y, pass("y", "the rate column"));
  else if (table.column("v0") < 0 && table.column("v0_mean") < 0)
    table.require_column("v0", pass("y", "the rate column (v0 in a rates table, v0_mean in a summary)"));
  if (!s.inhibitor.empty()) table.require_column(s.inhibitor, pass("inhibitor", "the inhibitor concentration column"));
  if (!s.enzyme.empty()) table.require_column(s.enzyme, pass("enzyme", "the enzyme concentration column"));
  if (!s.sd.empty()) table.require_column(s.sd, pass("sd", "the standard deviation column"));
  for (const auto& g : s.groups) table.require_column(g, pass("group", "existing column names"));
}

}  // namespace vzero
