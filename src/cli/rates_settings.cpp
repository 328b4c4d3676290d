#include "cli/rates_settings.hpp"

#include <algorithm>
#include <cmath>
#include <fmt/format.h>
#include <map>

#include "core/text.hpp"
#include "vzero/convert.hpp"
#include "vzero/error.hpp"
#include "vzero/method.hpp"

namespace vzero::cli {

namespace po = boost::program_options;

namespace {

using Str = std::string;

// Options that take no value.
const std::vector<Str> k_switches = {"signal-only", "water-peak", "standards", "quiet", "help"};

bool is_switch(const Str& name) { return std::find(k_switches.begin(), k_switches.end(), name) != k_switches.end(); }

// Where an option's value came from, for messages.
struct Origin {
  Str method_file;
  int line = 0, column = 0;
};

}  // namespace

void add_rates_options(po::options_description& opts) {
  po::options_description io("inputs and outputs");
  io.add_options()
      ("layout,l", po::value<Str>(), "plate map CSV (tidy table or plate-grid form); required")
      ("method,m", po::value<Str>(), "assay method TOML file holding any of these options")
      ("profile,p", po::value<Str>(), "instrument profile for every FILE: built-in name or .toml path (default: detect per file)")
      ("output,o", po::value<Str>()->default_value("rates.csv"), "rates table; datapackage.json is written beside it")
      ("traces", po::value<Str>(), "also write the per-read traces table here")
      ("summary", po::value<Str>(), "also write the replicate summary here")
      ("report", po::value<Str>(), "also write the HTML run report here (see vzero report --help)")
      ("summary-leave-out", po::value<Str>()->default_value("replicate"),
       "comma-separated plate-map columns not used to group replicates")
      ("channel", po::value<Str>(), "comma-separated channels to analyse (default: all but water-peak channels)")
      ("threads", po::value<Str>()->default_value("0"), "worker threads; 0 = all cores (results do not depend on it)")
      ("quiet,q", "print nothing on success")
      ("help,h", "show this help");
  po::options_description conv("conversion to concentration");
  conv.add_options()
      ("epsilon", po::value<Str>(), "molar absorption coefficient ε, M⁻¹·cm⁻¹ (Beer–Lambert)")
      ("epsilon-preset", po::value<Str>(), "a named published ε instead of --epsilon (see the list below)")
      ("path-cm", po::value<Str>(), "fixed optical path length, cm")
      ("volume-ul", po::value<Str>(), "fill volume, µL: path = V/(π r²) with --well-diameter-mm (meniscus ignored)")
      ("well-diameter-mm", po::value<Str>(), "inner diameter of flat-bottomed cylindrical wells, mm")
      ("water-peak", "path per well from two water-band channels: (A977 − A900)/k")
      ("water-high", po::value<Str>()->default_value("A977"), "channel near 977 nm for --water-peak")
      ("water-low", po::value<Str>()->default_value("A900"), "channel near 900 nm for --water-peak")
      ("water-k", po::value<Str>()->default_value("0.18"), "A977 − A900 of water per cm (0.18 at room temperature, common practice)")
      ("standards", "fluorescence: convert with a standard curve over the map's standard wells")
      ("standard-read", po::value<Str>()->default_value("mean"), "read used for the standard curve: mean, or a read number from 1")
      ("signal-only", "no conversion: rates in signal units per minute")
      ("conc-unit", po::value<Str>()->default_value("uM"), "concentration unit of v0 and of the map's substrate: M, mM, uM, nM")
      ("well-volume-ul", po::value<Str>(), "reaction volume per well, µL: adds enzyme activity in U and nkat")
      ("enzyme-mg-column", po::value<Str>(), "plate-map column with the enzyme mass per well, mg: adds specific activity, U/mg")
      ("inner-filter", po::value<Str>(), "EX,EM: correct fluorescence by F·10^((A_ex + A_em)/2) with these absorbance channels");
  po::options_description blank("blanks and direction");
  blank.add_options()
      ("blank", po::value<Str>()->default_value("plate"), "plate (all blank wells), matched (same `match` value) or none")
      ("blank-mode", po::value<Str>()->default_value("trace"), "trace (subtract read by read) or rate (subtract the blank's rate)")
      ("direction", po::value<Str>()->default_value("up"), "up (product formed, signal rises) or down (signal falls, e.g. NADH at 340 nm)");
  po::options_description rate("rate finder");
  rate.add_options()
      ("window", po::value<Str>()->default_value("auto"), "auto (longest early linear window), leading (first --min-points reads) or steepest")
      ("estimator", po::value<Str>()->default_value("theil-sen"), "slope estimator: theil-sen, ols or huber")
      ("min-points", po::value<Str>()->default_value("5"), "fewest reads in a window")
      ("min-span-s", po::value<Str>()->default_value("0"), "shortest time a window may span, s")
      ("skip-s", po::value<Str>()->default_value("0"), "dead time after mixing: reads before it are not used, s")
      ("max-conversion", po::value<Str>()->default_value("10"), "percent of the well's substrate the window may convert")
      ("signal-ceiling", po::value<Str>(), "detector linear limit, raw signal units: reads above it are not used");
  opts.add(io).add(conv).add(blank).add(rate);
}

std::string epsilon_preset_list() {
  std::string out;
  for (const auto& p : epsilon_presets()) out += fmt::format("\n  {} = {} M⁻¹·cm⁻¹ ({}): {}", p.name, p.epsilon_per_m_cm, p.wavelength, p.source);
  return out;
}

RatesSettings settings_from(po::variables_map& vm, const po::options_description& opts) {
  RatesSettings s;
  std::map<Str, Origin> origin;
  if (vm.count("method")) {
    s.method = vm["method"].as<Str>();
    std::vector<Str> known;
    for (const auto& o : opts.options()) {
      Str n = o->long_name();
      if (n != "method" && n != "help") known.push_back(n);
    }
    for (const auto& e : read_method(s.method, known)) {
      bool on_cli = vm.count(e.key) && !vm[e.key].defaulted();
      if (on_cli) continue;  // the command line wins
      if (is_switch(e.key)) {
        if (e.type != "boolean")
          throw InputError(Where{s.method, e.line, e.column}, fmt::format("method key `{}` must be true or false", e.key),
                           {fmt::format("write {} = true", e.key)});
        if (e.value == "true") vm.erase(e.key), vm.emplace(e.key, po::variable_value(Str{}, false));
        else vm.erase(e.key);
      } else {
        if (e.type == "boolean")
          throw InputError(Where{s.method, e.line, e.column},
                           fmt::format("method key `{}` takes a value, not true/false", e.key), {"see vzero rates --help"});
        vm.erase(e.key);
        vm.emplace(e.key, po::variable_value(e.value, false));
      }
      origin[e.key] = Origin{s.method, e.line, e.column};
    }
  }
  auto has = [&](const Str& k) { return vm.count(k) > 0; };
  auto text = [&](const Str& k) { return vm[k].as<Str>(); };
  auto bad = [&](const Str& k, const Str& what) -> std::runtime_error {
    auto it = origin.find(k);
    if (it != origin.end())
      throw InputError(Where{it->second.method_file, it->second.line, it->second.column},
                       fmt::format("method key `{}` is \"{}\"; {}", k, text(k), what), {"correct the value in the method file"});
    throw UsageError(fmt::format("--{} is \"{}\"; {}", k, text(k), what));
  };
  auto number = [&](const Str& k) {
    auto v = detail::parse_number(text(k));
    if (!v) throw bad(k, "expected a number");
    return *v;
  };
  auto integer = [&](const Str& k) {
    double v = number(k);
    if (v != std::floor(v) || std::fabs(v) > 1e9) throw bad(k, "expected a whole number");
    return static_cast<int>(v);
  };
  auto list = [&](const Str& k) {
    std::vector<Str> out;
    for (const auto& f : detail::split_fields(text(k), ',')) {
      auto t = detail::trim(f.text);
      if (!t.empty()) out.emplace_back(t);
    }
    return out;
  };

  if (has("file")) s.files = vm["file"].as<std::vector<Str>>();
  if (s.files.empty()) throw UsageError("expected one or more export FILEs");
  if (!has("layout")) throw UsageError("--layout MAP.csv is required (the plate map: which well holds what)");
  s.layout = text("layout");
  if (has("profile")) s.profile = text("profile");
  s.output = text("output");
  if (has("traces")) s.traces = text("traces");
  if (has("summary")) s.summary = text("summary");
  if (has("report")) s.report = text("report");
  s.leave_out = list("summary-leave-out");
  s.quiet = has("quiet");
  if (has("channel")) s.analysis.channels = list("channel");
  s.analysis.threads = integer("threads");
  if (s.analysis.threads < 0) throw bad("threads", "use 0 for all cores or a positive number");

  // Conversion.
  ConvertOptions& c = s.analysis.convert;
  int modes = has("signal-only") + (has("epsilon") || has("epsilon-preset")) + has("standards");
  if (modes > 1) throw UsageError("choose one conversion: --epsilon/--epsilon-preset, --standards or --signal-only");
  if (has("epsilon") && has("epsilon-preset")) throw UsageError("give --epsilon or --epsilon-preset, not both");
  if (has("epsilon-preset")) {
    const EpsilonPreset* found = nullptr;
    for (const auto& p : epsilon_presets())
      if (text("epsilon-preset") == p.name) found = &p;
    if (!found) throw bad("epsilon-preset", "not a known preset; presets:" + epsilon_preset_list());
    c.epsilon_per_m_cm = found->epsilon_per_m_cm;
  }
  if (has("epsilon")) c.epsilon_per_m_cm = number("epsilon");
  if (has("epsilon") || has("epsilon-preset")) c.mode = ConvertMode::beer_lambert;
  else if (has("standards")) c.mode = ConvertMode::standard_curve;
  bool path_given = has("path-cm") || has("volume-ul") || has("well-diameter-mm") || has("water-peak");
  if (path_given && c.mode != ConvertMode::beer_lambert)
    throw UsageError("a path length (--path-cm, --volume-ul, --well-diameter-mm, --water-peak) needs --epsilon or --epsilon-preset");
  if (has("path-cm")) c.path_cm = number("path-cm");
  if (has("volume-ul")) c.volume_ul = number("volume-ul");
  if (has("well-diameter-mm")) c.well_diameter_mm = number("well-diameter-mm");
  c.water_peak = has("water-peak");
  c.water_high = text("water-high");
  c.water_low = text("water-low");
  c.water_k_per_cm = number("water-k");
  c.conc_unit = text("conc-unit");
  if (text("standard-read") != "mean") {
    int r = integer("standard-read");
    if (r < 1) throw bad("standard-read", "reads are numbered from 1");
    c.standard_read = r - 1;
  }
  if (has("well-volume-ul")) s.analysis.well_volume_ul = number("well-volume-ul");
  if (has("enzyme-mg-column")) s.analysis.enzyme_mg_column = text("enzyme-mg-column");
  if (has("inner-filter")) {
    auto pair = list("inner-filter");
    if (pair.size() != 2) throw bad("inner-filter", "expected two channel names, EX,EM");
    s.analysis.inner_filter_ex = pair[0];
    s.analysis.inner_filter_em = pair[1];
  }

  // Blanks and direction.
  if (!parse_blank_strategy(text("blank"), s.analysis.blank.strategy)) throw bad("blank", "use plate, matched or none");
  if (!parse_blank_mode(text("blank-mode"), s.analysis.blank.mode)) throw bad("blank-mode", "use trace or rate");
  if (text("direction") == "up") s.analysis.direction = Direction::up;
  else if (text("direction") == "down") s.analysis.direction = Direction::down;
  else throw bad("direction", "use up or down");

  // Rate finder.
  RateOptions& r = s.analysis.rates;
  if (!parse_window_method(text("window"), r.window)) throw bad("window", "use auto, leading or steepest");
  if (!parse_estimator(text("estimator"), r.estimator)) throw bad("estimator", "use theil-sen, ols or huber");
  r.min_points = integer("min-points");
  r.min_span_s = number("min-span-s");
  r.skip_s = number("skip-s");
  r.max_conversion = number("max-conversion") / 100;
  if (has("signal-ceiling")) r.signal_ceiling = number("signal-ceiling");

  if (auto why = s.analysis.validate(); !why.empty()) throw UsageError(why);

  // Every option as used, in declaration order.
  for (const auto& o : opts.options()) {
    Str n = o->long_name();
    if (n == "help" || n == "quiet" || !vm.count(n)) continue;
    s.recorded.emplace_back(n, is_switch(n) ? "true" : vm[n].as<Str>());
  }
  return s;
}

std::string run_digest(const std::vector<RunAnalysis>& runs, const SummaryTable& summary, const RatesSettings& s,
                       const std::string& package_path) {
  int wells = 0, samples = 0, flagged = 0, blanks = 0, standards = 0, empty = 0;
  std::map<Str, int> by_flag, by_note;
  for (const auto& ra : runs)
    for (const auto& ca : ra.channels)
      for (const auto& row : ca.rows) {
        ++wells;
        blanks += row.role == Role::blank;
        standards += row.role == Role::standard;
        empty += row.role == Role::empty;
        if (row.role != Role::sample) continue;
        ++samples;
        for (const auto& f : row.flags) ++by_flag[f];
        for (const auto& f : row.notes) ++by_note[f];
        flagged += !row.flags.empty();
      }
  Str out = fmt::format("{} file{}, {} well rows: {} sample, {} blank, {} standard, {} empty\n", runs.size(),
                        runs.size() == 1 ? "" : "s", wells, samples, blanks, standards, empty);
  out += fmt::format("{} sample well{} flagged{}\n", flagged, flagged == 1 ? "" : "s", flagged ? " (a well may have several reasons):" : "");
  for (const auto& [f, n] : by_flag) out += fmt::format("  {:<22} {}\n", f, n);
  if (!by_note.empty()) {
    out += "corrections made (notes; these wells keep their rate):";
    for (const auto& [f, n] : by_note) out += fmt::format(" {} {},", f, n);
    out.back() = '\n';
  }
  for (const auto& ra : runs)
    for (const auto& ca : ra.channels)
      if (ca.conversion.curve) {
        const auto& sc = *ca.conversion.curve;
        out += fmt::format("standard curve {}: signal = {:.6g} + {:.6g}·c (r² {:.6f}, {} wells), calibrated {:g}–{:g} {}, "
                           "LOD {:.3g} {} ({})\n",
                           ca.channel->name, sc.intercept, sc.slope, sc.r2, sc.n, sc.conc_min, sc.conc_max,
                           ca.conversion.conc_unit, sc.lod, ca.conversion.conc_unit, sc.lod_basis);
      }
  // Median v0 per sample condition (the summary's groups), as a short table.
  Str head = "condition";
  std::vector<std::pair<Str, Str>> lines;
  for (const auto& g : summary.groups) {
    if (g.role != "sample") continue;
    Str key;
    for (std::size_t i = 0; i < g.key.size(); ++i) {
      if (g.key[i].empty() || detail::iequals(summary.columns[i], "match")) continue;
      key += (key.empty() ? "" : " ") + summary.columns[i] + "=" + g.key[i];
    }
    lines.emplace_back(g.channel + " " + key, std::isnan(g.v0_mean)
                                                  ? fmt::format("no clean wells ({} flagged)", g.n_flagged)
                                                  : fmt::format("{:.4g} {} (sd {:.2g}, n {}{})", g.v0_mean, g.v0_unit,
                                                                g.v0_sd, g.n, g.n_flagged ? fmt::format(", {} flagged", g.n_flagged) : ""));
  }
  if (!lines.empty()) {
    out += "mean v0 of the clean replicate wells per condition:\n";
    std::size_t w = head.size();
    for (const auto& l : lines) w = std::max(w, l.first.size());
    for (const auto& l : lines) out += fmt::format("  {:<{}}  {}\n", l.first, w, l.second);
  }
  out += fmt::format("wrote {}", s.output);
  if (!s.traces.empty()) out += ", " + s.traces;
  if (!s.summary.empty()) out += ", " + s.summary;
  out += ", " + package_path;
  if (!s.report.empty()) out += ", " + s.report;
  out += "\n";
  return out;
}

}  // namespace vzero::cli
