// The options of `vzero rates` on the command line: made from the library's option table
// (include/vzero/settings.hpp), merged over an assay method file and resolved by the library.
#pragma once

#include <boost/program_options.hpp>
#include <string>
#include <utility>
#include <vector>

#include "vzero/analysis.hpp"
#include "vzero/settings.hpp"
#include "vzero/summary.hpp"

namespace vzero::cli {

void add_rates_options(boost::program_options::options_description& opts);
// The command line's options and files, resolved by the library (which reads the method
// file under them). UsageError for command-line mistakes, InputError (with the method file's
// line) for method-file mistakes.
ResolvedSettings settings_from(boost::program_options::variables_map& vm);
std::string epsilon_preset_list();
// The short table printed after a run: wells, flags by reason, median v0 per condition.
std::string run_digest(const std::vector<RunAnalysis>& runs, const SummaryTable& summary, const RunSettings& s,
                       const std::string& package_path);

// Beyond this many sample conditions (or with control wells in the map: a screen) the digest
// lists plates, not conditions (src/cli/plate_digest.cpp).
constexpr std::size_t k_plate_digest_conditions = 50;
bool per_plate_digest(const std::vector<RunAnalysis>& runs, std::size_t conditions);
// One line per plate and channel: wells, samples flagged, controls; with controls Z′ and its
// verdict, hits (with --hit-threshold) and significant control trends.
std::string plate_digest(const std::vector<RunAnalysis>& runs, const RunSettings& s);

}  // namespace vzero::cli
