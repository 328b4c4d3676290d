// vzero_bench: speed and memory of the pipeline on simulated plates (tests/sim/plate_sim.hpp,
// invented scenario), with a small harness of our own (no benchmark library): every case
// runs in a forked child so that its peak memory (getrusage ru_maxrss) is its own, and each
// time is the best of --reps repetitions (the machine is shared; the best is the least
// disturbed).
//
//   vzero_bench [--dir DIR] [--reps N] [--sections LIST] [--vzero PATH] [--pandas SCRIPT]
//               [--long-rows N] [--big-read-only] [--quick]
//     --dir DIR         where the generated exports go (default: a new folder in $TMPDIR or /tmp)
//     --sections LIST   comma-separated: files, scaling, threads, batch, big (default: all)
//     --vzero PATH      the vzero program timed on the batch (default: the one built beside this)
//     --pandas SCRIPT   also time `python3 SCRIPT` (tests/bench/naive_pandas.py) on the same batch
//     --numpy SCRIPT    also time the second yardstick (tests/bench/numpy_theil_sen.py) on it
//     --long-rows N     rows of the big long-shape file (default 50,000,000)
//     --big-read-only   read the big inputs but do not analyse them (--long-read-only: the long file only)
//     --quick           small sizes, one repetition (a smoke test)
//     --write-plate W R write DIR/plate_WxR.csv (wide, W wells, R reads, seed 21) and DIR/map_W.csv,
//                       then stop (the report's size and memory are measured on such a plate)
// tests/bench/run.sh runs it with the pandas yardstick; docs/performance.md quotes it.
#include <fcntl.h>
#include <spawn.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>

#include <chrono>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <functional>
#include <string>
#include <thread>
#include <vector>

#include "bench_files.hpp"
#include "rates/robust.hpp"
#include "vzero/analysis.hpp"
#include "vzero/ingest.hpp"
#include "vzero/outputs.hpp"
#include "vzero/plate_map.hpp"
#include "vzero/summary.hpp"

extern char** environ;

