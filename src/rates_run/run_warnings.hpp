// The per-plate warnings of `vzero rates` (console only: they are per plate, so the parts of
// a merged run would differ): screening controls (Z′, trends) and blanks whose rates change
// with their substrate. Internal to the rates_run stage.
#pragma once

#include "vzero/rates_run.hpp"
#include "vzero/settings.hpp"

namespace vzero::detail {

// Each plate and channel judged by its controls: a warning for one below --min-z-prime or
// whose Z′ cannot be computed, and for controls that trend across the plate.
void add_quality_warnings(const RunSettings& s, RatesOutputs& out);

// Plates whose samples subtract blanks of other substrate levels while the blanks' rates
// change with substrate (BlankSubstrateTrend): one line per plate whose largest bias reaches
// 1 % of a rate, the first three in full, the rest counted.
void add_blank_trend_warnings(const RunSettings& s, RatesOutputs& out);

// Channels where three quarters or more of the rated sample wells (at least 4) have negative
// rates: the reaction most likely runs the other way from --direction. One line each, the
// first three in full, the rest counted.
void add_direction_warnings(RatesOutputs& out);

}  // namespace vzero::detail
