// The readers' limits, at their edges: the longest line (16 MiB, LineSource's limit), the
// largest plate (1536 wells, AF48), the most lines of a file (2^31 - 1, stated, not written
// here), files over several buffer refills without a final newline, and a line kept by a
// reader while the buffer is refilled under it.
#include <algorithm>
#include <cstdio>
#include <filesystem>
#include <string>

#include "core/line_source.hpp"
#include "test_support.hpp"
#include "vzero/error.hpp"
#include "vzero/ingest.hpp"
#include "vzero/profile.hpp"
#include "vzero/run.hpp"

using namespace vzero::test;

namespace {

constexpr std::size_t k_block = std::size_t{1} << 24;  // a line and its end must be shorter (line_source.cpp)

std::string message_of(const std::string& text, const vzero::Profile& p) {
  try {
    vzero::read_run_text("input.csv", text, p);
    return "ok";
  } catch (const vzero::InputError& e) {
    return e.what();
  }
}

}  // namespace

TEST_CASE("a line of 16 MiB - 1 bytes is read; one of 16 MiB is refused with its line number") {
  auto p = vzero::load_profile("wide-generic");
  const std::string data = "Time [s],A1\n0,0.1\n30,0.2\n";
  std::string longest = "# " + std::string(k_block - 1 - 2, 'x');  // 2^24 - 1 bytes before the '\n'
  REQUIRE(longest.size() == k_block - 1);
  auto run = vzero::read_run_text("input.csv", longest + "\n" + data, p);
  CHECK(run.channels.at(0).reads() == 2);
  // One byte more: the line and its end must fit in 16 MiB - 1 bytes.
  CHECK(message_of("Note\n" + longest + "x\n" + data, p) ==
        "input.csv:2: line is longer than 16 MiB (the longest line vzero reads)");
  // With CRLF the '\r' counts towards the limit too.
  CHECK(message_of(longest + "\r\n" + data, p) ==
        "input.csv:1: line is longer than 16 MiB (the longest line vzero reads)");
}

TEST_CASE("hashing a file with an over-long line fails clearly instead of looping") {
  // LineSource::sha256() used to retry the over-long line for ever.
  TempDir dir;
  spit(dir / "long.csv", "a\n" + std::string(k_block + 10, 'y') + "\nb\n");
  try {
    vzero::detail::sha256_of_file(dir / "long.csv");
    FAIL("expected an InputError");
  } catch (const vzero::InputError& e) {
    CHECK(e.where().line == 2);
    CHECK(e.message() == "line is longer than 16 MiB (the longest line vzero reads)");
  }
}

TEST_CASE("a file past three read blocks without a final newline reads every row once, and ends") {
  // fast-cpp-csv-parser's LineReader, which LineSource replaced, read 32 MiB first, then
  // 16 MiB blocks on a read-ahead thread, and looked one byte past the data when the last
  // line had no '\n'. There sat a stale byte of an earlier block; when it was a '\n' the
  // reader returned lines that are not in the file and then waited for ever. Rows of 16
  // bytes (a divisor of the block) put a '\n' exactly there: the file is 3 blocks + r bytes,
  // its last row has no '\n', and the byte 16 MiB before the end is a '\n'. Before the fix:
  // "read time goes backwards … 2097213 s after 3145788 s" at a line 3145791 that the file
  // does not have. The case stays, for LineSource's refills.
  const std::string header = "Time [s],A1\n";
  const std::size_t target = 3 * k_block + 1000;
  const std::size_t rows = (target - header.size() + 1) / 16;
  std::string text = header;
  text.reserve(header.size() + rows * 16);
  char row[32];
  for (std::size_t t = 0; t < rows; ++t) {
    std::snprintf(row, sizeof row, "%08zu,0.5000\n", t);
    text += row;
  }
  text.pop_back();  // no final newline
  REQUIRE(text.size() > 3 * k_block);
  REQUIRE(text.size() < 4 * k_block);
  REQUIRE(text[text.size() - k_block] == '\n');

  auto p = vzero::load_profile("wide-generic");
  TempDir dir;
  spit(dir / "big.csv", text);
  for (int from_file = 0; from_file < 2; ++from_file) {
    CAPTURE(from_file);
    auto run = from_file ? vzero::read_run(dir / "big.csv", p) : vzero::read_run_text("big.csv", text, p);
    const auto& c = run.channels.at(0);
    CHECK(c.reads() == static_cast<int>(rows));
    CHECK(c.time_s.front() == 0.0);
    CHECK(c.time_s.back() == static_cast<double>(rows - 1));
  }
}

