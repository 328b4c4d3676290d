// The line reader's line ends: LF, CRLF, and lone CR (old Mac files), read the same from
// memory and from a file, across buffer refills; where a NUL byte is reported.
#include <string>
#include <vector>

#include "core/line_source.hpp"
#include "test_support.hpp"
#include "vzero/error.hpp"

using namespace vzero::test;
using vzero::detail::LineSource;

namespace {

// Every line of `text`, as LineSource gives them (copied: a line's view lives until the
// next call).
std::vector<std::string> lines_of(const std::string& text) {
  LineSource src("t.csv", text);
  std::vector<std::string> out;
  std::string_view line;
  while (src.next(line)) out.emplace_back(line);
  return out;
}

std::vector<std::string> lines_of_file(const std::string& text) {
  TempDir dir;
  spit(dir / "t.csv", text);
  LineSource src(dir / "t.csv");
  std::vector<std::string> out;
  std::string_view line;
  while (src.next(line)) out.emplace_back(line);
  return out;
}

using Lines = std::vector<std::string>;

}  // namespace

TEST_CASE("LF, CRLF and lone-CR line ends give the same lines") {
  const Lines want{"Time [s],A1", "0,0.1", "", "30,0.2"};
  for (const std::string& text :
       {std::string("Time [s],A1\n0,0.1\n\n30,0.2\n"), std::string("Time [s],A1\r\n0,0.1\r\n\r\n30,0.2\r\n"),
        std::string("Time [s],A1\r0,0.1\r\r30,0.2\r"), std::string("Time [s],A1\r0,0.1\r\r30,0.2"),
        std::string("\xEF\xBB\xBFTime [s],A1\r0,0.1\r\r30,0.2\r")}) {
    CAPTURE(text);
    CHECK(lines_of(text) == want);
    CHECK(lines_of_file(text) == want);
  }
}

TEST_CASE("a file whose first line ends in a lone CR splits at every CR, LF and CRLF") {
  // Mixed ends after a lone CR: each of "\r", "\n" and "\r\n" ends one line.
  CHECK(lines_of("a\rb\nc\r\nd\re") == Lines{"a", "b", "c", "d", "e"});
  // A file whose first line ends in LF or CRLF keeps a lone CR later on inside its line, as
  // it always did.
  CHECK(lines_of("a\nb\rc\n") == Lines{"a", "b\rc"});
  CHECK(lines_of("a\r\nb\rc\r\n") == Lines{"a", "b\rc"});
  // A CR as the very last byte ends the last line; no empty line follows.
  CHECK(lines_of("a\r") == Lines{"a"});
  CHECK(lines_of("a\rb\r") == Lines{"a", "b"});
}

TEST_CASE("lone-CR lines are split right where a buffer refill falls between CR and LF") {
  // LineSource reads 1 MiB at a time: put a "\r\n" and a lone "\r" across that boundary.
  constexpr std::size_t k_refill = std::size_t{1} << 20;
  const std::string first = "first\r";
  const std::string pad(k_refill - first.size() - 1, 'p');  // ends 1 byte before the refill
  std::string text = first + pad + "\r\nnext\r" + std::string(k_refill - 10, 'q') + "\rlast";
  REQUIRE(text[k_refill - 1] == '\r');
  REQUIRE(text[k_refill] == '\n');
  const Lines want{"first", pad, "next", std::string(k_refill - 10, 'q'), "last"};
  CHECK(lines_of(text) == want);
  CHECK(lines_of_file(text) == want);
}

TEST_CASE("a NUL byte is reported at its line and column with any line ends") {
  auto where = [](const std::string& text) {
    try {
      lines_of(text);
      return std::string("read");
    } catch (const vzero::InputError& e) {
      return std::string(e.what());
    }
  };
  CHECK(where(std::string("a\nbc\nd\0e\nf\n", 11)) == "t.csv:3:2: found a NUL byte; this is not a text export");
  CHECK(where(std::string("a\rbc\rd\0e\rf\r", 11)) == "t.csv:3:2: found a NUL byte; this is not a text export");
  CHECK(where(std::string("a\r\nb\0\r\n", 7)) == "t.csv:2:2: found a NUL byte; this is not a text export");
  // A NUL or a byte that is not UTF-8 before the first line end makes the file binary: a
  // lone CR after it does not split lines, so the first fault is reported as it always was.
  CHECK(where(std::string("ab\0c\rd\ne\n", 9)) == "t.csv:1:3: found a NUL byte; this is not a text export");
  CHECK(where(std::string("a\xA0\rb\0\n", 6)) == "t.csv:1:5: found a NUL byte; this is not a text export");
  // Past the first refill.
  std::string big = "h\r" + std::string((std::size_t{1} << 20) + 5, 'x') + "\ry";
  big += '\0';
  CHECK(where(big + "\r") == "t.csv:3:2: found a NUL byte; this is not a text export");
}
