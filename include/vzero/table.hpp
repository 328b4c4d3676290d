// Tidy tables in and out: RFC 4180 CSV reading for plate maps and result tables, CSV
// field quoting, round-trip number formatting, and atomic file writes.
//
// **Example**:
//   vzero::Table t = vzero::read_table("rates.csv");
//   int v0 = t.require_column("v0", "--y");       // InputError naming the option if absent
//   vzero::write_file_atomic("out.csv", text);     // temp file + rename: no half files
#pragma once

#include <functional>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace vzero {

struct Table {
  std::string source;  // file name, for messages
  char delimiter = ',';
  std::vector<std::string> header;               // trimmed names, in file order
  std::vector<std::vector<std::string>> rows;    // each as long as header
  std::vector<int> line_of_row;                  // 1-based file line of each row
  std::vector<std::vector<int>> column_of_cell;  // 1-based column of each cell's first character

  // Index of the column named `name` (case-insensitive), or -1.
  int column(std::string_view name) const;
  // Same, but throws InputError naming the file, the columns found and `fix_hint`.
  int require_column(std::string_view name, std::string_view fix_hint) const;
  // Reads cell (row, col) as a number; nothing when empty; InputError with file:line:column
  // when it is text.
  std::optional<double> number(std::size_t row, int col) const;
};

// One column of an output table, as the Table Schema describes it (datapackage.json).
// vzero's tables make theirs from their column declarations (src/core/columns.hpp).
struct FieldSpec {
  std::string name;
  std::string type;  // "string", "number", "integer", "boolean"
  std::string unit;  // "" when none or given per row (see description)
  std::string description;
};

// Reads a CSV (delimiter ',' ';' or tab, guessed from the header), skipping blank lines
// and lines starting with '#'. UTF-8 with or without BOM, LF or CRLF. Throws InputError on
// a ragged row, an unclosed quote, an empty file or a duplicated header name.
Table read_table(const std::string& path);
Table parse_table(std::string name, std::string_view text);

// One row of a table read row by row: valid only while the callback runs.
struct TableRow {
  const Table& head;                           // source, delimiter and header (no rows)
  const std::vector<std::string_view>& cells;  // trimmed, one per header column
  const std::vector<int>& columns;             // 1-based column of each cell's first character
  int line = 0;                                // 1-based file line
  // As Table::number: nothing when empty, InputError with file:line:column when text.
  std::optional<double> number(int col) const;
};
using TableRowFn = std::function<void(const TableRow&)>;

// A table read row by row, with read_table's rules and errors: each row goes to the
// callback and is not kept, so memory does not grow with the rows. Feed it lines (without
// their line end) in order, then call finish(), which throws for a table without a header.
class TableLines {
 public:
  TableLines(std::string source, TableRowFn row);
  void line(std::string_view text, int line_number);
  // Text of whole lines ('\n'-ended, as vzero's CSV writer makes them), numbered on.
  void text(std::string_view lines);
  const Table& finish() const;
  const Table& head() const { return head_; }

 private:
  Table head_;
  TableRowFn row_;
  bool have_header_ = false;
  int next_line_ = 1;
  std::vector<std::string_view> cells_;
  std::vector<int> columns_;
};
// The file at `path` through TableLines; returns the head.
Table stream_table(const std::string& path, const TableRowFn& row);

// Quotes a CSV field when it holds ',' '"' CR or LF (RFC 4180), or ';' or tab (so that no
// delimiter guess splits it); the rule every CSV vzero writes follows (core/csv_write.hpp).
std::string csv_field(std::string_view text);

// Shortest text that reads back to the same double ("0.1", "6.551845646783069",
// "1e-06"); "" for NaN (an empty CSV cell); "inf"/"-inf" never occur in vzero outputs.
std::string format_number(double v);

// Writes `content` to `path` through a temporary file in the same folder and a rename,
// so readers see the old file or the new one, never a partial one. Throws InputError
// "cannot write PATH: reason" (disk full, folder missing or read-only).
void write_file_atomic(const std::string& path, std::string_view content);
// The same for content held in several pieces, written one after the other.
void write_file_atomic(const std::string& path, const std::vector<std::string_view>& parts);

// An output written piece by piece and put in place at once, as write_file_atomic does:
// append() to a temporary file beside `path`, commit() to fsync and rename it; a file never
// committed is removed. Devices and pipes are written directly. Errors as write_file_atomic.
//
// **Example**:
//   vzero::AtomicFile out("rates.csv");
//   out.append(header);  for (...) out.append(rows);  out.commit();
//
// The replaced file keeps its permissions (a new one gets 0666 less the umask), the folder is
// synced after the rename, and the temporary file is named `.NAME.vzero-PID-RANDOM.tmp`:
// one left by a process that no longer runs (killed outright) is removed when the next
// AtomicFile for NAME is made there. While it exists it is listed for
// remove_temporary_outputs().
class AtomicFile {
 public:
  explicit AtomicFile(const std::string& path);
  ~AtomicFile();
  AtomicFile(const AtomicFile&) = delete;
  AtomicFile& operator=(const AtomicFile&) = delete;
  void append(std::string_view text);
  void commit();
  // SHA-256 (hex) of every byte appended so far: what the published file will hold.
  std::string sha256() const;

 private:
  [[noreturn]] void fail(int err);
  std::string path_, tmp_;
  int slot_ = -1;  // in the list of live temporary files
  int fd_ = -1;
  bool device_ = false, done_ = false;
  std::size_t written_ = 0, started_ = 0;  // bytes written; bytes handed to the disk so far
  void* hash_ = nullptr;                   // the digest of what was appended (an EVP_MD_CTX)
};

// Removes every AtomicFile temporary file of this process that is not yet committed. Safe to
// call from a signal handler (it only unlinks); the program calls it on SIGINT, SIGTERM and
// SIGHUP before it ends, so an interrupted run leaves no temporary files.
void remove_temporary_outputs() noexcept;

}  // namespace vzero
