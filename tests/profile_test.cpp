// Instrument profiles: every built-in profile loads; bad profiles give exact messages.
#include "vzero/profile.hpp"
#include "test_support.hpp"
#include "vzero/error.hpp"

using namespace vzero;

namespace {
std::string message_of(const std::string& toml) {
  try {
    parse_profile(toml, "p.toml", "p");
  } catch (const InputError& e) {
    return e.formatted();
  }
  return "no error";
}
}  // namespace

TEST_CASE("every built-in profile loads and validates") {
  auto names = builtin_profile_names();
  CHECK(names.size() >= 5);
  for (const auto& n : names) {
    CAPTURE(n);
    Profile p = load_profile(n);
    CHECK(p.name == n);
    CHECK(p.validate().empty());
  }
  CHECK(load_profile("wide-semicolon-comma").decimal == ',');
  CHECK(load_profile("wide-semicolon-comma").delimiter == ';');
  CHECK(load_profile("grid-generic").shape == Shape::grid);
}

TEST_CASE("profile errors point at the key") {
  CHECK(message_of("shape = \"wide\"\ncolour = \"red\"\n") ==
        "p.toml:2:1: unknown profile key `colour`\n"
        "  possible fix: use one of: capture, columns, decimal, delimiter, description, grid, missing, name, "
        "overflow, plate, section, shape, signal, time_unit");
  CHECK(message_of("shape = \"wide\"\n[columns]\ntime = 3\n") ==
        "p.toml:3:8: profile key `columns.time` must be a list of strings\n"
        "  possible fix: write time = [\"...\", \"...\"]");
  CHECK(message_of("shape = \"wide\"\n[[section]]\nlabel = '(unclosed'\n") ==
        "p.toml:3:9: profile key `section.label` is not a valid RE2 regex: missing ): (unclosed\n"
        "  possible fix: fix the regex (RE2 syntax: no look-around or back-references)");
  CHECK(message_of("shape = \"round\"\n") ==
        "p.toml:1:9: profile key `shape` is \"round\"; expected \"wide\", \"grid\" or \"long\"\n"
        "  possible fix: set shape to \"wide\", \"grid\" or \"long\"");
  CHECK(message_of("shape = \"grid\"\n") ==
        "p.toml:1:1: a grid profile needs [grid] read_label\n"
        "  possible fix: add [grid] read_label = '<regex whose group 1 is the read time>'");
  CHECK(message_of("shape = \"wide\"\nplate = 100\n") ==
        "p.toml:2:9: profile key `plate` is \"100\"; expected 0 (infer) or one of 6, 12, 24, 48, 96, 384, 1536\n"
        "  possible fix: set plate to 0 (infer) or one of 6, 12, 24, 48, 96, 384, 1536");
  CHECK(message_of("shape = wide\n").rfind("p.toml:1:9: the profile is not valid TOML", 0) == 0);
}

TEST_CASE("unknown profile names list the built-in ones") {
  try {
    load_profile("no-such-profile");
    FAIL("expected an error");
  } catch (const InputError& e) {
    CHECK(std::string(e.what()).find("no profile named \"no-such-profile\" and no such file") != std::string::npos);
    CHECK(e.fixes().at(0).find("wide-generic") != std::string::npos);
  }
}
