// vzero rates: blank, convert and find the initial rate of every well.
#include <unistd.h>
#ifdef __GLIBC__
#include <malloc.h>
#endif

#include <fmt/format.h>
#include <boost/program_options.hpp>
#include <chrono>
#include <cstdio>
#include <filesystem>
#include <map>
#include <memory>

#include "cli/commands.hpp"
#include "cli/options.hpp"
#include "cli/rates_settings.hpp"
#include "vzero/error.hpp"
#include "vzero/flags.hpp"
#include "vzero/outputs.hpp"
#include "vzero/rates_run.hpp"
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

// The run's outputs as files: each streamed table (rates, traces) and each whole output goes
// to a temporary file beside its destination, and publish() puts them all in place at the end.
class FileSink : public OutputSink {
 public:
  explicit FileSink(std::map<std::string, std::string> table_paths) : table_paths_(std::move(table_paths)) {}
  void append(std::string_view table, std::string_view text) override {
    file(table_paths_.at(std::string(table))).append(text);
  }
  void write(const std::string& path, std::string_view text) { file(path).append(text); }
  // SHA-256 of what the file at `path` will hold ("" when nothing was written to it).
  std::string sha256(const std::string& path) const {
    auto it = files_.find(path);
    return it == files_.end() ? std::string() : it->second->sha256();
  }
  // Puts the files in place in the order they were first written to.
  void publish() {
    for (const auto& path : order_) files_.at(path)->commit();
  }

 private:
  AtomicFile& file(const std::string& path) {
    auto it = files_.find(path);
    if (it == files_.end()) {
      order_.push_back(path);
      it = files_.emplace(path, std::make_unique<AtomicFile>(path)).first;
    }
    return *it->second;
  }
  std::map<std::string, std::string> table_paths_;
  std::map<std::string, std::unique_ptr<AtomicFile>> files_;
  std::vector<std::string> order_;
};

// An earlier call whose outputs in this folder were not all put in place (a crash between
// the renames): said before this call replaces them.
void warn_half_published(const RunSettings& s) {
  const auto package = std::filesystem::path(s.output).parent_path() / "datapackage.json";
  std::error_code ec;
  if (s.quiet || !std::filesystem::is_regular_file(package, ec)) return;
  for (const auto& m : unpublished_tables(package.string()))
    print_err("warning: an earlier run's outputs here were left half-published: " + m);
}

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
    print_out(help_text(opts) + "\nbuilt-in profiles: " + builtin_profile_list() +
              "\nepsilon presets: " + epsilon_preset_list() + "\n\nrates.csv, columns flags and notes:\n" +
              marks_text());
    return 0;
  }
  const ResolvedSettings resolved = settings_from(vm);
  const RunSettings& s = resolved.settings;
  warn_half_published(s);
  FileSink sink({{"rates", s.output}, {"traces", s.traces}});
  ProgressLine meter(!s.quiet && s.files.size() > 1 && isatty(STDERR_FILENO));
  RatesOutputs out = run_rates(resolved, sink, meter.callback());
  meter.finish();
  if (!s.quiet) {
    for (const auto& n : out.notes) print_err("note: " + n);
    for (const auto& w : out.warnings) print_err("warning: " + w);
  }
  // Every output is written in full to its temporary file first; then all are put in place,
  // datapackage.json last: it records each table's hash, so a crash between the renames
  // leaves tables that the datapackage.json beside them does not describe, which `vzero
  // report` refuses and the next `vzero rates` in the folder points out.
  if (!s.summary.empty()) sink.write(s.summary, out.summary_csv);
  if (!s.plate_quality.empty()) sink.write(s.plate_quality, out.plate_quality_csv);
  if (!s.report.empty()) sink.write(s.report, out.report_html);
  if (!s.enzymeml.empty()) sink.write(s.enzymeml, out.enzymeml_json);
  std::map<std::string, std::string> hashes{{"rates", sink.sha256(s.output)}};
  if (!s.traces.empty()) hashes["traces"] = sink.sha256(s.traces);
  if (!s.summary.empty()) hashes["summary"] = sink.sha256(s.summary);
  if (!s.plate_quality.empty()) hashes["plate-quality"] = sink.sha256(s.plate_quality);
  sink.write(out.datapackage_path, with_table_hashes(out.datapackage_json, hashes));
  sink.publish();
  if (!s.quiet) print_out(run_digest(out.analyses, out.summary, s, out.datapackage_path));
  return 0;
}

}  // namespace vzero::cli
