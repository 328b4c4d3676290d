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

struct RatesSettings : RunSettings {
  // Every analysis option with its value as used (defaults included), for provenance.
  std::vector<std::pair<std::string, std::string>> recorded;
};

void add_rates_options(boost::program_options::options_description& opts);
// Merges the method file (if --method) under the command line, checks every value, and
// fills the settings. UsageError for command-line mistakes, InputError (with the method
// file's line) for method-file mistakes.
RatesSettings settings_from(boost::program_options::variables_map& vm);
std::string epsilon_preset_list();
// The short table printed after a run: wells, flags by reason, median v0 per condition.
std::string run_digest(const std::vector<RunAnalysis>& runs, const SummaryTable& summary, const RatesSettings& s,
                       const std::string& package_path);

}  // namespace vzero::cli
