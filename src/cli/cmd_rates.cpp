// vzero rates: blank, convert and find the initial rate of every well.
#include <unistd.h>
#ifdef __GLIBC__
#include <malloc.h>
#endif

#include <boost/program_options.hpp>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fmt/format.h>
#include <map>
#include <optional>

#include "cli/commands.hpp"
#include "cli/options.hpp"
#include "cli/rates_settings.hpp"
#include "core/line_source.hpp"
#include "core/text.hpp"
#include "vzero/analysis.hpp"
#include "vzero/batch.hpp"
#include "vzero/error.hpp"
#include "vzero/ingest.hpp"
#include "vzero/outputs.hpp"
#include "vzero/plate_map.hpp"
#include "vzero/report.hpp"
#include "vzero/summary.hpp"
#include "vzero/table.hpp"

namespace vzero::cli {

namespace {

// "37/100 files, 61,000 wells/s, 0:02 left" on one terminal line of stderr, rewritten at
// most ten times a second and wiped at the end; nothing when off (stderr not a terminal,
// --quiet, or a single file).
class ProgressLine {
 public:
  explicit ProgressLine(bool on) : on_(on) {}
  std::function<void(const BatchProgress&)> callback() {
    if (!on_) return {};
    return [this](const BatchProgress& p) {
      const auto now = std::chrono::steady_clock::now();
      if (p.files_done < p.files_total && now - last_ < std::chrono::milliseconds(100)) return;
      last_ = now;
      const double rate = p.elapsed_s > 0 ? static_cast<double>(p.wells_done) / p.elapsed_s : 0.0;
      const double left = p.files_done > 0 ? p.elapsed_s / p.files_done * (p.files_total - p.files_done) : 0.0;
      const auto secs = static_cast<long>(std::lround(left));
      std::string text = fmt::format("\r{}/{} files, {:.0f} wells/s, {}:{:02} left", p.files_done, p.files_total, rate,
                                     secs / 60, secs % 60);
      width_ = std::max(width_, text.size());
      text.resize(width_, ' ');
      std::fputs(text.c_str(), stderr);
      std::fflush(stderr);
    };
  }
  void finish() {
    if (!on_ || width_ == 0) return;
    std::fputs(("\r" + std::string(width_, ' ') + "\r").c_str(), stderr);
    std::fflush(stderr);
  }

 private:
  bool on_;
  std::size_t width_ = 0;
  std::chrono::steady_clock::time_point last_{};
};

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
#ifdef __GLIBC__
  // A batch allocates and frees a plate's matrices for every file: keep freed memory in the
  // heap for the next file instead of returning it to the OS and taking fresh zeroed pages
  // (a tenth of a batch's time went to clearing pages).
  mallopt(M_MMAP_THRESHOLD, 256 << 20);
  mallopt(M_TRIM_THRESHOLD, 512 << 20);
#endif
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
  RatesSettings s = settings_from(vm);

  if (s.analysis.convert.mode == ConvertMode::signal_only && !vm.count("signal-only") && !s.quiet)
    print_err("note: no conversion given (--epsilon with a path length, --standards, or --signal-only); "
              "rates stay in signal units per minute");
  PlateMap map = read_plate_map(s.layout);
  Provenance prov;
  prov.tool_version = VZERO_VERSION;
  prov.options = s.recorded;
  prov.inputs.push_back({"plate-map", s.layout, detail::sha256_of_file(s.layout), "", ""});
  if (!s.method.empty()) prov.inputs.push_back({"method", s.method, detail::sha256_of_file(s.method), "", ""});

  const bool with_activity = !std::isnan(s.analysis.well_volume_ul);
  const bool with_specific = !s.analysis.enzyme_mg_column.empty();
  // Files run in parallel, one per thread; each keeps only its results once its rows are
  // formatted, unless the report needs the reads.
  BatchOptions batch;
  batch.profile = s.profile;
  batch.analysis = s.analysis;
  batch.map_columns = map.columns;
  batch.with_activity = with_activity;
  batch.with_specific = with_specific;
  batch.trace_rows = !s.traces.empty();
  batch.keep_data = !s.report.empty();
  ProgressLine meter(!s.quiet && s.files.size() > 1 && isatty(STDERR_FILENO));
  // rates.csv (and the traces) are written as the files finish, in order; they are opened
  // with the first file, and an output error waits until every input has been read (input
  // errors are reported first, as before).
  std::optional<AtomicFile> rates_out, traces_out;
  std::exception_ptr write_error;
  auto ready = [&](BatchFile& f) {
    if (write_error) return;
    try {
      if (!rates_out) {
        rates_out.emplace(s.output);
        rates_out->append(rates_csv({}, map.columns, with_activity, with_specific));
      }
      rates_out->append(f.rates_rows);
      std::string().swap(f.rates_rows);
      if (!s.traces.empty()) {
        if (!traces_out) {
          traces_out.emplace(s.traces);
          traces_out->append(traces_csv({}));
        }
        traces_out->append(f.trace_rows);
        std::string().swap(f.trace_rows);
      }
    } catch (...) {
      write_error = std::current_exception();
    }
  };
  std::vector<BatchFile> files = analyse_files(s.files, map, batch, meter.callback(), ready);
  meter.finish();
  if (write_error) std::rethrow_exception(write_error);
  std::vector<RunAnalysis> analyses;
  for (auto& f : files) {
    if (f.choice.detected) prov.detected.emplace_back("profile:" + f.path, f.choice.profile.name);
    prov.inputs.push_back({"export", f.path, f.run->sha256, f.run->profile, f.run->shape});
    if (f.choice.profile.source != "built-in")
      prov.inputs.push_back({"profile", f.choice.profile.source, detail::sha256_of_file(f.choice.profile.source), "", ""});
    analyses.push_back(std::move(f.analysis));
  }
  namespace fs = std::filesystem;
  fs::path out_dir = fs::path(s.output).parent_path();
  std::vector<PackagedTable> tables;
  auto rel = [&](const std::string& p) {
    std::error_code ec;
    fs::path r = fs::relative(fs::absolute(p), fs::absolute(out_dir.empty() ? "." : out_dir), ec);
    return ec || r.empty() ? p : r.string();
  };
  // The map's substrate is in --conc-unit: the schema says so (vzero fit reads it for Km).
  const auto substrate_unit = [&](std::vector<FieldSpec> fields) {
    for (FieldSpec& f : fields)
      if (detail::iequals(f.name, "substrate") && f.unit.empty()) f.unit = s.analysis.convert.conc_unit;
    return fields;
  };
  rates_out->commit();
  tables.push_back({"rates", rel(s.output), substrate_unit(rate_fields(map.columns, with_activity, with_specific))});
  if (!s.traces.empty()) {
    traces_out->commit();
    tables.push_back({"traces", rel(s.traces), trace_fields()});
  }
  SummaryTable summary = summarise(analyses, map.columns, s.leave_out);
  if (!s.summary.empty()) {
    write_file_atomic(s.summary, summary_csv(summary));
    tables.push_back({"summary", rel(s.summary), substrate_unit(summary_fields(summary))});
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
