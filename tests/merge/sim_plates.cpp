// Writes the benchmark's simulated plates (tests/bench/bench_files.hpp, tests/sim/plate_sim.hpp:
// an invented scenario, seeded, so the same files every time) for the merge test:
//   merge_sim_plates DIR PLATES WELLS READS
// DIR/plate_001.csv … (plate k from seed 1000 + k as the benchmark's batch; every third plate
// written in the grid shape and every third in the long shape, so that the runs read all three)
// and DIR/map_WELLS.csv (the benchmark's plate map, seed 1).
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <string>

#include <fmt/format.h>

#include "bench/bench_files.hpp"

namespace sim = vzero::sim;

int main(int argc, char** argv) {
  if (argc != 5) {
    std::fprintf(stderr, "usage: merge_sim_plates DIR PLATES WELLS READS\n");
    return 2;
  }
  const std::string dir = argv[1];
  const int plates = std::atoi(argv[2]), wells = std::atoi(argv[3]), reads = std::atoi(argv[4]);
  std::filesystem::create_directories(dir);
  const sim::PlateSpec spec = vzero::bench::spec_for(wells, reads);
  vzero::bench::write_map(fmt::format("{}/map_{}.csv", dir, wells), sim::simulate_plate(spec, 1), spec);
  for (int k = 0; k < plates; ++k) {
    const sim::Plate p = sim::simulate_plate(spec, 1000 + static_cast<std::uint64_t>(k));
    const std::string path = fmt::format("{}/plate_{:03}.{}", dir, k + 1, k % 3 == 1 ? "txt" : "csv");
    if (k % 3 == 0)
      vzero::bench::write_wide(path, p);
    else if (k % 3 == 1)
      vzero::bench::write_grid(path, p);
    else
      vzero::bench::write_long(path, p);
  }
  return 0;
}
