// libFuzzer target: assay method TOML (parse_method) with the rates option names as keys.
// Build and run: see tests/fuzz/README.md.
#include <cstdio>
#include <cstdlib>

#include "fuzz/fuzz_bodies.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  std::string why = vzero::fuzz::fuzz_method(vzero::fuzz::as_text(data, size));
  if (!why.empty()) {
    std::fprintf(stderr, "vzero invariant broken: %s\n", why.c_str());
    std::abort();
  }
  return 0;
}
