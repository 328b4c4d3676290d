// The spike screen (rate_window.hpp): every read against the Theil–Sen line through its six
// nearest other reads.
#include <algorithm>
#include <array>
#include <cstring>
#include <utility>

#if defined(__SSE2__)
#include <emmintrin.h>
#endif

#include "rates/rate_window.hpp"
#include "rates/robust.hpp"

namespace vzero::detail {
namespace {

std::size_t z(int i) { return static_cast<std::size_t>(i); }

// Spike screen. Each read is compared with the Theil–Sen line through its six nearest other
// reads (seven consecutive reads holding it, shifted inward at the ends), so one other spike
// among the neighbours does not move the line. Its residual, scaled by √(1 + leverage), is a
// spike when it exceeds k times the larger of the trace's robust SD (1.4826·MAD of these
// residuals) and the neighbours' own robust residual SD: at a sharp bend (end of a lag, onset
// of saturation) the neighbours do not agree with one line, and the read there is no spike.
// Batcher's odd–even merge sorting network on N = 2^k inputs (Knuth, TAOCP vol. 3,
// §5.3.4): a fixed list of compare-exchange pairs, so small arrays sort without branches.
template <int N>
constexpr auto batcher_pairs() {
  constexpr int count = [] {
    int c = 0;
    for (int p = 1; p < N; p <<= 1)
      for (int k = p; k >= 1; k >>= 1)
        for (int j = k % p; j + k < N; j += 2 * k)
          for (int i = 0; i < std::min(k, N - j - k); ++i)
            if ((i + j) / (2 * p) == (i + j + k) / (2 * p)) ++c;
    return c;
  }();
  std::array<std::pair<int, int>, count> out{};
  int c = 0;
  for (int p = 1; p < N; p <<= 1)
    for (int k = p; k >= 1; k >>= 1)
      for (int j = k % p; j + k < N; j += 2 * k)
        for (int i = 0; i < std::min(k, N - j - k); ++i)
          if ((i + j) / (2 * p) == (i + j + k) / (2 * p)) out[static_cast<std::size_t>(c++)] = {i + j, i + j + k};
  return out;
}

// The spike screen works on one read (double) or, with SSE2, two reads at once (V2: one
// read per lane). Every lane operation is the IEEE operation the scalar code does (min and
// max as std::min/std::max give them, |x| by clearing the sign, correctly rounded division),
// so both give the same bits.
inline double lane_min(double a, double b) { return std::min(a, b); }
inline double lane_max(double a, double b) { return std::max(a, b); }
inline double lane_abs(double a) { return std::fabs(a); }
inline double splat(double a, double) { return a; }

#if defined(__SSE2__)
struct V2 {
  __m128d v;
  friend V2 operator+(V2 a, V2 b) { return {_mm_add_pd(a.v, b.v)}; }
  friend V2 operator-(V2 a, V2 b) { return {_mm_sub_pd(a.v, b.v)}; }
  friend V2 operator*(V2 a, V2 b) { return {_mm_mul_pd(a.v, b.v)}; }
  friend V2 operator/(V2 a, V2 b) { return {_mm_div_pd(a.v, b.v)}; }
};
// std::min(a, b) is b < a ? b : a, which MINPD(b, a) computes; likewise for max.
inline V2 lane_min(V2 a, V2 b) { return {_mm_min_pd(b.v, a.v)}; }
inline V2 lane_max(V2 a, V2 b) { return {_mm_max_pd(b.v, a.v)}; }
inline V2 lane_abs(V2 a) { return {_mm_andnot_pd(_mm_set1_pd(-0.0), a.v)}; }
inline V2 splat(double a, V2) { return {_mm_set1_pd(a)}; }
#endif

template <class V>
inline void compare_exchange(V& a, V& b) {
  const V lo = lane_min(a, b), hi = lane_max(a, b);
  a = lo;
  b = hi;
}

// The comparators of Batcher's 16-input network that decide output 7 (the median) of 15
// values: those on wire 15 (an implicit +inf) never move anything, and those feeding no
// wire that reaches output 7 are left out (49 of 63).
constexpr int median15_count() {
  constexpr auto all = batcher_pairs<16>();
  std::array<bool, 16> need{};
  need[7] = true;
  int count = 0;
  for (int c = static_cast<int>(all.size()) - 1; c >= 0; --c) {
    const auto [a, b] = all[static_cast<std::size_t>(c)];
    if (a == 15 || b == 15 || !(need[static_cast<std::size_t>(a)] || need[static_cast<std::size_t>(b)])) continue;
    need[static_cast<std::size_t>(a)] = need[static_cast<std::size_t>(b)] = true;
    ++count;
  }
  return count;
}

constexpr auto median15_pairs() {
  constexpr auto all = batcher_pairs<16>();
  std::array<std::pair<int, int>, median15_count()> out{};
  std::array<bool, 16> need{};
  need[7] = true;
  int k = static_cast<int>(out.size());
  for (int c = static_cast<int>(all.size()) - 1; c >= 0; --c) {
    const auto [a, b] = all[static_cast<std::size_t>(c)];
    if (a == 15 || b == 15 || !(need[static_cast<std::size_t>(a)] || need[static_cast<std::size_t>(b)])) continue;
    need[static_cast<std::size_t>(a)] = need[static_cast<std::size_t>(b)] = true;
    out[static_cast<std::size_t>(--k)] = {a, b};  // kept in network order
  }
  return out;
}

inline constexpr auto k_median15 = median15_pairs();

// The network unrolled at compile time, so the values stay in registers.
template <class V, std::size_t... I>
V median15(std::array<V, 15> w, std::index_sequence<I...>) {
  (compare_exchange(w[z(k_median15[I].first)], w[z(k_median15[I].second)]), ...);
  return w[7];
}

// The 8th smallest of 15 values (what std::nth_element at index 7 gives).
template <class V>
inline V median_of_fifteen(const std::array<V, 15>& v) {
  return median15(v, std::make_index_sequence<k_median15.size()>{});
}

// For the read at offset e of its 7-read window: its 15 neighbour pairs (a, b) as indices
// a·6 + (b − a − 1) into the gap slopes from the window's start.
constexpr auto pair_offsets() {
  std::array<std::array<int, 15>, 7> t{};
  for (int e = 0; e < 7; ++e) {
    std::array<int, 6> nb{};
    int c = 0;
    for (int i = 0; i < 7; ++i)
      if (i != e) nb[static_cast<std::size_t>(c++)] = i;
    int n = 0;
    for (int p = 0; p < 6; ++p)
      for (int q = p + 1; q < 6; ++q)
        t[static_cast<std::size_t>(e)][static_cast<std::size_t>(n++)] =
            nb[static_cast<std::size_t>(p)] * 6 +
            (nb[static_cast<std::size_t>(q)] - nb[static_cast<std::size_t>(p)] - 1);
  }
  return t;
}
inline constexpr auto k_pair_offsets = pair_offsets();

// Median of six values, as median_inplace gives it: the mean of the two middle ones. The
// 12-comparator network for six inputs (Knuth, TAOCP vol. 3, §5.3.4; checked on all 64
// 0–1 inputs, which suffices by the 0–1 principle).
template <class V>
inline V median_of_six(std::array<V, 6> v) {
  compare_exchange(v[0], v[5]);
  compare_exchange(v[1], v[3]);
  compare_exchange(v[2], v[4]);
  compare_exchange(v[1], v[2]);
  compare_exchange(v[3], v[4]);
  compare_exchange(v[0], v[3]);
  compare_exchange(v[2], v[5]);
  compare_exchange(v[0], v[1]);
  compare_exchange(v[2], v[3]);
  compare_exchange(v[4], v[5]);
  compare_exchange(v[1], v[2]);
  compare_exchange(v[3], v[4]);
  return (v[2] + v[3]) / splat(2.0, v[0]);
}

// The scale √(1 + leverage) of a read's residual from its neighbour line: it depends on the
// times alone, (tn) the six neighbours' and tj the read's.
inline double residual_scale(const std::array<double, 6>& tn, double tj) {
  constexpr int k_nb = 6;
  double mt = 0.0;
  for (int i = 0; i < k_nb; ++i) mt = mt + tn[z(i)];
  mt = mt / static_cast<double>(k_nb);
  double stt = 0.0;
  for (int i = 0; i < k_nb; ++i) {
    const double dt = tn[z(i)] - mt;
    stt = stt + dt * dt;
  }
  const double dt = tj - mt;
  const double lev = 1.0 / k_nb + dt * dt / stt;
  return std::sqrt(1.0 + lev);
}

// One read's (or, in lanes, two reads') neighbour line: `slopes` the 15 neighbour-pair
// slopes, (tn, yn) the six neighbours, (tj, yj) the read, `scale` its residual_scale. Gives
// its scaled residual and the neighbours' robust SD.
template <class V>
inline void screen_read(const std::array<V, 15>& slopes, const std::array<V, 6>& tn, const std::array<V, 6>& yn, V tj,
                        V yj, V scale, V& d, V& nb_sd) {
  constexpr int k_nb = 6;
  const V slope = median_of_fifteen(slopes);
  std::array<V, k_nb> res{}, tmp{};
  for (int i = 0; i < k_nb; ++i) res[z(i)] = yn[z(i)] - slope * tn[z(i)];
  const V icpt = median_of_six(res);
  for (int i = 0; i < k_nb; ++i) tmp[z(i)] = lane_abs(res[z(i)] - icpt);
  nb_sd = splat(1.4826, tj) * median_of_six(tmp);
  d = (yj - (icpt + slope * tj)) / scale;
}

// Each read's residual_scale, kept per thread for the read times last met: the wells of a
// plate mostly share them, and the values are the same bits whether kept or worked out.
const std::vector<double>& residual_scales(const std::vector<double>& t) {
  constexpr int k_nb = 6;
  thread_local std::vector<double> times, scales;
  if (times.size() == t.size() && std::memcmp(times.data(), t.data(), t.size() * sizeof(double)) == 0) return scales;
  const int m = static_cast<int>(t.size());
  times = t;
  scales.resize(z(m));
  std::array<double, 6> tn{};
  for (int j = 0; j < m; ++j) {
    const int lo = std::clamp(j - k_nb / 2, 0, m - k_nb - 1);
    int c = 0;
    for (int i = lo; i <= lo + k_nb; ++i)
      if (i != j) tn[z(c++)] = t[z(i)];
    scales[z(j)] = residual_scale(tn, t[z(j)]);
  }
  return scales;
}

}  // namespace

void screen_spikes(Usable& u, double k, double floor) {
  constexpr int k_nb = 6;
  const int m = static_cast<int>(u.t.size());
  u.spike.assign(z(m), 0);
  if (m < k_nb + 1) return;
  // Scratch reused by each thread: the screen runs once per well.
  thread_local std::vector<double> d, nb_sd, a, gap_slope;
  d.resize(z(m));
  nb_sd.resize(z(m));
  const std::vector<double>& rscale = residual_scales(u.t);
  // Slope of reads (i, i + g), g = 1 … 6: every neighbour pair below lies within 6 reads.
  gap_slope.resize(z(m) * k_nb);
  int i0 = 0;
#if defined(__SSE2__)
  // Two gaps at once while all six lie inside (the same IEEE differences and quotients).
  for (; i0 + k_nb < m; ++i0) {
    const __m128d yi = _mm_set1_pd(u.y[z(i0)]), ti = _mm_set1_pd(u.t[z(i0)]);
    for (int g = 1; g < k_nb; g += 2)
      _mm_storeu_pd(&gap_slope[z(i0) * k_nb + z(g - 1)],
                    _mm_div_pd(_mm_sub_pd(_mm_loadu_pd(&u.y[z(i0 + g)]), yi),
                               _mm_sub_pd(_mm_loadu_pd(&u.t[z(i0 + g)]), ti)));
  }
#endif
  for (int i = i0; i < m; ++i)
    for (int g = 1; g <= k_nb && i + g < m; ++g)
      gap_slope[z(i) * k_nb + z(g - 1)] = (u.y[z(i + g)] - u.y[z(i)]) / (u.t[z(i + g)] - u.t[z(i)]);
  // Read j's neighbours: the 7-read window from lo(j), less j itself.
  const auto gather = [&](int j, std::array<double, 15>& slopes, std::array<double, 6>& tn, std::array<double, 6>& yn) {
    const int lo = std::clamp(j - k_nb / 2, 0, m - k_nb - 1);
    const double* gs = gap_slope.data() + z(lo) * k_nb;
    const auto& offsets = k_pair_offsets[z(j - lo)];
    for (std::size_t t = 0; t < slopes.size(); ++t) slopes[t] = gs[offsets[t]];
    int c = 0;
    for (int i = lo; i <= lo + k_nb; ++i)
      if (i != j) {
        tn[z(c)] = u.t[z(i)];
        yn[z(c++)] = u.y[z(i)];
      }
  };
  std::array<double, 15> s0{}, s1{};
  std::array<double, 6> t0{}, t1{}, y0{}, y1{};
  int j = 0;
#if defined(__SSE2__)
  for (; j + 1 < m; j += 2) {
    gather(j, s0, t0, y0);
    gather(j + 1, s1, t1, y1);
    std::array<V2, 15> sv{};
    std::array<V2, 6> tv{}, yv{};
    for (std::size_t i = 0; i < 15; ++i) sv[i] = {_mm_set_pd(s1[i], s0[i])};
    for (std::size_t i = 0; i < 6; ++i) {
      tv[i] = {_mm_set_pd(t1[i], t0[i])};
      yv[i] = {_mm_set_pd(y1[i], y0[i])};
    }
    V2 dv, sdv;
    screen_read(sv, tv, yv, V2{_mm_set_pd(u.t[z(j + 1)], u.t[z(j)])}, V2{_mm_set_pd(u.y[z(j + 1)], u.y[z(j)])},
                V2{_mm_loadu_pd(&rscale[z(j)])}, dv, sdv);
    _mm_storel_pd(&d[z(j)], dv.v);
    _mm_storeh_pd(&d[z(j + 1)], dv.v);
    _mm_storel_pd(&nb_sd[z(j)], sdv.v);
    _mm_storeh_pd(&nb_sd[z(j + 1)], sdv.v);
  }
#endif
  for (; j < m; ++j) {
    gather(j, s0, t0, y0);
    screen_read(s0, t0, y0, u.t[z(j)], u.y[z(j)], rscale[z(j)], d[z(j)], nb_sd[z(j)]);
  }
  a.resize(z(m));
  for (int i = 0; i < m; ++i) a[z(i)] = std::fabs(d[z(i)]);
  u.local_sd = 1.4826 * median_inplace(a);
  const double scale = std::max(u.local_sd, floor);
  for (int i = 0; i < m; ++i)
    if (std::fabs(d[z(i)]) > k * std::max(scale, nb_sd[z(i)])) u.spike[z(i)] = 1;
}

}  // namespace vzero::detail
