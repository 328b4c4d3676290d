// The options of `vzero rates`, each described once. The command line, the method-file keys,
// the checks and the provenance all come from this table (include/vzero/settings.hpp).
// The order here is the order of `--help` and of the recorded options.
#include "settings/option_builders.hpp"

namespace vzero {

namespace detail {
void add_enzymeml_options(std::vector<OptionSpec>& t);  // option_table_enzymeml.cpp
void add_screen_options(std::vector<OptionSpec>& t);    // option_table_screen.cpp
void add_analysis_options(std::vector<OptionSpec>& t);  // option_table_analysis.cpp
}  // namespace detail

namespace {

using namespace detail::options;

// The inputs: plate map and its columns, method, profile, exports.
void add_input_options(std::vector<OptionSpec>& t) {
  t.push_back(text(
      "layout", 'l', k_io, OptionRole::io, "", [](S& s) { return &s.layout; },
      "plate map CSV (tidy table or plate-grid form): well, role, and substrate, standard_conc, match "
      "(a unit in a concentration header, e.g. `substrate (mM)`, is converted to conc-unit); required"));
  t.push_back(text(
      "substrate-column", 0, k_io, OptionRole::analysis, "", [](S& s) { return &s.map_columns.substrate_column; },
      "plate-map column with the substrate concentration (default: `substrate`, unit in the header or conc-unit)"));
  t.push_back(text(
      "match-column", 0, k_io, OptionRole::analysis, "", [](S& s) { return &s.map_columns.match_column; },
      "plate-map column pairing blanks with samples for --blank matched (default: `match`; the substrate column "
      "pairs them by substrate level)"));
  t.push_back(text(
      "compound-column", 0, k_io, OptionRole::analysis, "", [](S& s) { return &s.map_columns.compound_column; },
      "screens: plate-map column naming each sample's compound (default: `compound`)"));
  t.push_back(text(
      "compound-conc-column", 0, k_io, OptionRole::analysis, "",
      [](S& s) { return &s.map_columns.compound_conc_column; },
      "screens: plate-map column with each sample's compound concentration (default: `compound_conc`, or "
      "`compound` with a unit, e.g. `compound_uM`; unit in the header or conc-unit)"));
  t.push_back(text(
      "method", 'm', k_io, OptionRole::io, "", [](S& s) { return &s.method; },
      "assay method TOML file holding any of these options"));
  t.push_back(text(
      "profile", 'p', k_io, OptionRole::io, "", [](S& s) { return &s.profile; },
      "instrument profile for every FILE: built-in name or .toml path (default: detect per file)"));
  {
    OptionSpec o = choice(
        "time-unit", k_io, "", {"s", "min", "h", "ms"},
        [](S& s, const V& v) {
          s.time_unit = v.text;
          return std::string();
        },
        [](const S& s) { return s.time_unit; },
        "unit of read times written as plain numbers when the time header names none (the profile key "
        "`time_unit`); without it such times are read as seconds only when the steps between reads are "
        "plausible as seconds, else vzero stops and asks");
    o.role = OptionRole::io;
    t.push_back(o);
  }
  t.push_back(text(
      "sheet", 0, k_io, OptionRole::io, "", [](S& s) { return &s.sheet; },
      "sheet of every .xlsx workbook FILE, by name (default: the first sheet)"));
  t.push_back(text(
      "files-from", 0, k_io, OptionRole::io, "", [](S& s) { return &s.files_from; },
      "also read the exports listed in this file, one path per line (blank lines and # comments skipped; "
      "relative paths as if typed here), after those on the command line: for job arrays and long lists"));
}

// The outputs, what goes into them, and how the run goes.
void add_output_options(std::vector<OptionSpec>& t) {
  t.push_back(text(
      "output", 'o', k_io, OptionRole::io, "rates.csv", [](S& s) { return &s.output; },
      "rates table; datapackage.json is written beside it"));
  t.push_back(text(
      "traces", 0, k_io, OptionRole::io, "", [](S& s) { return &s.traces; },
      "also write the per-read traces table here"));
  t.push_back(text(
      "summary", 0, k_io, OptionRole::io, "", [](S& s) { return &s.summary; },
      "also write the replicate summary here"));
  t.push_back(text(
      "report", 0, k_io, OptionRole::io, "", [](S& s) { return &s.report; },
      "also write the HTML run report here (see vzero report --help)"));
  t.push_back(text(
      "enzymeml", 0, k_io, OptionRole::io, "", [](S& s) { return &s.enzymeml; },
      "also write the run as an EnzymeML 2.0 JSON document here (see the EnzymeML options below)"));
  t.push_back(special(
      "summary-leave-out", k_io, OptionKind::list, OptionRole::analysis, "replicate",
      [](S& s, const V& v) {
        s.leave_out = v.list;
        return std::string();
      },
      "comma-separated plate-map columns not used to group replicates"));
  t.push_back(special(
      "summary-per-file", k_io, OptionKind::flag, OptionRole::analysis, "",
      [](S& s, const V& v) {
        s.summary_per_file = v.on;
        return std::string();
      },
      "keep each export's wells apart in the replicate summary (a source column leads each group); "
      "by default wells of several exports with one plate map pool by condition"));
  t.push_back(special(
      "channel", k_io, OptionKind::list, OptionRole::analysis, "",
      [](S& s, const V& v) {
        s.analysis.channels = v.list;
        return std::string();
      },
      "comma-separated channels to analyse (default: all but water-peak channels)"));
  {
    OptionSpec o = special("threads", k_io, OptionKind::integer, OptionRole::run, "0", nullptr,
                           "worker threads; 0 = all cores (results do not depend on it)");
    o.range = k_non_negative;
    o.integer_field = [](S& s) { return &s.analysis.threads; };
    t.push_back(o);
  }
  {
    OptionSpec o = special(
        "quiet", k_io, OptionKind::flag, OptionRole::run, "",
        [](S& s, const V& v) {
          s.quiet = v.on;
          return std::string();
        },
        "print nothing on success");
    o.short_name = 'q';
    t.push_back(o);
  }
}

std::vector<OptionSpec> make_table() {
  std::vector<OptionSpec> t;
  add_input_options(t);
  add_output_options(t);
  detail::add_analysis_options(t);
  detail::add_screen_options(t);
  detail::add_enzymeml_options(t);
  return t;
}

}  // namespace

const std::vector<OptionSpec>& option_table() {
  static const std::vector<OptionSpec> table = make_table();
  return table;
}

const OptionSpec* find_option(std::string_view name) {
  for (const auto& o : option_table())
    if (o.name == name) return &o;
  return nullptr;
}

}  // namespace vzero
