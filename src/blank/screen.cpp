#include "blank/screen.hpp"

#include <algorithm>
#include <cmath>
#include <utility>

#include "core/start_screen.hpp"

namespace vzero::detail {
namespace {

// A blank's start is screened over its first reads as a sample's is (5 reads at least left).
constexpr int k_min_points = 5;
// Fewest other blanks, at one read, whose median makes a blank's shared bend there.
constexpr int k_bend_blanks = 3;
// A blank's start is disturbed beyond this many standard errors (a sample's: 5). The blank is
// judged at the noise pooled over every blank, with the shared bend off, so the tail is that
// of a normal: on the tuning plates 2 of 1,739 calm blanks went over it (tests/bench/README.md).
constexpr double k_z_cut = 4.0;
// A spike: a read more than k_spike_z prediction SEs off the line through its 6 neighbours
// (a 7-read stretch, as the rate finder's spike screen), which scatter by at most
// k_calm_factor read-noise SDs about it.
constexpr int k_spike_span = 7;
constexpr double k_spike_z = 5.0;
constexpr double k_calm_factor = 2.0;
constexpr double k_near_sds = 3.0;

double median_of(std::vector<double> v) {
  if (v.empty()) return NAN;
  const auto mid = v.begin() + static_cast<std::ptrdiff_t>(v.size() / 2);
  std::nth_element(v.begin(), mid, v.end());
  return v.size() % 2 ? *mid : 0.5 * (*mid + *std::max_element(v.begin(), mid));
}

// The least-squares line of the finite values of y from read `from` on; NaN below 3.
LineFit line_from(const std::vector<double>& t, const std::vector<double>& y, std::size_t from) {
  std::vector<double> xs, ys;
  for (std::size_t i = from; i < t.size(); ++i)
    if (std::isfinite(y[i])) {
      xs.push_back(t[i]);
      ys.push_back(y[i]);
    }
  LineFit l;
  l.n = static_cast<int>(xs.size());
  if (l.n < 3) return l;
  return least_squares_line(xs.data(), ys.data(), l.n, nullptr, Residual::stepwise);
}

// Robust read-noise SD from the second differences of consecutive finite values (Var = 6σ²
// for white noise); NaN below 3 values.
double second_difference_sd(const std::vector<double>& y) {
  std::vector<double> v, d;
  for (double x : y)
    if (std::isfinite(x)) v.push_back(x);
  for (std::size_t i = 1; i + 1 < v.size(); ++i) d.push_back(std::fabs(v[i + 1] - 2 * v[i] + v[i - 1]));
  return d.empty() ? NAN : 1.4826 * median_of(std::move(d)) / std::sqrt(6.0);
}

// The median of the values `at` without one of them, for each of them in turn: what the
// median of the sorted values without the one at rank r is, from the three order statistics
// around the middle (nth_element; ties ranked by blank, as the pairs order them).
template <class Out>
void medians_without(std::vector<std::pair<double, std::size_t>>& at, Out out) {
  const std::size_t n = at.size() - 1, q = n / 2;  // what is left, and its middle
  const auto mid = at.begin() + static_cast<std::ptrdiff_t>(q);
  std::nth_element(at.begin(), mid, at.end());
  const std::pair<double, std::size_t> pq = *mid;
  const double v_q = pq.first;
  const double v_below = q > 0 ? std::max_element(at.begin(), mid)->first : NAN;
  const double v_above = std::min_element(mid + 1, at.end())->first;
  for (const auto& e : at) {
    const bool ge = !(e < pq), gt = pq < e;  // its rank r ≥ q, r ≥ q + 1
    const double a_q = gt ? v_q : v_above;            // the value at q once it is gone
    const double a_below = ge ? v_below : v_q;        // … at q − 1
    out(e.second, n % 2 ? a_q : 0.5 * (a_below + a_q));
  }
}

// Step 2: for each blank, the median of the other blanks' departures from their own lines,
// read by read (reads × blanks; 0 where fewer than k_bend_blanks others have a read). Each
// blank is measured against the others only, so its own noise never enters its bend (with
// the median of all, a blank that is the median at a read would lose its noise there).
Eigen::MatrixXd shared_bend(const std::vector<double>& t, const std::vector<std::vector<double>>& y) {
  const auto reads = static_cast<Eigen::Index>(t.size());
  const auto m = static_cast<Eigen::Index>(y.size());
  Eigen::MatrixXd bend = Eigen::MatrixXd::Zero(reads, m);
  if (m < k_bend_blanks + 1) return bend;
  std::vector<std::vector<double>> departure(y.size(), std::vector<double>(t.size(), NAN));
  for (std::size_t k = 0; k < y.size(); ++k) {
    const LineFit l = line_from(t, y[k], 0);
    if (!std::isfinite(l.slope)) continue;
    for (std::size_t i = 0; i < t.size(); ++i) departure[k][i] = y[k][i] - (l.intercept + l.slope * t[i]);
  }
  std::vector<std::pair<double, std::size_t>> at;  // departure, blank
  for (std::size_t i = 0; i < t.size(); ++i) {
    at.clear();
    for (std::size_t k = 0; k < y.size(); ++k)
      if (std::isfinite(departure[k][i])) at.emplace_back(departure[k][i], k);
    if (static_cast<int>(at.size()) < k_bend_blanks + 1) continue;
    medians_without(at, [&](std::size_t k, double median) {
      bend(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(k)) = median;
    });
  }
  return bend;
}

// Step 5 for one blank (column k of `reads`): its usable reads (t, z: the bend taken off;
// `at` their read indices), the first `skip` of them disturbed. A read is a spike when it
// sits more than k_spike_z prediction SEs (read noise `sd`) off the least-squares line
// through its six neighbours (three each side where there are, the 7-read stretch shifted at
// the ends), and those neighbours agree with each other (their scatter about that line at
// most k_calm_factor · sd). Spikes are found first, then replaced by the line's value plus
// the bend, so a spike never judges another. Returns how many.
int replace_spikes(const std::vector<double>& t, const std::vector<double>& z, const std::vector<std::size_t>& at,
                   int skip, double sd, const Eigen::MatrixXd& bend, std::size_t k, Eigen::MatrixXd& reads) {
  const int n = static_cast<int>(t.size());
  if (!(sd > 0) || n - skip < k_spike_span) return 0;
  std::vector<std::pair<std::size_t, double>> found;  // read index, replacement
  for (int q = skip; q < n; ++q) {
    // A read 5 SEs off its six neighbours' line is well over k_near_sds SDs off the line
    // through its two nearest (that line's own error is about 0.8 SD): reads within it of
    // that line are not tested further, which spares most of the work on long traces.
    if (q > skip && q + 1 < n) {
      const auto a = static_cast<std::size_t>(q - 1), b = static_cast<std::size_t>(q + 1);
      const double near = z[a] + (z[b] - z[a]) * (t[a + 1] - t[a]) / (t[b] - t[a]);
      if (std::fabs(z[a + 1] - near) <= k_near_sds * sd) continue;
    }
    const int lo = std::clamp(q - k_spike_span / 2, skip, n - k_spike_span);
    double mt = 0, mz = 0;
    for (int i = lo; i < lo + k_spike_span; ++i)
      if (i != q) mt += t[static_cast<std::size_t>(i)], mz += z[static_cast<std::size_t>(i)];
    const double nb = k_spike_span - 1;
    mt /= nb;
    mz /= nb;
    double stt = 0, stz = 0;
    for (int i = lo; i < lo + k_spike_span; ++i)
      if (i != q) {
        const double dt = t[static_cast<std::size_t>(i)] - mt;
        stt += dt * dt, stz += dt * (z[static_cast<std::size_t>(i)] - mz);
      }
    if (!(stt > 0)) continue;
    const double b = stz / stt;
    double rss = 0;
    for (int i = lo; i < lo + k_spike_span; ++i)
      if (i != q) {
        const double e = z[static_cast<std::size_t>(i)] - (mz + b * (t[static_cast<std::size_t>(i)] - mt));
        rss += e * e;
      }
    if (std::sqrt(rss / (nb - 2)) > k_calm_factor * sd) continue;
    const double dq = t[static_cast<std::size_t>(q)] - mt, fit = mz + b * dq;
    const double se = sd * std::sqrt(1 + 1 / nb + dq * dq / stt);
    if (std::fabs(z[static_cast<std::size_t>(q)] - fit) > k_spike_z * se)
      found.emplace_back(at[static_cast<std::size_t>(q)], fit);
  }
  for (const auto& [i, fit] : found) {
    const auto ii = static_cast<Eigen::Index>(i);
    reads(ii, static_cast<Eigen::Index>(k)) = fit + bend(ii, static_cast<Eigen::Index>(k));
  }
  return static_cast<int>(found.size());
}

// Whether the blank less its bend (`z`, from read `from` on) still curves: the t-value of the
// least-squares parabola's square term (core/stats.hpp `quadratic`) beyond the two-sided
// k_own_bend_alpha quantile of Student's t on n − 3 degrees of freedom. A blank with a curve
// of its own (a background reaction that slows) shares it with its samples, and smoothing it
// away would hand it to them.
constexpr double k_own_bend_alpha = 0.01;
bool bends_on_its_own(const std::vector<double>& t, const std::vector<double>& z, std::size_t from) {
  std::vector<double> x, v;
  for (std::size_t i = from; i < t.size(); ++i)
    if (std::isfinite(z[i])) {
      x.push_back(t[i]);
      v.push_back(z[i]);
    }
  if (x.size() < 6) return false;
  const QuadFit q = quadratic(x.data(), v.data(), static_cast<int>(x.size()), x.front());
  if (!(q.c2_se > 0)) return std::isfinite(q.c2) && q.c2 != 0;
  return std::fabs(q.c2 / q.c2_se) >
         student_t_quantile(1 - k_own_bend_alpha / 2, static_cast<double>(static_cast<int>(x.size()) - 3));
}

// Step 6 for one blank (column k of `reads`; `y` its reads, `z` them less the bend, `from`
// its first read after a disturbed start): each read it has replaced by its line (the bend
// off) plus its bend. Left as read when the line could not be fitted or the blank bends on
// its own. True when smoothed.
bool smooth_reads(const std::vector<double>& t, const std::vector<double>& y, const std::vector<double>& z,
                  std::size_t from, const Eigen::MatrixXd& bend, std::size_t k, Eigen::MatrixXd& reads) {
  const LineFit zl = line_from(t, z, from);
  if (!std::isfinite(zl.slope) || bends_on_its_own(t, z, from)) return false;
  const auto kk = static_cast<Eigen::Index>(k);
  for (std::size_t i = 0; i < t.size(); ++i) {
    const auto ii = static_cast<Eigen::Index>(i);
    if (std::isfinite(y[i])) reads(ii, kk) = zl.intercept + zl.slope * t[i] + bend(ii, kk);
  }
  return true;
}

// Step 7 for one blank (column k of `reads`; `y` its usable reads, NaN elsewhere; `zl` its
// line with the bend off): the missing reads between its first and last usable one filled
// by the line plus the bend. Reads marked overflow are left alone (the plate was beyond the
// detector there, not unread). Returns how many.
int fill_gaps(const Channel& c, int column, const std::vector<double>& y, const LineFit& zl, const Eigen::MatrixXd& bend,
              std::size_t k, Eigen::MatrixXd& reads) {
  if (!std::isfinite(zl.slope)) return 0;
  std::size_t first = 0, last = y.size();
  while (first < y.size() && !std::isfinite(y[first])) ++first;
  while (last > first && !std::isfinite(y[last - 1])) --last;
  int n = 0;
  for (std::size_t i = first; i < last; ++i) {
    const auto ii = static_cast<Eigen::Index>(i);
    if (std::isfinite(y[i]) || c.status(ii, column) != ReadStatus::missing) continue;
    const auto kk = static_cast<Eigen::Index>(k);
    reads(ii, kk) = zl.intercept + zl.slope * c.time_s[i] + bend(ii, kk);
    ++n;
  }
  return n;
}

}  // namespace

BlankScreen screen_blanks(const Channel& c, const std::vector<int>& columns, bool smooth) {
  const std::size_t reads = c.time_s.size(), m = columns.size();
  BlankScreen s;
  s.skip.assign(m, 0);
  s.spikes.assign(m, 0);
  s.smoothed.assign(m, 0);
  s.filled.assign(m, 0);
  s.line.resize(m);
  s.flat_sd.assign(m, NAN);
  s.reads = Eigen::MatrixXd::Constant(static_cast<Eigen::Index>(reads), static_cast<Eigen::Index>(m), NAN);
  // Step 1: each blank's usable reads (NaN elsewhere).
  std::vector<std::vector<double>> y(m, std::vector<double>(reads, NAN));
  for (std::size_t k = 0; k < m; ++k)
    for (std::size_t i = 0; i < reads; ++i) {
      const auto ii = static_cast<Eigen::Index>(i);
      const double v = c.values(ii, columns[k]);
      if (c.status(ii, columns[k]) == ReadStatus::ok && std::isfinite(v)) y[k][i] = v;
    }
  s.bend = shared_bend(c.time_s, y);
  // Step 3: each blank less the bend; the pooled read noise.
  std::vector<std::vector<double>> z = y;
  std::vector<double> sds;
  for (std::size_t k = 0; k < m; ++k) {
    auto& v = z[k];
    for (std::size_t i = 0; i < reads; ++i) v[i] -= s.bend(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(k));
    const double sd = second_difference_sd(v);
    if (std::isfinite(sd)) sds.push_back(sd);
  }
  s.noise_sd = median_of(sds);
  for (std::size_t k = 0; k < m; ++k) {
    std::vector<double> tt, zz;
    std::vector<std::size_t> at;
    for (std::size_t i = 0; i < reads; ++i)
      if (std::isfinite(z[k][i])) {
        tt.push_back(c.time_s[i]);
        zz.push_back(z[k][i]);
        at.push_back(i);
      }
    if (s.noise_sd > 0)
      s.skip[k] = screen_start(tt.data(), zz.data(), static_cast<int>(tt.size()), k_min_points, s.noise_sd, k_z_cut).skip;
    // Step 4: the disturbed reads replaced by the line of the rest (bend off) plus the bend.
    std::size_t from = s.skip[k] > 0 ? at[static_cast<std::size_t>(s.skip[k])] : 0;
    const LineFit zl = s.skip[k] > 0 ? line_from(c.time_s, z[k], from) : LineFit{};
    if (s.skip[k] > 0 && !std::isfinite(zl.slope)) {
      s.skip[k] = 0;
      from = 0;
    }
    s.line[k] = line_from(c.time_s, y[k], from);
    const LineFit flat = line_from(c.time_s, z[k], from);
    s.flat_sd[k] = flat.resid_sd;
    for (std::size_t i = 0; i < reads; ++i) {
      const auto ii = static_cast<Eigen::Index>(i);
      s.reads(ii, static_cast<Eigen::Index>(k)) =
          i < from && std::isfinite(y[k][i]) && s.skip[k] > 0 ? zl.intercept + zl.slope * c.time_s[i] +
                                                                     s.bend(ii, static_cast<Eigen::Index>(k))
                                                               : y[k][i];
    }
    // Step 5: single reads far off their neighbours, replaced by the neighbours' line.
    s.spikes[k] = replace_spikes(tt, zz, at, s.skip[k], s.noise_sd, s.bend, k, s.reads);
    if (smooth && m > k_bend_blanks) s.smoothed[k] = smooth_reads(c.time_s, y[k], z[k], from, s.bend, k, s.reads);
    // Step 7: the reads it lacks, filled.
    s.filled[k] = fill_gaps(c, columns[k], y[k], flat, s.bend, k, s.reads);
  }
  return s;
}

}  // namespace vzero::detail
