// The blank wells of a channel screened together.
//
// Blank wells share the plate's slow changes — temperature settling after the plate goes in,
// a lamp warming — which bend every well's trace alike and cancel when a blank is subtracted
// read by read. Judged alone, a blank's start is screened against a smooth curve that must
// absorb that bend, so a small disturbance hides in it (or the bend passes for one), and a
// disturbed blank replaced by its straight line hands the bend to every sample that uses it.
// Judged together:
//   1. each blank's departure from its own least-squares line, read by read;
//   2. the shared bend: for each blank, the median of the other blanks' departures at each
//      read (3 or more others; with fewer there is none), so one disturbed blank does not
//      move it and a blank's own noise never enters its own bend;
//   3. each blank less the shared bend is a straight line plus read noise; the blanks' read
//      noise is pooled (median of their second-difference SDs of it) and each start is screened
//      on it (core/start_screen.hpp) at that noise;
//   4. a disturbed blank keeps its reads after the disturbance; the disturbed ones are replaced
//      by its line (fitted to the reads after them, the bend taken off) plus the shared bend —
//      what the blank would have read undisturbed;
//   5. a single read far off the line through its six neighbours (a bubble, dust), judged at
//      the pooled noise, is replaced by that line's value plus the bend (screen.cpp);
//   6. `smooth` (the default blank mode): with 4 or more blanks, every read of a blank is
//      replaced by its line (the bend off, fitted after a disturbed start) plus its shared
//      bend. The samples then take on the plate's read-to-read changes without the blank's
//      own read noise, and a disturbance below step 3's cut does not reach them either. A
//      blank that, less its bend, still curves about its line (a t test on the (t − t̄)²
//      term at 1 %: a background reaction of its own, which its samples share) keeps its
//      reads as read;
//   7. a read a blank lacks (an empty cell or a missing mark) between its first and last
//      usable reads is filled by its line (bend off) plus its bend, so the mean of a set
//      keeps the same blanks at every read: a mean taken over fewer blanks at some reads
//      steps by their difference in level, and the samples would carry that step.
#pragma once

#include <Eigen/Core>
#include <vector>

#include "core/stats.hpp"
#include "vzero/run.hpp"

namespace vzero::detail {

struct BlankScreen {
  std::vector<int> skip;      // per blank (as listed): disturbed first ok reads replaced (0 = clean)
  std::vector<int> spikes;    // per blank: single reads replaced as spikes
  std::vector<int> smoothed;  // per blank: 1 when step 6 replaced its reads (0: as read, or it bends on its own)
  std::vector<int> filled;    // per blank: reads it lacked, filled by step 7
  std::vector<LineFit> line;  // per blank: least-squares line of its ok reads after a disturbed start
  std::vector<double> flat_sd;  // per blank: residual SD about its line once its shared bend is off (step 3)
  Eigen::MatrixXd reads;      // reads × blanks: the reads as subtracted; NaN where not ok and not filled
  Eigen::MatrixXd bend;       // reads × blanks: each blank's shared bend (0 with fewer than 3 others)
  double noise_sd = NAN;      // pooled read noise of the blanks, shared bend taken off
};

// `columns`: the channel columns of the blank wells; `smooth`: step 6.
BlankScreen screen_blanks(const Channel& c, const std::vector<int>& columns, bool smooth);

}  // namespace vzero::detail
