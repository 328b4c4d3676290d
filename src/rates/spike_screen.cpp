// The spike screen (rate_window.hpp): every read against the Theil–Sen line through its six
// nearest other reads; the lanes and the loop over reads are in spike_lanes.hpp.
#include <cstring>
#include <vector>

#include "rates/rate_window.hpp"
#include "rates/robust.hpp"
#include "rates/spike_lanes.hpp"

namespace vzero::detail {
namespace {

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

// Spike screen. Each read is compared with the Theil–Sen line through its six nearest other
// reads (seven consecutive reads holding it, shifted inward at the ends), so one other spike
// among the neighbours does not move the line. Its residual, scaled by √(1 + leverage), is a
// spike when it exceeds k times the larger of the trace's robust SD (1.4826·MAD of these
// residuals) and the neighbours' own robust residual SD: at a sharp bend (end of a lag, onset
// of saturation) the neighbours do not agree with one line, and the read there is no spike.
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
      _mm_storeu_pd(&gap_slope[z(i0) * k_nb + z(g - 1)], _mm_div_pd(_mm_sub_pd(_mm_loadu_pd(&u.y[z(i0 + g)]), yi),
                                                                    _mm_sub_pd(_mm_loadu_pd(&u.t[z(i0 + g)]), ti)));
  }
#endif
  for (int i = i0; i < m; ++i)
    for (int g = 1; g <= k_nb && i + g < m; ++g)
      gap_slope[z(i) * k_nb + z(g - 1)] = (u.y[z(i + g)] - u.y[z(i)]) / (u.t[z(i + g)] - u.t[z(i)]);
  const SpikeInput in{u.t.data(), u.y.data(), m, gap_slope.data(), rscale.data()};
  int j = 0;
#if defined(VZERO_SPIKE_AVX2)
  static const bool avx2 = __builtin_cpu_supports("avx2");
  if (avx2) j = screen_reads_avx2(in, d.data(), nb_sd.data());
#endif
#if defined(__SSE2__)
  j = screen_lanes<V2, 2>(in, j, d.data(), nb_sd.data());
#endif
  screen_lanes<double, 1>(in, j, d.data(), nb_sd.data());
  a.resize(z(m));
  for (int i = 0; i < m; ++i) a[z(i)] = std::fabs(d[z(i)]);
  u.local_sd = 1.4826 * median_inplace(a);
  const double scale = std::max(u.local_sd, floor);
  for (int i = 0; i < m; ++i)
    if (std::fabs(d[z(i)]) > k * std::max(scale, nb_sd[z(i)])) u.spike[z(i)] = 1;
}

}  // namespace vzero::detail