TEST_CASE("a grid header line whose next line straddles a buffer refill is quoted intact") {
  // LineSource reads 1 MiB at a time; when a line straddles a refill, its start is moved
  // into a new, larger buffer and the old one is freed. The grid reader kept a view of the
  // header line across that fetch and quoted it in "expected plate rows": freed memory
  // (a crash, or garbage in the message). Here the header's '\n' is the third byte before
  // 1 MiB, so the next line straddles the first refill.
  constexpr std::size_t k_refill = std::size_t{1} << 20;  // LineSource's bytes per read
  const std::string first = "Read 1 at 0:00:00\n\t1\nA\t0.5\n";
  const std::string second = "Read 2 at 0:00:30\n\t1\n";
  const std::size_t pad = k_refill - 2 - first.size() - second.size() - 3;  // "# " + pad + "\n"
  const std::string text = first + "# " + std::string(pad, 'p') + "\n" + second + "not a row\n";
  REQUIRE(text.find("\t1\nnot") + 2 == k_refill - 3);
  auto p = vzero::load_profile("grid-generic");
  TempDir dir;
  spit(dir / "input.csv", text);
  for (int from_file = 0; from_file < 2; ++from_file) {
    CAPTURE(from_file);
    try {
      from_file ? vzero::read_run(dir / "input.csv", p) : vzero::read_run_text(dir / "input.csv", text, p);
      FAIL("expected an InputError");
    } catch (const vzero::InputError& e) {
      CHECK(e.formatted() == (dir / "input.csv") +
                                 ":6: expected plate rows (A, B, …) after the header of the read at line 5\n"
                                 "  line 6: \t1\n"
                                 "  possible fix: check that the export is complete");
    }
  }
}

TEST_CASE("the largest plate is 1536 wells: AF48 is read, AG1 and A49 are not wells") {
  // ANSI/SLAS 4-2004: 1536 wells in 32 rows (A–Z, AA–AF) × 48 columns.
  auto p = vzero::load_profile("long-generic");
  auto run = vzero::read_run_text("input.csv", "well,time,value\nAF48,0,1\nAF48,30,2\nA1,0,3\n", p);
  CHECK(run.format.wells() == 1536);
  CHECK(run.format.rows == 32);
  CHECK(run.format.columns == 48);
  CHECK(!vzero::parse_well("AG1"));
  CHECK(!vzero::parse_well("A49"));
  CHECK(message_of("well,time,value\nAG1,0,1\n", p) ==
        "input.csv:2:1: expected a well name (A1 … AF48), found \"AG1\"");
}

TEST_CASE("a wide header may name all 1536 wells; a well named twice is refused") {
  auto p = vzero::load_profile("wide-generic");
  std::string header = "Time [s]", row0 = "0", row1 = "30";
  for (int r = 0; r < 32; ++r)
    for (int c = 0; c < 48; ++c) {
      header += "," + vzero::well_name({r, c});
      row0 += ",0.1";
      row1 += ",0.2";
    }
  auto run = vzero::read_run_text("input.csv", header + "\n" + row0 + "\n" + row1 + "\n", p);
  CHECK(run.channels.at(0).wells.size() == 1536);
  CHECK(run.format.wells() == 1536);
  CHECK(message_of(header + ",A1\n" + row0 + ",0.1\n", p).rfind("input.csv:1:", 0) == 0);
  CHECK(message_of(header + ",A1\n" + row0 + ",0.1\n", p)
            .find("well A1 appears twice in the header (fields 2 and 1538)") != std::string::npos);
}

TEST_CASE("profile detection reads a bounded start of the file, however long the file is") {
  // choose_profile (src/ingest.cpp) reads the first MiB (k_sniff_prefix_bytes), and further
  // only while its lines run past that, keeping at most 400 lines and 64 KiB besides the
  // longest line; lines are at most 16 MiB. So a NUL byte beyond that start is not seen by
  // detection, while reading the whole file finds it.
  TempDir dir;
  // The NUL is on the last line of each file.
  const auto nul_line = [](const std::string& t) { return static_cast<int>(std::count(t.begin(), t.end(), '\n')); };
  const auto check_detected_then_refused = [&](const std::string& name, const std::string& text) {
    CAPTURE(name);
    spit(dir / name, text);
    const auto choice = vzero::choose_profile(dir / name, "");
    CHECK(choice.detected);
    CHECK(choice.profile.name == "wide-generic");
    try {
      vzero::read_run(dir / name, choice.profile);
      FAIL("expected an InputError");
    } catch (const vzero::InputError& e) {
      CHECK(e.where().line == nul_line(text));
      CHECK(e.message() == "found a NUL byte; this is not a text export");
    }
  };
  // Short lines: 2 MiB of reads, then the NUL.
  std::string text = "Time [s],A1,A2\n";
  for (int t = 0; text.size() < 2 * 1024 * 1024; ++t) text += std::to_string(t) + ",0.1000,0.2000\n";
  check_detected_then_refused("short.csv", text + std::string(1, '\0') + "\n");
  // A preamble line of 2 MiB: past the first MiB, detection reads on, but only 400 lines.
  text = "# " + std::string(2 * 1024 * 1024, 'p') + "\nTime [s],A1,A2\n";
  for (int t = 0; t < 500; ++t) text += std::to_string(t) + ",0.1000,0.2000\n";
  check_detected_then_refused("preamble.csv", text + std::string(1, '\0') + "\n");
  // Lines of 15 MiB: detection stops at the third (64 KiB besides the longest line), so
  // it never meets the NUL on the fourth, and reports what the profiles found instead.
  const std::string huge = "# " + std::string(15 * 1024 * 1024, 'h') + "\n";
  spit(dir / "huge.csv", huge + huge + huge + std::string(1, '\0') + "\n");
  try {
    vzero::choose_profile(dir / "huge.csv", "");
    FAIL("expected an InputError");
  } catch (const vzero::InputError& e) {
    CHECK(e.message().rfind("no built-in profile reads this file; what each found:", 0) == 0);
  }
}
