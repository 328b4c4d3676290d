// The message for a cell that should hold a number and does not: what was found, and the
// fix most likely to be the right one for what it looks like.
#include <fmt/format.h>
#include <cctype>

#include "core/text.hpp"
#include "ingest/reader_common.hpp"
#include "vzero/error.hpp"

namespace vzero::detail {

namespace {

// The name of a dash that stands where a minus sign should ("" when the cell starts with
// none): U+2212 (the mathematical minus), U+2013 (en dash) or U+2012 (figure dash), each
// followed by a digit or a decimal mark.
std::string_view lookalike_minus(std::string_view t) {
  struct Dash {
    std::string_view bytes, name;
  };
  static constexpr Dash dashes[] = {{"\xE2\x88\x92", "the minus sign U+2212"},
                                    {"\xE2\x80\x93", "an en dash (U+2013)"},
                                    {"\xE2\x80\x92", "a figure dash (U+2012)"}};
  for (const Dash& d : dashes)
    if (t.size() > d.bytes.size() && t.substr(0, d.bytes.size()) == d.bytes) {
      const char next = t[d.bytes.size()];
      if (std::isdigit(static_cast<unsigned char>(next)) || next == '.' || next == ',') return d.name;
    }
  return {};
}

}  // namespace

void bad_value_error(const Profile& p, const std::string& file, int line, int column, std::string_view line_text,
                     std::string_view cell, const std::string& what_cell) {
  std::string_view t = trim(cell);
  std::vector<std::string> fixes;
  std::string lowered = lower(t);
  if (number_too_large(t, p.decimal)) {
    fixes.push_back(
        fmt::format("correct the cell; if the instrument writes \"{}\" for a saturated read, add it to "
                    "the profile's `overflow` list",
                    t));
  } else if (lowered == "nan" || lowered == "inf" || lowered == "-inf" || lowered == "infinity" || lowered == "+inf") {
    fixes.push_back(fmt::format("add \"{}\" to the profile's `missing` or `overflow` list", t));
  } else if (p.decimal == '.' && t.find(',') != std::string_view::npos) {
    // The built-in profile for this line's delimiter: tabs, else semicolons.
    const bool tabs = line_text.find('\t') != std::string_view::npos;
    const std::string builtin = std::string(p.shape == Shape::long_form ? "long-" : "wide-") +
                                (tabs ? "tab-comma" : "semicolon-comma");
    // A number written with '.' elsewhere on the line: more likely one mistyped cell than a
    // decimal-comma file.
    bool dots = false;
    for (std::size_t i = 1; i + 1 < line_text.size(); ++i)
      dots |= line_text[i] == '.' && std::isdigit(static_cast<unsigned char>(line_text[i - 1])) &&
              std::isdigit(static_cast<unsigned char>(line_text[i + 1]));
    if (dots)
      fixes.push_back(fmt::format(
          "other numbers on this line use '.': if \"{}\" is a slip, correct the cell or re-export the file", t));
    fixes.push_back(p.shape == Shape::grid
                        ? std::string("set decimal = \",\" (and delimiter = \";\" or \"tab\") in the profile")
                        : fmt::format("set decimal = \",\" (and delimiter = \"{}\") in the profile, or pass --profile {}",
                                      tabs ? "tab" : ";", builtin));
  } else if (const std::string_view dash = lookalike_minus(t); !dash.empty()) {
    // A word processor's or spreadsheet's typographic minus: the number is plain, its sign
    // is not. Never offered as a missing or overflow mark: that would drop a real read.
    fixes.push_back(fmt::format("the cell's sign is {}, not the '-' a number is written with: replace it with '-' "
                                "in the file (or in the program that wrote it) and read the file again",
                                dash));
  } else if (p.decimal == ',' && t.find('.') != std::string_view::npos) {
    fixes.push_back(
        "if only some cells use '.', the file mixes decimal marks: correct them or re-export the file; "
        "if all do, set decimal = \".\" in the profile");
  } else {
    fixes.push_back(
        fmt::format("add \"{}\" to the profile's `overflow` or `missing` list if it marks an unusable read", t));
  }
  throw InputError(Where{file, line, column, std::string(line_text)},
                   fmt::format("expected a number for {}, found {}", what_cell, describe_found(t, p.decimal)),
                   std::move(fixes));
}

}  // namespace vzero::detail