namespace {

namespace fs = std::filesystem;
namespace sim = vzero::sim;
using Clock = std::chrono::steady_clock;

double since(Clock::time_point t0) { return std::chrono::duration<double>(Clock::now() - t0).count(); }

struct Config {
  std::string dir, vzero = VZERO_BINARY, pandas, numpy, python = "python3";
  std::vector<std::string> sections{"files", "scaling", "threads", "batch", "big"};
  int reps = 3;
  long long long_rows = 50'000'000;
  bool big_read_only = false, long_read_only = false, quick = false;
  int plate_wells = 0, plate_reads = 0;  // --write-plate
  bool wants(const std::string& s) const { return std::find(sections.begin(), sections.end(), s) != sections.end(); }
};

struct ChildResult {
  std::string out;
  double wall_s = 0;
  double maxrss_mb = 0;
  bool ok = false;
};

// Runs fn() in a forked child; its text comes back through a pipe with the child's peak RSS.
ChildResult in_child(const std::function<std::string()>& fn) {
  std::fflush(stdout);
  int fd[2];
  if (pipe(fd) != 0) throw std::runtime_error("pipe failed");
  const auto t0 = Clock::now();
  const pid_t pid = fork();
  if (pid == 0) {
    close(fd[0]);
    std::string text;
    int code = 0;
    try {
      text = fn();
    } catch (const std::exception& e) {
      text = std::string("error: ") + e.what();
      code = 1;
    }
    for (std::size_t off = 0; off < text.size();) {
      const ssize_t n = write(fd[1], text.data() + off, text.size() - off);
      if (n <= 0) break;
      off += static_cast<std::size_t>(n);
    }
    close(fd[1]);
    _exit(code);
  }
  close(fd[1]);
  ChildResult r;
  char buf[4096];
  ssize_t n = 0;
  while ((n = read(fd[0], buf, sizeof buf)) > 0) r.out.append(buf, static_cast<std::size_t>(n));
  close(fd[0]);
  int status = 0;
  rusage ru{};
  wait4(pid, &status, 0, &ru);
  r.wall_s = since(t0);
  r.maxrss_mb = static_cast<double>(ru.ru_maxrss) / 1024.0;
  r.ok = WIFEXITED(status) && WEXITSTATUS(status) == 0;
  return r;
}

// Runs a program (output to /dev/null); wall time and peak RSS.
ChildResult spawn(const std::vector<std::string>& args) {
  std::vector<char*> argv;
  for (const auto& a : args) argv.push_back(const_cast<char*>(a.c_str()));
  argv.push_back(nullptr);
  posix_spawn_file_actions_t fa;
  posix_spawn_file_actions_init(&fa);
  posix_spawn_file_actions_addopen(&fa, 1, "/dev/null", O_WRONLY, 0);
  posix_spawn_file_actions_addopen(&fa, 2, "/dev/null", O_WRONLY, 0);
  const auto t0 = Clock::now();
  pid_t pid = 0;
  ChildResult r;
  if (posix_spawnp(&pid, argv[0], &fa, nullptr, argv.data(), environ) != 0) return r;
  posix_spawn_file_actions_destroy(&fa);
  int status = 0;
  rusage ru{};
  wait4(pid, &status, 0, &ru);
  r.wall_s = since(t0);
  r.maxrss_mb = static_cast<double>(ru.ru_maxrss) / 1024.0;
  r.ok = WIFEXITED(status) && WEXITSTATUS(status) == 0;
  return r;
}

std::string load_average() {
  std::ifstream f("/proc/loadavg");
  std::string a, b, c;
  f >> a >> b >> c;
  return a + " " + b + " " + c;
}

std::string cpu_model() {
  std::ifstream f("/proc/cpuinfo");
  std::string line;
  while (std::getline(f, line))
    if (line.rfind("model name", 0) == 0) return line.substr(line.find(':') + 2);
  return "unknown CPU";
}

double file_mb(const std::string& p) { return static_cast<double>(fs::file_size(p)) / 1e6; }

vzero::AnalysisOptions analysis_options(int threads) {
  vzero::AnalysisOptions o;
  o.convert.mode = vzero::ConvertMode::beer_lambert;
  o.convert.epsilon_per_m_cm = vzero::bench::k_epsilon;
  o.convert.path_cm = 1;
  o.rates.signal_ceiling = 2.5;  // the simulated detector's linear limit
  o.threads = threads;
  return o;
}

// Best of `reps` runs of fn, seconds.
double best_of(int reps, const std::function<void()>& fn) {
  double best = INFINITY;
  for (int i = 0; i < reps; ++i) {
    const auto t0 = Clock::now();
    fn();
    best = std::min(best, since(t0));
  }
  return best;
}

std::string generate(const std::string& path, const std::string& shape, int wells, int reads, std::uint64_t seed,
                     const std::string& map_path = "", double interval_s = 10) {
  const sim::PlateSpec spec = vzero::bench::spec_for(wells, reads, interval_s);
  const sim::Plate p = sim::simulate_plate(spec, seed);
  if (shape == "wide")
    vzero::bench::write_wide(path, p);
  else if (shape == "grid")
    vzero::bench::write_grid(path, p);
  else
    vzero::bench::write_long(path, p);
  if (!map_path.empty()) vzero::bench::write_map(map_path, p, spec);
  return {};
}

std::string map_path(const Config& c, int wells) { return fmt::format("{}/map_{}.csv", c.dir, wells); }

void ensure_map(const Config& c, int wells) {
  const std::string m = map_path(c, wells);
  if (fs::exists(m)) return;
  const sim::PlateSpec spec = vzero::bench::spec_for(wells, 5);
  vzero::bench::write_map(m, sim::simulate_plate(spec, 1), spec);
}

// One file through every stage on one thread.
void section_files(const Config& c) {
  fmt::print("\n1. One file, stage by stage, 1 thread (detect = choose the profile from the file's start)\n");
  fmt::print("{:<5} {:>5} {:>5} {:>7} | {:>8} {:>8} {:>7} | {:>9} {:>9} | {:>8} | {:>8} {:>7}\n", "shape", "wells",
             "reads", "MB", "detect", "read ms", "MB/s", "analyse", "wells/s", "write ms", "total ms", "peak MB");
  const std::vector<int> wells = c.quick ? std::vector<int>{96, 1536} : std::vector<int>{96, 384, 1536};
  const std::vector<int> reads = c.quick ? std::vector<int>{30} : std::vector<int>{30, 120, 600};
  for (const std::string shape : {"wide", "grid", "long"}) {
    for (int w : wells) {
      ensure_map(c, w);
      for (int n : reads) {
        const std::string path = fmt::format("{}/{}_{}x{}.{}", c.dir, shape, w, n, shape == "grid" ? "txt" : "csv");
        if (!fs::exists(path)) in_child([&] { return generate(path, shape, w, n, 7); });
        const ChildResult r = in_child([&] {
          vzero::PlateMap map = vzero::read_plate_map(map_path(c, w));
          vzero::ProfileChoice choice;
          const double t_detect = best_of(c.reps, [&] { choice = vzero::choose_profile(path, ""); });
          vzero::Run run;
          const double t_read = best_of(c.reps, [&] { run = vzero::read_run(path, choice.profile); });
          // The analysis sits in a one-element vector, so formatting does not time a copy of it.
          std::vector<vzero::RunAnalysis> a(1);
          const auto opt = analysis_options(1);
          const double t_an = best_of(c.reps, [&] { a[0] = vzero::analyse_run(run, map, opt); });
          std::string out;
          const double t_out = best_of(c.reps, [&] {
            out = vzero::rates_csv(a, map.columns, false);
            out += vzero::summary_csv(vzero::summarise(a, map.columns, {"replicate"}));
          });
          return fmt::format("{} {} {} {}", t_detect, t_read, t_an, t_out);
        });
        double td = 0, tr = 0, ta = 0, to = 0;
        if (!r.ok || std::sscanf(r.out.c_str(), "%lf %lf %lf %lf", &td, &tr, &ta, &to) != 4) {
          fmt::print("{:<5} {:>5} {:>5}  failed: {}\n", shape, w, n, r.out);
          continue;
        }
        const double mb = file_mb(path);
        fmt::print(
            "{:<5} {:>5} {:>5} {:>7.2f} | {:>8.2f} {:>8.2f} {:>7.0f} | {:>9.2f} {:>9.0f} | {:>8.2f} | {:>8.1f} "
            "{:>7.1f}\n",
            shape, w, n, mb, td * 1e3, tr * 1e3, mb / tr, ta * 1e3, w / ta, to * 1e3, (td + tr + ta + to) * 1e3,
            r.maxrss_mb);
      }
    }
  }
}

// A run built in memory from a simulated plate (no file).
vzero::Run run_from(const sim::Plate& p) {
  vzero::Run run;
  run.source = "simulated";
  run.format = *vzero::plate_format_for(p.rows * p.columns);
  vzero::Channel ch;
  ch.name = "A405";
  ch.unit = "AU";
  ch.quantity = vzero::Quantity::absorbance;
  ch.time_s = p.time_s;
  const auto reads = static_cast<Eigen::Index>(p.time_s.size());
  const auto wells = static_cast<Eigen::Index>(p.signal.size());
  ch.values.resize(reads, wells);
  ch.status.resize(reads, wells);
  for (Eigen::Index j = 0; j < wells; ++j) {
    ch.wells.push_back(static_cast<int>(j));
    for (Eigen::Index i = 0; i < reads; ++i) {
      ch.values(i, j) = p.signal[static_cast<std::size_t>(j)][static_cast<std::size_t>(i)];
      ch.status(i, j) = p.status[static_cast<std::size_t>(j)][static_cast<std::size_t>(i)];
    }
  }
  run.channels.push_back(std::move(ch));
  return run;
}

// Cost of the rate finder per well against reads per well.
void section_scaling(const Config& c) {
  fmt::print(
      "\n2. Rate finder cost per well against reads per well n (default options: auto window, Theil–Sen; 1 thread)\n");
  fmt::print("   straight: noisy straight traces, the window takes every read (the worst case for Theil–Sen);\n");
  fmt::print("   plate: analyse_run on a simulated 96-well plate with n reads (blank, Beer–Lambert, rates);\n");
  fmt::print("   exponent: log(cost ratio)/log(n ratio) from the previous row (1 = linear, n·log n ≈ 1.1)\n");
  fmt::print("{:>6} | {:>12} {:>9} {:>10} {:>8} | {:>12} {:>8} | {:>14}\n", "n", "straight µs", "window", "ns/(n·lg n)",
             "exponent", "plate µs/well", "exponent", "theil_sen µs");
  const std::vector<int> ns =
      c.quick ? std::vector<int>{30, 60, 240} : std::vector<int>{30, 60, 120, 240, 600, 1000, 2000};
  double prev_s = NAN, prev_p = NAN;
  int prev_n = 0;
  for (int n : ns) {
    sim::Rng rng(static_cast<std::uint64_t>(n));
    std::vector<double> t(static_cast<std::size_t>(n)), y(t.size());
    std::vector<vzero::ReadStatus> st(t.size(), vzero::ReadStatus::ok);
    vzero::RateOptions opt;
    const double budget_s = c.quick ? 0.05 : 0.3;
    int wells = 0;
    long window = 0;
    double spent = 0;
    while (wells < 5 || spent < budget_s) {
      for (int i = 0; i < n; ++i) {
        t[static_cast<std::size_t>(i)] = 10.0 * i;
        y[static_cast<std::size_t>(i)] = 0.05 + 2e-5 * t[static_cast<std::size_t>(i)] + 0.001 * rng.normal();
      }
      vzero::TraceView tv{t.data(), y.data(), nullptr, st.data(), n};
      tv.noise_sd = 0.001;
      const auto t0 = Clock::now();
      const vzero::RateResult r = vzero::find_rate(tv, opt);
      spent += since(t0);
      window += r.n_points;
      ++wells;
    }
    const double per_straight = spent / wells;
    const double ts = best_of(c.quick ? 1 : 5, [&] { (void)vzero::detail::theil_sen(t.data(), y.data(), n); });
    const vzero::Run run = run_from(sim::simulate_plate(vzero::bench::spec_for(96, n), 11));
    ensure_map(c, 96);
    const vzero::PlateMap map = vzero::read_plate_map(map_path(c, 96));
    const auto aopt = analysis_options(1);
    const double per_plate = best_of(c.quick ? 1 : 3, [&] { (void)vzero::analyse_run(run, map, aopt); }) / 96;
    const double nlogn = n * std::log2(static_cast<double>(n));
    auto expo = [&](double now, double prev) {
      return prev_n ? fmt::format("{:.2f}", std::log(now / prev) / std::log(static_cast<double>(n) / prev_n))
                    : std::string("");
    };
    fmt::print("{:>6} | {:>12.1f} {:>9.0f} {:>10.1f} {:>8} | {:>12.1f} {:>8} | {:>14.1f}\n", n, per_straight * 1e6,
               static_cast<double>(window) / wells, per_straight * 1e9 / nlogn, expo(per_straight, prev_s),
               per_plate * 1e6, expo(per_plate, prev_p), ts * 1e6);
    prev_s = per_straight;
    prev_p = per_plate;
    prev_n = n;
  }
}

void section_threads(const Config& c) {
  const int n = c.quick ? 60 : 600;
  fmt::print("\n3. Threads: analyse_run on one 1536-well plate with {} reads (wells in parallel)\n", n);
  const vzero::Run run = run_from(sim::simulate_plate(vzero::bench::spec_for(1536, n), 5));
  ensure_map(c, 1536);
  const vzero::PlateMap map = vzero::read_plate_map(map_path(c, 1536));
  double one = 0;
  for (int th : {1, 2}) {
    const auto opt = analysis_options(th);
    const double s = best_of(c.reps, [&] { (void)vzero::analyse_run(run, map, opt); });
    if (th == 1) one = s;
    fmt::print("   threads {}: {:.1f} ms, {:.0f} wells/s, speed-up {:.2f}\n", th, s * 1e3, 1536 / s, one / s);
  }
}

std::vector<std::string> batch_files(const Config& c, int plates) {
  std::vector<std::string> files;
  fs::create_directories(c.dir + "/batch");
  for (int k = 0; k < plates; ++k) files.push_back(fmt::format("{}/batch/plate_{:03}.csv", c.dir, k + 1));
  return files;
}

void section_batch(const Config& c) {
  const int plates = c.quick ? 10 : 100;
  fmt::print("\n4. Batch: {} plates of 1536 wells × 60 reads (wide exports)\n", plates);
  const auto files = batch_files(c, plates);
  ensure_map(c, 1536);
  if (!fs::exists(files.back()))
    in_child([&] {
      for (std::size_t k = 0; k < files.size(); ++k) generate(files[k], "wide", 1536, 60, 1000 + k);
      return std::string();
    });
  double mb = 0;
  for (const auto& f : files) mb += file_mb(f);
  fmt::print("   {:.1f} MB of exports, {} wells; map {}\n", mb, plates * 1536, map_path(c, 1536));
  // Library stages, files one after the other on one thread.
  const ChildResult lib = in_child([&] {
    const vzero::PlateMap map = vzero::read_plate_map(map_path(c, 1536));
    double td = 0, tr = 0, ta = 0, to = 0;
    for (const auto& f : files) {
      auto t0 = Clock::now();
      const vzero::ProfileChoice ch = vzero::choose_profile(f, "");
      td += since(t0);
      t0 = Clock::now();
      const vzero::Run run = vzero::read_run(f, ch.profile);
      tr += since(t0);
      t0 = Clock::now();
      std::vector<vzero::RunAnalysis> a;
      a.push_back(vzero::analyse_run(run, map, analysis_options(1)));
      ta += since(t0);
      t0 = Clock::now();
      (void)vzero::rates_csv(a, map.columns, false);
      to += since(t0);
    }
    return fmt::format("{} {} {} {}", td, tr, ta, to);
  });
  double td = 0, tr = 0, ta = 0, to = 0;
  if (lib.ok && std::sscanf(lib.out.c_str(), "%lf %lf %lf %lf", &td, &tr, &ta, &to) == 4) {
    fmt::print(
        "   library, 1 thread, file by file: detect {:.2f} s, read {:.2f} s ({:.0f} MB/s), analyse {:.2f} s "
        "({:.0f} wells/s), rates rows {:.2f} s; peak {:.0f} MB\n",
        td, tr, mb / tr, ta, plates * 1536 / ta, to, lib.maxrss_mb);
  } else {
    fmt::print("   library run failed: {}\n", lib.out);
  }
  // The real program end to end, and the pandas yardstick, alternating so that both see the
  // same machine load.
  const std::string out = c.dir + "/out";
  fs::create_directories(out);
  auto cli = [&](int threads) {
    std::vector<std::string> a{c.vzero, "rates"};
    a.insert(a.end(), files.begin(), files.end());
    for (const std::string& s : std::vector<std::string>{
             "--layout", map_path(c, 1536), "--epsilon", fmt::format("{}", vzero::bench::k_epsilon), "--path-cm", "1",
             "--signal-ceiling", "2.5", "-o", out + "/rates.csv", "--summary", out + "/summary.csv", "--quiet",
             "--threads", std::to_string(threads)})
      a.push_back(s);
    return spawn(a);
  };
  // The yardstick's job asked of vzero: a slope over the first 10 reads by least squares,
  // no summary (vzero still screens spikes, applies its outlier rule and writes every column).
  auto cli_leading = [&](int threads) {
    std::vector<std::string> a{c.vzero, "rates"};
    a.insert(a.end(), files.begin(), files.end());
    for (const std::string& s : std::vector<std::string>{
             "--layout", map_path(c, 1536), "--epsilon", fmt::format("{}", vzero::bench::k_epsilon), "--path-cm", "1",
             "--signal-ceiling", "2.5", "--window", "leading", "--min-points", "10", "--estimator", "ols", "-o",
             out + "/rates_leading.csv", "--quiet", "--threads", std::to_string(threads)})
      a.push_back(s);
    return spawn(a);
  };
  auto pandas = [&] {
    std::vector<std::string> a{c.python, c.pandas, "--layout", map_path(c, 1536), "-o", out + "/naive.csv"};
    a.insert(a.end(), files.begin(), files.end());
    return spawn(a);
  };
  auto numpy = [&] {
    std::vector<std::string> a{c.python, c.numpy, "--layout", map_path(c, 1536), "-o", out + "/theil_sen.csv"};
    a.insert(a.end(), files.begin(), files.end());
    return spawn(a);
  };
  ChildResult best1, best2, bestp, bestl1, bestl2, bestn;
  best1.wall_s = best2.wall_s = bestp.wall_s = bestl1.wall_s = bestl2.wall_s = bestn.wall_s = INFINITY;
  auto keep = [](ChildResult& best, const ChildResult& r) {
    if (r.ok && r.wall_s < best.wall_s) best = r;
  };
  for (int i = 0; i < c.reps; ++i) {
    keep(best1, cli(1));
    keep(best2, cli(2));
    keep(bestl1, cli_leading(1));
    keep(bestl2, cli_leading(2));
    if (!c.pandas.empty()) keep(bestp, pandas());
    if (!c.numpy.empty()) keep(bestn, numpy());
  }
  auto line = [&](const char* what, const ChildResult& r) {
    if (!std::isfinite(r.wall_s))
      fmt::print("   {:<44} failed\n", what);
    else
      fmt::print("   {:<44} {:>7.2f} s  {:>7.0f} wells/s  {:>6.1f} MB/s  peak {:>6.0f} MB\n", what, r.wall_s,
                 plates * 1536 / r.wall_s, mb / r.wall_s, r.maxrss_mb);
  };
  line("vzero rates --threads 1 (rates.csv + summary)", best1);
  line("vzero rates --threads 2 (rates.csv + summary)", best2);
  line("vzero, yardstick's job (first 10, OLS), 1 thread", bestl1);
  line("vzero, yardstick's job (first 10, OLS), 2 threads", bestl2);
  if (!c.pandas.empty()) {
    line("pandas + numpy naive first-10-read slope", bestp);
    if (std::isfinite(best2.wall_s) && std::isfinite(bestp.wall_s))
      fmt::print("   vzero (2 threads) is {:.1f}x faster than the pandas yardstick ({:.1f}x on 1 thread)\n",
                 bestp.wall_s / best2.wall_s, bestp.wall_s / best1.wall_s);
    if (std::isfinite(bestl2.wall_s) && std::isfinite(bestp.wall_s))
      fmt::print("   doing the yardstick's job, vzero is {:.1f}x faster on 2 threads ({:.1f}x on 1 thread)\n",
                 bestp.wall_s / bestl2.wall_s, bestp.wall_s / bestl1.wall_s);
  }
  if (!c.numpy.empty()) {
    line("numpy Theil-Sen slope of the first 10 reads", bestn);
    if (std::isfinite(best2.wall_s) && std::isfinite(bestn.wall_s))
      fmt::print("   vzero (2 threads) is {:.1f}x faster than the numpy Theil-Sen yardstick ({:.1f}x on 1 thread)\n",
                 bestn.wall_s / best2.wall_s, bestn.wall_s / best1.wall_s);
  }
}

void section_big(const Config& c) {
  fmt::print("\n5. Big inputs (2 threads{})\n", c.big_read_only ? ", read only" : "");
  ensure_map(c, 1536);
  const int n_big = c.quick ? 300 : 2000;
  const std::string wide = fmt::format("{}/big_wide_1536x{}.csv", c.dir, n_big);
  if (!fs::exists(wide)) in_child([&] { return generate(wide, "wide", 1536, n_big, 21); });
  // The long file: 1536 wells, a read every second, as many reads as the rows ask for.
  const int long_reads = static_cast<int>((c.quick ? 2'000'000LL : c.long_rows) / 1536);
  const std::string lng = fmt::format("{}/big_long_{}rows.csv", c.dir, 1536LL * long_reads);
  if (!fs::exists(lng)) {
    const ChildResult g = in_child([&] { return generate(lng, "long", 1536, long_reads, 22, "", 1.0); });
    fmt::print("   generated {} in {:.0f} s\n", lng, g.wall_s);
  }
  for (const auto& [path, label] :
       {std::pair{wide, "wide 1536 wells × " + std::to_string(n_big) + " reads"},
        std::pair{lng, fmt::format("long {} rows (1536 wells × {} reads)", 1536LL * long_reads, long_reads)}}) {
    const ChildResult r = in_child([&] {
      const vzero::PlateMap map = vzero::read_plate_map(map_path(c, 1536));
      auto t0 = Clock::now();
      const vzero::ProfileChoice ch = vzero::choose_profile(path, "");
      const vzero::Run run = vzero::read_run(path, ch.profile);
      const double t_read = since(t0);
      rusage ru{};
      getrusage(RUSAGE_SELF, &ru);
      const double rss_read = static_cast<double>(ru.ru_maxrss) / 1024.0;
      if (c.big_read_only || (c.long_read_only && path == lng)) return fmt::format("{} {} nan nan", t_read, rss_read);
      t0 = Clock::now();
      std::vector<vzero::RunAnalysis> a;
      a.push_back(vzero::analyse_run(run, map, analysis_options(2)));
      const double t_an = since(t0);
      t0 = Clock::now();
      (void)vzero::rates_csv(a, map.columns, false);
      return fmt::format("{} {} {} {}", t_read, rss_read, t_an, since(t0));
    });
    double tr = 0, rr = 0, ta = 0, to = 0;
    if (!r.ok || std::sscanf(r.out.c_str(), "%lf %lf %lf %lf", &tr, &rr, &ta, &to) != 4) {
      fmt::print("   {}: failed: {}\n", label, r.out);
      continue;
    }
    const double mb = file_mb(path);
    fmt::print("   {}: {:.0f} MB; read {:.2f} s ({:.0f} MB/s, peak {:.0f} MB after reading)", label, mb, tr, mb / tr,
               rr);
    if (std::isfinite(ta)) fmt::print("; analyse {:.2f} s ({:.0f} wells/s); rates rows {:.2f} s", ta, 1536 / ta, to);
    fmt::print("; peak {:.0f} MB\n", r.maxrss_mb);
  }
}

}  // namespace

