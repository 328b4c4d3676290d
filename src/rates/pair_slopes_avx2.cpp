// The bracket pass of pair_slope_ranks_direct four pairs at a time. This file is compiled
// with -mavx2 on x86-64 (CMakeLists.txt) and pair_slopes_direct.cpp calls it only where the
// processor has AVX2 (asked at run time). It includes no header with inline or template
// functions: the linker could hand this file's AVX2 copy of one to every caller.
#include "rates/pair_slopes.hpp"

#if defined(__AVX2__)
#include <immintrin.h>
#endif

namespace vzero::detail {

#if defined(__AVX2__)

namespace {

// For each 4-bit mask of kept lanes: the 32-bit lane indices that move the kept doubles to
// the front in their order, and how many there are.
struct Compaction {
  alignas(32) int idx[16][8];
  int count[16];
};

constexpr Compaction make_compaction() {
  Compaction t{};
  for (int m = 0; m < 16; ++m) {
    int c = 0;
    for (int l = 0; l < 4; ++l) {
      if ((m >> l) & 1) {
        t.idx[m][2 * c] = 2 * l;
        t.idx[m][2 * c + 1] = 2 * l + 1;
        ++c;
      }
    }
    for (int r = c; r < 4; ++r) {  // lanes past the kept ones: written, never counted
      t.idx[m][2 * r] = 0;
      t.idx[m][2 * r + 1] = 1;
    }
    t.count[m] = c;
  }
  return t;
}

constexpr Compaction k_compaction = make_compaction();

}  // namespace

std::size_t keep_in_bracket_avx2(const double* x, const double* y, int n, double a, double b, double* kept,
                                 std::size_t& below) {
  const __m256d va = _mm256_set1_pd(a), vb = _mm256_set1_pd(b);
  std::size_t nk = 0, under = 0;
  // The slopes of four pairs in, lanes past `valid` (a bit mask) ignored: the kept ones are
  // stored at kept[nk…] in lane order, so `kept` ends as the scalar loop leaves it.
  auto step = [&](__m256d v, int valid) {
    const __m256d in = _mm256_and_pd(_mm256_cmp_pd(v, va, _CMP_GE_OQ), _mm256_cmp_pd(v, vb, _CMP_LE_OQ));
    const int keep = _mm256_movemask_pd(in) & valid;
    const int low = _mm256_movemask_pd(_mm256_cmp_pd(v, va, _CMP_LT_OQ)) & valid;
    const __m256i perm = _mm256_load_si256(reinterpret_cast<const __m256i*>(k_compaction.idx[keep]));
    _mm256_storeu_pd(kept + nk, _mm256_castsi256_pd(_mm256_permutevar8x32_epi32(_mm256_castpd_si256(v), perm)));
    nk += static_cast<std::size_t>(k_compaction.count[keep]);
    under += static_cast<std::size_t>(k_compaction.count[low]);
  };
  for (int i = 0; i + 1 < n; ++i) {
    const __m256d xi = _mm256_set1_pd(x[i]), yi = _mm256_set1_pd(y[i]);
    int j = i + 1;
    for (; j + 4 <= n; j += 4) {
      const __m256d dy = _mm256_sub_pd(_mm256_loadu_pd(y + j), yi);
      const __m256d dx = _mm256_sub_pd(_mm256_loadu_pd(x + j), xi);
      step(_mm256_div_pd(dy, dx), 0xf);
    }
    if (j < n) {  // 1–3 pairs left: masked loads read nothing past the end
      const int rem = n - j;
      const __m256i lanes = _mm256_setr_epi64x(-1, rem > 1 ? -1 : 0, rem > 2 ? -1 : 0, 0);
      const __m256d dy = _mm256_sub_pd(_mm256_maskload_pd(y + j, lanes), yi);
      const __m256d dx = _mm256_sub_pd(_mm256_maskload_pd(x + j, lanes), xi);
      step(_mm256_div_pd(dy, dx), (1 << rem) - 1);
    }
  }
  below = under;
  return nk;
}

#endif

}  // namespace vzero::detail
