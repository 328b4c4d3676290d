// The plate map: what each well holds. One row per well with `well` and `role` (sample |
// blank | standard | empty | full-activity | no-activity, see role_table()); `substrate` (initial substrate
// concentration), `standard_conc` (a standard's known concentration) and `match` (blanks and samples sharing it pair
// up) are understood; every other column passes through to every output, in file order.
//
// Two forms are read: the tidy table above, or the plate-grid form scientists draw in a
// spreadsheet — per variable a line naming it, a header of column numbers, and one line
// per row letter:
//   role
//   ,1,2,3
//   A,sample,sample,blank
//   substrate
//   ,1,2,3
//   A,10,20,10
// Empty grid cells leave the variable empty; a well whose role is empty is not in the map.
// Wells absent from the map are `empty` and still reported.
//
// Column names: `substrate` and `standard_conc` may carry their unit in the header —
// `substrate (mM)`, `substrate_uM`, `substrate [µM]`, `(nM)`, `(M)`; µ (U+00B5) and μ
// (U+03BC) are read as u — and are converted to the run's concentration unit. Other names
// for the substrate or match column are given with MapColumnOptions (--substrate-column,
// --match-column). Which column was taken for what is in PlateMap::uses; a column that looks
// like a concentration while no substrate column was found is a warning naming the option.
// In a screen's map (with full-activity or no-activity wells) the compound and its
// concentration are read from `compound` and `compound_conc` (or `compound_uM`, `compound
// (nM)`, …; --compound-column, --compound-conc-column), and a column that looks like a
// concentration but is read as nothing is a warning naming both options.
#pragma once

#include <map>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "vzero/run.hpp"

namespace vzero {

// A well's role. The two screening controls are reactions judged as samples by the rate
// finder: `full-activity` is the uninhibited reaction (the 100 % activity level), `no-activity`
// the fully inhibited or no-enzyme reaction (the 0 % level); plate quality and % activity
// come from their rates (include/vzero/plate_quality.hpp).
enum class Role { sample, blank, standard, empty, full_activity, no_activity };

// The role words of the plate map and the outputs, one entry per role, in the order messages
// list them.
struct RoleWord {
  Role role;
  std::string_view word;     // as written in the plate map and in rates.csv's `role`
  std::string_view meaning;  // one line for the docs and --help
};
std::span<const RoleWord> role_table();
std::string_view to_string(Role r);
// "sample, blank, …, or no-activity": every role word, for messages.
std::string role_word_list();
// Wells whose rate the rate finder judges as a sample's: samples and the two controls.
bool rated_as_sample(Role r);
bool is_control(Role r);

struct WellInfo {
  WellId well;
  Role role = Role::empty;
  double substrate = NAN;           // NaN when not given
  double standard_conc = NAN;       // NaN when not given
  std::string match;                // empty when not given
  double compound_conc = NAN;       // in the run's unit; NaN when not given
  std::vector<std::string> values;  // text of every PlateMap::columns entry, trimmed
  int line = 0;                     // where the well was defined: line, column of its well name
  int column = 0;                   // (grid form: of its role cell) and the line's text
  std::string line_text;
};

// Which columns hold the substrate and the match values, and the unit concentrations are
// read into.
struct MapColumnOptions {
  std::string substrate_column;  // "" = the column named `substrate` (with or without a unit)
  std::string match_column;      // "" = the column named `match`
  // A screen's samples: which compound a well holds and at what concentration (passed
  // through; the compound concentration is checked as a number and is `vzero fit`'s default x
  // for the dose-response models, the compound its default group).
  std::string compound_column;       // "" = the column named `compound`
  std::string compound_conc_column;  // "" = `compound_conc` (unit optional) or `compound` with a unit: `compound_uM`
  std::string conc_unit = "uM";  // substrate and standard_conc are converted into it
};

// A map column vzero reads, not only passes through.
struct ColumnUse {
  std::string column;  // the header as written
  std::string use;     // "substrate", "standard_conc", "match", "compound" or "compound_conc"
  std::string unit;    // the values' unit: named by the header, else the run's ("" for match, compound)
  bool unit_in_header = false;
  double factor = 1;   // value as written × factor = value in the run's unit
};

// A concentration unit at the end of a header: `name (mM)`, `name [µM]`, `name_uM`,
// `name uM`. Returns the name without it and the unit spelled M, mM, uM or nM; the unit is
// "" when there is none.
std::pair<std::string, std::string> split_header_unit(std::string_view header);

struct PlateMap {
  std::string source;
  std::string sha256;                // of the file's bytes ("" when parsed from memory)
  std::string form;                  // "table" or "grid"
  std::vector<std::string> columns;  // every column but `well` and `role`, in file order (passed through to outputs)
  std::map<WellId, WellInfo> wells;
  std::vector<ColumnUse> uses;        // columns read as substrate, standard_conc, match, compound, compound_conc
  std::vector<std::string> warnings;  // e.g. a concentration column not read as the substrate
  int header_line = 1;                // the tidy header's line (grid: the first variable's)

  // The well's entry, or nullptr for wells absent from the map (role empty).
  const WellInfo* find(WellId w) const;
};

// Reads either form (detected from the first line). Throws InputError for an unknown well
// name, a duplicated well, an unknown role, text where a number must be, a negative
// concentration, a ragged row. Substrate 0 is read for every role: a sample at 0 is the
// no-substrate control of a kinetics series, analysed like any sample (its rate is the
// reaction without substrate); `vzero fit` keeps it as the point v(0) = 0 of every model (see
// fit.hpp).
// A map with no well (a header and no rows) is an error, as is a substrate or match column
// named in `options` that the map lacks.
PlateMap read_plate_map(const std::string& path, const MapColumnOptions& options = {});
PlateMap parse_plate_map(const std::string& name, std::string_view text, const MapColumnOptions& options = {});

// Checks the map against what a run read: every mapped well must exist in the run's plate
// format and have been read in at least one channel. Throws InputError naming the well and
// the map line.
void check_plate_map(const PlateMap& map, const Run& run);

}  // namespace vzero
