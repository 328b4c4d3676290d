// The option table (include/vzero/settings.hpp): one description per option, from which the
// command line, the method file, the checks and the provenance come.
#include <fmt/format.h>
#include <cmath>
#include <set>

#include "test_support.hpp"
#include "vzero/error.hpp"
#include "vzero/settings.hpp"

using namespace vzero;
using namespace vzero::test;

namespace {

// The value a default-constructed RunSettings holds for an option, as option text.
std::string struct_default(const OptionSpec& o) {
  RunSettings s;
  if (o.number_field) {
    const double v = *o.number_field(s);
    return std::isnan(v) ? "" : fmt::format("{:g}", v * o.scale);
  }
  if (o.integer_field) return std::to_string(*o.integer_field(s));
  if (o.text_field) return *o.text_field(s);
  if (o.current) return o.current(s);
  return "(set through apply)";
}

std::string message_of(const std::vector<GivenOption>& given) {
  try {
    (void)resolve_settings(given);
  } catch (const InputError& e) {
    return e.formatted();
  } catch (const UsageError& e) {
    return std::string("usage: ") + e.what();
  }
  return "no error";
}

}  // namespace

TEST_CASE("every option is named once, and the table's defaults are the structs' defaults") {
  std::set<std::string_view> names;
  for (const OptionSpec& o : option_table()) {
    CAPTURE(o.name);
    CHECK(names.insert(o.name).second);
    CHECK(!o.help.empty());
    CHECK((o.number_field || o.integer_field || o.text_field || o.apply));
    // A library caller who fills the structs in code gets what the command line gets.
    const std::string d = struct_default(o);
    if (d != "(set through apply)" && o.kind != OptionKind::flag) {
      if (o.kind == OptionKind::number && !o.default_text.empty())
        CHECK(std::stod(d) == std::stod(std::string(o.default_text)));
      else
        CHECK(d == o.default_text);
    }
  }
  // The nine rate-finder settings that once had no option are reachable now.
  for (const char* n : {"tangent", "outlier-cut", "curvature-alpha", "curvature-min-pct", "lag-check",
                        "detection-factor", "reaction-start-s", "tangent-span", "tangent-alpha", "blank-noise-factor"})
    CHECK(find_option(n) != nullptr);
}

TEST_CASE("given values land in the structs, scaled to their units") {
  ResolvedSettings r = resolve_settings({{"max-conversion", "5"},
                                         {"curvature-min-pct", "3"},
                                         {"tangent", "never"},
                                         {"lag-check", "off"},
                                         {"reaction-start-s", "-12.5"},
                                         {"epsilon-preset", "nadh-340"},
                                         {"path-cm", "0.5"},
                                         {"channel", " A405 , A340 ,"}});
  const AnalysisOptions& a = r.settings.analysis;
  CHECK(a.rates.max_conversion == 0.05);
  CHECK(a.rates.slope_drift == 0.03);
  CHECK(a.rates.tangent == TangentMode::never);
  CHECK(!a.rates.detect_lag);
  CHECK(a.rates.time_zero_s == -12.5);
  // 6220 M⁻¹·cm⁻¹ for NADH at 340 nm (the preset's published value; common practice).
  CHECK(a.convert.epsilon_per_m_cm == 6220);
  CHECK(a.convert.mode == ConvertMode::beer_lambert);
  CHECK(a.channels == std::vector<std::string>{"A405", "A340"});
  CHECK(resolve_settings({{"conc-unit", "µM"}}).settings.analysis.convert.conc_unit == "uM");
  CHECK(check_analysis_options(a).empty());
}

TEST_CASE("provenance records every analysis option, defaults included, and nothing that cannot change a result") {
  ResolvedSettings r =
      resolve_settings({{"threads", "2"}, {"skip-s", "30"}, {"output", "x.csv"}, {"signal-only", "true"}});
  std::vector<std::string> recorded;
  for (const auto& [k, v] : r.recorded) recorded.push_back(k + "=" + v);
  auto has = [&](const std::string& kv) { return std::find(recorded.begin(), recorded.end(), kv) != recorded.end(); };
  CHECK(has("skip-s=30"));
  CHECK(has("max-conversion=10"));  // default
  CHECK(has("outlier-cut=4"));      // default of a once-hidden setting
  CHECK(has("signal-only=true"));
  CHECK(has("water-peak=false"));
  for (const auto& [k, v] : r.recorded) {
    CHECK(k != "threads");  // results do not depend on it (byte-identical for any count)
    CHECK(k != "output");   // outputs are the package's resources, inputs its inputs
    CHECK(k != "quiet");
  }
  // Options without a default that were not given are left out (not "" or "nan").
  for (const auto& [k, v] : r.recorded) CHECK(k != "epsilon");
}

