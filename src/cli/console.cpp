// The program's console: stdout for results, stderr for messages, with the terminal kept
// safe from control characters in exports and plate maps (commands.hpp).
#include <fmt/format.h>
#include <unistd.h>

#include <cerrno>
#include <cstdio>
#include <cstdlib>
#include <string>

#include "cli/commands.hpp"

namespace vzero::cli {

namespace {
// Control characters other than line feed and tab, shown as \xHH: text from exports and plate
// maps must not move the cursor, ring the bell or recolour the user's terminal.
std::string shown(const std::string& text) {
  std::string out;
  out.reserve(text.size());
  for (char c : text) {
    const auto u = static_cast<unsigned char>(c);
    if ((u < 0x20 && c != '\n' && c != '\t') || u == 0x7f)
      out += fmt::format("\\x{:02x}", u);
    else
      out += c;
  }
  return out;
}
}  // namespace

void print_out(const std::string& raw) {
  // On a terminal, control characters are escaped; into a pipe or file the text is exact
  // (vzero fit -o - writes a table there).
  const std::string text = isatty(STDOUT_FILENO) ? shown(raw) : raw;
  if (std::fwrite(text.data(), 1, text.size(), stdout) != text.size() || std::fflush(stdout) != 0) {
    if (errno == EPIPE) std::exit(0);
  }
}

void print_err(const std::string& raw) {
  const std::string text = shown(raw);  // messages only: always escaped
  std::fwrite(text.data(), 1, text.size(), stderr);
  std::fputc('\n', stderr);
}

}  // namespace vzero::cli
