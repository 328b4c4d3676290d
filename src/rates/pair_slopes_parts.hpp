// Small pieces of the pair-slope selection methods (pair_slopes.cpp, pair_slopes_direct.cpp).
// Internal to src/rates.
#pragma once

#include <cstdint>
#include <cstring>
#include <vector>

namespace vzero::detail {

inline double slope_of(const double* x, const double* y, int i, int j) { return (y[j] - y[i]) / (x[j] - x[i]); }

// splitmix64: a fixed pseudo-random sequence, so the same input always takes the same path.
struct Mix {
  __extension__ typedef unsigned __int128 u128;
  std::uint64_t state;
  // Uniform on [0, bound) by a multiply-high (no division).
  std::uint64_t below(std::uint64_t bound) {
    return static_cast<std::uint64_t>((static_cast<u128>(next()) * bound) >> 64);
  }
  std::uint64_t next() {
    std::uint64_t z = (state += 0x9e3779b97f4a7c15ULL);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
    return z ^ (z >> 31);
  }
};

// Monotone map of a double to an unsigned integer (−0 and +0 alike).
inline std::uint64_t sort_key(double v) {
  v += 0.0;
  std::uint64_t b = 0;
  std::memcpy(&b, &v, sizeof b);
  return (b >> 63) ? ~b : b | (1ULL << 63);
}

// Fenwick tree over 0..n−1 (counts of values inserted).
struct Fenwick {
  std::vector<int> t;
  int top = 1;
  explicit Fenwick(int n) : t(static_cast<std::size_t>(n) + 1, 0) {
    while (top * 2 <= n) top *= 2;
  }
  void add(int v) {
    for (int i = v + 1; i < static_cast<int>(t.size()); i += i & -i) ++t[static_cast<std::size_t>(i)];
  }
  int below(int v) const {  // inserted values < v
    int c = 0;
    for (int i = v; i > 0; i -= i & -i) c += t[static_cast<std::size_t>(i)];
    return c;
  }
  int kth(int k) const {  // the k-th smallest inserted value (1-based k)
    int pos = 0;
    for (int step = top; step > 0; step /= 2) {
      const int nxt = pos + step;
      if (nxt < static_cast<int>(t.size()) && t[static_cast<std::size_t>(nxt)] < k) {
        pos = nxt;
        k -= t[static_cast<std::size_t>(nxt)];
      }
    }
    return pos;  // value = index − 1 + 1
  }
};

}  // namespace vzero::detail
