#include "vzero/rates_run.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <exception>
#include <filesystem>
#include <optional>
#include <set>

#include "core/files.hpp"
#include "core/text.hpp"
#include "rates_run/run_warnings.hpp"
#include "vzero/enzymeml.hpp"
#include "vzero/error.hpp"
#include "vzero/method.hpp"
#include "vzero/report.hpp"

namespace vzero {

namespace {

namespace fs = std::filesystem;

// `p` relative to the folder of the data package, as its resources and inputs are written.
std::string relative_to(const std::string& p, const fs::path& dir) {
  std::error_code ec;
  fs::path r = fs::relative(fs::absolute(p), fs::absolute(dir.empty() ? "." : dir), ec);
  return ec || r.empty() ? p : r.string();
}

// The map's substrate passes through as written: in the unit its header names, else in
// conc-unit. The schema says which (vzero fit reads it for Km).
std::vector<FieldSpec> with_substrate_unit(std::vector<FieldSpec> fields, const PlateMap& map) {
  for (FieldSpec& f : fields)
    for (const ColumnUse& u : map.uses)
      if (u.use == "substrate" && f.name == u.column && f.unit.empty()) f.unit = u.unit;
  return fields;
}

// Before any export is read: --blank matched needs match values on blanks and samples.
void check_matched_blanks(const PlateMap& map, const RunSettings& s) {
  if (s.analysis.blank.strategy != BlankStrategy::matched) return;
  std::string column;
  for (const ColumnUse& u : map.uses)
    if (u.use == "match") column = u.column;
  const std::vector<std::string> fixes{
      "add a `match` column (the same word on a blank and the samples it belongs to), or name the map's column "
      "with --match-column (method key match-column)",
      "or subtract every blank well with --blank plate"};
  if (column.empty())
    throw InputError(Where{map.source, map.header_line},
                     "--blank matched pairs blanks with samples by a match column, but the plate map has none", fixes);
  bool blank = false, sample = false;
  for (const auto& [w, info] : map.wells) {
    blank |= info.role == Role::blank && !info.match.empty();
    sample |= rated_as_sample(info.role) && !info.match.empty();
  }
  if (!blank || !sample)
    throw InputError(Where{map.source, map.header_line},
                     fmt::format("--blank matched needs match values, but no {} well has one in `{}`",
                                 blank ? "sample" : "blank", column),
                     fixes);
}

// Sample wells converted to concentration whose substrate is unknown: the conversion limit
// (max-conversion) cannot be applied to them. "" when there are none.
std::string missing_substrate_warning(const std::vector<RunAnalysis>& analyses, const std::string& map_source) {
  std::set<std::string> wells;
  std::string first;
  for (const auto& ra : analyses)
    for (const auto& ca : ra.channels) {
      if (ca.conversion.mode == ConvertMode::signal_only) continue;
      for (const auto& row : ca.rows)
        if (rated_as_sample(row.role) && row.info && std::isnan(row.info->substrate))
          if (wells.insert(well_name(row.well)).second && first.empty()) first = well_name(row.well);
    }
  return missing_substrate_text(wells.size(), first, map_source);
}

// Before anything is read: no output may replace an input or another output, and every
// output's folder must exist and be writable.
void check_output_paths(const RunSettings& s, const std::string& package) {
  std::vector<detail::NamedPath> inputs, outputs;
  for (const auto& f : s.files) inputs.push_back({"the export", f});
  if (!s.files_from.empty()) inputs.push_back({"the file list (--files-from)", s.files_from});
  inputs.push_back({"the plate map (--layout)", s.layout});
  if (!s.method.empty()) inputs.push_back({"the method file (--method)", s.method});
  std::error_code ec;
  if (!s.profile.empty() && fs::is_regular_file(s.profile, ec))
    inputs.push_back({"the profile (--profile)", s.profile});
  outputs.push_back({"--output", s.output});
  if (!s.traces.empty()) outputs.push_back({"--traces", s.traces});
  if (!s.summary.empty()) outputs.push_back({"--summary", s.summary});
  if (!s.report.empty()) outputs.push_back({"--report", s.report});
  if (!s.enzymeml.empty()) outputs.push_back({"--enzymeml", s.enzymeml});
  if (!s.plate_quality.empty()) outputs.push_back({"--plate-quality", s.plate_quality});
  outputs.push_back({"datapackage.json (written beside --output)", package});
  detail::check_outputs(inputs, outputs);
}

// Which map columns hold a screen's compounds and their concentrations, as the console says
// it ("" when the map has neither).
std::string compound_note(const PlateMap& map) {
  std::string said;
  for (const ColumnUse& u : map.uses) {
    if (u.use == "compound")
      said += fmt::format("{}compounds from `{}`", said.empty() ? "" : ", ", u.column);
    else if (u.use == "compound_conc")
      said += fmt::format("{}compound concentrations from `{}` (in {}, {})", said.empty() ? "" : ", ", u.column, u.unit,
                          u.unit_in_header ? "from its header" : "the run's conc-unit");
  }
  if (said.empty()) return said;
  const bool conc = said.find("concentrations") != std::string::npos;
  return map.source + ": " + said + (conc ? " (vzero fit --model 4pl takes them as its default --x and --group)" : "");
}

// The plate map read with the run's column options, checked for the blank strategy, and the
// provenance that does not depend on the exports.
void read_map(const ResolvedSettings& resolved, RatesOutputs& out) {
  const RunSettings& s = resolved.settings;
  MapColumnOptions map_options = s.map_columns;
  map_options.conc_unit = s.analysis.convert.conc_unit;
  out.map = read_plate_map(s.layout, map_options);
  check_matched_blanks(out.map, s);
  out.warnings = out.map.warnings;
  if (std::string n = compound_note(out.map); !n.empty()) out.notes.push_back(n);
  Provenance& prov = out.provenance;
  prov.tool_version = VZERO_VERSION;
  prov.options = resolved.recorded;
  prov.map_columns = out.map.columns;
  prov.map_uses = out.map.uses;
  prov.inputs.push_back({"plate-map", s.layout, out.map.sha256, "", ""});
  if (!s.method.empty()) prov.inputs.push_back({"method", s.method, resolved.method_sha256, "", ""});
}

// The screening columns the plate map allows; --plate-quality and --hit-threshold need both
// controls in it. Without them the provenance drops the screen-only trend-level.
ScreenColumns screen_columns(const PlateMap& map, const RunSettings& s, Provenance& prov) {
  bool full = false, none = false;
  for (const auto& [w, info] : map.wells) {
    full |= info.role == Role::full_activity;
    none |= info.role == Role::no_activity;
  }
  const char* asked = !s.plate_quality.empty()                  ? "--plate-quality"
                      : !std::isnan(s.screen.hit_threshold_pct) ? "--hit-threshold"
                                                                : nullptr;
  if (asked && !(full && none))
    throw InputError(Where{map.source, map.header_line},
                     fmt::format("{} needs control wells of both kinds in the plate map, but it has {}", asked,
                                 full   ? "no no-activity well"
                                 : none ? "no full-activity well"
                                        : "neither"),
                     {"give the uninhibited control wells the role full-activity and the fully inhibited (or "
                      "no-enzyme) control wells the role no-activity",
                      "or leave out " + std::string(asked)});
  // The trend level is a screen's setting: runs without controls record what they did before.
  if (!(full && none)) std::erase_if(prov.options, [](const auto& o) { return o.first == "trend-level"; });
  return ScreenColumns{full && none, s.screen.hit_threshold_pct};
}

// A molar absorption coefficient or path length in another unit than the option's: ε in
// mM⁻¹·cm⁻¹ (6.22 for NADH) makes every concentration 1000 × too large, a path in mm 10 ×
// too small, and a run without `substrate` in the map has no conversion limit to show it.
// The chromophores plate assays measure absorb with ε of about 10³–10⁵ M⁻¹·cm⁻¹ (NADH 6220
// at 340 nm, the nitrophenolate and thiolate dyes 13,000–18,500; common practice) and a
// plate well's path is at most about 1 cm: below 100 M⁻¹·cm⁻¹ or above 2 cm, a warning.
void add_unit_slip_warnings(const RunSettings& s, RatesOutputs& out) {
  std::vector<std::pair<std::string, const ConvertOptions*>> given{{"", &s.analysis.convert}};
  for (const auto& cs : s.analysis.channel_settings)
    given.emplace_back(fmt::format("[channel.{}] in {}", cs.channel, cs.file), &cs.convert);
  const ConvertOptions& run = s.analysis.convert;
  std::vector<std::string> said;  // a value the channel tables inherit is said once, of the option
  const auto say = [&](std::string w) {
    if (std::find(said.begin(), said.end(), w) == said.end()) said.push_back(std::move(w));
  };
  for (const auto& [table, c] : given) {
    // The table names the value only when it is its own (not the run's, inherited).
    const auto where = [&](const char* option, double value, double run_value) {
      return table.empty() || value == run_value ? std::string(option) : table;
    };
    if (c->mode != ConvertMode::beer_lambert) continue;
    if (c->epsilon_per_m_cm < 100)
      say(fmt::format(
          "ε = {:g} M⁻¹·cm⁻¹ ({}) is below what the chromophores of plate assays have (about 10³–10⁵; NADH "
          "6220 at 340 nm): if it is in mM⁻¹·cm⁻¹, give {:g}; as given, every concentration and v0 is 1000 × "
          "what that would give",
          c->epsilon_per_m_cm, where("--epsilon", c->epsilon_per_m_cm, run.epsilon_per_m_cm),
          c->epsilon_per_m_cm * 1000));
    if (c->path_cm > 2)
      say(fmt::format(
          "the path length {:g} cm ({}) is longer than a plate well's (at most about 1 cm): if it is in mm, "
          "give {:g}; as given, every concentration and v0 is a tenth of what that would give",
          c->path_cm, where("--path-cm", c->path_cm, run.path_cm), c->path_cm / 10));
  }
  out.warnings.insert(out.warnings.end(), said.begin(), said.end());
}

// After the analyses: channels left unconverted when method tables convert others, and
// samples without a substrate where a conversion limit was due.
void add_run_notes(const RunSettings& s, bool unconverted, RatesOutputs& out) {
  add_unit_slip_warnings(s, out);
  if (unconverted && !s.analysis.channel_settings.empty()) {
    std::set<std::string> left;
    for (const auto& ra : out.analyses)
      for (const auto& ca : ra.channels)
        if (ca.conversion.mode == ConvertMode::signal_only) left.insert(ca.channel->name);
    for (const auto& name : left)
      out.notes.push_back("no conversion given for channel " + name + " (no epsilon in its [channel." + name +
                          "] table or for the run); its rates stay in signal units per minute");
  }
  if (std::string w = missing_substrate_warning(out.analyses, s.layout); !w.empty()) out.warnings.push_back(w);
  out.provenance.warnings = out.warnings;
}

// The exports a --files-from list names, after those given: one path per line, surrounding
// spaces trimmed, blank lines and lines starting with # skipped.
RunSettings with_listed_files(const RunSettings& given, std::string& list_sha256) {
  RunSettings s = given;
  if (s.files_from.empty()) return s;
  const detail::FileBytes list =
      detail::read_whole_file(s.files_from, "give a text file with one export path per line (--files-from)");
  list_sha256 = list.sha256;
  std::size_t start = 0, listed = 0;
  while (start < list.text.size()) {
    std::size_t end = list.text.find('\n', start);
    if (end == std::string::npos) end = list.text.size();
    std::string line = list.text.substr(start, end - start);
    start = end + 1;
    while (!line.empty() && (line.back() == '\r' || line.back() == ' ' || line.back() == '\t')) line.pop_back();
    const std::size_t first = line.find_first_not_of(" \t");
    if (first == std::string::npos || line[first] == '#') continue;
    s.files.push_back(line.substr(first));
    ++listed;
  }
  if (listed == 0)
    throw InputError(Where{s.files_from, 1, 1, ""}, "the file list names no export",
                     {"write one export path per line (lines starting with # are comments)"});
  return s;
}

// The batch's ordered consumer: each finished file's rows go to the sink (a large file's
// traces a well at a time, from its analysis) and its plates to the report. A sink error
// waits until every input has been read, so that input errors are reported first.
struct FileConsumer {
  OutputSink& sink;
  const std::vector<std::string>& map_columns;
  bool with_activity, with_specific;
  ScreenColumns screen;
  bool traces;
  RunReport* report;  // nullptr: no report
  bool started = false;
  std::exception_ptr error;

