#include "vzero/rates_run.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <exception>
#include <filesystem>
#include <set>

#include "core/files.hpp"
#include "core/text.hpp"
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

// The map's substrate is in conc-unit: the schema says so (vzero fit reads it for Km).
std::vector<FieldSpec> with_substrate_unit(std::vector<FieldSpec> fields, const std::string& conc_unit) {
  for (FieldSpec& f : fields)
    if (detail::iequals(f.name, "substrate") && f.unit.empty()) f.unit = conc_unit;
  return fields;
}

// Before anything is read: no output may replace an input or another output, and every
// output's folder must exist and be writable.
void check_output_paths(const RunSettings& s, const std::string& package) {
  std::vector<detail::NamedPath> inputs, outputs;
  for (const auto& f : s.files) inputs.push_back({"the export", f});
  inputs.push_back({"the plate map (--layout)", s.layout});
  if (!s.method.empty()) inputs.push_back({"the method file (--method)", s.method});
  std::error_code ec;
  if (!s.profile.empty() && fs::is_regular_file(s.profile, ec))
    inputs.push_back({"the profile (--profile)", s.profile});
  outputs.push_back({"--output", s.output});
  if (!s.traces.empty()) outputs.push_back({"--traces", s.traces});
  if (!s.summary.empty()) outputs.push_back({"--summary", s.summary});
  if (!s.report.empty()) outputs.push_back({"--report", s.report});
  outputs.push_back({"datapackage.json (written beside --output)", package});
  detail::check_outputs(inputs, outputs);
}

}  // namespace

RatesOutputs run_rates(const ResolvedSettings& resolved, OutputSink& sink,
                       const std::function<void(const BatchProgress&)>& progress) {
  const RunSettings& s = resolved.settings;
  if (s.files.empty()) throw UsageError("expected one or more export FILEs");
  if (s.layout.empty()) throw UsageError("--layout MAP.csv is required (the plate map: which well holds what)");
  const fs::path dir = fs::path(s.output).parent_path();
  check_output_paths(s, (dir / "datapackage.json").string());
  RatesOutputs out;
  if (s.analysis.convert.mode == ConvertMode::signal_only &&
      std::find(resolved.given.begin(), resolved.given.end(), "signal-only") == resolved.given.end())
    out.notes.push_back(
        "no conversion given (--epsilon with a path length, --standards, or --signal-only); "
        "rates stay in signal units per minute");
  out.map = read_plate_map(s.layout);
  Provenance& prov = out.provenance;
  prov.tool_version = VZERO_VERSION;
  prov.options = resolved.recorded;
  prov.map_columns = out.map.columns;
  prov.inputs.push_back({"plate-map", s.layout, out.map.sha256, "", "", {}, {}});
  if (!s.method.empty()) prov.inputs.push_back({"method", s.method, resolved.method_sha256, "", "", {}, {}});

  const bool with_activity = !std::isnan(s.analysis.well_volume_ul);
  const bool with_specific = !s.analysis.enzyme_mg_column.empty();
  BatchOptions batch;
  batch.profile = s.profile;
  batch.time_unit = s.time_unit;
  batch.analysis = s.analysis;
  batch.map_columns = out.map.columns;
  batch.with_activity = with_activity;
  batch.with_specific = with_specific;
  batch.trace_rows = !s.traces.empty();
  batch.keep_data = !s.report.empty();
  // Tables go to the sink as the files finish, in order; a sink error waits until every input
  // has been read, so that input errors are reported first.
  bool started = false;
  std::exception_ptr sink_error;
  auto ready = [&](BatchFile& f) {
    if (sink_error) return;
    try {
      if (!started) {
        started = true;
        sink.append("rates", rates_csv({}, out.map.columns, with_activity, with_specific));
        if (batch.trace_rows) sink.append("traces", traces_csv({}));
      }
      sink.append("rates", f.rates_rows);
      std::string().swap(f.rates_rows);
      if (batch.trace_rows) {
        sink.append("traces", f.trace_rows);
        std::string().swap(f.trace_rows);
      }
    } catch (...) {
      sink_error = std::current_exception();
    }
  };
  out.files = analyse_files(s.files, out.map, batch, progress, ready);
  if (sink_error) std::rethrow_exception(sink_error);

  std::set<std::string> profiles_listed;
  for (auto& f : out.files) {
    if (f.choice.detected) prov.detected.emplace_back("profile:" + f.path, f.choice.profile.name);
    prov.inputs.push_back(
        {"export", f.path, f.run->sha256, f.run->profile, f.run->shape, f.run->read_facts, f.run->read_notes});
    for (const auto& fact : f.run->read_facts)
      if (fact.name == "time_unit" && fact.basis.rfind("no unit", 0) == 0)
        out.notes.push_back(fmt::format("{}: read times taken as seconds: {}", f.path, fact.basis));
    for (const auto& n : f.run->read_notes) out.notes.push_back(fmt::format("{}: {}", f.path, n));
    // A profile file is an input once, however many exports it read.
    if (f.choice.profile.source != "built-in" && profiles_listed.insert(f.choice.profile.source).second)
      prov.inputs.push_back({"profile", f.choice.profile.source, f.choice.profile.sha256, "", "", {}, {}});
    out.analyses.push_back(std::move(f.analysis));
  }

  const std::string& unit = s.analysis.convert.conc_unit;
  std::vector<PackagedTable> tables;
  tables.push_back({"rates", relative_to(s.output, dir),
                    with_substrate_unit(rate_fields(out.map.columns, with_activity, with_specific), unit)});
  if (!s.traces.empty()) tables.push_back({"traces", relative_to(s.traces, dir), trace_fields()});
  out.summary = summarise(out.analyses, out.map.columns, s.leave_out);
  if (!s.summary.empty()) {
    out.summary_csv = summary_csv(out.summary);
    tables.push_back({"summary", relative_to(s.summary, dir), with_substrate_unit(summary_fields(out.summary), unit)});
  }
  out.datapackage_path = (dir / "datapackage.json").string();
  out.datapackage_json = datapackage_json(tables, prov, out.analyses);
  if (!s.report.empty())
    out.report_html = render_report(
        report_input(out.analyses, out.map.columns, with_activity, with_specific, out.summary, out.datapackage_json));
  return out;
}

}  // namespace vzero
