#include "vzero/error.hpp"

#include <fmt/format.h>
#include <algorithm>

namespace vzero {

namespace {
std::string location(const Where& w) {
  if (w.file.empty()) return {};
  if (w.line <= 0) return w.file + ": ";
  if (w.column <= 0) return fmt::format("{}:{}: ", w.file, w.line);
  return fmt::format("{}:{}:{}: ", w.file, w.line, w.column);
}

// A long line is cut so the message stays readable: its first 157 bytes, or when the column
// named lies beyond them, 157 bytes centred on that column, "..." marking each cut (cuts
// fall between UTF-8 characters).
std::string excerpt(const std::string& text, int column) {
  constexpr std::size_t k_keep = 157;
  if (text.size() <= 160) return text;
  const auto cont = [&](std::size_t i) { return i < text.size() && (static_cast<unsigned char>(text[i]) & 0xC0) == 0x80; };
  std::size_t from = 0;
  const auto at = static_cast<std::size_t>(column > 0 ? column - 1 : 0);
  if (at + 20 > k_keep) from = std::min(at - k_keep / 2, text.size() - k_keep);
  while (from > 0 && cont(from)) --from;
  std::size_t to = std::min(text.size(), from + k_keep);
  while (to < text.size() && cont(to)) ++to;
  return (from > 0 ? "..." : "") + text.substr(from, to - from) + (to < text.size() ? "..." : "");
}
}  // namespace

InputError::InputError(Where where, std::string what, std::vector<std::string> fixes)
    : std::runtime_error(location(where) + what),
      where_(std::move(where)),
      message_(std::move(what)),
      fixes_(std::move(fixes)) {}

std::string InputError::formatted() const {
  std::string out = location(where_) + message_;
  if (!where_.text.empty()) {
    out += fmt::format("\n  line {}: {}", where_.line, excerpt(where_.text, where_.column));
  }
  if (fixes_.size() == 1) {
    out += "\n  possible fix: " + fixes_.front();
  } else if (!fixes_.empty()) {
    out += "\n  possible fixes:";
    for (const auto& f : fixes_) out += "\n    - " + f;
  }
  return out;
}

}  // namespace vzero
