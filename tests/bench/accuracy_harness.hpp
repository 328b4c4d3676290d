// The accuracy program's parts (vzero_accuracy; accuracy.cpp has its usage): one plate
// through the rate finder (accuracy_plate.cpp), and the scenario mix's report
// (accuracy_mix.cpp).
#pragma once

#include <cstdint>
#include <map>
#include <string>
#include <vector>

#include "../sim/plate_mix.hpp"
#include "vzero/rates.hpp"

namespace vzero::accuracy {

// NumPy-style percentile (linear interpolation between order statistics).
double percentile(std::vector<double> v, double q);

struct ClassStats {
  int wells = 0, flagged = 0, corrected = 0, neither = 0;
  std::vector<double> err, naive;
};

struct WellLine {
  double err;
  std::string text;
};

// One sample well's result against its truth, for the scenario mix's figures.
struct WellRecord {
  int plate = 0;  // index of the plate in the run
  std::uint64_t seed = 0;
  sim::PlateKind kind = sim::PlateKind::standard;
  int well = 0;
  unsigned artefacts = 0;          // every bit (sim::Artefact)
  bool measurable = false;         // a perfect straight-line window is within 5 % of v0
  double err = 0;                  // |v0 − truth|/truth, %; +inf when v0 is not finite
  double signed_err = 0;           // (v0 − truth)/truth, %
  double naive_err = 0;            // the same for the naive slope
  double oracle_err = 0;           // the same for OLS over the window the truth picks (WellTruth::oracle_*)
  bool flagged = false;            // any flag
  bool tangent = false;            // v0 is the parabola's initial tangent
  std::vector<std::string> flags;  // the flags raised, for the tally of flags on clean wells
  bool covered = false;            // the truth lies in the result's 95 % interval
  double half_width = NAN;         // the result's 95 % half-width relative to its v0
  bool noise_limited = false;      // even the truth's best straight line within the conversion limit
                                   // cannot reach the precision limit (WellTruth::limited_half_width):
                                   // `imprecise` is its right flag
  bool noise_limited_any = false;  // the same with a window of any conversion (ideal_half_width), the
                                   // judgement used before 2026-12-03, printed beside it
};

struct Totals {
  std::vector<WellLine> wells;  // for --worst
  std::vector<double> err, naive, err_clean;
  int sample_wells = 0, blank_wells = 0, results = 0, finite = 0, plates = 0, tangent_used = 0;
  std::map<std::string, int> flags, notes, ends;  // flags and notes as rates.csv sorts them
  std::map<std::string, ClassStats> classes;
  std::vector<WellRecord> records;
};

struct PlateRun {
  std::uint64_t seed = 0;
  sim::PlateSpec spec;
  sim::PlateKind kind = sim::PlateKind::standard;
  bool mix = false;  // a plate of the scenario mix: new listing columns, every artefact bit
  RateOptions options;
  bool give_substrate = true;
  bool give_reaction_start = false;  // --reaction-start: the reaction started dead_time_s before the first read
  int dump_well = -1;                // print this well's trace and result
};

// Simulates one plate, runs find_rate on every sample well the way the pipeline would
// (signal minus the row's matched blank mean; read noise from the blanks; S0 and 1/(ε·l)
// given), and adds the results to `tot`.
void run_plate(const PlateRun& run, Totals& tot);

// The names of the artefacts in `bits` (sim::Artefact), "+"-separated; "-" for none.
std::string artefact_names(unsigned bits);

// The scenario mix's figures (plate-weighted), per artefact and per plate kind, and the
// targets of "Trustworthy v0". `forced8` holds the 8-read plates run again with the tangent
// forced (--tangent always), for its bias where the automatic rule does not take it. Returns
// the text; `met` tells whether every target is met.
std::string mix_report(const Totals& tot, const Totals& forced8, bool& met);

}  // namespace vzero::accuracy
