// Helpers the subcommands share: Boost.Program_options parsing with vzero's usage errors,
// help text, and small formatting of numbers for the terminal.
#pragma once

#include <boost/program_options.hpp>
#include <string>
#include <vector>

#include "cli/commands.hpp"

namespace vzero::cli {

// Parses `args`; unknown options, missing values and extra words become UsageError.
boost::program_options::variables_map parse_command_line(
    const Args& args, const boost::program_options::options_description& visible,
    const boost::program_options::options_description& hidden,
    const boost::program_options::positional_options_description& positional);

// The same with one positional word, a FILE, stored in `file` (left empty when not given).
boost::program_options::variables_map parse_with_file(const Args& args,
                                                      const boost::program_options::options_description& visible,
                                                      std::string& file);

std::string help_text(const boost::program_options::options_description& opts);
std::string builtin_profile_list();
std::string format_seconds(double s);

}  // namespace vzero::cli
