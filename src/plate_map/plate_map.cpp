#include "vzero/plate_map.hpp"
#include "core/files.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cerrno>
#include <cmath>
#include <cstring>
#include <fstream>
#include <sstream>
#include <utility>
#include <vector>

#include "core/line_source.hpp"
#include "plate_map/plate_map_columns.hpp"
#include "core/text.hpp"
#include "vzero/error.hpp"
#include "vzero/table.hpp"

namespace vzero {

namespace {
constexpr RoleWord k_roles[] = {
    {Role::sample, "sample", "a reaction whose rate is wanted"},
    {Role::blank, "blank", "no reaction: its signal (or rate) is subtracted from the others"},
    {Role::standard, "standard", "a known concentration of the measured species, for the standard curve"},
    {Role::empty, "empty", "nothing to judge (also every well absent from the map)"},
    {Role::full_activity, "full-activity",
     "screening control: the uninhibited reaction, the 100 % activity level of its plate"},
    {Role::no_activity, "no-activity",
     "screening control: the fully inhibited or no-enzyme reaction, the 0 % activity level of its plate"},
};
}  // namespace

std::span<const RoleWord> role_table() { return k_roles; }

std::string_view to_string(Role r) {
  for (const auto& w : k_roles)
    if (w.role == r) return w.word;
  return "empty";
}

std::string role_word_list() {
  std::string out;
  const std::size_t n = std::size(k_roles);
  for (std::size_t i = 0; i < n; ++i)
    out += std::string(i ? (i + 1 == n ? " or " : ", ") : "") + std::string(k_roles[i].word);
  return out;
}

bool rated_as_sample(Role r) { return r == Role::sample || is_control(r); }
bool is_control(Role r) { return r == Role::full_activity || r == Role::no_activity; }

const WellInfo* PlateMap::find(WellId w) const {
  auto it = wells.find(w);
  return it == wells.end() ? nullptr : &it->second;
}

namespace {

// One value of one well, as read from either form.
struct Cell {
  std::string text;
  int line = 0;
  int column = 0;
  std::string line_text;
};

// Words labs write for a role, and the role they most likely mean: offered as a fix, never
// read as that role (a "control" may be either kind; the user says which).
const char* likely_role(const std::string& l) {
  static const std::vector<std::pair<std::vector<std::string>, const char*>> k_words = {
      {{"buffer", "background", "bkg", "bg", "no enzyme", "no-enzyme", "no_enzyme", "reagent blank", "blk"},
       "blank (a well with everything but the enzyme, or the substrate, whose signal is subtracted)"},
      {{"std", "calibrator", "calibration", "cal"}, "standard (a known product concentration, in `standard_conc`)"},
      {{"unknown", "unk", "test", "smp", "sample well"}, "sample"},
      {{"none", "unused", "na", "n/a", "-", "x"}, "empty"},
      {{"pos", "positive", "positive control", "max", "high control", "uninhibited"}, "full-activity"},
      {{"neg", "negative", "negative control", "min", "low control", "inhibited"}, "no-activity"},
  };
  for (const auto& [words, role] : k_words)
    if (std::find(words.begin(), words.end(), l) != words.end()) return role;
  return nullptr;
}

Role parse_role(const std::string& file, const Cell& c) {
  const std::string l = detail::lower(detail::trim(c.text));
  for (const auto& w : role_table())
    if (l == w.word) return w.role;
  std::vector<std::string> fixes;
  if (const char* r = likely_role(l)) fixes.push_back(fmt::format("if \"{}\" means {}, write that role", c.text, r));
  fixes.emplace_back("use one of the roles in the `role` column");
  throw InputError(Where{file, c.line, c.column, c.line_text},
                   fmt::format("expected a role ({}), found \"{}\"", role_word_list(), c.text), std::move(fixes));
}

// A concentration: empty (NaN) or a number >= 0. Zero is kept for every role: a sample at
// substrate 0 is the no-substrate control of a kinetics series.
double parse_conc(const std::string& file, const Cell& c, const std::string& column) {
  if (detail::trim(c.text).empty()) return NAN;
  auto v = detail::parse_number(c.text);
  if (!v) {
    throw InputError(Where{file, c.line, c.column, c.line_text},
                     fmt::format("expected a number in `{}`, found {}", column, detail::describe_found(c.text)),
                     {"write the concentration as a plain number with '.' decimals; a unit goes in the column's header, e.g. "
                      "`substrate (mM)`"});
  }
  if (*v < 0) {
    throw InputError(Where{file, c.line, c.column, c.line_text},
                     fmt::format("expected a concentration >= 0 in `{}`, found {}", column, c.text),
                     {"concentrations cannot be negative; leave the cell empty when unknown"});
  }
  return *v;
}

// Builds the map from per-well named values (column name -> cell), in column order.
class MapBuilder {
 public:
  MapBuilder(std::string file, std::vector<std::string> columns, int header_line, const MapColumnOptions& options)
      : file_(std::move(file)), columns_(std::move(columns)) {
    plan_ = detail::plan_map_columns(file_, header_line, columns_, options);
    for (std::size_t i = 0; i < columns_.size(); ++i)
      if (plan_.kind[i] != detail::ColumnKind::well && plan_.kind[i] != detail::ColumnKind::role)
        map_.columns.push_back(columns_[i]);
    map_.header_line = header_line;
  }
  void add(WellId w, const std::vector<Cell>& cells, int line, const std::string& line_text, int well_column) {
    if (auto it = map_.wells.find(w); it != map_.wells.end()) {
      throw InputError(Where{file_, line, well_column, line_text},
                       fmt::format("well {} is mapped twice (first at line {})", well_name(w), it->second.line),
                       {"keep one row per well"});
    }
    WellInfo info;
    info.well = w;
    info.line = line;
    info.column = well_column;
    info.line_text = line_text;
    for (std::size_t i = 0; i < columns_.size(); ++i) {
      const Cell& c = cells[i];
      const int decades = plan_.decades[i];
      switch (plan_.kind[i]) {
        case detail::ColumnKind::well:
          continue;
        case detail::ColumnKind::role:
          info.role = parse_role(file_, c);
          continue;
        case detail::ColumnKind::substrate:
          info.substrate = detail::scale_by_decades(parse_conc(file_, c, columns_[i]), decades);
          if (plan_.match_is_substrate && std::isfinite(info.substrate)) info.match = fmt::format("{}", info.substrate);
          break;
        case detail::ColumnKind::standard_conc:
          info.standard_conc = detail::scale_by_decades(parse_conc(file_, c, columns_[i]), decades);
          break;
        case detail::ColumnKind::match:
          info.match = std::string(detail::trim(c.text));
          break;
        case detail::ColumnKind::compound_conc:
          info.compound_conc = detail::scale_by_decades(parse_conc(file_, c, columns_[i]), decades);
          break;
        case detail::ColumnKind::compound:
        case detail::ColumnKind::other:
          break;
      }
      info.values.push_back(std::string(detail::trim(c.text)));
    }
    if (info.role == Role::standard && std::isnan(info.standard_conc)) {
      throw InputError(Where{file_, line, 0, line_text},
                       fmt::format("standard well {} has no `standard_conc`", well_name(w)),
                       {"give every standard well its known concentration in `standard_conc`"});
    }
    map_.wells.emplace(w, std::move(info));
  }
  PlateMap finish(std::string form) && {
    if (map_.wells.empty())
      throw InputError(Where{file_, map_.header_line},
                       "the plate map names its columns but maps no well (no row with a role)",
                       {"add one line per well (well, role, …), or check that the right file was given with --layout"});
    map_.source = file_;
    map_.form = std::move(form);
    bool screen = false;
    for (const auto& [w, info] : map_.wells) screen |= is_control(info.role);
    map_.warnings = screen ? detail::screen_column_warnings(plan_, file_) : std::move(plan_.warnings);
    map_.uses = std::move(plan_.uses);
    return std::move(map_);
  }

