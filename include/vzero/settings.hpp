// The settings of a `vzero rates` run, each described once.
//
// One table (`option_table()`) names every option once: its name (the command line's
// `--name` and the method file's key), kind, default, unit, help text and how its value is
// checked, and where it lands in `RunSettings`. From that table come the command line's
// options and help, the method-file reader's keys, the checks (run once, where a run starts)
// and the provenance (`recorded_options`: every option that changes a result, defaults
// included). Adding an option is one entry there.
//
// **Example**:
//   std::vector<vzero::GivenOption> given = {{"epsilon", "18000"}, {"path-cm", "0.5"}};
//   vzero::ResolvedSettings r = vzero::resolve_settings(given);   // throws on a bad value
//   // r.settings.analysis.convert.epsilon_per_m_cm == 18000
#pragma once

#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "vzero/analysis.hpp"
#include "vzero/enzymeml.hpp"

namespace vzero {

// Everything `vzero rates` is told: inputs, outputs and the analysis options.
struct RunSettings {
  std::vector<std::string> files;                   // the raw exports
  std::string layout;                               // plate map
  MapColumnOptions map_columns;                     // its substrate and match columns (conc_unit set by the run)
  std::string method;                               // assay method file ("" = none)
  std::string profile;                              // instrument profile for every file ("" = detect per file)
  std::string sheet;                                // sheet of every .xlsx workbook ("" = its first sheet)
  std::string time_unit;                            // "s", "min", "h" for plain-number times ("" = not stated)
  std::string output = "rates.csv";                 // rates table; datapackage.json goes beside it
  std::string traces, summary, report;              // optional outputs ("" = not written)
  std::string files_from;                           // a file listing more exports, one per line ("" = none)
  std::string enzymeml;                             // EnzymeML document ("" = not written)
  std::string plate_quality;                        // plate-quality table ("" = not written)
  ScreenOptions screen;                             // Z′ threshold, hit calls (plate_quality.hpp)
  EnzymeMLOptions enzymeml_options;                 // what it says beyond the analyses (STRENDA fields)
  std::vector<std::string> leave_out{"replicate"};  // map columns not used to group replicates
  bool summary_per_file = false;                   // summary groups kept apart per export file
  bool quiet = false;
  AnalysisOptions analysis;
};

enum class OptionKind {
  flag,     // on when given (true/false in a method file)
  number,   // a finite decimal number
  integer,  // a whole number
  choice,   // one word of a fixed list
  text,     // free text (a path, a column or channel name)
  list,     // comma-separated words
};

// What an option is for: inputs and outputs, or a setting that changes results (recorded in
// provenance), or one that changes how the run goes but never its results (threads, quiet).
enum class OptionRole { io, analysis, run };

// Allowed numbers: lo/hi with open or closed ends (NaN = unbounded on that side).
struct NumberRange {
  double lo = -1e300, hi = 1e300;
  bool lo_open = false, hi_open = false;
};

struct OptionValue {
  std::string text;               // as written
  double number = 0;              // for number and integer options
  std::vector<std::string> list;  // for list options
  bool on = false;                // for flags
};

struct OptionSpec {
  std::string_view name;   // "max-conversion": --max-conversion, and the method key
  char short_name = 0;     // 'o' for -o, or 0
  std::string_view group;  // help section
  OptionKind kind = OptionKind::text;
  OptionRole role = OptionRole::analysis;
  std::string_view default_text;  // "" = no default (unset unless given)
  std::string_view unit;          // of the value as written: "%", "s", "M⁻¹·cm⁻¹", "cm", ""
  std::string_view help;
  std::vector<std::string_view> choices;  // for choice options
  NumberRange range;                      // for number and integer options
  // Where the value lands. Plain numbers, whole numbers and texts name their field (a number
  // is stored divided by `scale`: max-conversion 10 % is the fraction 0.10); the rest store
  // through `apply`, which returns "" or why the value is refused (phrased to follow
  // "is \"X\"; ").
  double* (*number_field)(RunSettings&) = nullptr;
  double scale = 1;
  int* (*integer_field)(RunSettings&) = nullptr;
  std::string* (*text_field)(RunSettings&) = nullptr;
  std::string (*apply)(RunSettings&, const OptionValue&) = nullptr;
  // For choices stored through `apply`: the word the settings hold.
  std::string (*current)(const RunSettings&) = nullptr;
};

const std::vector<OptionSpec>& option_table();
const OptionSpec* find_option(std::string_view name);

// Where a given value came from: the command line (file empty) or a method file's line.
struct GivenOption {
  std::string name;
  std::string text;  // "true"/"false" for flags from a method file
  std::string file;  // method file, or "" for the command line
  int line = 0, column = 0;
  std::string channel;  // NAME of the method file's [channel.NAME] table holding it, "" = the whole run
};

// The options a method file's [channel.NAME] table may set: ε, path, direction, detector limit.
const std::vector<std::string>& per_channel_options();

struct ResolvedSettings {
  RunSettings settings;
  // Every analysis option with its value as used, in table order: given ones as written,
  // the rest at their defaults (options without a default and not given are left out).
  std::vector<std::pair<std::string, std::string>> recorded;
  std::vector<std::string> given;  // names given (command line or method file)
  std::string method_sha256;       // of the method file read, "" when none
};

// Applies the given options over the defaults, checks every value and the combinations, and
// records them. When `method` is among them, that method file is read and its keys come
// after the given options (the first value of a name wins: the caller's override the file's).
// A bad command-line value throws UsageError ("--NAME is \"X\"; …"); a bad method-file
// value throws InputError at its file:line:column.
ResolvedSettings resolve_settings(const std::vector<GivenOption>& given);

// The same checks on settings built in code: "" when valid, else the first problem,
// naming the option ("max-conversion is 150; expected a number above 0 and at most 100").
std::string check_analysis_options(const AnalysisOptions& options);

// "a number above 0 and at most 100" for a range.
std::string describe_range(const NumberRange& r, OptionKind kind);

}  // namespace vzero
