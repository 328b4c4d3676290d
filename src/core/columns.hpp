// An output table declared once. Each column is one entry: name, Table Schema type, unit,
// description and how a row's value is written. The CSV header, every row and the Table
// Schema fields (FieldSpec, for datapackage.json) all come from that one list, in its order,
// so they cannot disagree.
//
// A declaration is an array of ColumnEntry; columns_for() turns it into the columns of one
// table (`Context` is what decides which columns there are: the plate-map columns, whether a
// well volume was given, ...). `Row` is a small view of one row's data, built per row.
//
// **Example**:
//   struct Point { double t_s, v; };
//   constexpr ColumnEntry<Point, NoContext> k_points[] = {
//       {"time_s", FieldType::number, "s", "read time", [](CsvOut& o, const Point& p, std::size_t) { o.number(p.t_s);
//       }},
//       {"v", FieldType::number, "", "value", [](CsvOut& o, const Point& p, std::size_t) { o.number(p.v); }},
//   };
//   const auto cols = columns_for<Point, NoContext>(k_points, {});
//   CsvOut out;  write_header(out, cols);  for (const Point& p : points) write_row(out, cols, p);
//   std::vector<FieldSpec> schema = schema_fields(cols);
#pragma once

#include <cstddef>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "core/csv_write.hpp"
#include "vzero/table.hpp"

namespace vzero::detail {

enum class FieldType : unsigned char { string, number, integer, boolean };

// Table Schema's name of the type.
constexpr std::string_view to_string(FieldType t) {
  switch (t) {
    case FieldType::number:
      return "number";
    case FieldType::integer:
      return "integer";
    case FieldType::boolean:
      return "boolean";
    case FieldType::string:
      break;
  }
  return "string";
}

// The context of a table whose columns never vary.
struct NoContext {};

// Writes the cell of `row` in one column (separators are the table's business). `arg` is
// the column's place in its passed-through group (the i-th plate-map column), else 0. A
// plain function pointer: one indirect call per cell, no allocation.
template <class Row>
using CellWriter = void (*)(CsvOut& out, const Row& row, std::size_t arg);

// One column of a table as written. The views point into the declaration and the context.
template <class Row>
struct Column {
  std::string_view name;
  FieldType type = FieldType::string;
  std::string_view unit;  // Table Schema unit; "" when none or when a row gives it
  std::string_view description;
  CellWriter<Row> write = nullptr;
  std::size_t arg = 0;
};

// One entry of a declaration: one column, unless
// - `when` is set: the column is there only when it holds for the context;
// - `each` is set: one column per name it gives (`arg` = its index; passed-through columns),
//   typed by `type_of` when set, each with `description`;
// - `unit_of` is set: the unit comes from the context (e.g. the fitted table's x unit).
template <class Row, class Context>
struct ColumnEntry {
  std::string_view name;
  FieldType type = FieldType::string;
  std::string_view unit;
  std::string_view description;
  CellWriter<Row> write = nullptr;
  bool (*when)(const Context&) = nullptr;
  const std::vector<std::string>& (*each)(const Context&) = nullptr;
  FieldType (*type_of)(std::string_view name) = nullptr;
  std::string_view (*unit_of)(const Context&) = nullptr;
};

template <class Row, class Context>
std::vector<Column<Row>> columns_for(std::span<const ColumnEntry<Row, Context>> entries, const Context& context) {
  std::vector<Column<Row>> out;
  out.reserve(entries.size());
  for (const auto& e : entries) {
    if (e.when && !e.when(context)) continue;
    const std::string_view unit = e.unit_of ? e.unit_of(context) : e.unit;
    if (!e.each) {
      out.push_back({e.name, e.type, unit, e.description, e.write, 0});
      continue;
    }
    const std::vector<std::string>& names = e.each(context);
    for (std::size_t i = 0; i < names.size(); ++i)
      out.push_back({names[i], e.type_of ? e.type_of(names[i]) : e.type, unit, e.description, e.write, i});
  }
  return out;
}

template <class Row>
void write_header(CsvOut& out, const std::vector<Column<Row>>& columns) {
  for (std::size_t i = 0; i < columns.size(); ++i) {
    if (i) out.separator();
    out.field(columns[i].name);
  }
  out.end_row();
}

template <class Row>
void write_row(CsvOut& out, const std::vector<Column<Row>>& columns, const Row& row) {
  const Column<Row>* c = columns.data();
  for (std::size_t i = 0, n = columns.size(); i < n; ++i) {
    if (i) out.separator();
    c[i].write(out, row, c[i].arg);
  }
  out.end_row();
}

// The Table Schema fields, one per column in the same order.
template <class Row>
std::vector<FieldSpec> schema_fields(const std::vector<Column<Row>>& columns) {
  std::vector<FieldSpec> out;
  out.reserve(columns.size());
  for (const auto& c : columns)
    out.push_back(
        {std::string(c.name), std::string(to_string(c.type)), std::string(c.unit), std::string(c.description)});
  return out;
}

}  // namespace vzero::detail
