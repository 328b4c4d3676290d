// Input files for the pipeline benchmark (bench_pipeline.cpp): simulated plates
// (tests/sim/plate_sim.hpp, invented scenario) written as wide, grid and long exports the
// built-in profiles read, and the plate map that goes with them. Header-only.
#pragma once

#include <cstdint>
#include <cstdio>
#include <stdexcept>
#include <string>

#include <fmt/format.h>

#include "../sim/plate_sim.hpp"
#include "vzero/run.hpp"

namespace vzero::bench {

// Plate layouts: rows × (sample + blank) columns.
inline sim::PlateSpec spec_for(int wells, int reads, double interval_s = 10) {
  sim::PlateSpec s;
  if (wells == 96) {
    s.rows = 8;
    s.sample_columns = 10;
    s.blank_columns = 2;
  } else if (wells == 384) {
    s.rows = 16;
    s.sample_columns = 22;
    s.blank_columns = 2;
  } else if (wells == 1536) {
    s.rows = 32;
    s.sample_columns = 44;
    s.blank_columns = 4;
  } else
    throw std::invalid_argument("wells must be 96, 384 or 1536");
  s.read_interval_s = {interval_s};
  s.run_min_s = s.run_max_s = (reads - 1) * interval_s + 0.5 * interval_s;  // exactly `reads` reads
  // One Km and one signal scale for every plate, so one --epsilon serves a whole batch:
  // 0.8 AU at Km = 100 µM is 0.008 AU/µM, i.e. ε·l = 8000 M⁻¹ with l = 1 cm.
  s.km_min_uM = s.km_max_uM = 100;
  s.signal_at_km_min = s.signal_at_km_max = 0.8;
  s.judge_measurable = false;  // the accuracy program's judgement, O(reads²) per well: not needed here
  return s;
}
constexpr double k_epsilon = 8000;  // M⁻¹·cm⁻¹ with path 1 cm (see spec_for)

// Buffered writer of one file with fmt.
class Out {
 public:
  explicit Out(const std::string& path) : f_(std::fopen(path.c_str(), "wb")) {
    if (!f_) throw std::runtime_error("cannot write " + path);
  }
  ~Out() {
    flush();
    std::fclose(f_);
  }
  Out(const Out&) = delete;
  Out& operator=(const Out&) = delete;
  template <class... A>
  void put(fmt::format_string<A...> f, A&&... a) {
    fmt::format_to(std::back_inserter(b_), f, std::forward<A>(a)...);
    if (b_.size() > (1u << 20)) flush();
  }
  void value(const sim::Plate& p, std::size_t w, std::size_t i) {
    if (p.status[w][i] == ReadStatus::overflow)
      put("OVER");
    else
      put("{:.4f}", p.signal[w][i]);
  }
  void flush() {
    std::fwrite(b_.data(), 1, b_.size(), f_);
    b_.clear();
  }

 private:
  std::FILE* f_;
  fmt::memory_buffer b_;
};

inline std::string name_of(const sim::Plate& p, int w) { return well_name(WellId{w / p.columns, w % p.columns}); }

inline void write_wide(const std::string& path, const sim::Plate& p) {
  Out o(path);
  o.put("# vzero benchmark plate (simulated, invented scenario)\nPlate ID: BENCH\n\nChannel: A405\nTime [s],Temp [C]");
  const int wells = p.rows * p.columns;
  for (int w = 0; w < wells; ++w) o.put(",{}", name_of(p, w));
  o.put("\n");
  for (std::size_t i = 0; i < p.time_s.size(); ++i) {
    o.put("{},25.0", p.time_s[i]);
    for (int w = 0; w < wells; ++w) {
      o.put(",");
      o.value(p, static_cast<std::size_t>(w), i);
    }
    o.put("\n");
  }
}

inline void write_grid(const std::string& path, const sim::Plate& p) {
  Out o(path);
  o.put("# vzero benchmark plate (simulated, invented scenario)\nPlate ID: BENCH\n\nChannel: A405\n");
  for (std::size_t i = 0; i < p.time_s.size(); ++i) {
    const auto t = static_cast<long>(p.time_s[i]);
    o.put("Read {} at {}:{:02}:{:02} (25.0 C)\n", i + 1, t / 3600, t / 60 % 60, t % 60);
    for (int c = 0; c < p.columns; ++c) o.put("\t{}", c + 1);
    o.put("\n");
    for (int r = 0; r < p.rows; ++r) {
      o.put("{}", row_label(r));
      for (int c = 0; c < p.columns; ++c) {
        o.put("\t");
        o.value(p, static_cast<std::size_t>(r * p.columns + c), i);
      }
      o.put("\n");
    }
    o.put("\n");
  }
}

// Time-major rows (every well at the first read, then the next read), as instruments that
// export observations usually write them.
inline void write_long(const std::string& path, const sim::Plate& p) {
  Out o(path);
  o.put("# vzero benchmark plate (simulated, invented scenario)\nwell,time_s,value\n");
  const int wells = p.rows * p.columns;
  std::vector<std::string> names;
  for (int w = 0; w < wells; ++w) names.push_back(name_of(p, w));
  for (std::size_t i = 0; i < p.time_s.size(); ++i) {
    for (int w = 0; w < wells; ++w) {
      o.put("{},{},", names[static_cast<std::size_t>(w)], p.time_s[i]);
      o.value(p, static_cast<std::size_t>(w), i);
      o.put("\n");
    }
  }
}

// Plate map: role, substrate (µM) and enzyme level (the replicate pairs share it).
inline void write_map(const std::string& path, const sim::Plate& p, const sim::PlateSpec& spec) {
  Out o(path);
  o.put("# vzero benchmark plate map (simulated, invented scenario)\nwell,role,substrate,enzyme\n");
  for (int w = 0; w < p.rows * p.columns; ++w) {
    const sim::WellTruth& t = p.truth[static_cast<std::size_t>(w)];
    const int col = w % p.columns;
    const double level = t.role == sim::Role::sample
                             ? spec.enzyme_levels[static_cast<std::size_t>(col / 2) % spec.enzyme_levels.size()]
                             : 0.0;
    o.put("{},{},{:.6g},{}\n", name_of(p, w), t.role == sim::Role::sample ? "sample" : "blank", t.s0_uM, level);
  }
}

// The benchmark's 96-well plate of 30 reads (spec_for(96, 30), seed 7 unless given) written
// as DIR/plate.csv (wide) with its plate map DIR/MAP; returns the plate, with its truth.
inline sim::Plate write_plate96(const std::string& dir, const std::string& map = "map.csv", std::uint64_t seed = 7) {
  const sim::PlateSpec spec = spec_for(96, 30);
  sim::Plate plate = sim::simulate_plate(spec, seed);
  write_wide(dir + "/plate.csv", plate);
  write_map(dir + "/" + map, plate, spec);
  return plate;
}

}  // namespace vzero::bench
