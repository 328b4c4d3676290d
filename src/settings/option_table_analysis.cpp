// The analysis options of `vzero rates`: conversion to concentration, blanks and direction,
// and the rate finder, in the order of `--help` and of the recorded options (after the
// inputs and outputs of option_table.cpp).
#include "settings/option_builders.hpp"

namespace vzero::detail {

namespace {

using namespace options;

// Conversion to concentration. The choice between Beer–Lambert, standards and signal only is
// checked as a combination in resolve_settings.
void add_conversion_options(std::vector<OptionSpec>& t) {
  t.push_back(number(
      "epsilon", k_conv, "", "M⁻¹·cm⁻¹", k_positive, [](S& s) { return &s.analysis.convert.epsilon_per_m_cm; },
      "molar absorption coefficient ε, M⁻¹·cm⁻¹ (Beer–Lambert)"));
  t.push_back(special(
      "epsilon-preset", k_conv, OptionKind::text, OptionRole::analysis, "",
      [](S& s, const V& v) -> std::string {
        for (const auto& p : epsilon_presets())
          if (v.text == p.name) {
            s.analysis.convert.epsilon_per_m_cm = p.epsilon_per_m_cm;
            return {};
          }
        return "not a known preset; presets: " + epsilon_preset_names();
      },
      "a named published ε instead of --epsilon (see the list below)"));
  t.push_back(number(
      "path-cm", k_conv, "", "cm", k_positive, [](S& s) { return &s.analysis.convert.path_cm; },
      "fixed optical path length, cm"));
  t.push_back(number(
      "volume-ul", k_conv, "", "µL", k_positive, [](S& s) { return &s.analysis.convert.volume_ul; },
      "fill volume, µL: path = V/(π r²) with --well-diameter-mm (meniscus ignored)"));
  t.push_back(number(
      "well-diameter-mm", k_conv, "", "mm", k_positive, [](S& s) { return &s.analysis.convert.well_diameter_mm; },
      "inner diameter of flat-bottomed cylindrical wells, mm"));
  t.push_back(special(
      "water-peak", k_conv, OptionKind::flag, OptionRole::analysis, "",
      [](S& s, const V& v) {
        s.analysis.convert.water_peak = v.on;
        return std::string();
      },
      "path per well from two water-band channels: (A977 − A900)/k"));
  t.push_back(text(
      "water-high", 0, k_conv, OptionRole::analysis, "A977", [](S& s) { return &s.analysis.convert.water_high; },
      "channel near 977 nm for --water-peak"));
  t.push_back(text(
      "water-low", 0, k_conv, OptionRole::analysis, "A900", [](S& s) { return &s.analysis.convert.water_low; },
      "channel near 900 nm for --water-peak"));
  t.push_back(number(
      "water-k", k_conv, "0.18", "AU/cm", k_positive, [](S& s) { return &s.analysis.convert.water_k_per_cm; },
      "A977 − A900 of water per cm (0.18 at room temperature, common practice)"));
  t.push_back(special(
      "standards", k_conv, OptionKind::flag, OptionRole::analysis, "",
      [](S& s, const V& v) {
        if (v.on) s.analysis.convert.mode = ConvertMode::standard_curve;
        return std::string();
      },
      "fluorescence: convert with a standard curve over the map's standard wells"));
  t.push_back(special(
      "standard-read", k_conv, OptionKind::text, OptionRole::analysis, "mean",
      [](S& s, const V& v) -> std::string {
        if (v.text == "mean") {
          s.analysis.convert.standard_read = -1;
          return {};
        }
        const auto n = detail::parse_number(v.text);
        if (!n || *n != std::floor(*n) || *n < 1 || *n > 1e9) return "expected mean, or a read number from 1";
        s.analysis.convert.standard_read = static_cast<int>(*n) - 1;
        return {};
      },
      "read used for the standard curve: mean, or a read number from 1"));
  t.push_back(special(
      "signal-only", k_conv, OptionKind::flag, OptionRole::analysis, "",
      [](S& s, const V& v) {
        if (v.on) s.analysis.convert.mode = ConvertMode::signal_only;
        return std::string();
      },
      "no conversion: rates in signal units per minute"));
  {
    OptionSpec o = choice(
        "conc-unit", k_conv, "uM", {"M", "mM", "uM", "µM", "μM", "nM"},
        [](S& s, const V& v) {
          // One spelling in the outputs: µ (U+00B5) and μ (U+03BC) are u.
          s.analysis.convert.conc_unit = v.text == "µM" || v.text == "μM" ? "uM" : v.text;
          return std::string();
        },
        [](const S& s) { return s.analysis.convert.conc_unit; },
        "concentration unit of v0 and of the map's substrate: M, mM, uM (or µM, μM), nM");
    t.push_back(o);
  }
  t.push_back(number(
      "well-volume-ul", k_conv, "", "µL", k_positive, [](S& s) { return &s.analysis.well_volume_ul; },
      "reaction volume per well, µL: adds enzyme activity in U and nkat"));
  t.push_back(text(
      "enzyme-mg-column", 0, k_conv, OptionRole::analysis, "", [](S& s) { return &s.analysis.enzyme_mg_column; },
      "plate-map column with the enzyme mass per well, mg: adds specific activity, U/mg"));
  t.push_back(special(
      "inner-filter", k_conv, OptionKind::list, OptionRole::analysis, "",
      [](S& s, const V& v) -> std::string {
        if (v.list.size() != 2) return "expected two channel names, EX,EM";
        s.analysis.inner_filter_ex = v.list[0];
        s.analysis.inner_filter_em = v.list[1];
        return {};
      },
      "EX,EM: correct fluorescence by F·10^((A_ex + A_em)/2) with these absorbance channels"));
}

// Blanks and direction.
void add_blank_options(std::vector<OptionSpec>& t) {
  t.push_back(enum_choice<BlankStrategy, blank_strategy_of>(
      "blank", k_blank, "plate", "plate (all blank wells), matched (same `match` value) or none"));
  t.push_back(enum_choice<BlankMode, blank_mode_of>(
      "blank-mode", k_blank, "smooth",
      "smooth (subtract each blank's line plus the plate's shared bend, read by read; with under 4 blank wells as "
      "trace), trace (subtract the blank reads as read) or rate (subtract the blank's rate)"));
  {
    NumberRange above_one{1, 1e300, true, false};
    t.push_back(number(
        "blank-noise-factor", k_blank, "3", "", above_one, [](S& s) { return &s.analysis.blank.noisy_factor; },
        "a blank is flagged noisy when its scatter exceeds this many times the median blank's"));
  }
  t.push_back(enum_choice<Direction, direction_of>(
      "direction", k_blank, "up", "up (product formed, signal rises) or down (signal falls, e.g. NADH at 340 nm)"));
}

// The rate finder: window, estimator and the tests that flag a well.
void add_rate_finder_options(std::vector<OptionSpec>& t) {
  t.push_back(enum_choice<WindowMethod, window_of>(
      "window", k_rate, "auto", "auto (longest early linear window), leading (first --min-points reads) or steepest"));
  t.push_back(enum_choice<Estimator, estimator_of>("estimator", k_rate, "theil-sen",
                                                   "slope estimator: theil-sen, ols or huber"));
  {
    OptionSpec o = special("min-points", k_rate, OptionKind::integer, OptionRole::analysis, "5", nullptr,
                           "fewest reads in a window (3 or more: a slope with an uncertainty)");
    o.range = NumberRange{3, 1e300, false, false};
    o.integer_field = [](S& s) { return &s.analysis.rates.min_points; };
    t.push_back(o);
  }
  t.push_back(number(
      "min-span-s", k_rate, "0", "s", k_non_negative, [](S& s) { return &s.analysis.rates.min_span_s; },
      "shortest time a window may span, s"));
  t.push_back(number(
      "skip-s", k_rate, "0", "s", k_non_negative, [](S& s) { return &s.analysis.rates.skip_s; },
      "dead time after mixing: reads before it are not used, s"));
  t.push_back(number(
      "reaction-start-s", k_rate, "", "s", k_any, [](S& s) { return &s.analysis.rates.time_zero_s; },
      "when the reaction started, on the export's clock, s (default: the first read); "
      "conversion is counted and the initial tangent taken from there"));
  t.push_back(number(
      "max-conversion", k_rate, "10", "%", NumberRange{0, 100, true, false},
      [](S& s) { return &s.analysis.rates.max_conversion; }, "percent of the well's substrate the window may convert",
      100));
  t.push_back(number(
      "signal-ceiling", k_rate, "", "signal", k_any, [](S& s) { return &s.analysis.rates.signal_ceiling; },
      "detector linear limit, raw signal units: reads above it are not used"));
  t.push_back(number(
      "absorbance-limit", k_rate, "1.5", "AU", k_positive, [](S& s) { return &s.analysis.rates.absorbance_limit; },
      "upper end of the linear range of absorbance channels, AU: stray light flattens a rising "
      "trace by 1/(1 + s·10^A) (s the stray fraction), so with s = 0.1 % a slope read at 1.5 AU "
      "is 3 % low and at 2 AU 9 % low; their ceiling is the lower of this and --signal-ceiling"));
  t.push_back(number(
      "outlier-cut", k_rate, "4", "robust SD", k_positive, [](S& s) { return &s.analysis.rates.outlier_k; },
      "a read further than this many robust SDs (1.4826·MAD) from the window's line is an outlier"));
  t.push_back(number(
      "curvature-alpha", k_rate, "0.01", "", k_alpha, [](S& s) { return &s.analysis.rates.linearity_alpha; },
      "significance level of the window's curvature test (0 = no test)"));
  t.push_back(number(
      "curvature-min-pct", k_rate, "2", "%", k_non_negative, [](S& s) { return &s.analysis.rates.slope_drift; },
      "curvature ends a window only when it changes the slope across it by more than this, %", 100));
  t.push_back(choice(
      "lag-check", k_rate, "on", {"on", "off"},
      [](S& s, const V& v) {
        s.analysis.rates.detect_lag = v.text == "on";
        return std::string();
      },
      [](const S& s) { return std::string(s.analysis.rates.detect_lag ? "on" : "off"); },
      "on: skip an initial stretch where the rate rises (a lag) and flag it; off: start at the first usable read"));
  t.push_back(choice(
      "start-check", k_rate, "on", {"on", "off"},
      [](S& s, const V& v) {
        s.analysis.rates.detect_disturbed = v.text == "on";
        return std::string();
      },
      [](const S& s) { return std::string(s.analysis.rates.detect_disturbed ? "on" : "off"); },
      "on: set aside a disturbed start (a jump or decay over the first reads that the rest does not continue) "
      "and flag it; off: keep every read"));
  t.push_back(number(
      "precision-limit", k_rate, "15", "%", k_non_negative, [](S& s) { return &s.analysis.rates.precision_limit; },
      "a rate whose 95 % interval reaches further than this percent of the rate on either side is flagged "
      "imprecise (0 = never)",
      100));
  t.push_back(number(
      "detection-factor", k_rate, "3", "", k_non_negative, [](S& s) { return &s.analysis.rates.lod_factor; },
      "a rate below this many slope SDs of blank noise over its window is flagged noise"));
  t.push_back(enum_choice<TangentMode, tangent_of>(
      "tangent", k_rate, "auto",
      "v0 from the initial tangent of a parabola: auto (when the trace bends down "
      "significantly and the parabola has --tangent-min-reads reads), never, or always"));
  {
    OptionSpec o =
        special("tangent-min-reads", k_rate, OptionKind::integer, OptionRole::analysis, "10", nullptr,
                "fewest reads the parabola needs before its tangent may replace the straight line (tangent auto)");
    o.range = NumberRange{5, 1e300, false, false};
    o.integer_field = [](S& s) { return &s.analysis.rates.tangent_min_reads; };
    t.push_back(o);
  }
  {
    OptionSpec o = number(
        "tangent-span", k_rate, "4", "× window", NumberRange{1, 1e300, false, false},
        [](S& s) { return &s.analysis.rates.tangent_reach; },
        "the parabola's reads reach this many times the straight window's length");
    t.push_back(o);
  }
  t.push_back(number(
      "tangent-alpha", k_rate, "0.05", "", k_alpha, [](S& s) { return &s.analysis.rates.tangent_alpha; },
      "one-sided significance the parabola's bend needs before its tangent is used"));
}

}  // namespace

void add_analysis_options(std::vector<OptionSpec>& t) {
  add_conversion_options(t);
  add_blank_options(t);
  add_rate_finder_options(t);
}

}  // namespace vzero::detail
