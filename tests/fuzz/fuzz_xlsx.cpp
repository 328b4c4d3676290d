// libFuzzer target: .xlsx workbooks (render_workbook: zip container, workbook parts, sheet
// cells), then every built-in profile on the rendered sheet. Build and run: tests/fuzz/README.md.
#include <cstdio>
#include <cstdlib>

#include "fuzz/fuzz_bodies.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  std::string why = vzero::fuzz::fuzz_xlsx(vzero::fuzz::as_text(data, size));
  if (!why.empty()) {
    std::fprintf(stderr, "vzero invariant broken: %s\n", why.c_str());
    std::abort();
  }
  return 0;
}
