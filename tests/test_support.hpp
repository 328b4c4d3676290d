// Helpers shared by the doctest programs.
#pragma once

#include <doctest/doctest.h>

#include <cmath>
#include <string>

// Relative tolerance, independent of magnitude (doctest's Approx has an absolute floor
// of ~1e-5 through its default scale of 1; see shared REFERENCES.md §0).
#define CHECK_REL(actual, expected, rtol) \
  CHECK((actual) == doctest::Approx(expected).epsilon(rtol).scale(0.0))
#define REQUIRE_REL(actual, expected, rtol) \
  REQUIRE((actual) == doctest::Approx(expected).epsilon(rtol).scale(0.0))
// For expected values that are exactly 0, or absolute tolerances.
#define CHECK_ABS(actual, expected, atol) CHECK(std::fabs((actual) - (expected)) <= (atol))

namespace vzero::test {

// Path of a file under tests/data.
inline std::string data(const std::string& name) { return std::string(VZERO_TEST_DATA) + "/" + name; }
// Path of a file in the source tree (e.g. "demo-data/hydrolase_wide.csv").
inline std::string source(const std::string& name) { return std::string(VZERO_SOURCE_DIR) + "/" + name; }

}  // namespace vzero::test
