// libFuzzer target: shape auto-detection (choose_profile with no --profile), then read_run with the chosen profile.
// Build and run: see tests/fuzz/README.md.
#include <cstdio>
#include <cstdlib>

#include "fuzz/fuzz_bodies.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  std::string why = vzero::fuzz::fuzz_detect(vzero::fuzz::as_text(data, size));
  if (!why.empty()) {
    std::fprintf(stderr, "vzero invariant broken: %s\n", why.c_str());
    std::abort();
  }
  return 0;
}
