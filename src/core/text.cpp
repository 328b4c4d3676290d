#include "core/text.hpp"

#include <algorithm>
#include <cctype>
#include <charconv>
#include <cmath>
#include <cstdint>
#include <cstring>

namespace vzero::detail {

std::size_t edit_distance(std::string_view a, std::string_view b) {
  std::vector<std::size_t> row(b.size() + 1);
  for (std::size_t j = 0; j <= b.size(); ++j) row[j] = j;
  for (std::size_t i = 1; i <= a.size(); ++i) {
    std::size_t diag = row[0];
    row[0] = i;
    for (std::size_t j = 1; j <= b.size(); ++j) {
      const std::size_t up = row[j];
      row[j] = std::min({row[j] + 1, row[j - 1] + 1, diag + (a[i - 1] == b[j - 1] ? 0 : 1)});
      diag = up;
    }
  }
  return row[b.size()];
}

std::string nearest_name(std::string_view typed, const std::vector<std::string>& candidates, std::size_t max_edits) {
  std::string best;
  std::size_t best_d = max_edits + 1;
  for (const auto& c : candidates) {
    const std::size_t d = edit_distance(typed, c);
    if (d < best_d) {
      best_d = d;
      best = c;
    }
  }
  return best;
}

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
    ++i;           // skip the delimiter
    if (i == n) {  // a trailing delimiter makes one more, empty field
      out.push_back(Field{std::string{}, static_cast<int>(i) + 1});
      break;
    }
  }
}

namespace {
// The fields of a line without quotes (the common case): the text between delimiters.
void split_plain_views(std::string_view line, char delimiter, std::vector<FieldView>& out) {
  const std::size_t n = line.size();
  std::size_t i = 0;
  while (true) {
    std::size_t end = i;  // fields are short: a plain loop beats memchr's call
    while (end < n && line[end] != delimiter) ++end;
    out.push_back(FieldView{line.substr(i, end - i), static_cast<int>(i) + 1});
    if (end >= n) break;
    i = end + 1;
    if (i == n) {  // a trailing delimiter makes one more, empty field
      out.push_back(FieldView{std::string_view{}, static_cast<int>(i) + 1});
      break;
    }
  }
}

// The quoted field whose opening quote is line[j - 1]: its text, a view into the line or,
// when doubled quotes or text after the closing quote need a copy, into `scratch`. Returns
// the index of the delimiter (or the line's end) after it; `closed` says whether the quote was.
std::size_t quoted_view(std::string_view line, char delimiter, std::size_t j, std::string& scratch,
                        std::string_view& text, bool& closed) {
  const std::size_t n = line.size();
  const std::size_t content = j;
  bool copied = false;
  closed = false;
  std::size_t start = scratch.size();
  auto to_scratch = [&](std::size_t upto) {  // switch to a copy holding line[content, upto)
    if (!copied) {
      scratch.append(line.data() + content, upto - content);
      copied = true;
    }
  };
  while (j < n) {
    if (line[j] == '"') {
      if (j + 1 < n && line[j + 1] == '"') {
        to_scratch(j);
        scratch.push_back('"');
        j += 2;
        continue;
      }
      closed = true;
      break;
    }
    if (copied) scratch.push_back(line[j]);
    ++j;
  }
  const std::size_t content_end = j;
  if (closed) ++j;
  // Anything between the closing quote and the delimiter is kept (lenient).
  const std::size_t tail = j;
  while (j < n && line[j] != delimiter) ++j;
  if (j > tail) {
    to_scratch(content_end);
    scratch.append(line.data() + tail, j - tail);
  }
  text = copied ? std::string_view(scratch).substr(start) : line.substr(content, content_end - content);
  return j;
}
}  // namespace

void split_views_into(std::string_view line, char delimiter, std::vector<FieldView>& out, std::string& scratch,
                      bool* unclosed_quote) {
  out.clear();
  if (unclosed_quote) *unclosed_quote = false;
  const std::size_t n = line.size();
  if (n == 0) {
    out.push_back(FieldView{std::string_view{}, 1});
    return;
  }
  if (line.find('"') == std::string_view::npos) return split_plain_views(line, delimiter, out);
  // Unescaped quoted texts never outgrow the line, so views into `scratch` stay valid.
  scratch.clear();
  scratch.reserve(n);
  std::size_t i = 0;
  while (true) {
    FieldView f;
    f.column = static_cast<int>(i) + 1;
    std::size_t j = i;
    while (j < n && line[j] == ' ') ++j;
    if (j < n && line[j] == '"') {
      bool closed = false;
      i = quoted_view(line, delimiter, j + 1, scratch, f.text, closed);
      if (!closed && unclosed_quote) *unclosed_quote = true;
    } else {
      std::size_t end = line.find(delimiter, i);
      if (end == std::string_view::npos) end = n;
      f.text = line.substr(i, end - i);
      i = end;
    }
    out.push_back(f);
    if (i >= n) break;
    ++i;  // skip the delimiter
    if (i == n) {
      out.push_back(FieldView{std::string_view{}, static_cast<int>(i) + 1});
      break;
    }
  }
}

std::vector<Field> split_fields(std::string_view line, char delimiter, bool* unclosed_quote) {
  std::vector<Field> out;
  split_fields_into(line, delimiter, out, unclosed_quote);
  return out;
}

