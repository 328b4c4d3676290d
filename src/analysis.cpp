#include "vzero/analysis.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cassert>
#include <cmath>

#include "core/parallel.hpp"
#include "core/text.hpp"
#include "vzero/error.hpp"

namespace vzero {

namespace {
constexpr EnumName<Direction> k_directions[] = {{Direction::up, "up"}, {Direction::down, "down"}};
}  // namespace

template <>
std::span<const EnumName<Direction>> enum_names<Direction>() {
  return k_directions;
}

void sort_rate_words(const std::vector<std::string>& words, Role role, bool used_high, std::vector<std::string>& flags,
                     std::vector<std::string>& notes) {
  const auto add = [](std::vector<std::string>& to, const std::string& w) {
    if (std::find(to.begin(), to.end(), w) == to.end()) to.push_back(w);
  };
  for (const auto& f : words) {
    const bool note = f == "lag" || f == "lag-possible" || f == "outliers" || f == "overflow" || f == "disturbed" ||
                      (f == "ceiling" && !used_high);
    switch (role) {
      case Role::empty:
        break;  // nothing to judge
      case Role::blank:
        // A blank is judged as a blank: scatter (blank-noisy) and a disturbed start
        // (blank-disturbed) come from the blank stage; a blank whose trace bends drifts, one
        // with too few reads for a rate says so.
        if (f == "nonlinear")
          add(flags, "blank-drift");
        else if (f == "too-few-reads")
          add(flags, "blank-too-few-reads");
        else if (note)
          add(notes, f);
        break;
      case Role::standard:
        // A standard is a level, not a rate: only reads it cannot be judged by count.
        if (note)
          add(notes, f);
        else if (f == "too-few-reads" || f == "ceiling" || f == "saturated")
          add(flags, f);
        break;
      case Role::no_activity:
        // The fully inhibited or no-enzyme control's rate is expected near zero: a rate
        // imprecise relative to itself, below the noise or just below zero is its normal
        // result, not a reason to distrust it (its scatter enters Z′ through sd_no).
        add(note || f == "imprecise" || f == "noise" || f == "negative" ? notes : flags, f);
        break;
      case Role::sample:
      case Role::full_activity:
        add(note ? notes : flags, f);
        break;
    }
  }
}

namespace {

bool is_water_channel(const ConvertOptions& o, const std::string& name) {
  return o.water_peak && (name == o.water_high || name == o.water_low);
}

void add_flag(std::vector<std::string>& flags, const std::string& f) {
  if (std::find(flags.begin(), flags.end(), f) == flags.end()) flags.push_back(f);
}

// Mean of the ok reads of one well in a channel, NaN when it has none.
double well_mean(const Channel& c, int plate_index) {
  int j = c.column_of(plate_index);
  if (j < 0) return NAN;
  double s = 0;
  int n = 0;
  for (int i = 0; i < c.reads(); ++i)
    if (c.status(i, j) == ReadStatus::ok) {
      s += c.values(i, j);
      ++n;
    }
  return n ? s / n : NAN;
}

std::shared_ptr<const Channel> inner_filter_copy(const Run& run, const Channel& c, const AnalysisOptions& o) {
  const Channel* ex = run.find_channel(o.inner_filter_ex);
  const Channel* em = run.find_channel(o.inner_filter_em);
  if (!ex || !em) {
    std::string names;
    for (const auto& ch : run.channels) names += (names.empty() ? "" : ", ") + ch.name;
    throw InputError(Where{run.source},
                     fmt::format("the inner-filter correction needs absorbance channels {} and {}; the file has: {}",
                                 o.inner_filter_ex, o.inner_filter_em, names),
                     {"name the channels read at the excitation and emission wavelengths with --inner-filter EX,EM"});
  }
  auto copy = std::make_shared<Channel>(c);
  for (Eigen::Index j = 0; j < copy->values.cols(); ++j) {
    int plate_index = copy->wells[static_cast<std::size_t>(j)];
    double a_ex = well_mean(*ex, plate_index), a_em = well_mean(*em, plate_index);
    for (Eigen::Index i = 0; i < copy->values.rows(); ++i) {
      if (copy->status(i, j) != ReadStatus::ok) continue;
      if (std::isnan(a_ex) || std::isnan(a_em)) {
        copy->status(i, j) = ReadStatus::excluded;  // no absorbance to correct with
        copy->values(i, j) = NAN;
      } else {
        copy->values(i, j) = inner_filter_corrected(copy->values(i, j), a_ex, a_em);
      }
    }
  }
  return copy;
}

// The numeric value of a plate-map column for a well (NaN when empty or unmapped).
double map_number(const PlateMap& map, const WellInfo* info, int column) {
  if (!info || column < 0) return NAN;
  const std::string& text = info->values[static_cast<std::size_t>(column)];
  if (text.empty()) return NAN;
  auto v = detail::parse_number(text);
  if (!v) {
    throw InputError(Where{map.source, info->line},
                     fmt::format("expected a number in `{}` for well {}, found \"{}\"",
                                 map.columns[static_cast<std::size_t>(column)], well_name(info->well), text),
                     {"write the enzyme amount in mg as a plain number"});
  }
  return *v;
}

// The two screening controls' statistics from their unflagged rates, and the unflagged
// samples' (for robust z-scores; only when the map has controls, a screen).
PlateControls controls_of(const std::vector<RateRow>& rows) {
  std::vector<double> full, none, samples;
  int full_left = 0, none_left = 0;
  for (const auto& row : rows) {
    if (row.role == Role::sample && row.flags.empty() && std::isfinite(row.v0)) samples.push_back(row.v0);
    if (!is_control(row.role)) continue;
    const bool is_full = row.role == Role::full_activity;
    if (row.flags.empty() && std::isfinite(row.v0))
      (is_full ? full : none).push_back(row.v0);
    else
      ++(is_full ? full_left : none_left);
  }
  PlateControls pc;
  pc.full = control_stats(std::move(full));
  pc.none = control_stats(std::move(none));
  pc.full.n_flagged = full_left;
  pc.none.n_flagged = none_left;
  if (pc.full.n + pc.none.n + full_left + none_left > 0) pc.samples = control_stats(std::move(samples));
  return pc;
}

// On a plate with both screening controls a sample's low rate is a result, not a failure: a
// full inhibitor's rate is as imprecise relative to itself, as close to the noise and as
// often just below zero as the no-activity control's. Such a sample keeps its rate (note
// `judged-by-controls`) when those are its only flags, its 95 % interval spans at most
// ±k_control_precision of the control window and its activity is not below −k_control_precision.
constexpr double k_control_precision = 0.10;  // of |mean full-activity − mean no-activity|

bool judge_by_controls(std::vector<RateRow>& rows, const PlateControls& pc) {
  const double window = pc.full.mean - pc.none.mean;
  if (pc.full.n < 2 || pc.none.n < 2 || !(std::fabs(window) > 0)) return false;
  bool changed = false;
  for (auto& row : rows) {
    if (row.role != Role::sample || row.flags.empty()) continue;
    const bool only_low = std::all_of(row.flags.begin(), row.flags.end(), [](const std::string& f) {
      return f == "imprecise" || f == "noise" || f == "negative";
    });
    const double half = (row.v0_ci_high - row.v0_ci_low) / 2;
    const double activity = (row.v0 - pc.none.mean) / window;
    if (!only_low || !(half <= k_control_precision * std::fabs(window)) || !(activity >= -k_control_precision))
      continue;
    row.flags.clear();
    add_flag(row.notes, "judged-by-controls");
    changed = true;
  }
  return changed;
}

struct ChannelContext {
  const Run& run;
  const PlateMap& map;
  int enzyme_col;
};

// The well's slope less the blank's rate (rate blanks: over the well's own window), and v0 with
// its interval in the channel's unit; activity and specific activity when asked for.
void slope_to_v0(RateRow& row, const ChannelAnalysis& ca, const ChannelContext& cx, const AnalysisOptions& o, int j) {
  const Channel& c = *ca.channel;
  const WellBlank& wb = ca.blank.wells[static_cast<std::size_t>(j)];
  const double sign = ca.direction_sign;
  const double factor = ca.conversion.factor[static_cast<std::size_t>(j)];
  double slope = row.rate.slope;
  double blank_rate = sign * wb.blank_rate;
  if (o.blank.mode == BlankMode::rate && o.blank.strategy != BlankStrategy::none && row.role != Role::blank &&
      !std::isnan(row.rate.t_start_s)) {
    blank_rate =
        sign * blank_rate_between(c, cx.map, cx.run.format, o.blank, ca.blank, j, row.rate.t_start_s, row.rate.t_end_s);
    if (!std::isnan(blank_rate))
      slope -= blank_rate;
    else if (wb.blank_wells.empty() == false)
      add_flag(row.flags, "blank-missing");
  }
  row.blank_rate_per_min = blank_rate * 60;
  row.slope_per_min = slope * 60;
  const double to_v0 = 60 * (ca.conversion.mode == ConvertMode::signal_only ? 1.0 : factor);
  row.v0 = slope * to_v0;
  row.v0_se = row.rate.slope_se * to_v0;
  row.v0_ci_low = (row.rate.ci_low - (row.rate.slope - slope)) * to_v0;
  row.v0_ci_high = (row.rate.ci_high - (row.rate.slope - slope)) * to_v0;
  if (!std::isnan(o.well_volume_ul) && ca.conversion.mode != ConvertMode::signal_only)
    row.activity_u = activity_units(row.v0, ca.conversion.conc_unit, o.well_volume_ul);
  if (cx.enzyme_col >= 0) {
    double mg = map_number(cx.map, row.info, cx.enzyme_col);
    if (mg > 0) row.specific_activity = row.activity_u / mg;
  }
}

// A sample whose subtracted blank misses its own background (blanks of other substrate levels
// whose rates change with the substrate) by more than this share of its rate: a bias the
// rate's interval does not show.
constexpr double k_blank_mismatch = 0.05;
void flag_blank_mismatch(RateRow& row, const WellBlank& wb) {
  if (!rated_as_sample(row.role) || !std::isfinite(wb.substrate_mismatch)) return;
  row.blank_substrate_pct = 100 * std::fabs(wb.substrate_mismatch) * 60 / std::fabs(row.slope_per_min);
  if (std::fabs(wb.substrate_mismatch) * 60 > k_blank_mismatch * std::fabs(row.slope_per_min))
    add_flag(row.flags, "blank-substrate");
}

// Samples whose signal leaves the calibrated range of the standard curve. Above the top
// standard the curve is extrapolated (detectors and inner filters bend it there): any
// window read beyond it flags the well. Below the lowest standard only matters when that
// standard is not a zero standard, and then the window's mean signal is compared, since
// single reads scatter around the blank level.
void flag_outside_standards(ChannelAnalysis& ca) {
  const Channel& c = *ca.channel;
  const int reads = c.reads();
  if (!ca.conversion.curve) return;
  const auto& sc = *ca.conversion.curve;
  for (auto& row : ca.rows) {
    if (!rated_as_sample(row.role) || row.rate.used.empty()) continue;
    int j = c.column_of(row.plate_index);
    double sum = 0;
    int n = 0;
    bool above = false;
    for (int i = 0; i < reads; ++i) {
      if (!row.rate.used[static_cast<std::size_t>(i)] || c.status(i, j) != ReadStatus::ok) continue;
      above |= c.values(i, j) > sc.signal_max;
      sum += c.values(i, j);
      ++n;
    }
    bool below = sc.conc_min > 0 && n > 0 && sum / n < sc.signal_min;
    if (above || below) add_flag(row.flags, "outside-standards");
  }
}

ChannelAnalysis analyse_channel(const Run& run, const Channel& raw_channel, const PlateMap& map,
                                const AnalysisOptions& o) {
  ChannelAnalysis ca;
  if (!o.inner_filter_ex.empty() && raw_channel.quantity == Quantity::fluorescence)
    ca.corrected = inner_filter_copy(run, raw_channel, o);
  const Channel& c = ca.corrected ? *ca.corrected : raw_channel;
  ca.channel = &c;
  ChannelContext cx{run, map, -1};
  for (std::size_t k = 0; k < map.columns.size(); ++k)
    if (!o.enzyme_mg_column.empty() && map.columns[k] == o.enzyme_mg_column) cx.enzyme_col = static_cast<int>(k);
  ca.blank = apply_blank(c, map, run.format, o.blank);
  ca.conversion = plan_conversion(run, c, map, o.convert);
  const std::string sig_unit = c.unit.empty() ? "signal" : c.unit;
  ca.slope_unit = sig_unit + "/min";
  ca.v0_unit = ca.conversion.mode == ConvertMode::signal_only ? ca.slope_unit : ca.conversion.conc_unit + "/min";
  const int cols = static_cast<int>(c.wells.size());
  const int reads = c.reads();
  const double sign = o.direction == Direction::down ? -1.0 : 1.0;
  ca.direction_sign = sign;
  ca.rows.resize(static_cast<std::size_t>(cols));
  // Absorbance has a linear range: its ceiling is the lower of the one given and the
  // absorbance limit (stray light compresses readings before the detector's stated limit).
  RateOptions rate_options = o.rates;
  if (c.quantity == Quantity::absorbance && !(rate_options.signal_ceiling <= rate_options.absorbance_limit))
    rate_options.signal_ceiling = rate_options.absorbance_limit;
  detail::parallel_for(cols, o.threads, 16, [&](int j) {
    RateRow& row = ca.rows[static_cast<std::size_t>(j)];
    row.plate_index = c.wells[static_cast<std::size_t>(j)];
    row.well = run.format.well(row.plate_index);
    row.info = map.find(row.well);
    row.role = row.info ? row.info->role : Role::empty;
    const WellBlank& wb = ca.blank.wells[static_cast<std::size_t>(j)];
    // Flags by role: only what can be judged of a well's role is said of it.
    if (row.role != Role::empty)
      for (const auto& f : wb.flags)
        if (!(row.role == Role::standard && f == "blank-missing")) add_flag(row.flags, f);
    for (const auto& n : wb.notes) add_flag(row.notes, n);
    std::vector<double> y(static_cast<std::size_t>(reads));
    for (int i = 0; i < reads; ++i) y[static_cast<std::size_t>(i)] = sign * ca.blank.corrected(i, j);
    TraceView tv;
    tv.time_s = c.time_s.data();
    tv.y = y.data();
    tv.raw = c.values.col(j).data();
    tv.status = ca.blank.status.col(j).data();
    tv.n = reads;
    const double factor = ca.conversion.factor[static_cast<std::size_t>(j)];
    row.path_cm = ca.conversion.path_cm[static_cast<std::size_t>(j)];
    if (ca.conversion.mode != ConvertMode::signal_only) {
      tv.conc_per_signal = factor;
      if (row.info) tv.substrate = row.info->substrate;
    }
    tv.noise_sd = wb.blank_noise_sd;
    tv.rate_sd = wb.blank_rate_sd;
    tv.rate_sd_dof = wb.blank_rate_dof;
    row.rate = find_rate(tv, rate_options);
    // Corrections the finder made are notes; the rest withhold trust. Overflow and ceiling
    // reads are notes when the window simply leaves them out; a rate taken from reads at or
    // above the ceiling (because no read was below it) keeps `ceiling` as a flag.
    bool used_high = false;
    if (!std::isnan(rate_options.signal_ceiling))
      for (int i = 0; i < reads; ++i)
        used_high |= !row.rate.used.empty() && row.rate.used[static_cast<std::size_t>(i)] &&
                     c.values(i, j) >= rate_options.signal_ceiling;
    sort_rate_words(row.rate.flags, row.role, used_high, row.flags, row.notes);
    if (row.role == Role::empty) add_flag(row.notes, "empty");
    // No substrate known (or no concentration scale): the window had no conversion limit.
    if (rated_as_sample(row.role) && !(tv.substrate > 0 && std::isfinite(tv.conc_per_signal)))
      add_flag(row.notes, "no-limit");
    if (ca.conversion.mode != ConvertMode::signal_only && !(factor > 0 && std::isfinite(factor)))
      add_flag(row.flags, "no-path");
    slope_to_v0(row, ca, cx, o, j);
    flag_blank_mismatch(row, wb);
  });
  flag_outside_standards(ca);
  ca.controls = controls_of(ca.rows);
  if (judge_by_controls(ca.rows, ca.controls)) ca.controls = controls_of(ca.rows);  // the samples' robust z
  return ca;
}

}  // namespace

AnalysisOptions options_for_channel(const AnalysisOptions& options, const std::string& name) {
  AnalysisOptions o = options;
  for (const ChannelSettings& cs : options.channel_settings) {
    if (cs.channel != name) continue;
    o.convert = cs.convert;
    o.direction = cs.direction;
    o.rates.signal_ceiling = cs.signal_ceiling;
    o.rates.absorbance_limit = cs.absorbance_limit;
  }
  return o;
}

namespace {

// Every channel a method table names must be in the export: a misspelt name would leave
// that channel at the run's settings.
void check_channel_tables(const Run& run, const AnalysisOptions& o) {
  for (const ChannelSettings& cs : o.channel_settings) {
    if (run.find_channel(cs.channel)) continue;
    std::string names;
    for (const auto& c : run.channels) names += (names.empty() ? "" : ", ") + c.name;
    throw InputError(Where{cs.file, cs.line, cs.column},
                     fmt::format("the method's [channel.{}] names a channel {} does not have; it has: {}", cs.channel,
                                 run.source, names),
                     {"name the table after one of the export's channels, e.g. [channel." +
                      (run.channels.empty() ? std::string("NAME") : run.channels.front().name) + "]"});
  }
}

}  // namespace

RunAnalysis analyse_run(const Run& run, const PlateMap& map, const AnalysisOptions& o) {
  assert(o.rates.min_points >= 3 && o.threads >= 0);  // checked where the run starts (check_analysis_options)
  RunAnalysis ra;
  ra.run = &run;
  if (!o.enzyme_mg_column.empty() &&
      std::find(map.columns.begin(), map.columns.end(), o.enzyme_mg_column) == map.columns.end()) {
    throw InputError(Where{map.source, 1}, fmt::format("the plate map has no column `{}`", o.enzyme_mg_column),
                     {"name the plate-map column holding the enzyme mass per well (mg) with --enzyme-mg-column"});
  }
  check_channel_tables(run, o);
  for (const auto& name : o.channels) {
    if (!run.find_channel(name)) {
      std::string names;
      for (const auto& c : run.channels) names += (names.empty() ? "" : ", ") + c.name;
      throw InputError(Where{run.source}, fmt::format("channel {} is not in this file; it has: {}", name, names),
                       {"pass one of the listed names with --channel"});
    }
  }
  for (const auto& c : run.channels) {
    bool wanted = o.channels.empty() ? !is_water_channel(o.convert, c.name)
                                     : std::find(o.channels.begin(), o.channels.end(), c.name) != o.channels.end();
    if (!wanted) continue;
    ra.channels.push_back(analyse_channel(run, c, map, options_for_channel(o, c.name)));
    for (const ChannelSettings& cs : o.channel_settings)
      if (cs.channel == c.name) {
        ra.channels.back().method_settings = cs.given;
        ra.channels.back().method_table = fmt::format("{}:{}", cs.file, cs.line);
      }
  }
  return ra;
}

}  // namespace vzero
