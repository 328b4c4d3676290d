#include "vzero/batch.hpp"
#include "vzero/settings.hpp"

#include <algorithm>
#include <chrono>
#include <mutex>

#include "core/parallel.hpp"
#include "vzero/error.hpp"
#include "vzero/outputs.hpp"

namespace vzero {

namespace {

// Drops what only the traces and the report use: reads, blank matrices, per-read flags.
void keep_results_only(BatchFile& f) {
  for (auto& ch : f.run->channels) {
    ch.values.resize(0, 0);
    ch.status.resize(0, 0);
    ch.temperature_c.clear();
    ch.temperature_c.shrink_to_fit();
  }
  for (auto& ca : f.analysis.channels) {
    if (ca.corrected) {
      // An inner-filter copy: keep its name and wells only.
      auto slim = std::make_shared<Channel>();
      slim->name = ca.corrected->name;
      slim->quantity = ca.corrected->quantity;
      slim->unit = ca.corrected->unit;
      slim->wells = ca.corrected->wells;
      slim->time_s = ca.corrected->time_s;
      ca.corrected = slim;
      ca.channel = slim.get();
    }
    ca.blank.blank.resize(0, 0);
    ca.blank.corrected.resize(0, 0);
    ca.blank.status.resize(0, 0);
    ca.blank.blank_reads.resize(0, 0);
    std::vector<int>().swap(ca.blank.blank_columns);
    std::vector<int>().swap(ca.blank.blank_disturbed);
    std::vector<WellBlank>().swap(ca.blank.wells);
    for (auto& row : ca.rows) std::vector<std::uint8_t>().swap(row.rate.used);
  }
}

long long wells_of(const RunAnalysis& a) {
  long long n = 0;
  for (const auto& ca : a.channels) n += static_cast<long long>(ca.rows.size());
  return n;
}

long long trace_rows_of(const RunAnalysis& a) {
  long long n = 0;
  for (const auto& ca : a.channels) n += static_cast<long long>(ca.rows.size()) * ca.channel->reads();
  return n;
}

}  // namespace

std::vector<BatchFile> analyse_files(const std::vector<std::string>& paths, const PlateMap& map, const BatchOptions& o,
                                     const std::function<void(const BatchProgress&)>& progress,
                                     const std::function<void(BatchFile&)>& ready) {
  // The one check of the options, where the batch starts (the option table's rules).
  if (auto why = check_analysis_options(o.analysis); !why.empty()) throw UsageError(why);
  const int n = static_cast<int>(paths.size());
  std::vector<BatchFile> out(paths.size());
  const int cores = detail::thread_count(o.analysis.threads);
  // Files in parallel, each on one thread; a single file spreads its wells instead.
  const int workers = std::max(1, std::min(cores, n));
  const int inner = workers > 1 ? 1 : cores;

  std::mutex report;
  std::vector<char> finished(paths.size(), 0);
  std::size_t next_ready = 0;  // first file not yet handed to `ready`
  BatchProgress state;
  state.files_total = n;
  const auto start = std::chrono::steady_clock::now();

  detail::parallel_for(n, workers, 1, [&](int i) {
    BatchFile& f = out[static_cast<std::size_t>(i)];
    f.path = paths[static_cast<std::size_t>(i)];
    f.choice = choose_profile(f.path, o.profile, o.sheet);
    if (!o.time_unit.empty()) state_time_unit(f.choice.profile, o.time_unit);
    f.run = std::make_unique<Run>(read_run(f.path, f.choice.profile, o.sheet));
    check_plate_map(map, *f.run);
    AnalysisOptions ao = o.analysis;
    ao.threads = inner;
    f.analysis = analyse_run(*f.run, map, ao);
    f.rates_rows = rates_csv_rows(f.analysis, o.map_columns, o.with_activity, o.with_specific, o.screen);
    // A large file's traces are written by `ready` from the analysis, a well at a time.
    f.traces_from_analysis = o.trace_rows && ready && trace_rows_of(f.analysis) > k_pool_trace_rows;
    if (o.trace_rows && !f.traces_from_analysis) f.trace_rows = traces_csv_rows(f.analysis);
    if (!o.keep_data && !(ready && (o.keep_data_until_ready || f.traces_from_analysis))) keep_results_only(f);
    if (progress || ready) {
      std::lock_guard<std::mutex> hold(report);
      ++state.files_done;
      state.wells_done += wells_of(f.analysis);
      state.elapsed_s = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
      if (progress) progress(state);
      finished[static_cast<std::size_t>(i)] = 1;
      for (; ready && next_ready < out.size() && finished[next_ready]; ++next_ready) {
        BatchFile& g = out[next_ready];
        ready(g);
        if (!o.keep_data && (o.keep_data_until_ready || g.traces_from_analysis)) keep_results_only(g);
      }
    }
  });
  return out;
}

}  // namespace vzero
