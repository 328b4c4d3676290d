// The spike screen's loop over reads four at a time (spike_lanes.hpp). This file is compiled
// with -mavx2 on x86-64 (CMakeLists.txt) and spike_screen.cpp calls it only where the
// processor has AVX2 (asked at run time); the lanes give the same bits as one read at a time.
#include "rates/spike_lanes.hpp"

namespace vzero::detail {

#if defined(__AVX2__)
int screen_reads_avx2(const SpikeInput& in, double* d, double* nb_sd) { return screen_lanes<V4, 4>(in, 0, d, nb_sd); }
#endif

}  // namespace vzero::detail