 private:
  std::string file_;
  std::vector<std::string> columns_;
  detail::ColumnPlan plan_;
  PlateMap map_;
};

// The line of the first non-blank, non-comment line: the tidy form's header.
int header_line_of(std::string_view text) {
  std::size_t at = 0;
  for (int ln = 1; at <= text.size(); ++ln) {
    const std::size_t end = text.find('\n', at);
    const auto l = detail::trim(text.substr(at, end == std::string_view::npos ? std::string_view::npos : end - at));
    if (!l.empty() && l.front() != '#') return ln;
    if (end == std::string_view::npos) break;
    at = end + 1;
  }
  return 1;
}

PlateMap read_tidy(const std::string& name, std::string_view text, const MapColumnOptions& o) {
  Table t = parse_table(name, text);
  int wc = t.require_column("well", "the plate map needs a `well` column (A1, B7, …) and a `role` column");
  t.require_column("role", "add a `role` column: " + role_word_list());
  const int header_line = header_line_of(text);
  MapBuilder b(name, t.header, header_line, o);
  for (std::size_t r = 0; r < t.rows.size(); ++r) {
    const auto& row = t.rows[r];
    std::string line_text;
    for (std::size_t i = 0; i < row.size(); ++i) line_text += (i ? std::string(1, t.delimiter) : "") + row[i];
    auto w = parse_well(row[static_cast<std::size_t>(wc)]);
    if (!w) {
      throw InputError(Where{name, t.line_of_row[r], t.column_of_cell[r][static_cast<std::size_t>(wc)], line_text},
                       fmt::format("expected a well name (A1 … AF48), found \"{}\"", row[static_cast<std::size_t>(wc)]),
                       {"write wells as a row letter and a column number, e.g. B7 or B07"});
    }
    std::vector<Cell> cells;
    for (std::size_t i = 0; i < row.size(); ++i)
      cells.push_back(Cell{row[i], t.line_of_row[r], t.column_of_cell[r][i], line_text});
    b.add(*w, cells, t.line_of_row[r], line_text, t.column_of_cell[r][static_cast<std::size_t>(wc)]);
  }
  return std::move(b).finish("table");
}

// The blocks of a plate-grid map as read: each variable's cells per well.
struct GridBlocks {
  std::vector<std::string> variables;
  std::map<WellId, std::map<std::string, Cell>> values;  // well -> variable -> cell
  std::map<WellId, int> first_line;
  int first_variable_line = 1;
};

// The header after a variable name: an empty cell, then column numbers 1–48.
std::vector<int> grid_header(const std::string& name, int ln, std::string_view line,
                             const std::vector<detail::Field>& fields, const std::string& current) {
  std::vector<int> cols;
  for (std::size_t i = 1; i < fields.size(); ++i) {
    auto v = detail::parse_number(fields[i].text);
    if (!v || *v < 1 || *v > 48 || *v != static_cast<int>(*v)) {
      throw InputError(Where{name, ln, fields[i].column, std::string(line)},
                       fmt::format("expected a column number (1–48) in the header of `{}`, found \"{}\"", current,
                                   fields[i].text),
                       {"after each variable name put a header line: an empty cell, then 1, 2, 3, …"});
    }
    cols.push_back(static_cast<int>(*v) - 1);
  }
  if (!detail::trim(fields[0].text).empty() || cols.empty()) {
    throw InputError(Where{name, ln, 1, std::string(line)},
                     fmt::format("expected a header of column numbers after the variable `{}`", current),
                     {"after each variable name put a header line: an empty cell, then 1, 2, 3, …"});
  }
  return cols;
}

// One row (A, B, …) of the current variable's block.
void grid_row(const std::string& name, int ln, std::string_view line, const std::vector<detail::Field>& fields,
              int row, const std::vector<int>& cols, const std::string& current, GridBlocks& g) {
  if (fields.size() > cols.size() + 1) {
    throw InputError(Where{name, ln, fields[cols.size() + 1].column, std::string(line)},
                     fmt::format("expected at most {} values in row {} of `{}`, found {}", cols.size(), row_label(row),
                                 current, fields.size() - 1),
                     {"check for an extra delimiter in the row"});
  }
  for (std::size_t i = 1; i < fields.size(); ++i) {
    WellId w{row, cols[i - 1]};
    auto& per = g.values[w];
    if (per.count(current)) {
      throw InputError(Where{name, ln, fields[i].column, std::string(line)},
                       fmt::format("well {} is given twice in `{}`", well_name(w), current),
                       {"each row letter appears once per variable"});
    }
    per[current] = Cell{std::string(detail::trim(fields[i].text)), ln, fields[i].column, std::string(line)};
    if (!g.first_line.count(w)) g.first_line[w] = ln;
  }
}

GridBlocks read_grid_blocks(const std::string& name, std::string_view text) {
  detail::LineSource src(name, text);
  std::string_view line;
  GridBlocks g;
  std::vector<detail::Field> fields;
  std::string current;
  char d = 0;
  std::vector<int> cols;
  bool expect_header = false;
  while (src.next(line)) {
    int ln = src.line_number();
    auto tl = detail::trim(line);
    if (tl.empty() || tl.front() == '#') continue;
    if (d == 0) d = detail::guess_delimiter(line) ? detail::guess_delimiter(line) : ',';
    detail::split_fields_into(line, d, fields);
    while (fields.size() > 1 && detail::trim(fields.back().text).empty()) fields.pop_back();
    if (expect_header) {
      cols = grid_header(name, ln, line, fields, current);
      expect_header = false;
      continue;
    }
    auto row = parse_row_label(fields[0].text);
    if (row && !current.empty() && fields.size() > 1) {
      grid_row(name, ln, line, fields, *row, cols, current, g);
      continue;
    }
    if (fields.size() == 1 && !row) {
      current = std::string(detail::trim(fields[0].text));
      for (const auto& v : g.variables) {
        if (detail::iequals(v, current))
          throw InputError(Where{name, ln, 1, std::string(line)}, fmt::format("variable `{}` appears twice", current),
                           {"give each plate-shaped block its own variable name"});
      }
      g.variables.push_back(current);
      if (g.variables.size() == 1) g.first_variable_line = ln;
      expect_header = true;
      continue;
    }
    throw InputError(Where{name, ln, 1, std::string(line)},
                     "expected a variable name, a header of column numbers or a row (A, B, …) of the plate-grid map",
                     {"see the plate map section of the README for the two map forms"});
  }
  return g;
}

PlateMap read_grid_form(const std::string& name, std::string_view text, const MapColumnOptions& o) {
  GridBlocks g = read_grid_blocks(name, text);
  std::string role_var;
  for (const auto& v : g.variables)
    if (detail::iequals(v, "role")) role_var = v;
  if (role_var.empty()) {
    throw InputError(Where{name}, "the plate-grid map has no `role` block",
                     {"add a block named role (" + role_word_list() + " per well)"});
  }
  std::vector<std::string> columns{"well"};
  columns.insert(columns.end(), g.variables.begin(), g.variables.end());
  MapBuilder b(name, columns, g.first_variable_line, o);
  for (const auto& [w, per] : g.values) {
    auto rit = per.find(role_var);
    if (rit == per.end() || rit->second.text.empty()) continue;  // not in the map
    std::vector<Cell> cells{Cell{well_name(w), g.first_line[w], 1, ""}};
    for (const auto& v : g.variables) {
      auto it = per.find(v);
      cells.push_back(it == per.end() ? Cell{"", g.first_line[w], 0, ""} : it->second);
    }
    b.add(w, cells, rit->second.line, rit->second.line_text, rit->second.column);
  }
  return std::move(b).finish("grid");
}

}  // namespace

PlateMap parse_plate_map(const std::string& name, std::string_view text, const MapColumnOptions& o) {
  // The tidy form's first line is a header naming `well`; the grid form's is a variable name.
  detail::LineSource src(name, text);
  std::string_view line;
  while (src.next(line)) {
    auto tl = detail::trim(line);
    if (tl.empty() || tl.front() == '#') continue;
    char d = detail::guess_delimiter(line);
    auto fields = detail::split_fields(line, d ? d : ',');
    for (const auto& f : fields)
      if (detail::iequals(detail::trim(f.text), "well")) return read_tidy(name, text, o);
    return read_grid_form(name, text, o);
  }
  throw InputError(Where{name}, "the plate map is empty", {"check that the right file was given"});
}

PlateMap read_plate_map(const std::string& path, const MapColumnOptions& o) {
  detail::FileBytes f = detail::read_whole_file(path, "check the --layout path");
  PlateMap map = parse_plate_map(path, f.text, o);
  map.sha256 = std::move(f.sha256);
  return map;
}

void check_plate_map(const PlateMap& map, const Run& run) {
  for (const auto& [w, info] : map.wells) {
    // Made only for an error: two strings copied per well add up over a batch.
    const auto where = [&, &info = info] { return Where{map.source, info.line, info.column, info.line_text}; };
    if (!run.format.holds(w)) {
      throw InputError(
          where(),
          fmt::format("well {} is not on the {}-well plate (rows A–{}, columns 1–{}) read from {}", well_name(w),
                      run.format.wells(), row_label(run.format.rows - 1), run.format.columns, run.source),
          {"check the well name in the plate map, or set `plate` in the profile"});
    }
    bool read = false;
    for (const auto& c : run.channels) read |= c.column_of(run.format.index(w)) >= 0;
    if (!read) {
      throw InputError(where(),
                       fmt::format("well {} is in the plate map but {} has no reads for it", well_name(w), run.source),
                       {"remove the well from the map, or check that the map belongs to this export"});
    }
  }
}

}  // namespace vzero
