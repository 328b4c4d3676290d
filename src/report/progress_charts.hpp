// Internals of the progress-curve report: its figures.
#pragma once

#include <string>

#include "vzero/progress.hpp"

namespace vzero::detail::report {

// One figure per well of the group: reads used (dots), reads left out (orange rings), the
// Michaelis–Menten curve (solid) and, when fitted, the product-inhibition curve (dashed).
std::string progress_well_panels(const ProgressTable& t, const ProgressGroup& g, const ProgressTableOptions& o);
// Product (less each well's intercept in the test's full model) against [E]·t of one Selwyn
// test, a colour and marker per enzyme level, the common [E]·t shaded.
std::string stability_chart(const ProgressTable& t, const ProgressGroup& g, const StabilityTest& s);

}  // namespace vzero::detail::report
