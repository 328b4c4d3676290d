// Spreadsheet workbooks (.xlsx, Office Open XML, ECMA-376) read as text exports.
//
// One sheet of the workbook is rendered as delimited text, one line per sheet row (line N is
// row N; rows the sheet skips are empty lines, a cell's column is its field, empty cells are
// empty fields), and that text goes through the text readers: the same shapes, profiles and
// detection as a CSV export. Cell values become the text the readers take:
//   - numbers: the shortest text that reads back to the same double ("0.123", "1e-05");
//   - shared and inline strings (rich text runs joined), formula results: the text as is
//     (line breaks in a cell become spaces; a field holding the delimiter or '"' is quoted);
//   - booleans: TRUE / FALSE;
//   - cells styled as a time or date-time (built-in formats 18-22, 45-47, custom formats
//     with h, m or s): the day fraction as clock text H:MM:SS(.ffffff), rounded to the
//     microsecond (the millisecond from 64 days on, where a double holds no finer), which
//     the readers take as seconds; a date-time counts from the 1900
//     date system's day 0 (1899-12-30). Cells styled as a date only (14-17, custom formats
//     with d or y and no h or s): the date as YYYY-MM-DD;
//   - cell errors (#N/A, #DIV/0!, t="e"): empty, a missing value.
// Errors of the readers are moved from line:column to the cell: `plate.xlsx[Sheet1]!B12`.
#pragma once

#include <functional>
#include <string>
#include <string_view>
#include <vector>

#include <pugixml.hpp>

#include "vzero/error.hpp"

namespace vzero::detail {

// How the sheet's cells are written: field delimiter and decimal mark ('.' or ',').
struct SheetStyle {
  char delimiter = ',';
  char decimal = '.';
};

// One sheet rendered as text.
struct SheetText {
  std::string file;    // the workbook's path as given
  std::string sheet;   // the sheet's name
  std::string text;    // one line per row, '\n' after each
  std::string sha256;  // of the workbook's bytes (provenance)
  SheetStyle style;
  std::string label() const { return file + "[" + sheet + "]"; }
};

// True when `path` names a workbook: its name ends in .xlsx or .xlsm (any case), or its
// bytes start as a zip archive does.
bool is_workbook(const std::string& path);

// Reads the workbook at `path` and renders the sheet named `sheet` ("" = the first sheet).
// A file that is no valid workbook (zip errors, missing parts, encryption, a sheet not in
// it) is an InputError naming the file and what to do.
SheetText read_workbook(const std::string& path, const std::string& sheet, SheetStyle style);
// The same from bytes in memory (tests, fuzzers); `file` names it in messages.
SheetText render_workbook(const std::string& file, std::string_view bytes, const std::string& sheet, SheetStyle style);

// Runs `read` (a reader over book.text under the name book.file) and moves the place of any
// InputError it throws from line:column of the text to the sheet's cell.
InputError at_cell(const InputError& e, const SheetText& book);

template <class F>
auto in_sheet(const SheetText& book, F&& read) -> decltype(read()) {
  try {
    return read();
  } catch (const InputError& e) {
    throw at_cell(e, book);
  }
}

// Parts of a workbook (xlsx_book.cpp), for the renderer.
namespace xlsx {

// A cell's number format, as far as the readers care.
enum class NumberKind { number, time, date_time, date };

struct Book {
  std::vector<std::string> sheet_names;     // in workbook order
  std::vector<std::string> sheet_parts;     // zip entry of each sheet
  std::vector<std::string> shared_strings;  // xl/sharedStrings.xml
  std::vector<NumberKind> style_kinds;      // per cell style index (cellXfs)
  bool date1904 = false;
};

// An open zip archive; parts are read by name (case-insensitive, as the standard has it).
class Archive {
 public:
  Archive(const std::string& file, std::string_view bytes);
  ~Archive();
  Archive(const Archive&) = delete;
  Archive& operator=(const Archive&) = delete;
  bool has(const std::string& part) const;
  // The part's bytes; an InputError when it is missing, encrypted or unreadable.
  std::string read(const std::string& part) const;

 private:
  struct Impl;
  Impl* impl_;
  std::string file_;
};

// The workbook's sheets, shared strings and styles.
Book read_book(const Archive& zip, const std::string& file);
// The part's XML in `doc`; an InputError when it is missing or not XML.
void parse_part(const Archive& zip, const std::string& file, const std::string& part, pugi::xml_document& doc);
// An element's or attribute's name without its namespace prefix ("x:row" → "row").
std::string_view local_name(const char* name);
// The first child element named `name` (any prefix), or an empty node.
pugi::xml_node child(pugi::xml_node n, std::string_view name);
// The text of a string item (<si>, <is>): its <t>, or its rich text runs' <t> joined
// (phonetic guides, <rPh>, are not part of the text).
std::string string_item(pugi::xml_node si);
// The kind of a number format: its id and, for custom formats, its code.
NumberKind kind_of_format(int id, std::string_view code);
// The error every unreadable workbook gets: `what` was found, with the fixes.
[[noreturn]] void bad_workbook(const std::string& file, const std::string& what);

}  // namespace xlsx

// Renders the cells of one worksheet part (its XML) into out.text with the book's shared
// strings and styles (render_workbook's last step; also for fuzzers). `out` names the file
// and sheet and gives the style.
void render_sheet(const xlsx::Book& book, std::string_view sheet_xml, SheetText& out);

}  // namespace vzero::detail
