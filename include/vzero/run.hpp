// The in-memory model of one plate read: a `Run` holds one or more `Channel`s, each a
// reads × wells matrix of values with a parallel matrix of read statuses.
//
// Wells follow the ANSI/SLAS 4-2004 row/column convention: rows A–Z then AA–AF, columns
// from 1; "A01" reads as A1. Plate formats: 6 (2×3), 12 (3×4), 24 (4×6), 48 (6×8),
// 96 (8×12), 384 (16×24), 1536 (32×48).
//
// **Example**:
//   auto w = vzero::parse_well("B07");   // WellId{1, 6}
//   vzero::well_name(*w);                // "B7"
#pragma once

#include <Eigen/Core>
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

namespace vzero {

// 0-based row and column of a well.
struct WellId {
  int row = 0;
  int column = 0;
  friend auto operator<=>(const WellId&, const WellId&) = default;
};

struct PlateFormat {
  int rows = 8;
  int columns = 12;
  int wells() const { return rows * columns; }
  // 0-based row-major index: row·columns + column.
  int index(WellId w) const { return w.row * columns + w.column; }
  WellId well(int index) const { return {index / columns, index % columns}; }
  bool holds(WellId w) const { return w.row >= 0 && w.row < rows && w.column >= 0 && w.column < columns; }
  friend bool operator==(const PlateFormat&, const PlateFormat&) = default;
};

// The standard format with `wells` wells, or nothing if `wells` is not one of them.
std::optional<PlateFormat> plate_format_for(int wells);
// The smallest standard format that holds every listed well, or nothing (beyond 1536).
std::optional<PlateFormat> smallest_format_holding(const std::vector<WellId>& wells);
// Well centre in mm from the plate's left and top edges (ANSI/SLAS 4-2004 offsets), for
// 96, 384 and 1536 formats; nothing for the others.
std::optional<std::pair<double, double>> well_centre_mm(PlateFormat format, WellId w);

// "A".."Z", "AA".."AF" for rows 0..31.
std::string row_label(int row);
std::string well_name(WellId w);
// A set of wells as text, ';'-separated in row-major order of their first well; a rectangle
// of 3 or more wells all in the set is written as its corners, top left and bottom right:
// {A45..A48, B45..B48, …, AF45..AF48} gives "A45:AF48", {D1, D2} gives "D1;D2". Rectangles
// are taken greedily (from the first well not yet written, as far right, then as far down,
// as the set allows), so the same set always gives the same text. Repeats are ignored.
std::string well_set_text(std::vector<WellId> wells);
// Parses "A1", "a1", "A01", "AF48"; nothing when the text is not a well name (surrounding
// spaces are allowed). Rows beyond AF and column 0 are rejected.
std::optional<WellId> parse_well(std::string_view text);
// Parses a row label ("A", "AF"); nothing otherwise.
std::optional<int> parse_row_label(std::string_view text);

enum class Quantity { absorbance, fluorescence, luminescence, other };
std::string_view to_string(Quantity q);
std::optional<Quantity> parse_quantity(std::string_view text);

// Status of one read of one well. Missing and overflow values are never stored as numbers:
// their value slot holds NaN and must not be used.
enum class ReadStatus : std::uint8_t { ok = 0, overflow = 1, missing = 2, excluded = 3 };
std::string_view to_string(ReadStatus s);

using StatusMatrix = Eigen::Matrix<ReadStatus, Eigen::Dynamic, Eigen::Dynamic>;

struct Channel {
  std::string name;  // e.g. "A405", "ex360/em460"
  Quantity quantity = Quantity::other;
  std::string unit;                   // signal unit, e.g. "AU", "RFU"
  std::vector<double> time_s;         // one per read, strictly increasing
  std::vector<double> temperature_c;  // empty, or one per read (NaN where not given)
  std::vector<int> wells;             // plate index of each matrix column, ascending
  Eigen::MatrixXd values;             // reads × wells; NaN where status is not ok
  StatusMatrix status;                // reads × wells

  int reads() const { return static_cast<int>(time_s.size()); }
  // Matrix column of a plate index, or -1 when the channel has no such well.
  int column_of(int plate_index) const;
};

// One thing a reader decided about a file: `name` ("delimiter", "time_unit", …), the value
// it took and on what basis (the profile, a header, or a rule worked on the file).
struct ReadFact {
  std::string name;
  std::string value;
  std::string basis;
};

struct Run {
  std::string source;                                         // path as given by the user
  std::string sha256;                                         // hex digest of the bytes read
  std::string sheet;                                          // the sheet read, for a workbook (.xlsx)
  std::string profile;                                        // profile name used
  std::string shape;                                          // "wide", "grid" or "long"
  std::vector<std::pair<std::string, std::string>> metadata;  // in file order
  PlateFormat format;
  bool format_inferred = true;  // false when the profile fixed it
  std::vector<Channel> channels;
  // What the reader inferred (shape, delimiter, decimal mark, time unit, plate format, channels,
  // overflow tokens), shown by `inspect` and recorded in datapackage.json, and the lines it
  // read through rather than as data (a blank line inside a block, a comment line).
  std::vector<ReadFact> read_facts;
  std::vector<std::string> read_notes;
  // What was read as stated but looks wrong (a header's seconds at steps no plate reader
  // makes): `inspect` and `rates` print it as a warning, datapackage.json records it.
  std::vector<std::string> read_warnings;

  const Channel* find_channel(std::string_view name) const;
};

}  // namespace vzero