namespace {

// Clinger's fast path (1990): a plain decimal of at most 15 digits, at most 22 of them after
// the mark, no exponent. The digits as an integer and the power of ten are exact doubles, so
// one division rounds correctly: the same double as std::from_chars, in a fraction of the time.
bool parse_plain_decimal(std::string_view t, char decimal, double& out) {
  static constexpr double k_pow10[] = {1e0,  1e1,  1e2,  1e3,  1e4,  1e5,  1e6,  1e7,  1e8,  1e9,  1e10, 1e11,
                                       1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22};
  const char* p = t.data();
  const char* const e = p + t.size();
  const bool negative = p < e && *p == '-';
  if (negative) ++p;
  std::uint64_t m = 0;
  int digits = 0, frac = 0;
  const char* const int_start = p;
  for (; p < e && static_cast<unsigned>(*p - '0') < 10; ++p, ++digits) m = m * 10 + static_cast<unsigned>(*p - '0');
  if (p == int_start) return false;
  if (p < e && *p == decimal) {
    const char* const frac_start = ++p;
    for (; p < e && static_cast<unsigned>(*p - '0') < 10 && digits < 16; ++p, ++digits)
      m = m * 10 + static_cast<unsigned>(*p - '0');
    frac = static_cast<int>(p - frac_start);
    if (frac == 0) return false;
  }
  if (p != e || digits > 15 || frac > 22) return false;
  double v = static_cast<double>(m);
  if (frac > 0) v /= k_pow10[frac];
  out = negative ? -v : v;
  return true;
}

// The decimal exponent of the first significant digit of a number that std::from_chars read
// whole (digits, an optional '.', an optional exponent), saturated far beyond a double's
// range: 2 for "123.4", -3 for "0.00123", -400 for "1e-400". Meaningful only when a digit
// other than 0 is present (the numbers std::from_chars finds out of range).
long long leading_exponent(std::string_view t) {
  std::size_t i = 0;
  if (i < t.size() && t[i] == '-') ++i;
  long long lead = 0;
  bool found = false;
  long long int_digits = 0;  // significant digits before the mark
  for (; i < t.size() && t[i] >= '0' && t[i] <= '9'; ++i) {
    if (found || t[i] != '0') {
      found = true;
      ++int_digits;
    }
  }
  if (found) lead = int_digits - 1;
  if (i < t.size() && t[i] == '.') {
    ++i;
    long long zeros = 0;
    for (; i < t.size() && t[i] >= '0' && t[i] <= '9'; ++i) {
      if (!found && t[i] == '0')
        ++zeros;
      else if (!found) {
        found = true;
        lead = -(zeros + 1);
      }
    }
  }
  if (i < t.size() && (t[i] == 'e' || t[i] == 'E')) {
    ++i;
    bool minus = false;
    if (i < t.size() && (t[i] == '-' || t[i] == '+')) minus = t[i++] == '-';
    long long e = 0;
    for (; i < t.size() && t[i] >= '0' && t[i] <= '9'; ++i) e = std::min(e * 10 + (t[i] - '0'), 1'000'000'000LL);
    lead += minus ? -e : e;
  }
  return lead;
}

enum class NumberKind { ok, bad, too_large };

NumberKind read_number(std::string_view text, char decimal, double& out) {
  text = trim(text);
  if (text.empty()) return NumberKind::bad;
  if (text.front() == '+') text.remove_prefix(1);
  if (text.empty() || text.front() == '+') return NumberKind::bad;
  if (parse_plain_decimal(text, decimal, out)) return NumberKind::ok;
  char buf[64];
  if (decimal != '.') {
    if (text.size() >= sizeof buf) return NumberKind::bad;
    // A '.' in a decimal-comma file is not a decimal mark; refuse rather than guess.
    if (text.find('.') != std::string_view::npos) return NumberKind::bad;
    std::copy(text.begin(), text.end(), buf);
    std::replace(buf, buf + text.size(), decimal, '.');
    text = std::string_view(buf, text.size());
  } else if (text.find(',') != std::string_view::npos) {
    return NumberKind::bad;
  }
  double v = 0;
  auto [p, ec] = std::from_chars(text.data(), text.data() + text.size(), v, std::chars_format::general);
  if (p != text.data() + text.size()) return NumberKind::bad;
  if (ec == std::errc::result_out_of_range) {
    // The whole text is a number beyond a double. Below the smallest subnormal it rounds to
    // a zero of its sign; above the largest double it is an error.
    if (leading_exponent(text) < 0) {
      out = text.front() == '-' ? -0.0 : 0.0;
      return NumberKind::ok;
    }
    return NumberKind::too_large;
  }
  if (ec != std::errc()) return NumberKind::bad;
  if (!std::isfinite(v)) return NumberKind::bad;  // "inf"/"nan" text
  out = v;
  return NumberKind::ok;
}

}  // namespace

std::optional<double> parse_number(std::string_view text, char decimal) {
  double v = 0;
  if (read_number(text, decimal, v) == NumberKind::ok) return v;
  return std::nullopt;
}

bool number_too_large(std::string_view text, char decimal) {
  double v = 0;
  return read_number(text, decimal, v) == NumberKind::too_large;
}

std::string describe_found(std::string_view text, char decimal) {
  std::string_view t = trim(text);
  std::string out = "\"" + std::string(t) + "\"";
  if (number_too_large(t, decimal)) out += ", which is too large for a double (the largest is 1.7976931348623157e308)";
  return out;
}

char guess_delimiter(std::string_view line) {
  int semis = 0, tabs = 0, commas = 0;
  if (line.find('"') == std::string_view::npos) {
    // No quotes: the same counts in a loop without branches (the compiler vectorises it).
    for (char c : line) {
      semis += c == ';';
      tabs += c == '\t';
      commas += c == ',';
    }
    line = {};
  }
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
