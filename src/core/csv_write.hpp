// The one CSV writer of vzero's outputs (rates, traces, summary, fit tables, and the public
// csv_field / format_number): RFC 4180 fields, UTF-8, '.' decimals, shortest round-trip
// numbers, LF line ends.
//
// Quoting: a field is written in double quotes, with each '"' doubled, when it holds a byte
// of k_csv_quote_chars: ',' '"' CR LF as RFC 4180 requires, and also ';' and tab, so that a
// reader guessing the delimiter (vzero's read_table does) cannot split it.
//
// Text that a spreadsheet would run as a formula — a cell beginning with '=', '+', '-', '@',
// tab or CR that is not a number (plate-map values, file and channel names come from users
// and instruments) — is written with a leading apostrophe ('=SUM(A1) → "'=SUM(A1)"), the
// usual guard against CSV formula injection; numbers such as -0.5 stay numbers.
//
// **Example**:
//   vzero::detail::CsvOut out;
//   out.field("A1;B2");  out.separator();  out.number(0.1);  out.end_row();
//   // out.view() == "\"A1;B2\",0.1\n"
#pragma once

#include <fmt/format.h>
#include <array>
#include <string>
#include <string_view>
#include <vector>

namespace vzero::detail {

// The bytes that make a field need quotes, and the same as a table indexed by byte: one rule
// for every CSV vzero writes.
inline constexpr std::string_view k_csv_quote_chars = ",;\"\r\n\t";
inline constexpr std::array<bool, 256> k_csv_quote_bytes = [] {
  std::array<bool, 256> t{};
  for (char c : k_csv_quote_chars) t[static_cast<unsigned char>(c)] = true;
  return t;
}();

bool csv_needs_quotes(std::string_view text);
// True for text a spreadsheet would take as a formula (see above).
bool starts_formula(std::string_view text);

class CsvOut {
 public:
  // Text as one field, quoted when it holds a byte of k_csv_quote_bytes.
  void field(std::string_view text);
  // `parts` joined by `sep` (';' in vzero's lists) as one field, without a string per call.
  void joined(const std::vector<std::string>& parts, char sep);
  // Shortest text that reads back to the same double; nothing for NaN (an empty cell);
  // "0" for +0 and -0.
  void number(double v);
  void integer(long long v);
  void separator() { buffer_.push_back(','); }
  void end_row() { buffer_.push_back('\n'); }

  std::string_view view() const { return {buffer_.data(), buffer_.size()}; }
  std::string str() const { return {buffer_.data(), buffer_.size()}; }
  std::size_t size() const { return buffer_.size(); }

 private:
  void append(std::string_view s) { buffer_.append(s.data(), s.data() + s.size()); }
  fmt::memory_buffer buffer_;
};

}  // namespace vzero::detail
