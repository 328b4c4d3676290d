// Small text helpers shared by the readers: field splitting, trimming, number parsing.
#pragma once

#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace vzero::detail {

std::string_view trim(std::string_view s);
bool iequals(std::string_view a, std::string_view b);
// Edit distance: insertions, deletions and substitutions, each costing 1.
std::size_t edit_distance(std::string_view a, std::string_view b);
// The candidate nearest to `typed`, at most `max_edits` edits away (ties: the first in the
// list); "" when none is that close. For "did you mean …?" suggestions.
std::string nearest_name(std::string_view typed, const std::vector<std::string>& candidates, std::size_t max_edits);
std::string lower(std::string_view s);

// One field of a split line: its text (quotes removed, "" unescaped) and the 1-based
// column of its first character in the line.
struct Field {
  std::string text;
  int column = 1;
};

// Splits one line on `delimiter`, RFC 4180 quoting ("a,b" is one field, "" is a quote).
// Sets `*unclosed_quote` (when given) if a quoted field does not end on this line.
std::vector<Field> split_fields(std::string_view line, char delimiter, bool* unclosed_quote = nullptr);
// Same, reusing `out` (no allocation once its capacity is reached).
void split_fields_into(std::string_view line, char delimiter, std::vector<Field>& out, bool* unclosed_quote = nullptr);

// A field as a view: into the line itself, or (quoted fields with "" or text after the
// closing quote) into a scratch buffer. Valid while the line and the scratch are.
struct FieldView {
  std::string_view text;
  int column = 1;
};

// split_fields_into without allocating per field: the same texts and columns, as views.
// `scratch` holds unescaped quoted fields; it is reset on each call.
void split_views_into(std::string_view line, char delimiter, std::vector<FieldView>& out, std::string& scratch,
                      bool* unclosed_quote = nullptr);

// Parses a decimal number with std::from_chars (locale-independent). `decimal` is '.' or
// ','; with ',' the text "1,5" reads as 1.5. Surrounding blanks are ignored; "+1" is
// accepted; "nan", "inf" and anything with trailing text are rejected. A number too small
// for a double (below about 4.9e-324 in size, e.g. "1e-400") is a tiny number, not garbage:
// it reads as 0 with its sign, as IEEE 754 rounding gives it (std::from_chars reports it as
// result_out_of_range). A number too large for a double ("1e400") is rejected: see
// number_too_large.
std::optional<double> parse_number(std::string_view text, char decimal = '.');

// True when `text` is a well-formed number that parse_number rejects only because it is too
// large in size for a double (beyond about 1.8e308).
bool number_too_large(std::string_view text, char decimal = '.');

// The "found ..." part of a message about a cell that should hold a number: the text in
// quotes, and for a number too large for a double that it is, e.g.
// `"1e999", which is too large for a double (the largest is 1.7976931348623157e308)`.
std::string describe_found(std::string_view text, char decimal = '.');

// Guesses the delimiter of a line: the most frequent of ';', tab and ',' outside quotes
// (',' loses ties to ';' so that decimal-comma exports are read right). 0 when none.
char guess_delimiter(std::string_view line);

// "tab" for '\t', else the character itself.
std::string describe_delimiter(char d);

}  // namespace vzero::detail
