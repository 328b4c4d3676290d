// The spike screen's lanes: the comparison networks, one read's neighbour line and the loop
// over reads, for one read, two (SSE2) or four (AVX2) at a time. Included by
// spike_screen.cpp and by spike_screen_avx2.cpp, which is compiled for AVX2: everything here
// has internal linkage (an unnamed namespace), so each file keeps its own code. Keep it so:
// an out-of-line inline or template function shared with other files (a standard-library one
// included) could let the linker hand the AVX2 copy to every caller. Internal to the rate
// finder (src/rates).
#pragma once

#include <algorithm>
#include <array>
#include <cmath>
#include <utility>

#if defined(__AVX2__)
#include <immintrin.h>
#elif defined(__SSE2__)
#include <emmintrin.h>
#endif

namespace vzero::detail {

// What the loop over reads reads: m reads' times and signals, the six gap slopes of each
// (gap_slope[i·6 + g − 1] = slope of reads i, i + g) and each read's residual scale.
struct SpikeInput {
  const double* t;
  const double* y;
  int m;
  const double* gap_slope;
  const double* scale;
};

// The loop four reads at a time from read 0 (spike_screen_avx2.cpp; call only where the
// processor has AVX2). Returns the first read not screened.
int screen_reads_avx2(const SpikeInput& in, double* d, double* nb_sd);

namespace {

inline std::size_t z(int i) { return static_cast<std::size_t>(i); }

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
// read per lane), with AVX2 four (V4). Every lane operation is the IEEE operation the scalar
// code does (min and max as std::min/std::max give them, |x| by clearing the sign, correctly
// rounded division), so all give the same bits.
inline double lane_min(double a, double b) { return std::min(a, b); }
inline double lane_max(double a, double b) { return std::max(a, b); }
inline double lane_abs(double a) { return std::fabs(a); }
inline double splat(double a, double) { return a; }
inline double load(const double* p, double) { return *p; }
inline void store(double* p, double a) { *p = a; }

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
inline V2 load(const double* p, V2) { return {_mm_loadu_pd(p)}; }
inline void store(double* p, V2 a) { _mm_storeu_pd(p, a.v); }
#endif
#if defined(__AVX2__)
struct V4 {
  __m256d v;
  friend V4 operator+(V4 a, V4 b) { return {_mm256_add_pd(a.v, b.v)}; }
  friend V4 operator-(V4 a, V4 b) { return {_mm256_sub_pd(a.v, b.v)}; }
  friend V4 operator*(V4 a, V4 b) { return {_mm256_mul_pd(a.v, b.v)}; }
  friend V4 operator/(V4 a, V4 b) { return {_mm256_div_pd(a.v, b.v)}; }
};
inline V4 lane_min(V4 a, V4 b) { return {_mm256_min_pd(b.v, a.v)}; }
inline V4 lane_max(V4 a, V4 b) { return {_mm256_max_pd(b.v, a.v)}; }
inline V4 lane_abs(V4 a) { return {_mm256_andnot_pd(_mm256_set1_pd(-0.0), a.v)}; }
inline V4 splat(double a, V4) { return {_mm256_set1_pd(a)}; }
inline V4 load(const double* p, V4) { return {_mm256_loadu_pd(p)}; }
inline void store(double* p, V4 a) { _mm256_storeu_pd(p, a.v); }
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

// One read's (or, in lanes, several reads') neighbour line: `slopes` the 15 neighbour-pair
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

// The neighbours of reads j … j + L − 1, lane by lane: read r's 7-read window from lo(r), less
// r itself, and its 15 neighbour-pair slopes.
template <int L>
void gather_lanes(const SpikeInput& in, int j, std::array<double, 15 * L>& sl, std::array<double, 6 * L>& tl,
                  std::array<double, 6 * L>& yl) {
  constexpr int k_nb = 6;
  for (int l = 0; l < L; ++l) {
    const int r = j + l;
    const int lo = std::clamp(r - k_nb / 2, 0, in.m - k_nb - 1);
    const double* gs = in.gap_slope + z(lo) * k_nb;
    const auto& offsets = k_pair_offsets[z(r - lo)];
    for (std::size_t p = 0; p < 15; ++p) sl[p * L + z(l)] = gs[offsets[p]];
    int c = 0;
    for (int i = lo; i <= lo + k_nb; ++i)
      if (i != r) {
        tl[z(c) * L + z(l)] = in.t[i];
        yl[z(c++) * L + z(l)] = in.y[i];
      }
  }
}

// Reads [j, j + L) at a time, one a lane, from read `j` while L fit: each read's neighbours
// (the 7-read window from lo(j), less the read) gathered lane by lane, then screen_read.
// Returns the first read not screened.
template <class V, int L>
int screen_lanes(const SpikeInput& in, int j, double* d, double* nb_sd) {
  constexpr int k_nb = 6;
  const int m = in.m;
  std::array<double, 15 * L> sl{};
  std::array<double, 6 * L> tl{}, yl{};
  for (; j + L <= m; j += L) {
    const V like{};
    std::array<V, 15> sv{};
    std::array<V, 6> tv{}, yv{};
    if (j >= k_nb / 2 && j + L - 1 + k_nb / 2 < m) {
      // Every read inside: its window starts 3 before it, so its neighbours (−3 … +3, less
      // itself) are loaded straight from the reads, lane by lane.
      for (int c = 0; c < k_nb; ++c) {
        const int off = c < k_nb / 2 ? c - k_nb / 2 : c - k_nb / 2 + 1;
        tv[z(c)] = load(in.t + j + off, like);
        yv[z(c)] = load(in.y + j + off, like);
      }
      const auto& offsets = k_pair_offsets[k_nb / 2];
      for (int l = 0; l < L; ++l) {
        const double* gs = in.gap_slope + z(j + l - k_nb / 2) * k_nb;
        for (std::size_t p = 0; p < 15; ++p) sl[p * L + z(l)] = gs[offsets[p]];
      }
      for (std::size_t p = 0; p < 15; ++p) sv[p] = load(&sl[p * L], like);
    } else {
      gather_lanes<L>(in, j, sl, tl, yl);
      for (std::size_t p = 0; p < 15; ++p) sv[p] = load(&sl[p * L], like);
      for (std::size_t p = 0; p < 6; ++p) {
        tv[p] = load(&tl[p * L], like);
        yv[p] = load(&yl[p * L], like);
      }
    }
    V dv{}, sdv{};
    screen_read(sv, tv, yv, load(in.t + j, like), load(in.y + j, like), load(in.scale + j, like), dv, sdv);
    store(d + j, dv);
    store(nb_sd + j, sdv);
  }
  return j;
}

}  // namespace
}  // namespace vzero::detail
