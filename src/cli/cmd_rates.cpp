// vzero rates: blank, convert and find the initial rate of every well.
#include <boost/program_options.hpp>
#include <cmath>
#include <filesystem>
#include <fmt/format.h>
#include <map>

#include "cli/commands.hpp"
#include "cli/options.hpp"
#include "cli/rates_settings.hpp"
#include "detail/line_source.hpp"
#include "vzero/analysis.hpp"
#include "vzero/error.hpp"
#include "vzero/ingest.hpp"
#include "vzero/outputs.hpp"
#include "vzero/plate_map.hpp"
#include "vzero/report.hpp"
#include "vzero/summary.hpp"
#include "vzero/table.hpp"

namespace vzero::cli {

namespace {

constexpr const char* k_usage = R"(usage: vzero rates FILE... --layout MAP.csv [options]

Reads each raw export, gives every well its plate-map role, subtracts blanks, converts
signal to concentration, finds each well's initial rate (v0) and writes one row per well
to rates.csv, with datapackage.json beside it (column types, units and provenance: tool
version, sha256 of every input, profiles and every option). A well without a rate you
can trust still gets its row; `flags` says why.

Conversion (choose one; without any, rates stay in signal units per minute):
  --epsilon E with --path-cm L, or --volume-ul V --well-diameter-mm D, or --water-peak
  --standards           fluorescence: a standard curve from the map's standard wells
  --signal-only         no conversion

Options may also come from an assay method file (--method FILE.toml, keys are the long
option names below, e.g. `epsilon = 6220`); options on the command line win.

options)";

}  // namespace

int cmd_rates(const Args& args) {
  namespace po = boost::program_options;
  po::options_description opts(k_usage);
  add_rates_options(opts);
  po::options_description hidden;
  hidden.add_options()("file", po::value<std::vector<std::string>>());
  po::positional_options_description pos;
  pos.add("file", -1);
  po::variables_map vm = parse_command_line(args, opts, hidden, pos);
  if (vm.count("help")) {
    print_out(help_text(opts) + "\nbuilt-in profiles: " + builtin_profile_list() + "\nepsilon presets: " +
              epsilon_preset_list() + "\n");
    return 0;
  }
  RatesSettings s = settings_from(vm, opts);

  if (s.analysis.convert.mode == ConvertMode::signal_only && !vm.count("signal-only") && !s.quiet)
    print_err("note: no conversion given (--epsilon with a path length, --standards, or --signal-only); "
              "rates stay in signal units per minute");
  PlateMap map = read_plate_map(s.layout);
  Provenance prov;
  prov.tool_version = VZERO_VERSION;
  prov.options = s.recorded;
  prov.inputs.push_back({"plate-map", s.layout, detail::sha256_of_file(s.layout), "", ""});
  if (!s.method.empty()) prov.inputs.push_back({"method", s.method, detail::sha256_of_file(s.method), "", ""});

  std::vector<Run> runs;
  runs.reserve(s.files.size());
  for (const auto& f : s.files) {
    ProfileChoice choice = choose_profile(f, s.profile);
    if (choice.detected) prov.detected.emplace_back("profile:" + f, choice.profile.name);
    runs.push_back(read_run(f, choice.profile));
    check_plate_map(map, runs.back());
    prov.inputs.push_back({"export", f, runs.back().sha256, runs.back().profile, runs.back().shape});
    if (choice.profile.source != "built-in")
      prov.inputs.push_back({"profile", choice.profile.source, detail::sha256_of_file(choice.profile.source), "", ""});
  }
  std::vector<RunAnalysis> analyses;
  for (const auto& r : runs) analyses.push_back(analyse_run(r, map, s.analysis));

  const bool with_activity = !std::isnan(s.analysis.well_volume_ul);
  const bool with_specific = !s.analysis.enzyme_mg_column.empty();
  namespace fs = std::filesystem;
  fs::path out_dir = fs::path(s.output).parent_path();
  std::vector<PackagedTable> tables;
  auto rel = [&](const std::string& p) {
    std::error_code ec;
    fs::path r = fs::relative(fs::absolute(p), fs::absolute(out_dir.empty() ? "." : out_dir), ec);
    return ec || r.empty() ? p : r.string();
  };
  write_file_atomic(s.output, rates_csv(analyses, map.columns, with_activity, with_specific));
  tables.push_back({"rates", rel(s.output), rate_fields(map.columns, with_activity, with_specific)});
  if (!s.traces.empty()) {
    write_file_atomic(s.traces, traces_csv(analyses));
    tables.push_back({"traces", rel(s.traces), trace_fields()});
  }
  SummaryTable summary = summarise(analyses, map.columns, s.leave_out);
  if (!s.summary.empty()) {
    write_file_atomic(s.summary, summary_csv(summary));
    tables.push_back({"summary", rel(s.summary), summary_fields(summary)});
  }
  std::string package = (out_dir / "datapackage.json").string();
  write_file_atomic(package, datapackage_json(tables, prov, analyses));
  if (!s.report.empty())
    write_file_atomic(s.report, render_report(report_input(analyses, map.columns, with_activity, summary,
                                                           datapackage_json(tables, prov, analyses))));

  if (!s.quiet) print_out(run_digest(analyses, summary, s, package));
  return 0;
}

}  // namespace vzero::cli
