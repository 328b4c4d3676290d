// Order statistics of the pairwise slopes of n points, for Theil–Sen: exact, without
// forming all n(n−1)/2 slopes when n is large. Internal to the rate finder (src/rates).
#pragma once

#include <cstddef>
#include <cstdint>

namespace vzero::detail {

// For points with x strictly increasing and every value finite: out[r] = the ranks[r]-th
// smallest (0-based) of the n(n−1)/2 slopes (y[j] − y[i]) / (x[j] − x[i]), i < j, each
// computed in double exactly as written, so the values are bit for bit those a full sort of
// all slopes gives. `ranks` must lie in [0, n(n−1)/2); any order, repeats allowed.
//
// Below k_pair_slopes_direct points every slope is formed and selected (by buckets between
// two sampled values, then quickselect in the buckets that hold a rank);
// above, the method is randomised bracketing with exact counting, after Dillencourt, Mount &
// Netanyahu (1992, Int. J. Comput. Geom. Appl. 2, 1–27) and Matoušek (1991, Inf. Process.
// Lett. 39, 183–187) (citations from memory):
//   the number of slopes ≤ t is the number of inversions between the order of the points by
//   x and their order by y − t·x (a Fenwick tree, O(n log n)); slopes drawn from pseudo-random
//   pairs (a fixed seed: same input, same work) give values a < b that bracket the wanted
//   rank; the pairs whose slope lies between are those ordered differently by y − a·x and
//   y − b·x, listed in O(n log n + their number), and the rank is selected among them. Two
//   or three rounds shrink the bracket to O(n) pairs: O(n log n) expected time, O(n) memory.
// Rounding: y − t·x is compared with a margin that bounds its rounding error (from the
// largest |x|, |y| and the smallest x step), so counts are exact for every slope outside
// that margin; a selected value is accepted only when it lies strictly inside (a, b), where
// the counts are exact, and otherwise the bracket is widened (in the end every slope is
// formed), so the result is always the exact order statistic.
void pair_slope_ranks(const double* x, const double* y, int n, const std::int64_t* ranks, int count, double* out);

// Below this many points pair_slope_ranks forms every slope (cheaper there).
constexpr int k_pair_slopes_direct = 650;

// The bracketing method alone; false (out untouched) when it declines: fewer than 2 points,
// a value that is not finite, x not strictly increasing, or the brackets do not close.
bool pair_slope_ranks_bracketed(const double* x, const double* y, int n, const std::int64_t* ranks, int count,
                                double* out);

// From this many pairs up, pair_slope_ranks_direct selects by buckets (pair_slopes_direct.cpp):
// fewer passes over the slopes than a quickselect per rank.
constexpr std::size_t k_bucket_pairs = 600;
// From this many pairs up to k_bucket_pairs the same with a sample of k_small_sample, for
// more than two ranks (a median and an interval) where no slope can be −0 or NaN (then any
// exact method gives the same bits); otherwise a quickselect per rank.
constexpr std::size_t k_small_bucket_pairs = 180;
constexpr std::size_t k_small_sample = 64;

// Quickselect with a branch-free Lomuto partition (the comparison feeds an index, not a
// jump): a[k] becomes the k-th smallest (0-based) of a[0, n), smaller ones before it, larger
// after, as std::nth_element leaves them. Falls back to std::nth_element when the pivots do
// badly (many equal values), so the cost stays O(n).
void select_kth(double* a, std::size_t n, std::size_t k);

// Forms every slope and selects (the reference; also the fallback).
void pair_slope_ranks_direct(const double* x, const double* y, int n, const std::int64_t* ranks, int count,
                             double* out);

// The bracket pass of pair_slope_ranks_direct four pairs at a time (pair_slopes_avx2.cpp;
// call only where the processor has AVX2): every slope of a pair i < j formed as slope_of
// does, those in [a, b] stored at kept[0, returned count) in the order i, then j, and those
// below a counted in `below` — what the scalar loop gives, bit for bit (the comparisons are
// IEEE ones, so a NaN slope is neither kept nor below). `kept` has room for n(n−1)/2 + 3.
std::size_t keep_in_bracket_avx2(const double* x, const double* y, int n, double a, double b, double* kept,
                                 std::size_t& below);

}  // namespace vzero::detail