int main(int argc, char** argv) {
  Config c;
  for (int i = 1; i < argc; ++i) {
    const std::string a = argv[i];
    auto next = [&]() -> std::string {
      if (i + 1 >= argc) throw std::invalid_argument(a + " needs a value");
      return argv[++i];
    };
    if (a == "--dir")
      c.dir = next();
    else if (a == "--reps")
      c.reps = std::max(1, std::stoi(next()));
    else if (a == "--vzero")
      c.vzero = next();
    else if (a == "--pandas")
      c.pandas = next();
    else if (a == "--numpy")
      c.numpy = next();
    else if (a == "--python")
      c.python = next();
    else if (a == "--long-rows")
      c.long_rows = std::stoll(next());
    else if (a == "--big-read-only")
      c.big_read_only = true;
    else if (a == "--long-read-only")
      c.long_read_only = true;
    else if (a == "--write-plate") {
      c.plate_wells = std::stoi(next());
      c.plate_reads = std::stoi(next());
    } else if (a == "--quick") {
      c.quick = true;
      c.reps = 1;
    } else if (a == "--sections") {
      c.sections.clear();
      std::string s = next();
      for (std::size_t p = 0; p <= s.size();) {
        const std::size_t q = std::min(s.find(',', p), s.size());
        c.sections.push_back(s.substr(p, q - p));
        p = q + 1;
      }
    } else {
      std::fprintf(stderr,
                   "usage: vzero_bench [--dir DIR] [--reps N] [--sections files,scaling,threads,batch,big]\n"
                   "       [--vzero PATH] [--pandas SCRIPT] [--numpy SCRIPT] [--python PATH] [--long-rows N] [--big-read-only]\n"
                   "       [--long-read-only] [--quick] [--write-plate WELLS READS]\n");
      return 2;
    }
  }
  if (c.dir.empty()) {
    const char* tmp = std::getenv("TMPDIR");
    std::string tmpl = std::string(tmp && *tmp ? tmp : "/tmp") + "/vzero-bench-XXXXXX";
    if (!mkdtemp(tmpl.data())) {
      std::perror("mkdtemp");
      return 1;
    }
    c.dir = tmpl;
  }
  fs::create_directories(c.dir);
  if (c.plate_wells > 0) {
    const std::string path = fmt::format("{}/plate_{}x{}.csv", c.dir, c.plate_wells, c.plate_reads);
    generate(path, "wide", c.plate_wells, c.plate_reads, 21, map_path(c, c.plate_wells));
    fmt::print("wrote {} and {}\n", path, map_path(c, c.plate_wells));
    return 0;
  }
  fmt::print("vzero_bench: the pipeline on simulated plates (tests/sim/plate_sim.hpp, invented scenario)\n");
  fmt::print("machine: {}, {} hardware threads; load average at start {}\n", cpu_model(),
             std::thread::hardware_concurrency(), load_average());
  fmt::print("files in {}; times are the best of {} runs\n", c.dir, c.reps);
  const auto t0 = Clock::now();
  if (c.wants("files")) section_files(c);
  if (c.wants("scaling")) section_scaling(c);
  if (c.wants("threads")) section_threads(c);
  if (c.wants("batch")) section_batch(c);
  if (c.wants("big")) section_big(c);
  fmt::print("\ndone in {:.0f} s; load average at end {}\n", since(t0), load_average());
  return 0;
}