TEST_CASE("bad values and combinations name the option, and the method file's line") {
  CHECK(message_of({{"max-conversion", "150"}}) ==
        "usage: --max-conversion is \"150\"; expected a number above 0 and at most 100");
  CHECK(message_of({{"min-points", "2.5"}}) == "usage: --min-points is \"2.5\"; expected a whole number of at least 3");
  CHECK(message_of({{"window", "longest"}}) == "usage: --window is \"longest\"; use auto, leading or steepest");
  CHECK(message_of({{"epsilon", "0", "m.toml", 2, 1}, {"path-cm", "1"}}) ==
        "m.toml:2:1: method key `epsilon` is \"0\"; expected a number above 0\n"
        "  possible fix: correct the value in the method file, or remove the key to use the default");
  CHECK(message_of({{"path-cm", "-0.5", "m.toml", 3, 1}, {"epsilon", "6220"}}) ==
        "m.toml:3:1: method key `path-cm` is \"-0.5\"; expected a number above 0\n"
        "  possible fix: correct the value in the method file, or remove the key to use the default");
  CHECK(message_of({{"conc-unit", "mol/L", "m.toml", 4, 1}}) ==
        "m.toml:4:1: method key `conc-unit` is \"mol/L\"; use M, mM, uM, µM, μM or nM\n"
        "  possible fix: correct the value in the method file, or remove the key to use the default");
  // A combination that cannot be: at the method file's line when a part of it is there.
  CHECK(message_of({{"signal-only", "true", "m.toml", 1, 1}, {"epsilon", "6220", "m.toml", 2, 1}}) ==
        "m.toml:1:1: choose one conversion: --epsilon/--epsilon-preset, --standards or --signal-only\n"
        "  possible fix: remove one of the keys from the method file, or override it on the command line");
  CHECK(message_of({{"path-cm", "0.5"}}) ==
        "usage: a path length (--path-cm, --volume-ul, --well-diameter-mm, --water-peak) needs --epsilon or "
        "--epsilon-preset");
  CHECK(message_of({{"epsilon", "6220"}}) ==
        "usage: Beer–Lambert needs a path length: give --path-cm, or --volume-ul with --well-diameter-mm, or "
        "--water-peak");
  // The first value of a name wins: the command line is given before the method file.
  ResolvedSettings r = resolve_settings({{"blank", "none"}, {"blank", "sideways", "m.toml", 1, 1}});
  CHECK(r.settings.analysis.blank.strategy == BlankStrategy::none);
}

TEST_CASE("number ranges are described in words") {
  CHECK(describe_range(NumberRange{0, 100, true, false}, OptionKind::number) == "a number above 0 and at most 100");
  CHECK(describe_range(NumberRange{0, 0.5, false, true}, OptionKind::number) == "a number of at least 0 and below 0.5");
  CHECK(describe_range(NumberRange{1, 1e300, false, false}, OptionKind::integer) == "a whole number of at least 1");
  CHECK(describe_range(NumberRange{1, 5, false, false}, OptionKind::integer) == "a whole number from 1 to 5");
  CHECK(describe_range(NumberRange{}, OptionKind::number) == "a number");
}

// The fit's options (include/vzero/fit_settings.hpp): one table gives the command line and
// the Python keywords; the expected values are the table's own rules, worked here.
#include "vzero/fit_settings.hpp"
TEST_CASE("fit options: one table, lists add up, the first models replace the default, messages spell the option") {
  using namespace vzero;
  std::vector<GivenOption> given = {{"x", "substrate"},  {"model", "mm, hill"}, {"model", "all"},
                                    {"group", "a,b"},    {"start", "1"},        {"confidence", "0.9"},
                                    {"no-profile", "true"}};
  FitSettings s = resolve_fit_settings(given, Spelling::command_line);
  CHECK(s.models == std::vector<std::string>{"mm", "hill", "all"});
  CHECK(s.groups == std::vector<std::string>{"a", "b"});
  CHECK(s.start == std::vector<double>{1});
  CHECK(s.fit.confidence == 0.9);
  CHECK(!s.fit.profile);
  // Defaults when nothing is given: mm, weight none, role sample.
  const FitSettings d = resolve_fit_settings({{"x", "s"}}, Spelling::command_line);
  CHECK(d.models == std::vector<std::string>{"mm"});
  CHECK(fit_table_options(d, Spelling::command_line).models.front()->name == "mm");
  // Every option of the table has help; the command line and Python name it two ways.
  for (const FitOptionSpec& o : fit_option_table()) CHECK_MESSAGE(!o.help.empty(), o.name);
  CHECK(option_spelled("max-iterations", Spelling::command_line) == "--max-iterations ");
  CHECK(option_spelled("max-iterations", Spelling::keyword) == "max_iterations=");
  const auto why = [](std::vector<GivenOption> g, Spelling sp) {
    try {
      fit_table_options(resolve_fit_settings(g, sp), sp);
    } catch (const UsageError& e) {
      return std::string(e.what());
    }
    return std::string();
  };
  CHECK(why({{"x", "s"}, {"weight", "square"}}, Spelling::command_line) ==
        "--weight square: choose none, replicate-sd or relative");
  CHECK(why({{"x", "s"}, {"weight", "square"}}, Spelling::keyword) ==
        "weight=square: choose none, replicate-sd or relative");
  CHECK(why({{"x", "s"}, {"max-iterations", "2.5"}}, Spelling::command_line) ==
        "--max-iterations 2.5: expected a whole number");
  CHECK(why({{"x", "s"}, {"start", "1,x"}}, Spelling::command_line) == "--start: cannot read \"x\" as a number");
  CHECK(why({{"x", "s"}, {"model", "competitive"}}, Spelling::command_line) ==
        "--model competitive needs --inhibitor COLUMN (the inhibitor concentration)");
  CHECK(why({{"y", "v"}}, Spelling::command_line) == "--x COLUMN is required: the substrate concentration column");
  CHECK(why({{"colour", "red"}}, Spelling::keyword) == "colour=: not an option of vzero fit");
}
