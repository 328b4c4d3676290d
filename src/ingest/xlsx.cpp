// One sheet of a workbook rendered as delimited text for the text readers (xlsx.hpp).
#include "ingest/xlsx.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <charconv>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <fstream>

#include "core/files.hpp"
#include "core/text.hpp"

namespace vzero::detail {

namespace {

using xlsx::Book;
using xlsx::NumberKind;

// The largest sheet the standard allows (ECMA-376 Part 1, 18.3.1.73 and 18.3.1.4).
constexpr int k_max_rows = 1048576;
constexpr int k_max_columns = 16384;

std::string column_letters(int col) {
  std::string out;
  for (; col > 0; col = (col - 1) / 26) out.insert(out.begin(), static_cast<char>('A' + (col - 1) % 26));
  return out;
}

std::string cell_name(int col, int row) { return column_letters(col) + std::to_string(row); }

// "B12" → column 2, row 12; false when `r` is no cell reference within the sheet's limits.
bool parse_ref(std::string_view r, int& col, int& row) {
  std::size_t i = 0;
  col = 0;
  while (i < r.size() && r[i] >= 'A' && r[i] <= 'Z' && col <= k_max_columns) col = col * 26 + (r[i++] - 'A' + 1);
  if (i == 0 || col > k_max_columns) return false;
  const auto [end, ec] = std::from_chars(r.data() + i, r.data() + r.size(), row);
  return ec == std::errc() && end == r.data() + r.size() && row >= 1 && row <= k_max_rows;
}

// What the renderer needs besides the book: where it is, for messages.
struct Context {
  const Book& book;
  const SheetText& out;
  std::string at(int col, int row) const { return out.label() + "!" + cell_name(col, row); }
};

[[noreturn]] void cell_error(const Context& cx, int col, int row, const std::string& what,
                             std::vector<std::string> fixes = {}) {
  throw InputError(Where{cx.at(col, row)}, what, std::move(fixes));
}

std::string number_text(double v, char decimal) {
  std::string s = fmt::format("{}", v);
  if (decimal != '.') std::replace(s.begin(), s.end(), '.', decimal);
  return s;
}

// Days since 1970-01-01 → "YYYY-MM-DD" (the proleptic Gregorian calendar; H. Hinnant's
// civil_from_days, http://howardhinnant.github.io/date_algorithms.html).
std::string iso_date(long long z) {
  z += 719468;
  const long long era = (z >= 0 ? z : z - 146096) / 146097;
  const long long doe = z - era * 146097;
  const long long yoe = (doe - doe / 1460 + doe / 36524 - doe / 146096) / 365;
  const long long doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
  const long long mp = (5 * doy + 2) / 153;
  const long long d = doy - (153 * mp + 2) / 5 + 1;
  const long long m = mp < 10 ? mp + 3 : mp - 9;
  return fmt::format("{:04}-{:02}-{:02}", yoe + era * 400 + (m <= 2), m, d);
}

// A number in a cell styled as a time, date-time or date, as the text the readers take.
std::string dated_text(const Context& cx, double days, NumberKind kind, int col, int row) {
  // Day 0 is 1899-12-30 in the 1900 date system and 1904-01-01 (1462 days later) in the 1904
  // one (ECMA-376 Part 1, 18.17.4.1); both are counted from 1899-12-30 here.
  if (kind != NumberKind::time && cx.book.date1904) days += 1462;
  // 1e10 s is the longest time the readers take (reader_common.hpp).
  if (!(days >= 0 && days * 86400 <= 1e10)) {
    cell_error(cx, col, row,
               fmt::format("expected a time, date or duration of at least 0 (a day fraction), found {}",
                           number_text(days, '.')),
               {"format the cell as a number if it is not a time"});
  }
  const double whole = std::floor(days);
  if (kind == NumberKind::date) return iso_date(static_cast<long long>(whole) - 25569);
  // Seconds rounded to the microsecond: a day fraction written from a clock time comes back
  // as that time (20 s is stored as 20/86400 and reads 20.000000000000004 s unrounded). From
  // 64 days on a double holds no finer than about 1 µs of the day: rounded to the millisecond.
  const double unit_us = days < 64 ? 1 : 1000;
  const long long us = static_cast<long long>(whole) * 86400000000LL +
                       std::llround((days - whole) * 86400e6 / unit_us) * static_cast<long long>(unit_us);
  std::string s = fmt::format("{}:{:02}:{:02}", us / 3600000000LL, us / 60000000LL % 60, us / 1000000LL % 60);
  if (const long long frac = us % 1000000LL; frac != 0) {
    std::string digits = fmt::format("{:06}", frac);
    digits.erase(digits.find_last_not_of('0') + 1);
    s += cx.out.style.decimal + digits;
  }
  return s;
}

// The text of one cell (<c>).
std::string cell_text(const Context& cx, pugi::xml_node c, int col, int row) {
  const std::string_view type = c.attribute("t").value();
  const pugi::xml_node v = xlsx::child(c, "v");
  const std::string_view value = v.child_value();
  if (type == "inlineStr") return xlsx::string_item(xlsx::child(c, "is"));
  if (type == "e") return "";  // #N/A, #DIV/0!, ...: a missing value
  if (!v) {
    if (xlsx::child(c, "f"))
      cell_error(cx, col, row, "expected a stored value, found a formula that was never calculated",
                 {"open the workbook in a spreadsheet program, let it calculate, and save it again"});
    return "";
  }
  if (type == "str" || type == "d") return std::string(value);
  if (type == "b") {
    if (value == "1" || value == "0") return value == "1" ? "TRUE" : "FALSE";
    cell_error(cx, col, row, fmt::format("expected a boolean cell of 0 or 1, found \"{}\"", value));
  }
  if (type == "s") {
    std::size_t k = 0;
    const auto [end, ec] = std::from_chars(value.data(), value.data() + value.size(), k);
    if (ec != std::errc() || end != value.data() + value.size() || k >= cx.book.shared_strings.size())
      cell_error(
          cx, col, row,
          fmt::format("expected a shared string number below {}, found \"{}\"", cx.book.shared_strings.size(), value));
    return cx.book.shared_strings[k];
  }
  if (!type.empty() && type != "n")
    cell_error(cx, col, row, fmt::format("expected a known cell type, found \"{}\"", type));
  double x = 0;
  const std::string_view digits = trim(value);
  const auto [end, ec] = std::from_chars(digits.data(), digits.data() + digits.size(), x);
  if (ec != std::errc() || end != digits.data() + digits.size() || !std::isfinite(x))
    cell_error(cx, col, row, fmt::format("expected a number in the cell, found \"{}\"", value));
  const int style = c.attribute("s").as_int(0);
  const NumberKind kind = style >= 0 && static_cast<std::size_t>(style) < cx.book.style_kinds.size()
                              ? cx.book.style_kinds[static_cast<std::size_t>(style)]
                              : NumberKind::number;
  return kind == NumberKind::number ? number_text(x, cx.out.style.decimal) : dated_text(cx, x, kind, col, row);
}

// Appends one field: line breaks become spaces; quoted when it holds the delimiter or '"'.
void append_field(std::string& line, std::string text, char delimiter) {
  std::replace(text.begin(), text.end(), '\n', ' ');
  std::replace(text.begin(), text.end(), '\r', ' ');
  if (text.find(delimiter) == std::string::npos && text.find('"') == std::string::npos) {
    line += text;
    return;
  }
  line += '"';
  for (char ch : text) {
    if (ch == '"') line += '"';
    line += ch;
  }
  line += '"';
}

// One <row>: its cells in column order, as one line (empty trailing cells left out).
std::string row_line(const Context& cx, pugi::xml_node r, int row) {
  std::vector<std::pair<int, std::string>> cells;
  int col = 0;
  for (pugi::xml_node c : r.children()) {
    if (xlsx::local_name(c.name()) != "c") continue;
    const char* ref = c.attribute("r").value();
    int at = col + 1, ref_row = row;
    if (*ref && (!parse_ref(ref, at, ref_row) || ref_row != row))
      throw InputError(Where{cx.out.label() + "!" + cell_name(col + 1, row)},
                       fmt::format("expected a cell reference in row {}, found \"{}\"", row, ref));
    if (at <= col) cell_error(cx, at, row, "expected cells in column order, found this cell after its right neighbour");
    col = at;
    std::string text = cell_text(cx, c, col, row);
    if (!text.empty()) cells.emplace_back(col, std::move(text));
  }
  std::string line;
  int written = 1;
  for (auto& [at, text] : cells) {
    for (; written < at; ++written) line += cx.out.style.delimiter;
    append_field(line, std::move(text), cx.out.style.delimiter);
  }
  return line;
}

std::string sheet_list(const Book& book) {
  std::string out;
  for (const auto& n : book.sheet_names) out += (out.empty() ? "\"" : ", \"") + n + "\"";
  return out;
}

}  // namespace

bool is_workbook(const std::string& path) {
  const std::string name = lower(path);
  for (const char* ext : {".xlsx", ".xlsm"})
    if (name.size() > std::strlen(ext) && name.compare(name.size() - std::strlen(ext), std::string::npos, ext) == 0)
      return true;
  char head[4] = {};
  std::ifstream in(path, std::ios::binary);
  return in.read(head, 4) && std::memcmp(head, "PK\x03\x04", 4) == 0;
}

SheetText render_workbook(const std::string& file, std::string_view bytes, const std::string& sheet, SheetStyle style) {
  // An encrypted workbook is an OLE compound file holding the encrypted package (MS-OFFCRYPTO),
  // as is an old binary .xls workbook.
  if (bytes.substr(0, 8) == std::string_view("\xD0\xCF\x11\xE0\xA1\xB1\x1A\xE1", 8)) {
    throw InputError(Where{file},
                     "expected a spreadsheet workbook (.xlsx), found an encrypted (password-protected) workbook "
                     "or an old binary .xls workbook",
                     {"remove the password in the spreadsheet program and save the workbook again as .xlsx, or "
                      "export the sheet as CSV"});
  }
  const xlsx::Archive zip(file, bytes);
  const Book book = xlsx::read_book(zip, file);
  std::size_t k = 0;
  if (!sheet.empty()) {
    k = static_cast<std::size_t>(std::find(book.sheet_names.begin(), book.sheet_names.end(), sheet) -
                                 book.sheet_names.begin());
    if (k == book.sheet_names.size())
      throw InputError(Where{file},
                       fmt::format("expected a sheet named \"{}\", found the sheets {}", sheet, sheet_list(book)),
                       {"pass one of these names with --sheet (names are case-sensitive)"});
  }
  SheetText out{file, book.sheet_names[k], {}, {}, style};
  if (book.sheet_parts[k].empty() || !zip.has(book.sheet_parts[k]))
    xlsx::bad_workbook(file, fmt::format("no part for the sheet \"{}\"", out.sheet));
  render_sheet(book, zip.read(book.sheet_parts[k]), out);
  return out;
}

void render_sheet(const xlsx::Book& book, std::string_view sheet_xml, SheetText& out) {
  const Context cx{book, out};
  pugi::xml_document doc;
  const auto parsed = doc.load_buffer(sheet_xml.data(), sheet_xml.size(), pugi::parse_default | pugi::parse_ws_pcdata);
  if (!parsed)
    xlsx::bad_workbook(out.file, fmt::format("a sheet \"{}\" that is not XML ({} at byte {})", out.sheet,
                                             parsed.description(), parsed.offset));
  const pugi::xml_node data = xlsx::child(xlsx::child(doc, "worksheet"), "sheetData");
  if (!data)
    throw InputError(Where{out.label()}, "expected a worksheet with cells, found a sheet without cell data (a chart?)",
                     {"pass the sheet that holds the reads with --sheet; the sheets are " + sheet_list(book)});
  int row = 0;
  for (pugi::xml_node r : data.children()) {
    if (xlsx::local_name(r.name()) != "row") continue;
    const int at = r.attribute("r").as_int(row + 1);
    if (at <= row || at > k_max_rows)
      throw InputError(Where{fmt::format("{} row {}", out.label(), at)},
                       fmt::format("expected rows in order, numbered {} to {}, found row {} after row {}", row + 1,
                                   k_max_rows, at, row));
    for (++row; row < at; ++row) out.text += '\n';
    out.text += row_line(cx, r, row);
    out.text += '\n';
  }
}

SheetText read_workbook(const std::string& path, const std::string& sheet, SheetStyle style) {
  const FileBytes bytes = read_whole_file(path, "check the path and that the file is readable");
  SheetText out = render_workbook(path, bytes.text, sheet, style);
  out.sha256 = bytes.sha256;
  return out;
}

InputError at_cell(const InputError& e, const SheetText& book) {
  const Where& w = e.where();
  if (w.file != book.file) return e;
  if (w.line <= 0) return InputError(Where{book.label()}, e.message(), e.fixes());
  // Line N of the text is row N of the sheet; the field holding the column is the cell.
  std::string_view text = book.text;
  for (int n = 1; n < w.line && !text.empty(); ++n) {
    const auto nl = text.find('\n');
    text.remove_prefix(nl == std::string_view::npos ? text.size() : nl + 1);
  }
  const std::string_view line = text.substr(0, text.find('\n'));
  if (w.column <= 0) return InputError(Where{fmt::format("{} row {}", book.label(), w.line)}, e.message(), e.fixes());
  int col = 1;
  const auto fields = split_fields(line, book.style.delimiter);
  for (std::size_t k = 0; k < fields.size(); ++k)
    if (fields[k].column <= w.column) col = static_cast<int>(k) + 1;
  // Past the end of the line: the cell after the last one written (rows end at their last
  // cell that is not empty).
  if (w.column > static_cast<int>(line.size())) col = static_cast<int>(fields.size()) + 1;
  return InputError(Where{book.label() + "!" + cell_name(col, w.line)}, e.message(), e.fixes());
}

}  // namespace vzero::detail
