// libFuzzer target: plate map, tidy and grid forms (parse_plate_map), then check_plate_map against a 96-well run.
// Build and run: see tests/fuzz/README.md.
#include <cstdio>
#include <cstdlib>

#include "fuzz/fuzz_bodies.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  std::string why = vzero::fuzz::fuzz_plate_map(vzero::fuzz::as_text(data, size));
  if (!why.empty()) {
    std::fprintf(stderr, "vzero invariant broken: %s\n", why.c_str());
    std::abort();
  }
  return 0;
}
