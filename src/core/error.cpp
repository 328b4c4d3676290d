#include "vzero/error.hpp"

#include <fmt/format.h>

namespace vzero {

namespace {
std::string location(const Where& w) {
  if (w.file.empty()) return {};
  if (w.line <= 0) return w.file + ": ";
  if (w.column <= 0) return fmt::format("{}:{}: ", w.file, w.line);
  return fmt::format("{}:{}:{}: ", w.file, w.line, w.column);
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
    // Long lines are cut so the message stays readable; the column still points into it.
    std::string shown = where_.text.size() > 160 ? where_.text.substr(0, 157) + "..." : where_.text;
    out += fmt::format("\n  line {}: {}", where_.line, shown);
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
