// The screening options: the plate-quality table, its Z′ threshold and hit calls, all from
// the plate map's control wells (full-activity, no-activity; include/vzero/plate_quality.hpp).
// min-z-prime is recorded in datapackage.json like any analysis option, hit-threshold when given,
// trend-level in runs whose map has control wells (src/rates_run.cpp).
#include "vzero/settings.hpp"

namespace vzero::detail {

namespace {

using S = RunSettings;

constexpr std::string_view k_group = "screening (needs full-activity and no-activity wells in the plate map)";

OptionSpec screen_option(std::string_view name, OptionKind kind, OptionRole role, std::string_view def,
                         std::string_view unit, std::string_view help) {
  OptionSpec o;
  o.name = name;
  o.group = k_group;
  o.kind = kind;
  o.role = role;
  o.default_text = def;
  o.unit = unit;
  o.help = help;
  return o;
}

}  // namespace

void add_screen_options(std::vector<OptionSpec>& t) {
  {
    OptionSpec o = screen_option("plate-quality", OptionKind::text, OptionRole::io, "", "",
                                 "also write the plate-quality table here: per plate and channel the controls' "
                                 "statistics, Z', signal window, signal-to-background and the verdict");
    o.text_field = [](S& s) { return &s.plate_quality; };
    t.push_back(o);
  }
  {
    OptionSpec o = screen_option("min-z-prime", OptionKind::number, OptionRole::analysis, "0.5", "",
                                 "a plate whose Z' is below this is marked below-threshold and warned of "
                                 "(common practice: 0.5)");
    o.range = NumberRange{-1e300, 1, false, false};
    o.number_field = [](S& s) { return &s.screen.min_z_prime; };
    t.push_back(o);
  }
  {
    OptionSpec o = screen_option("trend-level", OptionKind::number, OptionRole::analysis, "0.01", "",
                                 "a trend of the controls' rates across the plate (row, column, position, edge) "
                                 "with p below this is warned of (common practice: 0.01)");
    o.range = NumberRange{0, 1, true, true};
    o.number_field = [](S& s) { return &s.screen.trend_level; };
    t.push_back(o);
  }
  {
    OptionSpec o = screen_option("hit-threshold", OptionKind::number, OptionRole::analysis, "", "%",
                                 "% inhibition at or above which an unflagged sample is called a hit: adds the "
                                 "column `hit` (yes/no) to rates.csv");
    o.range = NumberRange{0, 100, true, false};
    o.number_field = [](S& s) { return &s.screen.hit_threshold_pct; };
    t.push_back(o);
  }
}

}  // namespace vzero::detail
