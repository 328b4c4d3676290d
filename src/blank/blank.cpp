#include "vzero/blank.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <map>
#include <string_view>

#include "blank/screen.hpp"
#include "core/stats.hpp"

namespace vzero {

namespace {

using detail::LineFit;

// The least-squares line (core/stats.hpp) over the ok reads in [t0, t1]; NaN below 3 reads.
LineFit fit_line(const std::vector<double>& t, const double* y, const ReadStatus* st, double t0, double t1) {
  std::vector<double> xs, ys;
  for (std::size_t i = 0; i < t.size(); ++i)
    if (st[i] == ReadStatus::ok && t[i] >= t0 && t[i] <= t1) {
      xs.push_back(t[i]);
      ys.push_back(y[i]);
    }
  LineFit l;
  l.n = static_cast<int>(xs.size());
  if (l.n < 3) return l;
  return detail::least_squares_line(xs.data(), ys.data(), l.n, nullptr, detail::Residual::stepwise);
}

// Takes the blanks `disturbed` marks out of `use` when at least one other remains; true when
// it took any.
template <class Disturbed>
bool drop_disturbed(std::vector<int>& use, Disturbed disturbed) {
  std::vector<int> kept;
  for (int b : use)
    if (!disturbed(b)) kept.push_back(b);
  if (kept.empty() || kept.size() == use.size()) return false;
  use = std::move(kept);
  return true;
}

// Channel columns of the blank wells serving `column`, by strategy.
std::vector<int> blanks_for(const Channel& c, const PlateMap& map, PlateFormat f, const BlankOptions& o, int column,
                            const std::vector<int>& all_blanks) {
  if (o.strategy == BlankStrategy::none) return {};
  const WellInfo* info = map.find(f.well(c.wells[static_cast<std::size_t>(column)]));
  if (info && info->role == Role::blank) return {};  // blanks are not blanked
  if (o.strategy == BlankStrategy::plate) return all_blanks;
  std::vector<int> out;
  if (!info || info->match.empty()) return out;
  for (int b : all_blanks) {
    const WellInfo* bi = map.find(f.well(c.wells[static_cast<std::size_t>(b)]));
    if (bi && bi->match == info->match) out.push_back(b);
  }
  return out;
}

}  // namespace

double within_set_rate_sd(const std::vector<std::vector<double>>& sets, int* dof_out) {
  double ss = 0;
  int dof = 0;
  for (const auto& set : sets) {
    if (set.size() < 2) continue;
    double mean = 0;
    for (double x : set) mean += x / static_cast<double>(set.size());
    for (double x : set) ss += (x - mean) * (x - mean);
    dof += static_cast<int>(set.size()) - 1;
  }
  if (dof_out) *dof_out = dof < 2 ? 0 : dof;
  return dof < 2 ? NAN : std::sqrt(ss / dof);
}

namespace {

// Each column's plate-map entry (nullptr for a well the map does not list), looked up once.
std::vector<const WellInfo*> well_infos(const Channel& c, const PlateMap& map, PlateFormat f) {
  std::vector<const WellInfo*> infos(static_cast<std::size_t>(c.values.cols()));
  for (std::size_t j = 0; j < infos.size(); ++j) infos[j] = map.find(f.well(c.wells[j]));
  return infos;
}

// Each blank well judged on its own: its line (after a disturbed start), its scatter, the
// channel's median scatter and well-to-well drift.
struct BlankWells {
  std::vector<int> all;           // channel columns of the blank wells
  std::vector<double> substrate;  // each blank's plate-map substrate (NaN when not given), in the order of `all`
  detail::BlankScreen screen;     // the blanks screened together, in the order of `all`
  std::vector<std::size_t> slot;  // by channel column: a blank's place in `all` (and column in screen.reads)
  // A blank's line (its rate and scatter, after a disturbed start) and whether its start was disturbed.
  const LineFit& line(int b) const { return screen.line[slot[static_cast<std::size_t>(b)]]; }
  bool disturbed(int b) const { return screen.skip[slot[static_cast<std::size_t>(b)]] > 0; }
  // Whether the blank has a line (3 usable reads or more): one without says nothing of the
  // background and would take every read it lacks from its samples; it is left out of its set.
  bool readable(int b) const { return std::isfinite(line(b).slope); }
  double median_sd = NAN;  // median scatter of the blanks (3 or more)
  double rate_sd = NAN;    // within_set_rate_sd of their rates
  int rate_dof = 0;        // its degrees of freedom
};

BlankWells judge_blank_wells(const Channel& c, const std::vector<const WellInfo*>& infos, const BlankOptions& o) {
  BlankWells bw;
  bw.slot.assign(infos.size(), 0);
  for (std::size_t j = 0; j < infos.size(); ++j) {
    const WellInfo* info = infos[j];
    if (info && info->role == Role::blank) {
      bw.slot[j] = bw.all.size();
      bw.all.push_back(static_cast<int>(j));
      bw.substrate.push_back(info->substrate);
    }
  }
  bw.screen = detail::screen_blanks(c, bw.all, o.mode != BlankMode::trace);
  std::vector<double> sds;
  for (std::size_t k = 0; k < bw.all.size(); ++k) {
    const LineFit& l = bw.screen.line[k];
    if (!std::isnan(l.resid_sd)) sds.push_back(l.resid_sd);
  }
  // Well-to-well drift: the blank wells' own rates about their set's (within_set_rate_sd);
  // when no set has two blanks, their spread over the channel (every difference counted).
  std::map<std::string, std::vector<double>> by_set;
  std::vector<double> every;
  for (int b : bw.all) {
    if (!std::isfinite(bw.line(b).slope)) continue;
    every.push_back(bw.line(b).slope);
    const WellInfo* bi = infos[static_cast<std::size_t>(b)];
    if (o.strategy == BlankStrategy::matched && !bi->match.empty()) by_set[bi->match].push_back(bw.line(b).slope);
  }
  std::vector<std::vector<double>> sets;
  if (o.strategy == BlankStrategy::matched)
    for (auto& [match, rates] : by_set) sets.push_back(std::move(rates));
  bw.rate_sd = within_set_rate_sd(sets, &bw.rate_dof);
  if (std::isnan(bw.rate_sd) && every.size() >= 3) bw.rate_sd = within_set_rate_sd({every}, &bw.rate_dof);
  if (sds.size() >= 3) {
    std::sort(sds.begin(), sds.end());
    bw.median_sd = sds.size() % 2 ? sds[sds.size() / 2] : 0.5 * (sds[sds.size() / 2 - 1] + sds[sds.size() / 2]);
  }
  return bw;
}

// The mean plate-map substrate of the blanks `use` (NaN when one has none).
double mean_substrate(const BlankWells& bw, const std::vector<int>& use) {
  double sum = 0;
  for (int b : use) sum += bw.substrate[bw.slot[static_cast<std::size_t>(b)]];
  return use.empty() ? NAN : sum / static_cast<double>(use.size());
}

// What a set of blanks gives every well that uses it (a plate blank serves every well).
struct SharedBlank {
  Eigen::VectorXd mean;
  std::vector<ReadStatus> st;
  std::string names;       // well_set_text of the blanks
  double noise_sd = NAN;   // read noise a sample keeps after subtraction (shared_blank)
  bool noisy = false;      // one of them is blank-noisy
  bool line = false;       // every one had a disturbed start: their disturbed reads are replaced
  bool spike = false;      // one of them had a read replaced as a spike
  bool filled = false;     // one of them had reads it lacked filled by its line
  double rate = NAN;       // slope of the mean trace
  double substrate = NAN;  // mean plate-map substrate of the blanks (NaN when one has none)
};

SharedBlank shared_blank(const Channel& c, PlateFormat f, const BlankOptions& o, const BlankWells& bw,
                         const std::vector<int>& use) {
  const Eigen::Index reads = c.values.rows();
  SharedBlank sb;
  double var = 0;
  int nsd = 0;
  std::vector<WellId> ids;
  ids.reserve(use.size());
  for (int b : use) ids.push_back(f.well(c.wells[static_cast<std::size_t>(b)]));
  sb.names = well_set_text(std::move(ids));
  // The read noise a sample keeps after subtraction. Subtracting the blanks' reads takes the
  // plate's shared bend off the sample too, so what is left is read noise about a line: the
  // blanks' scatter once their bend is off (their scatter about a straight line counts the
  // bend as noise — on a plate that warms, several times the read noise), pooled, plus what
  // the subtracted mean carries: the read noise of each blank kept as read, over the number
  // of blanks (a smoothed blank carries none). Subtracting only the blanks' rate leaves the
  // bend in the sample, and their scatter about a straight line stands.
  double carried = 0;
  for (int b : use) {
    const LineFit& l = bw.line(b);
    const std::size_t k = bw.slot[static_cast<std::size_t>(b)];
    const double sd = o.mode == BlankMode::rate ? l.resid_sd : bw.screen.flat_sd[k];
    if (!std::isnan(sd)) {
      var += sd * sd;
      ++nsd;
      if (o.mode != BlankMode::rate && !bw.screen.smoothed[k]) carried += sd * sd;
    }
    if (!std::isnan(bw.median_sd) && l.resid_sd > o.noisy_factor * bw.median_sd) sb.noisy = true;
  }
  if (nsd > 0) sb.noise_sd = std::sqrt(var / nsd + carried / (static_cast<double>(nsd) * nsd));
  sb.mean = Eigen::VectorXd::Constant(reads, NAN);
  sb.st.assign(static_cast<std::size_t>(reads), ReadStatus::excluded);
  std::vector<Eigen::Index> slots;  // each blank's column in screen.reads
  for (int b : use) slots.push_back(static_cast<Eigen::Index>(bw.slot[static_cast<std::size_t>(b)]));
  for (Eigen::Index i = 0; i < reads; ++i) {
    double s = 0;
    int n = 0;
    for (std::size_t u = 0; u < use.size(); ++u) {
      const double v = bw.screen.reads(i, slots[u]);  // NaN where unread and not filled
      if (!std::isfinite(v)) continue;
      s += v;
      ++n;
    }
    if (n > 0) {
      sb.mean(i) = s / n;
      sb.st[static_cast<std::size_t>(i)] = ReadStatus::ok;
    }
  }
  for (int b : use) {
    sb.line |= bw.disturbed(b);
    sb.spike |= bw.screen.spikes[bw.slot[static_cast<std::size_t>(b)]] > 0;
    sb.filled |= bw.screen.filled[bw.slot[static_cast<std::size_t>(b)]] > 0;
  }
  sb.rate = fit_line(c.time_s, sb.mean.data(), sb.st.data(), -INFINITY, INFINITY).slope;
  sb.substrate = mean_substrate(bw, use);
  return sb;
}

// A blank well judged as a blank: its own rate and scatter, noisy or disturbed.
void judge_blank(const BlankWells& bw, const BlankOptions& o, int j, WellBlank& wb) {
  const LineFit& l = bw.line(j);
  wb.blank_rate = l.slope;
  wb.blank_noise_sd = l.resid_sd;
  if (!bw.readable(j)) wb.flags.emplace_back("blank-too-few-reads");
  if (!std::isnan(bw.median_sd) && l.resid_sd > o.noisy_factor * bw.median_sd) wb.flags.emplace_back("blank-noisy");
  if (bw.disturbed(j)) wb.flags.emplace_back("blank-disturbed");
}

// The blank wells' own rates against their substrate (BlankSubstrateTrend).
BlankSubstrateTrend substrate_trend(const BlankWells& bw) {
  BlankSubstrateTrend tr;
  std::vector<double> s, rate;
  for (std::size_t k = 0; k < bw.all.size(); ++k) {
    const double substrate = bw.substrate[k], slope = bw.screen.line[k].slope;
    if (!std::isfinite(substrate) || !std::isfinite(slope)) continue;
    s.push_back(substrate);
    rate.push_back(slope);
  }
  tr.blanks = static_cast<int>(s.size());
  std::vector<double> levels = s;
  std::sort(levels.begin(), levels.end());
  tr.levels = static_cast<int>(std::unique(levels.begin(), levels.end()) - levels.begin());
  if (tr.blanks < 3 || tr.levels < 2) return tr;
  const LineFit l = detail::least_squares_line(s.data(), rate.data(), tr.blanks, nullptr, detail::Residual::stepwise);
  tr.intercept = l.intercept;
  tr.slope = l.slope;
  tr.t = l.slope_se > 0 ? l.slope / l.slope_se : (l.slope != 0 ? INFINITY : 0.0);
  tr.significant = std::fabs(tr.t) > detail::student_t_quantile(0.995, tr.blanks - 2);
  return tr;
}

// How far blanks at mean substrate `blank_s` subtract from the trend's rate at the well's.
double substrate_mismatch(const BlankSubstrateTrend& tr, const WellInfo* info, double blank_s) {
  if (!tr.significant || !info || !std::isfinite(info->substrate) || !std::isfinite(blank_s)) return NAN;
  return tr.slope * (info->substrate - blank_s);
}

// Column j's reads minus the mean blank, read by read (NaN where the blank has no value).
void subtract(const Channel& c, const SharedBlank& sb, Eigen::Index j, BlankResult& r) {
  for (Eigen::Index i = 0; i < c.values.rows(); ++i) {
    if (sb.st[static_cast<std::size_t>(i)] != ReadStatus::ok) {
      if (r.status(i, j) == ReadStatus::ok) r.status(i, j) = ReadStatus::excluded;
      r.corrected(i, j) = NAN;
      r.blank(i, j) = NAN;
      continue;
    }
    r.blank(i, j) = sb.mean(i);
    r.corrected(i, j) = c.values(i, j) - sb.mean(i);
  }
}

// A set of blanks (every blank, or those of one match key) and what it gives each well that
// uses it, worked out once, when a well first needs it.
struct BlankSet {
  std::vector<int> use;   // channel columns of its readable blanks, in the order of BlankWells::all
  bool unread = false;    // a blank of the set was left out: fewer than 3 usable reads
  bool ready = false;     // `use` trimmed of disturbed blanks and `shared` worked out
  bool left_out = false;  // a blank with a disturbed start was left out of the set
  SharedBlank shared;
};

// The sets of blanks by strategy: one set of every blank (plate), or one per match key of
// the blanks (matched), as blanks_for lists them for a well.
struct BlankSets {
  BlankSet plate;
  std::map<std::string_view, BlankSet> matched;  // keys view the plate map's entries
};

// A set whose blanks are all unreadable stays, empty: its samples have no blank.
BlankSets blank_sets(const BlankWells& bw, const std::vector<const WellInfo*>& infos, const BlankOptions& o) {
  BlankSets sets;
  for (int b : bw.all) {
    BlankSet* set = nullptr;
    if (o.strategy == BlankStrategy::plate) set = &sets.plate;
    if (o.strategy == BlankStrategy::matched) {
      const WellInfo* bi = infos[static_cast<std::size_t>(b)];
      if (!bi->match.empty()) set = &sets.matched[bi->match];
    }
    if (!set) continue;
    if (bw.readable(b))
      set->use.push_back(b);
    else
      set->unread = true;
  }
  return sets;
}

// The set serving a well that is not a blank (nullptr when none; strategy not none).
BlankSet* set_for(BlankSets& sets, const WellInfo* info, const BlankOptions& o) {
  if (o.strategy == BlankStrategy::plate) return &sets.plate;
  if (!info || info->match.empty()) return nullptr;
  auto it = sets.matched.find(info->match);
  return it == sets.matched.end() ? nullptr : &it->second;
}

}  // namespace

BlankResult apply_blank(const Channel& c, const PlateMap& map, PlateFormat f, const BlankOptions& o) {
  const Eigen::Index reads = c.values.rows(), cols = c.values.cols();
  BlankResult r;
  r.blank = Eigen::MatrixXd::Zero(reads, cols);
  r.corrected = c.values;
  r.status = c.status;
  r.wells.resize(static_cast<std::size_t>(cols));
  const std::vector<const WellInfo*> infos = well_infos(c, map, f);
  const BlankWells bw = judge_blank_wells(c, infos, o);
  r.substrate_trend = substrate_trend(bw);
  r.blank_columns = bw.all;
  r.blank_reads = bw.screen.reads;
  r.blank_disturbed = bw.screen.skip;
  BlankSets sets = blank_sets(bw, infos, o);
  for (Eigen::Index j = 0; j < cols; ++j) {
    WellBlank& wb = r.wells[static_cast<std::size_t>(j)];
    const WellInfo* info = infos[static_cast<std::size_t>(j)];
    if (info && info->role == Role::blank) {
      judge_blank(bw, o, static_cast<int>(j), wb);
      continue;
    }
    if (o.strategy == BlankStrategy::none) continue;
    BlankSet* set = set_for(sets, info, o);
    if (!set || set->use.empty()) {
      if (info && (rated_as_sample(info->role) || info->role == Role::standard)) wb.flags.emplace_back("blank-missing");
      continue;
    }
    if (!set->ready) {
      // A blank with a disturbed start is left out of its set when the set has one without;
      // a set of disturbed blanks is kept, their disturbed reads replaced (screen.hpp).
      set->left_out = drop_disturbed(set->use, [&](int b) { return bw.disturbed(b); });
      set->shared = shared_blank(c, f, o, bw, set->use);
      set->ready = true;
    }
    const SharedBlank& sb = set->shared;
    wb.blank_wells = sb.names;
    if (sb.noisy) wb.flags.emplace_back("blank-noisy");
    if (sb.line) wb.notes.emplace_back("blank-line");
    if (set->left_out || set->unread) wb.notes.emplace_back("blank-left-out");
    if (sb.spike) wb.notes.emplace_back("blank-spike");
    if (sb.filled) wb.notes.emplace_back("blank-filled");
    wb.blank_noise_sd = sb.noise_sd;
    wb.blank_rate_sd = bw.rate_sd * std::sqrt(1.0 + 1.0 / static_cast<double>(set->use.size()));
    wb.blank_rate_dof = bw.rate_dof;
    wb.blank_rate = sb.rate;
    wb.substrate_mismatch = substrate_mismatch(r.substrate_trend, info, sb.substrate);
    r.substrate_trend.mismatched += std::isfinite(wb.substrate_mismatch) && wb.substrate_mismatch != 0;
    if (o.mode != BlankMode::rate) subtract(c, sb, j, r);
  }
  return r;
}

double blank_rate_between(const Channel& c, const PlateMap& map, PlateFormat f, const BlankOptions& o,
                          const BlankResult& blanks, int column, double t0, double t1) {
  std::vector<int> use = blanks_for(c, map, f, o, column, blanks.blank_columns);
  if (use.empty()) return NAN;
  const auto slot = [&](int b) {
    return static_cast<std::size_t>(std::find(blanks.blank_columns.begin(), blanks.blank_columns.end(), b) -
                                    blanks.blank_columns.begin());
  };
  drop_disturbed(use, [&](int b) { return blanks.blank_disturbed[slot(b)] > 0; });
  std::vector<double> mean(c.time_s.size(), NAN);
  std::vector<ReadStatus> st(c.time_s.size(), ReadStatus::excluded);
  for (std::size_t i = 0; i < c.time_s.size(); ++i) {
    double s = 0;
    int n = 0;
    for (int b : use) {
      const double v = blanks.blank_reads(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(slot(b)));
      if (!std::isfinite(v)) continue;  // unread and not filled
      s += v;
      ++n;
    }
    if (n > 0) {
      mean[i] = s / n;
      st[i] = ReadStatus::ok;
    }
  }
  return fit_line(c.time_s, mean.data(), st.data(), t0, t1).slope;
}

}  // namespace vzero
