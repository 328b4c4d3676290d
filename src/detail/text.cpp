#include "detail/text.hpp"

#include <algorithm>
#include <cctype>
#include <charconv>
#include <cmath>

namespace vzero::detail {

std::string_view trim(std::string_view s) {
  auto blank = [](char c) { return c == ' ' || c == '\t' || c == '\r' || c == '\n'; };
  while (!s.empty() && blank(s.front())) s.remove_prefix(1);
  while (!s.empty() && blank(s.back())) s.remove_suffix(1);
  return s;
}

bool iequals(std::string_view a, std::string_view b) {
  return a.size() == b.size() && std::equal(a.begin(), a.end(), b.begin(), [](char x, char y) {
           return std::tolower(static_cast<unsigned char>(x)) == std::tolower(static_cast<unsigned char>(y));
         });
}

std::string lower(std::string_view s) {
  std::string out(s);
  for (auto& c : out) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return out;
}

void split_fields_into(std::string_view line, char delimiter, std::vector<Field>& out, bool* unclosed_quote) {
  out.clear();
  if (unclosed_quote) *unclosed_quote = false;
  std::size_t i = 0;
  const std::size_t n = line.size();
  while (true) {
    Field f;
    f.column = static_cast<int>(i) + 1;
    // Leading blanks before an opening quote are allowed.
    std::size_t j = i;
    while (j < n && line[j] == ' ') ++j;
    if (j < n && line[j] == '"') {
      ++j;
      bool closed = false;
      while (j < n) {
        if (line[j] == '"') {
          if (j + 1 < n && line[j + 1] == '"') {
            f.text.push_back('"');
            j += 2;
            continue;
          }
          closed = true;
          ++j;
          break;
        }
        f.text.push_back(line[j++]);
      }
      if (!closed && unclosed_quote) *unclosed_quote = true;
      // Anything between the closing quote and the delimiter is kept (lenient).
      while (j < n && line[j] != delimiter) f.text.push_back(line[j++]);
      i = j;
    } else {
      std::size_t end = line.find(delimiter, i);
      if (end == std::string_view::npos) end = n;
      f.text.assign(line.substr(i, end - i));
      i = end;
    }
    out.push_back(std::move(f));
    if (i >= n) break;
    ++i;  // skip the delimiter
    if (i == n) {  // a trailing delimiter makes one more, empty field
      out.push_back(Field{std::string{}, static_cast<int>(i) + 1});
      break;
    }
  }
}

std::vector<Field> split_fields(std::string_view line, char delimiter, bool* unclosed_quote) {
  std::vector<Field> out;
  split_fields_into(line, delimiter, out, unclosed_quote);
  return out;
}

std::optional<double> parse_number(std::string_view text, char decimal) {
  text = trim(text);
  if (text.empty()) return std::nullopt;
  if (text.front() == '+') text.remove_prefix(1);
  if (text.empty() || text.front() == '+') return std::nullopt;
  char buf[64];
  if (decimal != '.') {
    if (text.size() >= sizeof buf) return std::nullopt;
    // A '.' in a decimal-comma file is not a decimal mark; refuse rather than guess.
    if (text.find('.') != std::string_view::npos) return std::nullopt;
    std::copy(text.begin(), text.end(), buf);
    std::replace(buf, buf + text.size(), decimal, '.');
    text = std::string_view(buf, text.size());
  } else if (text.find(',') != std::string_view::npos) {
    return std::nullopt;
  }
  double v = 0;
  auto [p, ec] = std::from_chars(text.data(), text.data() + text.size(), v, std::chars_format::general);
  if (ec != std::errc() || p != text.data() + text.size()) return std::nullopt;
  if (!std::isfinite(v)) return std::nullopt;  // "inf"/"nan" text, or out of range
  return v;
}

char guess_delimiter(std::string_view line) {
  int semis = 0, tabs = 0, commas = 0;
  bool quoted = false;
  for (char c : line) {
    if (c == '"') quoted = !quoted;
    if (quoted) continue;
    semis += c == ';';
    tabs += c == '\t';
    commas += c == ',';
  }
  if (tabs > 0 && tabs >= semis && tabs >= commas) return '\t';
  if (semis > 0 && semis >= commas) return ';';
  if (commas > 0) return ',';
  return 0;
}

std::string describe_delimiter(char d) {
  if (d == '\t') return "tab";
  return std::string(1, d);
}

}  // namespace vzero::detail
