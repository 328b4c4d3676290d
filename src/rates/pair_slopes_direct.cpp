// pair_slope_ranks_direct and select_kth (pair_slopes.hpp): every slope formed, then the
// ranks selected. Below a few hundred pairs a quickselect per rank, unless a median and an
// interval are asked for from 180 pairs up; above, and then, the slopes are counted into
// buckets between two values from a sample, and each rank is selected among the few slopes
// of its own bucket. Where the processor has AVX2 the bracket pass goes four pairs at a time
// (pair_slopes_avx2.cpp), with the same bits.
#include <algorithm>
#include <array>
#include <cmath>
#include <cstdint>
#include <numeric>
#include <utility>
#include <vector>

#include "rates/pair_slopes.hpp"
#include "rates/pair_slopes_parts.hpp"

namespace vzero::detail {

void select_kth(double* a, std::size_t n, std::size_t k) {
  std::size_t lo = 0, hi = n;  // the k-th lies in [lo, hi)
  for (int round = 0; hi - lo > 16; ++round) {
    if (round > 40) {
      std::nth_element(a + lo, a + k, a + hi);
      return;
    }
    // Median of three as the pivot, moved to the end.
    const std::size_t mid = lo + (hi - lo) / 2;
    double& x = a[lo];
    double& y = a[mid];
    double& z = a[hi - 1];
    if (y < x) std::swap(x, y);
    if (z < y) std::swap(y, z);
    if (y < x) std::swap(x, y);
    std::swap(y, a[hi - 1]);
    const double pivot = a[hi - 1];
    std::size_t i = lo;
    for (std::size_t j = lo; j + 1 < hi; ++j) {
      const double v = a[j];
      a[j] = a[i];
      a[i] = v;
      i += v < pivot;
    }
    std::swap(a[i], a[hi - 1]);  // the pivot at its place: [lo, i) < pivot ≤ [i + 1, hi)
    if (k == i) return;
    if (k < i)
      hi = i;
    else
      lo = i + 1;
  }
  // A few left: insertion sort.
  for (std::size_t p = lo + 1; p < hi; ++p) {
    const double v = a[p];
    std::size_t q = p;
    for (; q > lo && a[q - 1] > v; --q) a[q] = a[q - 1];
    a[q] = v;
  }
}

namespace {

// The bracket pass four pairs at a time where the processor has AVX2 (and the build has the
// file compiled for it); false: the scalar loop. s has room for 3 slopes past the last pair.
bool keep_in_bracket_vector(const double* x, const double* y, int n, double a, double b, std::vector<double>& s,
                            std::size_t& nk, std::size_t& below) {
#if defined(VZERO_PAIR_SLOPES_AVX2)
  static const bool avx2 = __builtin_cpu_supports("avx2");
  if (!avx2) return false;
  nk = keep_in_bracket_avx2(x, y, n, a, b, s.data(), below);
  return true;
#else
  (void)x, (void)y, (void)n, (void)a, (void)b, (void)s, (void)nk, (void)below;
  return false;
#endif
}

// True when no slope of these points can be −0 or NaN (x strictly increasing and finite, y
// finite, as pair_slope_ranks asks). Then slopes that compare equal have the same bits, so
// every exact method gives the bits the full sort gives, whatever order it meets the slopes
// in; otherwise only the method used before (which meets them in the same order) does.
// Why it holds: x_j − x_i rounds into (0, 2^100]; every y is 0 or at least 2^−900 in size
// and no y is −0, so y_j − y_i is +0 or a multiple of 2^−952 at least that large (the exact
// difference of multiples of 2^−952, rounded monotonically), and the quotient is +0, ±inf,
// or at least 2^−1052 > 2^−1075 in size: never rounded to −0.
bool one_pattern_per_value(const double* x, const double* y, int n) {
  if (!(x[n - 1] - x[0] <= 0x1p100)) return false;
  bool bad = false;
  for (int i = 0; i < n; ++i) bad |= (std::fabs(y[i]) < 0x1p-900) & ((y[i] != 0) | std::signbit(y[i]));
  return !bad;
}

// The slopes from point 0 to points 1..m (a loop the compiler turns into vector divisions;
// each slope is computed as slope_of does).
void form_row(const double* __restrict x, const double* __restrict y, int m, double* __restrict row) {
  const double x0 = x[0], y0 = y[0];
  for (int j = 0; j < m; ++j) row[j] = (y[j + 1] - y0) / (x[j + 1] - x0);
}

// Every slope, in the order i < j row by row.
void form_slopes(const double* x, const double* y, int n, double* s) {
  std::size_t k = 0;
  for (int i = 0; i + 1 < n; ++i) {
    form_row(x + i, y + i, n - i - 1, s + k);
    k += static_cast<std::size_t>(n - i - 1);
  }
}

// The ranks (ranks[order[0]] ≤ ranks[order[1]] ≤ …) selected one after another in v[0, m),
// each in what is left above the previous; `offset` is subtracted from every rank.
void select_in_order(double* v, std::size_t m, const std::int64_t* ranks, const int* order, int count,
                     std::int64_t offset, double* out) {
  std::int64_t start = 0;
  for (int r = 0; r < count; ++r) {
    const std::int64_t local = ranks[order[r]] - offset;
    select_kth(v + start, m - static_cast<std::size_t>(start), static_cast<std::size_t>(local - start));
    start = local;
    out[order[r]] = v[static_cast<std::size_t>(local)];
  }
}

// Values a ≤ b among the slopes of k_sample pseudo-random pairs, 3 binomial SDs beyond the
// expected places of the lowest and highest rank wanted; ±inf when beyond the sample.
template <std::size_t k_sample>
void sample_bracket(const double* x, const double* y, int n, std::int64_t k_lo, std::int64_t k_hi, double& a,
                    double& b) {
  std::array<double, k_sample> smp, dx;  // every element written below
  Mix mix{0x51ede5ULL + static_cast<std::uint64_t>(n)};
  for (std::size_t k = 0; k < k_sample; ++k) {
    const int i = static_cast<int>(mix.below(static_cast<std::uint64_t>(n)));
    int j = static_cast<int>(mix.below(static_cast<std::uint64_t>(n - 1)));
    j += j >= i;
    // The pair's two ends in order without a jump (which way round is a coin toss).
    const int lo = std::min(i, j), hi = std::max(i, j);
    smp[k] = y[hi] - y[lo];
    dx[k] = x[hi] - x[lo];
  }
  // Divided in a second loop, which the compiler turns into vector divisions (slope_of's).
  for (std::size_t k = 0; k < k_sample; ++k) smp[k] /= dx[k];
  const double ms = k_sample, big_n = static_cast<double>(n) * (n - 1) / 2;
  const double ql = static_cast<double>(k_lo) / big_n, qh = static_cast<double>(k_hi) / big_n;
  const double ia = std::floor(ql * ms - 3 * std::sqrt(ms * ql * (1 - ql)) - 1);
  const double ib = std::ceil(qh * ms + 3 * std::sqrt(ms * qh * (1 - qh)) + 1);
  a = -INFINITY;
  b = INFINITY;
  std::size_t from = 0;
  if (ia >= 0) {
    select_kth(smp.data(), k_sample, static_cast<std::size_t>(ia));
    a = smp[static_cast<std::size_t>(ia)];
    from = static_cast<std::size_t>(ia) + 1;
  }
  if (ib < ms && static_cast<std::size_t>(ib) >= from) {
    select_kth(smp.data() + from, k_sample - from, static_cast<std::size_t>(ib) - from);
    b = smp[static_cast<std::size_t>(ib)];
  }
}

// The ranks among v[0, m), every value in [a, b] (finite, a < b), by buckets: [a, b] split
// into `nb` equal buckets. A value's bucket is a non-decreasing function of it, so the r-th
// smallest is the (r − values in lower buckets)-th smallest of its own bucket: one pass
// counts the buckets, one gathers the values of the few buckets that hold a rank, and each
// rank is selected among those. Exact for any a < b; the sample only makes buckets small.
// At most 8 ranks.
void select_by_buckets(const double* v, std::size_t m, double a, double b, const std::int64_t* ranks,
                       const int* order, int count, std::int64_t offset, double* out) {
  const int nb = static_cast<int>(std::clamp<std::size_t>(m / 4, 16, 4096));
  const double scale = nb / (b - a), top = nb - 1;  // scale finite: checked by the caller
  thread_local std::vector<std::uint16_t> bucket;
  thread_local std::vector<std::uint32_t> first;
  thread_local std::vector<unsigned char> wanted;
  thread_local std::vector<double> picked;
  bucket.resize(m);
  std::uint16_t* __restrict bk = bucket.data();
  for (std::size_t k = 0; k < m; ++k) {
    double t = (v[k] - a) * scale;  // ≥ 0, finite
    t = t < top ? t : top;          // written so as to compile to minsd
    bk[k] = static_cast<std::uint16_t>(t);
  }
  // Counted in four interleaved tallies: neighbouring slopes often share a bucket, and one
  // tally would make each count wait for the one before it through memory.
  const auto stride = static_cast<std::size_t>(nb) + 1;
  first.assign(4 * stride, 0);
  std::uint32_t* __restrict c = first.data();
  std::size_t p = 0;
  for (; p + 4 <= m; p += 4) {
    ++c[bk[p] + 1u];
    ++c[stride + bk[p + 1] + 1u];
    ++c[2 * stride + bk[p + 2] + 1u];
    ++c[3 * stride + bk[p + 3] + 1u];
  }
  for (; p < m; ++p) ++c[bk[p] + 1u];
  for (std::size_t q = 1; q < stride; ++q) c[q] += c[stride + q] + c[2 * stride + q] + c[3 * stride + q];
  first.resize(stride);
  for (std::size_t q = 1; q < first.size(); ++q) first[q] += first[q - 1];  // values below bucket q
  // The buckets holding a rank (at most 8 ranks), each given a stretch of `picked`;
  // wanted[q] is 1 + the first rank that bucket q holds.
  std::array<int, 8> held{};
  std::array<std::uint32_t, 8> fill{};
  wanted.assign(static_cast<std::size_t>(nb), 0);
  std::uint32_t total = 0;
  for (int r = 0; r < count; ++r) {
    const auto local = static_cast<std::uint32_t>(ranks[order[r]] - offset);
    held[r] = static_cast<int>(std::upper_bound(first.begin(), first.end(), local) - first.begin()) - 1;
    if (r > 0 && held[r] == held[r - 1]) continue;
    const auto q = static_cast<std::size_t>(held[r]);
    wanted[q] = static_cast<unsigned char>(r + 1);
    fill[r] = total;
    total += first[q + 1] - first[q];
  }
  picked.resize(total);
  for (std::size_t k = 0; k < m; ++k) {
    const unsigned w = wanted[bucket[k]];
    if (w) picked[fill[w - 1]++] = v[k];  // rare: the branch is well predicted
  }
  for (int r = 0; r < count;) {
    int e = r + 1;
    while (e < count && held[e] == held[r]) ++e;
    const auto q = static_cast<std::size_t>(held[r]);
    const std::uint32_t size = first[q + 1] - first[q];
    select_in_order(picked.data() + (fill[r] - size), size, ranks, order + r, e - r,
                    offset + static_cast<std::int64_t>(first[q]), out);
    r = e;
  }
}

}  // namespace

void pair_slope_ranks_direct(const double* x, const double* y, int n, const std::int64_t* ranks, int count,
                             double* out) {
  const auto n_pairs = static_cast<std::size_t>(n) * static_cast<std::size_t>(n - 1) / 2;
  // Ranks in ascending order.
  std::array<int, 8> small_order{};
  std::vector<int> big_order;
  int* order = small_order.data();
  if (count > 8) {
    big_order.resize(static_cast<std::size_t>(count));
    order = big_order.data();
  }
  std::iota(order, order + count, 0);
  std::sort(order, order + count, [&](int a, int b) { return ranks[a] < ranks[b]; });
  // Reused per thread for the small sizes the rate finder asks for most.
  thread_local std::vector<double> reused;
  std::vector<double> own;
  std::vector<double>& s = n_pairs <= (1u << 18) ? reused : own;
  s.resize(n_pairs + 3);  // the vector pass writes whole lanes past the last kept slope
  // Fewer pairs: the same where the ranks are spread (a median and an interval) and any exact
  // method gives the same bits; two ranks side by side cost less by quickselect.
  const bool small = n_pairs < k_bucket_pairs;
  if (n_pairs <= (1u << 18) &&
      (!small || (n_pairs >= k_small_bucket_pairs && count > 2 && one_pattern_per_value(x, y, n)))) {
    // Pivots a ≤ b from a sample; the slopes are formed keeping those in [a, b] and counting
    // those below a. When the ranks fall inside, they are selected among the kept ones only;
    // otherwise among every slope.
    const std::int64_t k_lo = ranks[order[0]], k_hi = ranks[order[count - 1]];
    double a = 0, b = 0;
    if (small)
      sample_bracket<k_small_sample>(x, y, n, k_lo, k_hi, a, b);
    else
      sample_bracket<128>(x, y, n, k_lo, k_hi, a, b);
    std::size_t nk = 0, below = 0;
    if (!keep_in_bracket_vector(x, y, n, a, b, s, nk, below)) {
      for (int i = 0; i < n; ++i) {
        for (int j = i + 1; j < n; ++j) {
          const double v = slope_of(x, y, i, j);
          s[nk] = v;
          nk += (v >= a) & (v <= b);
          below += v < a;
        }
      }
    }
    const auto lo = static_cast<std::int64_t>(below);
    if (lo <= k_lo && lo + static_cast<std::int64_t>(nk) > k_hi) {
      if (count <= 8 && std::isfinite(a) && std::isfinite(b) && std::isfinite(4096 / (b - a)))
        select_by_buckets(s.data(), nk, a, b, ranks, order, count, lo, out);
      else
        select_in_order(s.data(), nk, ranks, order, count, lo, out);
      return;
    }
  }
  form_slopes(x, y, n, s.data());
  select_in_order(s.data(), n_pairs, ranks, order, count, 0, out);
}

}  // namespace vzero::detail
