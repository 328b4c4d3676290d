// The options of `vzero fit`, each described once (src/settings/fit_settings.cpp): the
// command line's --help and parsing, the Python module's vzero.fit keywords (the same names,
// `_` for `-`), the checks, and the FitTableOptions a fit runs with all come from this table.
//
// **Example**:
//   std::vector<vzero::GivenOption> given = {{"x", "substrate"}, {"model", "mm,hill"}};
//   vzero::FitSettings s = vzero::resolve_fit_settings(given, vzero::Spelling::command_line);
//   vzero::FitTableOptions o = vzero::fit_table_options(s, vzero::Spelling::command_line);
#pragma once

#include <string>
#include <string_view>
#include <vector>

#include "vzero/fit.hpp"
#include "vzero/settings.hpp"
#include "vzero/table.hpp"

namespace vzero {

struct FitSettings {
  std::string x, y, inhibitor, enzyme, weight = "none", sd, role = "sample";
  std::vector<std::string> groups, models{"mm"};
  std::vector<double> start;
  std::vector<std::string> fixed;  // NAME=VALUE items of --fix, parsed against the models by fit_table_options
  bool include_flagged = false, quiet = false, kcat_per_min = false;
  FitOptions fit;  // confidence, max_iterations, profile (start is copied in by fit_table_options)
  // Outputs of the command line.
  std::string output, json, diagnostics, report, enzymeml, enzymeml_from;
};

struct FitOptionSpec {
  std::string_view name;  // "max-iterations": --max-iterations, and vzero.fit(max_iterations=...)
  char short_name = 0;    // 'o' for -o, or 0
  OptionKind kind = OptionKind::text;  // flag, number, integer, text, or list (comma-separated, repeatable)
  std::string_view default_text;       // shown in --help; "" = none
  std::string_view help;
  bool output = false;  // an output file of the command line (not a keyword of vzero.fit)
  // Stores the value (number, integer and flag already parsed; a list's items one call
  // each); returns "" or why the value is refused (phrased to follow `--NAME VALUE: `).
  std::string (*apply)(FitSettings&, const OptionValue&) = nullptr;
};

const std::vector<FitOptionSpec>& fit_option_table();

// How messages name an option: `--weight VALUE` (the command line) or `weight=VALUE` (Python).
enum class Spelling { command_line, keyword };
std::string option_spelled(std::string_view name, Spelling spelling);  // "--weight " or "weight="

// The given options applied in order (a list given twice adds up); an unknown name or a
// refused value is a UsageError naming the option as `spelling` writes it.
FitSettings resolve_fit_settings(const std::vector<GivenOption>& given, Spelling spelling);

// What the fit runs with, checked: x given, models by name (and an inhibitor for the
// inhibition models), the weighting, --sd only with replicate-sd, start values against the
// one model's parameters, the fit's own limits. UsageError otherwise.
FitTableOptions fit_table_options(const FitSettings& s, Spelling spelling);

// Each column an option names is in `table`; an InputError names the option otherwise.
void check_fit_columns(const Table& table, const FitSettings& s, Spelling spelling);

}  // namespace vzero
