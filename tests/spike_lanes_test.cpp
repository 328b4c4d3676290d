// The spike screen's loop over reads (src/rates/spike_lanes.hpp) one read at a time, two
// (SSE2) and four (AVX2, where the processor has it) at a time: every lane operation is the
// IEEE operation of the scalar code, so the three must give the same bits; and on a straight
// line with one raised read they give that read's rise (closed form, below).
#include <cmath>
#include <cstring>
#include <vector>

#include "rates/spike_lanes.hpp"
#include "test_support.hpp"

namespace {

bool same_bits(const std::vector<double>& a, const std::vector<double>& b) {
  return a.size() == b.size() && std::memcmp(a.data(), b.data(), a.size() * sizeof(double)) == 0;
}

}  // namespace

TEST_CASE("the spike screen's lanes give the same bits as one read at a time") {
  // 41 reads of y = 0.1 + 0.001·t, 10 s apart, read 20 raised by 0.5 (Δ). Every neighbour
  // line of read 20 goes through six exact reads, so its residual is Δ: d = Δ / scale (the
  // scale is any positive number here, 1.25). Reads with read 20 among their neighbours
  // keep a line through five exact reads and one off (median slope and median intercept of
  // the exact ones), so their residuals are rounding only. Times made a little uneven so
  // that the neighbour lines differ from read to read.
  const int m = 41;
  const double rise = 0.5, scale_value = 1.25;
  std::vector<double> t(m), y(m), scale(m, scale_value), gap(static_cast<std::size_t>(m) * 6);
  for (int i = 0; i < m; ++i) {
    t[static_cast<std::size_t>(i)] = 10.0 * i + (i % 3) * 0.5;
    y[static_cast<std::size_t>(i)] = 0.1 + 0.001 * t[static_cast<std::size_t>(i)];
  }
  y[20] += rise;
  for (int i = 0; i < m; ++i)  // as spike_screen.cpp forms them
    for (int g = 1; g <= 6 && i + g < m; ++g)
      gap[static_cast<std::size_t>(i * 6 + g - 1)] =
          (y[static_cast<std::size_t>(i + g)] - y[static_cast<std::size_t>(i)]) /
          (t[static_cast<std::size_t>(i + g)] - t[static_cast<std::size_t>(i)]);
  const vzero::detail::SpikeInput in{t.data(), y.data(), m, gap.data(), scale.data()};
  std::vector<double> d1(m), s1(m);
  CHECK(vzero::detail::screen_lanes<double, 1>(in, 0, d1.data(), s1.data()) == m);
  CHECK_REL(d1[20], rise / scale_value, 1e-9);
  for (int i : {0, 1, 10, 17, 23, 30, 39, 40}) CHECK(std::fabs(d1[static_cast<std::size_t>(i)]) < 1e-12);
#if defined(__SSE2__)
  std::vector<double> d2(m), s2(m);
  const int j2 = vzero::detail::screen_lanes<vzero::detail::V2, 2>(in, 0, d2.data(), s2.data());
  CHECK(j2 == m - 1);
  vzero::detail::screen_lanes<double, 1>(in, j2, d2.data(), s2.data());
  CHECK(same_bits(d1, d2));
  CHECK(same_bits(s1, s2));
#endif
#if defined(__x86_64__) && defined(__GNUC__)
  if (__builtin_cpu_supports("avx2")) {
    std::vector<double> d4(m), s4(m);
    const int j4 = vzero::detail::screen_reads_avx2(in, d4.data(), s4.data());
    CHECK(j4 == m - 1);
    vzero::detail::screen_lanes<double, 1>(in, j4, d4.data(), s4.data());
    CHECK(same_bits(d1, d4));
    CHECK(same_bits(s1, s4));
  }
#endif
}