  void operator()(BatchFile& f) {
    if (error) return;
    try {
      if (report) report->add(f.analysis);
      if (!started) {
        started = true;
        sink.append("rates", rates_csv({}, map_columns, with_activity, with_specific, screen));
        if (traces) sink.append("traces", traces_csv({}));
      }
      sink.append("rates", f.rates_rows);
      std::string().swap(f.rates_rows);
      if (f.traces_from_analysis)
        traces_csv_pieces(f.analysis, [this](std::string_view rows) { sink.append("traces", rows); });
      else if (traces)
        sink.append("traces", f.trace_rows);
      std::string().swap(f.trace_rows);
    } catch (...) {
      error = std::current_exception();
    }
  }
};

// What the EnzymeML document says beyond the analyses: the options, the run's units and the
// reaction volume (well-volume-ul, else the fill volume given for the path length).
EnzymeMLOptions enzymeml_options(const RunSettings& s) {
  EnzymeMLOptions o = s.enzymeml_options;
  o.conc_unit = s.analysis.convert.conc_unit;
  o.tool_version = VZERO_VERSION;
  o.volume_ul = std::isnan(s.analysis.well_volume_ul) ? s.analysis.convert.volume_ul : s.analysis.well_volume_ul;
  return o;
}

}  // namespace

std::string missing_substrate_text(std::size_t wells, const std::string& first_well, const std::string& map_source) {
  if (wells == 0) return {};
  return fmt::format(
      "{} sample well{} (first {}) ha{} no substrate concentration in {}: the max-conversion limit is off for "
      "them and a window running into substrate depletion gives a rate that is too low (rates.csv notes: "
      "no-limit); give each sample's substrate in a `substrate` column (unit in the header, e.g. `substrate (mM)`) "
      "or name the column with --substrate-column",
      wells, wells == 1 ? "" : "s", first_well, wells == 1 ? "s" : "ve", map_source);
}

namespace {
// Each export's provenance (hash, profile, what was read and inferred; a profile file once
// however many exports it read) and notes; the analyses move into `out.analyses`.
void record_files(RatesOutputs& out) {
  Provenance& prov = out.provenance;
  std::set<std::string> profiles_listed;
  for (auto& f : out.files) {
    if (f.choice.detected) prov.detected.emplace_back("profile:" + f.path, f.choice.profile.name);
    prov.inputs.push_back({"export", f.path, f.run->sha256, f.run->profile, f.run->shape, f.run->sheet, f.run->metadata,
                           f.run->read_facts, f.run->read_notes});
    for (const auto& fact : f.run->read_facts)
      if (fact.name == "time_unit" && fact.basis.rfind("no unit", 0) == 0)
        out.notes.push_back(fmt::format("{}: read times taken as seconds: {}", f.path, fact.basis));
    for (const auto& n : f.run->read_notes) out.notes.push_back(fmt::format("{}: {}", f.path, n));
    for (const auto& w : f.run->read_warnings) out.warnings.push_back(fmt::format("{}: {}", f.path, w));
    if (f.choice.profile.source != "built-in" && profiles_listed.insert(f.choice.profile.source).second)
      prov.inputs.push_back({"profile", f.choice.profile.source, f.choice.profile.sha256, "", "", {}, {}});
    out.analyses.push_back(std::move(f.analysis));
  }
}

// The tables of the run as datapackage.json lists them (the summary and plate-quality text
// are made here too, when asked for).
std::vector<PackagedTable> package_tables(const RunSettings& s, const fs::path& dir, bool with_activity,
                                          bool with_specific, const ScreenColumns& screen, RatesOutputs& out) {
  std::vector<PackagedTable> tables;
  tables.push_back({"rates", relative_to(s.output, dir),
                    with_substrate_unit(rate_fields(out.map.columns, with_activity, with_specific, screen), out.map)});
  if (!s.traces.empty()) tables.push_back({"traces", relative_to(s.traces, dir), trace_fields()});
  out.summary = summarise(out.analyses, out.map.columns, s.leave_out, s.summary_per_file);
  if (!s.summary.empty()) {
    out.summary_csv = summary_csv(out.summary);
    tables.push_back(
        {"summary", relative_to(s.summary, dir), with_substrate_unit(summary_fields(out.summary), out.map)});
  }
  if (!s.plate_quality.empty()) {
    out.plate_quality_csv = plate_quality_csv(out.analyses, s.screen.min_z_prime, s.screen.trend_level);
    tables.push_back({"plate-quality", relative_to(s.plate_quality, dir), plate_quality_fields()});
  }
  return tables;
}

}  // namespace

RatesOutputs run_rates(const ResolvedSettings& resolved, OutputSink& sink,
                       const std::function<void(const BatchProgress&)>& progress) {
  std::string list_sha256;
  const RunSettings s = with_listed_files(resolved.settings, list_sha256);
  if (s.files.empty()) throw UsageError("expected one or more export FILEs (or --files-from LIST)");
  if (s.layout.empty()) throw UsageError("--layout MAP.csv is required (the plate map: which well holds what)");
  const fs::path dir = fs::path(s.output).parent_path();
  check_output_paths(s, (dir / "datapackage.json").string());
  RatesOutputs out;
  const bool unconverted =
      s.analysis.convert.mode == ConvertMode::signal_only &&
      std::find(resolved.given.begin(), resolved.given.end(), "signal-only") == resolved.given.end();
  if (unconverted && s.analysis.channel_settings.empty())
    out.notes.push_back(
        "no conversion given (--epsilon with a path length, --standards, or --signal-only); "
        "rates stay in signal units per minute");
  read_map(resolved, out);
  const ScreenColumns screen = screen_columns(out.map, s, out.provenance);
  if (!s.files_from.empty()) out.provenance.inputs.push_back({"file-list", s.files_from, list_sha256, "", ""});

  const bool with_activity = !std::isnan(s.analysis.well_volume_ul);
  const bool with_specific = !s.analysis.enzyme_mg_column.empty();
  BatchOptions batch;
  batch.profile = s.profile;
  batch.sheet = s.sheet;
  batch.time_unit = s.time_unit;
  batch.analysis = s.analysis;
  batch.map_columns = out.map.columns;
  batch.with_activity = with_activity;
  batch.with_specific = with_specific;
  batch.screen = screen;
  batch.trace_rows = !s.traces.empty();
  // The report takes each file's plates as it finishes; its reads are dropped after that.
  batch.keep_data_until_ready = !s.report.empty();
  // The EnzymeML document needs every file's reads after the batch.
  batch.keep_data = !s.enzymeml.empty();
  std::optional<RunReport> report;
  if (!s.report.empty()) report.emplace(out.map.columns);
  FileConsumer ready{
      sink, out.map.columns, with_activity, with_specific, screen, batch.trace_rows, report ? &*report : nullptr};
  out.files = analyse_files(s.files, out.map, batch, progress, std::ref(ready));
  if (ready.error) std::rethrow_exception(ready.error);

  record_files(out);

  add_run_notes(s, unconverted, out);
  // On the console only, after add_run_notes recorded the run's warnings: they are per plate,
  // so the parts of a merged run would differ (`vzero merge`); the plate-quality table
  // records each verdict.
  if (screen.normalised) detail::add_quality_warnings(s, out);
  detail::add_blank_trend_warnings(s, out);
  detail::add_direction_warnings(out);
  const std::vector<PackagedTable> tables = package_tables(s, dir, with_activity, with_specific, screen, out);
  out.datapackage_path = (dir / "datapackage.json").string();
  out.datapackage_json = datapackage_json(tables, out.provenance, out.analyses);
  if (!s.enzymeml.empty()) out.enzymeml_json = enzymeml_json(out.analyses, out.map, enzymeml_options(s));
  if (report) out.report_html = report->render(out.summary, out.datapackage_json);
  return out;
}

}  // namespace vzero
