#include "rates/pair_slopes.hpp"
#include "rates/pair_slopes_parts.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <numeric>
#include <vector>

namespace vzero::detail {

namespace {

using i64 = std::int64_t;
constexpr double k_unit_roundoff = 0x1p-53;

struct Points {
  const double* x;
  const double* y;
  int n;
  double max_x = 0, max_y = 0, min_step = INFINITY;
  i64 pairs() const { return static_cast<i64>(n) * (n - 1) / 2; }
};

// Half-width of the band around a threshold t in which comparing y − t·x may disagree with
// comparing the computed slope with t. With u the unit roundoff, each y − t·x is off by at
// most u·|y| + u(2 + u)·|t·x|, so two differ from exact by E ≤ 2u(Y + 2.01|t|X); a pair's
// exact slope s is then misjudged only if |s − t| ≤ E/h (h the smallest x step), and the
// computed slope differs from s by at most 3.01u·|s|. The factor 4 is headroom; 1e-300 covers
// underflow.
double band(const Points& p, double t) {
  const double at = std::fabs(t);
  const double z = (2 * k_unit_roundoff * (p.max_y + 2.01 * at * p.max_x) + 1e-300) / p.min_step;
  return 4 * (z + 3.02 * k_unit_roundoff * (at + z));
}

// Points in order of y − t·x (ties: larger index first), so that a pair i < j comes out
// reversed exactly when y_j − t·x_j ≤ y_i − t·x_i, i.e. when its slope is (judged) ≤ t.
// t = ±inf stand for the orders no slope / every slope is below.
struct Order {
  double t = -INFINITY;
  std::vector<int> idx;
};

struct Scratch {
  std::vector<std::pair<double, int>> keys;
  std::vector<std::pair<std::uint64_t, int>> rk, rk2;
  std::vector<int> a, b;
  std::vector<double> slopes;
};

void order_at(const Points& p, double t, Order& o, Scratch& s) {
  const auto n = static_cast<std::size_t>(p.n);
  o.t = t;
  o.idx.resize(n);
  if (t == -INFINITY) {
    std::iota(o.idx.begin(), o.idx.end(), 0);
    return;
  }
  if (t == INFINITY) {
    for (std::size_t i = 0; i < n; ++i) o.idx[i] = p.n - 1 - static_cast<int>(i);
    return;
  }
  if (n < 512) {
    s.keys.resize(n);
    for (int i = 0; i < p.n; ++i) s.keys[static_cast<std::size_t>(i)] = {p.y[i] - t * p.x[i], -i};
    std::sort(s.keys.begin(), s.keys.end());
    for (std::size_t i = 0; i < n; ++i) o.idx[i] = -s.keys[i].second;
    return;
  }
  // LSD radix sort, 11 bits a pass; stable, fed from the largest index down so that equal
  // keys keep the larger index first, as the comparison sort above does.
  s.rk.resize(n);
  s.rk2.resize(n);
  for (std::size_t q = 0; q < n; ++q) {
    const int i = p.n - 1 - static_cast<int>(q);
    s.rk[q] = {sort_key(p.y[i] - t * p.x[i]), i};
  }
  std::uint32_t count[1u << 11];
  for (int pass = 0; pass < 6; ++pass) {
    const int shift = 11 * pass;
    std::fill(std::begin(count), std::end(count), 0u);
    for (const auto& e : s.rk) ++count[(e.first >> shift) & 0x7ff];
    if (count[(s.rk[0].first >> shift) & 0x7ff] == n) continue;  // every key shares this digit
    std::uint32_t sum = 0;
    for (auto& c : count) {
      const std::uint32_t here = c;
      c = sum;
      sum += here;
    }
    for (const auto& e : s.rk) s.rk2[count[(e.first >> shift) & 0x7ff]++] = e;
    s.rk.swap(s.rk2);
  }
  for (std::size_t q = 0; q < n; ++q) o.idx[q] = s.rk[q].second;
}

// Pairs p < q with idx[p] > idx[q], with a Fenwick tree (cheaper than merging here).
i64 count_below(const Order& o, Scratch& s) {
  (void)s;
  Fenwick f(static_cast<int>(o.idx.size()));
  i64 count = 0;
  for (std::size_t q = 0; q < o.idx.size(); ++q) {
    const int v = o.idx[q];
    count += static_cast<i64>(q) - f.below(v);
    f.add(v);
  }
  return count;
}

// Slopes of the pairs ordered one way at `lo` and the other way at `hi`, appended to `out`.
// False if a pair is reversed the other way (it cannot be when the bands hold).
bool between(const Points& p, const Order& lo, const Order& hi, std::vector<double>& out, Scratch& s) {
  const std::size_t n = static_cast<std::size_t>(p.n);
  std::vector<int> pos(n);
  for (std::size_t q = 0; q < n; ++q) pos[static_cast<std::size_t>(hi.idx[q])] = static_cast<int>(q);
  // Items (position at hi, index) in the order at lo; their inversions are the pairs wanted.
  std::vector<std::pair<int, int>> v(n), buf(n);
  for (std::size_t q = 0; q < n; ++q) v[q] = {pos[static_cast<std::size_t>(lo.idx[q])], lo.idx[q]};
  for (std::size_t width = 1; width < n; width *= 2) {
    for (std::size_t l = 0; l < n; l += 2 * width) {
      const std::size_t mid = std::min(l + width, n), h = std::min(l + 2 * width, n);
      std::size_t a = l, b = mid, k = l;
      while (a < mid && b < h) {
        if (v[b].first < v[a].first) {
          const int j = v[b].second;
          for (std::size_t r = a; r < mid; ++r) {
            const int i = v[r].second;
            if (i > j) return false;
            out.push_back(slope_of(p.x, p.y, i, j));
          }
          buf[k++] = v[b++];
        } else {
          buf[k++] = v[a++];
        }
      }
      while (a < mid) buf[k++] = v[a++];
      while (b < h) buf[k++] = v[b++];
    }
    v.swap(buf);
  }
  (void)s;
  return true;
}

// `m` slopes of pseudo-random pairs (uniform over all pairs).
void sample_all(const Points& p, std::size_t m, Mix& mix, std::vector<double>& out) {
  out.clear();
  const auto n = static_cast<std::uint64_t>(p.n);
  for (std::size_t k = 0; k < m; ++k) {
    int i = static_cast<int>(mix.below(n));
    int j = static_cast<int>(mix.below(n - 1));
    if (j >= i) ++j;
    if (i > j) std::swap(i, j);
    out.push_back(slope_of(p.x, p.y, i, j));
  }
}

struct Bracket {
  Order lo, hi;  // orders at the thresholds lo.t = a − band, hi.t = b + band
  double a = -INFINITY, b = INFINITY;
  i64 below_a = 0, below_b = 0;  // slopes judged ≤ lo.t, ≤ hi.t
};

// `m` slopes drawn uniformly from the pairs between the bracket's orders (the inversions of
// the order at hi read in the order at lo), by a Fenwick tree: O((n + m) log n). False if a
// pair is reversed the wrong way or the count disagrees.
bool sample_between(const Points& p, const Bracket& br, std::size_t m, Mix& mix, std::vector<double>& out) {
  const int n = p.n;
  const auto un = static_cast<std::size_t>(n);
  std::vector<int> pos(un), seq(un), at(un);
  for (int q = 0; q < n; ++q) pos[static_cast<std::size_t>(br.hi.idx[static_cast<std::size_t>(q)])] = q;
  for (int q = 0; q < n; ++q) {
    seq[static_cast<std::size_t>(q)] = pos[static_cast<std::size_t>(br.lo.idx[static_cast<std::size_t>(q)])];
    at[static_cast<std::size_t>(seq[static_cast<std::size_t>(q)])] = q;
  }
  // Inversions ending at each position q (earlier in lo order, later in hi order).
  std::vector<i64> first(un + 1, 0);
  {
    Fenwick f(n);
    for (int q = 0; q < n; ++q) {
      const int v = seq[static_cast<std::size_t>(q)];
      first[static_cast<std::size_t>(q) + 1] = first[static_cast<std::size_t>(q)] + (q - f.below(v));
      f.add(v);
    }
  }
  const i64 total = first[un];
  if (total != br.below_b - br.below_a || total <= 0) return false;
  // Requests bucketed by position q: (rank among q's inversions), by counting sort.
  std::vector<int> q_of(m);
  std::vector<i64> rank_of(m);
  std::vector<std::size_t> start(un + 1, 0);
  for (std::size_t k = 0; k < m; ++k) {
    const i64 r = static_cast<i64>(mix.below(static_cast<std::uint64_t>(total)));
    const auto q = static_cast<int>(std::upper_bound(first.begin(), first.end(), r) - first.begin()) - 1;
    q_of[k] = q;
    rank_of[k] = r - first[static_cast<std::size_t>(q)];
    ++start[static_cast<std::size_t>(q) + 1];
  }
  for (std::size_t q = 0; q < un; ++q) start[q + 1] += start[q];
  std::vector<i64> want(m);
  {
    std::vector<std::size_t> fill(start.begin(), start.end() - 1);
    for (std::size_t k = 0; k < m; ++k) want[fill[static_cast<std::size_t>(q_of[k])]++] = rank_of[k];
  }
  out.clear();
  Fenwick f(n);
  for (int q = 0; q < n; ++q) {
    const int v = seq[static_cast<std::size_t>(q)];
    const int above_from = f.below(v);
    for (std::size_t w = start[static_cast<std::size_t>(q)]; w < start[static_cast<std::size_t>(q) + 1]; ++w) {
      // The (k+1)-th smallest inserted value above v.
      const int val = f.kth(above_from + static_cast<int>(want[w]) + 1);
      const int i = br.lo.idx[static_cast<std::size_t>(at[static_cast<std::size_t>(val)])];
      const int j = br.lo.idx[static_cast<std::size_t>(q)];
      if (!(i < j)) return false;
      out.push_back(slope_of(p.x, p.y, i, j));
    }
    f.add(v);
  }
  return out.size() == m;
}

// Moves a threshold: a (or b) becomes `v`, its order and count recomputed.
void set_lower(const Points& p, Bracket& br, double v, Scratch& s) {
  br.a = v;
  order_at(p, std::isfinite(v) ? v - band(p, v) : v, br.lo, s);
  br.below_a = v == -INFINITY ? 0 : count_below(br.lo, s);
}
void set_upper(const Points& p, Bracket& br, double v, Scratch& s) {
  br.b = v;
  order_at(p, std::isfinite(v) ? v + band(p, v) : v, br.hi, s);
  br.below_b = v == INFINITY ? p.pairs() : count_below(br.hi, s);
}

// The sample value at fraction q of the way through, shifted by `sds` binomial SDs.
double sample_quantile(std::vector<double>& smp, double q, double sds, bool& inside) {
  const double ms = static_cast<double>(smp.size());
  const double at = std::round(q * ms + sds * std::sqrt(ms * q * (1 - q)) + (sds < 0 ? -1 : 1));
  inside = at >= 0 && at < ms;
  if (!inside) return NAN;
  const auto it = smp.begin() + static_cast<std::ptrdiff_t>(at);
  std::nth_element(smp.begin(), it, smp.end());
  return *it;
}

// Narrows `br` around ranks [k_lo, k_hi] with thresholds taken from `smp`, slopes drawn
// uniformly from inside `br`: 3 binomial SDs beyond the ranks' expected places. True when
// an end moved.
bool refine(const Points& p, Bracket& br, std::vector<double>& smp, i64 k_lo, i64 k_hi, Scratch& s) {
  const double inside = static_cast<double>(br.below_b - br.below_a);
  const double ql = (static_cast<double>(k_lo - br.below_a) + 0.5) / inside;
  const double qh = (static_cast<double>(k_hi - br.below_a) + 0.5) / inside;
  bool moved = false, ok = false;
  const double a = sample_quantile(smp, ql, -3, ok);
  if (ok && a > br.a) {
    Bracket t = br;
    set_lower(p, t, a, s);
    if (t.below_a <= k_lo) {
      br = std::move(t);
      moved = true;
    }
  }
  const double b = sample_quantile(smp, qh, 3, ok);
  if (ok && b < br.b) {
    Bracket t = br;
    set_upper(p, t, b, s);
    if (t.below_b > k_hi) {
      br = std::move(t);
      moved = true;
    }
  }
  return moved;
}

std::size_t sample_size(const Points& p) { return static_cast<std::size_t>(std::max(p.n / 2, 256)); }

// Narrows until at most `cap` pairs are inside, drawing fresh samples from inside.
bool narrow(const Points& p, Bracket& br, i64 k_lo, i64 k_hi, i64 cap, Mix& mix, Scratch& s) {
  std::vector<double> smp;
  for (int round = 0; round < 6 && br.below_b - br.below_a > cap; ++round) {
    if (!sample_between(p, br, sample_size(p), mix, smp)) return false;
    if (!refine(p, br, smp, k_lo, k_hi, s)) break;
  }
  return true;
}

// The ranks `ks` (ascending) selected among the pairs inside `br`; a value on or beyond an
// end means the counts there may be off by rounding or ties at the end value: that end is
// widened past it and the selection repeated. False to fall back.
bool select_inside(const Points& p, Bracket br, const std::vector<i64>& ks, double* vals, i64 cap, Scratch& s) {
  for (int attempt = 0; attempt < 4; ++attempt) {
    const i64 inside = br.below_b - br.below_a;
    if (inside < 0 || (inside > cap && 2 * inside > p.pairs())) return false;
    s.slopes.clear();
    s.slopes.reserve(static_cast<std::size_t>(inside));
    if (!between(p, br.lo, br.hi, s.slopes, s) || static_cast<i64>(s.slopes.size()) != inside) return false;
    bool ok = true;
    i64 start = 0;
    for (std::size_t r = 0; r < ks.size() && ok; ++r) {
      const i64 local = ks[r] - br.below_a;
      if (local < 0 || local >= inside) return false;
      std::nth_element(s.slopes.begin() + start, s.slopes.begin() + local, s.slopes.end());
      start = local;
      const double v = s.slopes[static_cast<std::size_t>(local)];
      if (!(v > br.a)) {
        set_lower(p, br, br.a - 2 * band(p, br.a) - std::fabs(br.a) * 0x1p-40 - 1e-300, s);
        ok = false;
      } else if (!(v < br.b)) {
        set_upper(p, br, br.b + 2 * band(p, br.b) + std::fabs(br.b) * 0x1p-40 + 1e-300, s);
        ok = false;
      } else {
        vals[r] = v;
      }
    }
    if (ok) return true;
  }
  return false;
}

// Every rank of `sorted` (ascending, distinct). One bracket around all of them first (the
// median and the interval ends lie close together); if that still holds too many pairs,
// one sample from inside it serves a bracket per group of nearby ranks.
bool select_all(const Points& p, const std::vector<i64>& sorted, double* values, Mix& mix) {
  Scratch s;
  const i64 n = p.n;
  const i64 cap = std::max<i64>(6 * n, 1024);
  Bracket all;
  set_lower(p, all, -INFINITY, s);
  set_upper(p, all, INFINITY, s);
  std::vector<double> smp;
  sample_all(p, sample_size(p), mix, smp);
  refine(p, all, smp, sorted.front(), sorted.back(), s);
  const i64 span = sorted.back() - sorted.front();
  if (all.below_b - all.below_a <= cap + span) return select_inside(p, all, sorted, values, cap + span, s);
  if (!sample_between(p, all, sample_size(p), mix, smp)) return false;
  for (std::size_t g = 0; g < sorted.size();) {
    std::size_t e = g + 1;
    while (e < sorted.size() && sorted[e] - sorted[e - 1] <= 2 * n) ++e;
    const std::vector<i64> ks(sorted.begin() + static_cast<std::ptrdiff_t>(g),
                              sorted.begin() + static_cast<std::ptrdiff_t>(e));
    const i64 group_cap = cap + (ks.back() - ks.front());
    Bracket br = all;
    std::vector<double> shared = smp;
    refine(p, br, shared, ks.front(), ks.back(), s);
    if (!narrow(p, br, ks.front(), ks.back(), group_cap, mix, s)) return false;
    if (!select_inside(p, br, ks, values + g, group_cap, s)) return false;
    g = e;
  }
  return true;
}

}  // namespace

bool pair_slope_ranks_bracketed(const double* x, const double* y, int n, const std::int64_t* ranks, int count,
                                double* out) {
  if (n < 2) return false;
  Points p{x, y, n};
  for (int i = 0; i < n; ++i) {
    if (!std::isfinite(x[i]) || !std::isfinite(y[i])) return false;
    p.max_x = std::max(p.max_x, std::fabs(x[i]));
    p.max_y = std::max(p.max_y, std::fabs(y[i]));
    if (i > 0) p.min_step = std::min(p.min_step, x[i] - x[i - 1]);
  }
  if (!(p.min_step > 1e-150) || p.max_x > 1e150 || p.max_y > 1e150) return false;
  std::vector<i64> sorted(ranks, ranks + count);
  std::sort(sorted.begin(), sorted.end());
  sorted.erase(std::unique(sorted.begin(), sorted.end()), sorted.end());
  Mix mix{0x5eed0000ULL + static_cast<std::uint64_t>(n)};
  std::vector<double> values(sorted.size());
  if (!select_all(p, sorted, values.data(), mix)) return false;
  for (int r = 0; r < count; ++r) {
    const auto it = std::lower_bound(sorted.begin(), sorted.end(), ranks[r]);
    out[r] = values[static_cast<std::size_t>(it - sorted.begin())];
  }
  return true;
}

void pair_slope_ranks(const double* x, const double* y, int n, const std::int64_t* ranks, int count, double* out) {
  if (n >= k_pair_slopes_direct && pair_slope_ranks_bracketed(x, y, n, ranks, count, out)) return;
  pair_slope_ranks_direct(x, y, n, ranks, count, out);
}

}  // namespace vzero::detail
