// Small text helpers shared by the readers: field splitting, trimming, number parsing.
#pragma once

#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace vzero::detail {

std::string_view trim(std::string_view s);
bool iequals(std::string_view a, std::string_view b);
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
void split_fields_into(std::string_view line, char delimiter, std::vector<Field>& out,
                       bool* unclosed_quote = nullptr);

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
// accepted; "nan", "inf" and anything with trailing text are rejected.
std::optional<double> parse_number(std::string_view text, char decimal = '.');

// Guesses the delimiter of a line: the most frequent of ';', tab and ',' outside quotes
// (',' loses ties to ';' so that decimal-comma exports are read right). 0 when none.
char guess_delimiter(std::string_view line);

// "tab" for '\t', else the character itself.
std::string describe_delimiter(char d);

}  // namespace vzero::detail
