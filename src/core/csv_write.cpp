#include "core/csv_write.hpp"

#include <fmt/compile.h>
#include <cmath>
#include <cstring>

#include "core/text.hpp"

namespace vzero::detail {

bool csv_needs_quotes(std::string_view s) {
  bool quote = false;
  if (s.size() < 32) {
    for (char c : s) quote |= k_csv_quote_bytes[static_cast<unsigned char>(c)];
    return quote;
  }
  // Long fields are mostly the same list of blank wells row after row: remember the last
  // one; otherwise memchr per quoting byte is quicker than a loop over the text.
  thread_local std::string last;
  thread_local bool last_quote = false;
  if (s.size() == last.size() && std::memcmp(s.data(), last.data(), s.size()) == 0) return last_quote;
  for (char c : k_csv_quote_chars)
    if (!quote && std::memchr(s.data(), c, s.size())) quote = true;
  last.assign(s);
  last_quote = quote;
  return quote;
}

bool starts_formula(std::string_view s) {
  if (s.empty()) return false;
  const char c = s.front();
  if (c != '=' && c != '+' && c != '-' && c != '@' && c != '\t' && c != '\r') return false;
  return !parse_number(s).has_value();  // "-0.5" stays a number
}

void CsvOut::field(std::string_view s) {
  if (starts_formula(s)) {
    // A spreadsheet would run it: written as text with a leading apostrophe.
    std::string guarded = "'" + std::string(s);
    field(guarded);
    return;
  }
  if (!csv_needs_quotes(s)) {
    append(s);
    return;
  }
  buffer_.push_back('"');
  for (char c : s) {
    if (c == '"') buffer_.push_back('"');
    buffer_.push_back(c);
  }
  buffer_.push_back('"');
}

void CsvOut::joined(const std::vector<std::string>& parts, char sep) {
  std::size_t length = 0;
  for (const auto& x : parts) length += x.size() + 1;
  if (length <= 256) {
    char text[256];
    std::size_t n = 0;
    for (const auto& x : parts) {
      if (n) text[n++] = sep;
      std::copy(x.begin(), x.end(), text + n);
      n += x.size();
    }
    field(std::string_view(text, n));
    return;
  }
  std::string out;
  for (const auto& x : parts) {
    if (!out.empty()) out += sep;
    out += x;
  }
  field(out);
}

void CsvOut::number(double v) {
  if (std::isnan(v)) return;
  if (v == 0)
    buffer_.push_back('0');  // also for -0
  else
    fmt::format_to(std::back_inserter(buffer_), FMT_COMPILE("{}"), v);  // parsed at compile time
}

void CsvOut::integer(long long v) {
  const fmt::format_int text(v);
  buffer_.append(text.data(), text.data() + text.size());
}

}  // namespace vzero::detail
