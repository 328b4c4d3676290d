#include "plate_map/plate_map_columns.hpp"

#include <fmt/format.h>
#include <cmath>

#include "core/text.hpp"
#include "vzero/error.hpp"

namespace vzero {

namespace {

// A unit as written, with µ (U+00B5) and μ (U+03BC) read as u: its power of ten against
// mol/L, or nothing when it is not a concentration unit.
bool unit_decades(std::string& unit, int& decades) {
  for (std::string_view micro : {"\xC2\xB5", "\xCE\xBC"})
    if (unit.rfind(micro, 0) == 0) unit = "u" + unit.substr(micro.size());
  static const std::pair<const char*, int> k_units[] = {{"M", 0}, {"mM", -3}, {"uM", -6}, {"nM", -9}};
  for (const auto& [name, d] : k_units)
    if (unit == name) {
      decades = d;
      return true;
    }
  return false;
}

}  // namespace

std::pair<std::string, std::string> split_header_unit(std::string_view header) {
  const std::string h(detail::trim(header));
  std::string base, unit;
  if (!h.empty() && (h.back() == ')' || h.back() == ']')) {
    const std::size_t open = h.rfind(h.back() == ')' ? '(' : '[');
    if (open == std::string::npos) return {h, ""};
    unit = std::string(detail::trim(std::string_view(h).substr(open + 1, h.size() - open - 2)));
    base = h.substr(0, open);
  } else {
    const std::size_t cut = h.find_last_of("_ ");
    if (cut == std::string::npos) return {h, ""};
    unit = h.substr(cut + 1);
    base = h.substr(0, cut);
  }
  int decades = 0;
  if (!unit_decades(unit, decades)) return {h, ""};
  while (!base.empty() && (base.back() == '_' || base.back() == ' ')) base.pop_back();
  if (base.empty()) return {h, ""};
  return {base, unit};
}

namespace detail {

double scale_by_decades(double value, int decades) {
  const double p = std::pow(10.0, std::abs(decades));
  return decades >= 0 ? value * p : value / p;
}

namespace {

std::string column_list(const std::vector<std::string>& columns) {
  std::string out;
  for (const auto& c : columns) out += (out.empty() ? "`" : ", `") + c + "`";
  return out;
}

// A column that is neither the substrate nor known, but whose name says concentration.
bool looks_like_concentration(const std::string& column, const std::string& unit) {
  const std::string l = lower(column);
  return !unit.empty() || l.find("conc") != std::string::npos || l.find("substrate") != std::string::npos;
}

// The compound concentration: the column --compound-conc-column names (with or without its
// unit), else `compound_conc` (unit optional) or `compound` with a concentration unit.
bool is_compound_conc(const std::string& column, const std::string& base, const std::string& unit,
                      const MapColumnOptions& o) {
  if (!o.compound_conc_column.empty()) return iequals(column, o.compound_conc_column) || iequals(base, o.compound_conc_column);
  return iequals(base, "compound_conc") || (iequals(base, "compound") && !unit.empty());
}

void take(ColumnPlan& plan, std::size_t i, ColumnKind kind, const std::string& column, const std::string& unit,
          const MapColumnOptions& o, const std::string& file, int header_line) {
  static const char* const k_names[] = {"well",     "role",          "substrate", "standard_conc",
                                        "match",    "compound",      "compound_conc", ""};
  static const char* const k_options[] = {"", "", "substrate", "substrate", "match", "compound", "compound-conc", ""};
  const char* use = k_names[static_cast<int>(kind)];
  const char* option = k_options[static_cast<int>(kind)];
  for (const auto& u : plan.uses)
    if (u.use == use)
      throw InputError(Where{file, header_line},
                       fmt::format("two plate-map columns are read as the {}: `{}` and `{}`", use, u.column, column),
                       {fmt::format("keep one of them, or name the one to use with --{}-column (method key {}-column)",
                                    option, option)});
  plan.kind[i] = kind;
  ColumnUse cu{column, use, unit, 1};
  if (kind != ColumnKind::match && kind != ColumnKind::compound) {
    int from = 0, to = -6;
    std::string u = unit, run_unit = o.conc_unit;
    if (!u.empty()) unit_decades(u, from);
    unit_decades(run_unit, to);
    plan.decades[i] = u.empty() ? 0 : from - to;
    cu.unit = u.empty() ? o.conc_unit : u;
    cu.unit_in_header = !u.empty();
    cu.factor = scale_by_decades(1.0, plan.decades[i]);
  }
  plan.uses.push_back(std::move(cu));
}

[[noreturn]] void missing(const std::string& file, int header_line, const std::string& what, const std::string& name,
                          const std::vector<std::string>& columns) {
  throw InputError(Where{file, header_line},
                   fmt::format("--{}-column names `{}`, but the plate map's columns are {}", what, name,
                               column_list(columns)),
                   {fmt::format("give --{}-column (method key {}-column) one of the map's column names", what, what)});
}

}  // namespace

ColumnPlan plan_map_columns(const std::string& file, int header_line, const std::vector<std::string>& columns,
                            const MapColumnOptions& o) {
  ColumnPlan plan;
  plan.kind.assign(columns.size(), ColumnKind::other);
  plan.decades.assign(columns.size(), 0);
  for (std::size_t i = 0; i < columns.size(); ++i) {
    const std::string& c = columns[i];
    const auto [base, unit] = split_header_unit(c);
    if (iequals(c, "well")) {
      plan.kind[i] = ColumnKind::well;
    } else if (iequals(c, "role")) {
      plan.kind[i] = ColumnKind::role;
    } else if (o.substrate_column.empty() ? iequals(base, "substrate")
                                          : iequals(c, o.substrate_column) || iequals(base, o.substrate_column)) {
      take(plan, i, ColumnKind::substrate, c, unit, o, file, header_line);
      // Blanks matched by substrate level (substrate-only blanks): the substrate column is also
      // the match, by its value in the run's unit.
      if (!o.match_column.empty() && (iequals(c, o.match_column) || iequals(base, o.match_column))) {
        plan.match_is_substrate = true;
        plan.uses.push_back(ColumnUse{c, "match", "", false, 1});
      }
    } else if (iequals(base, "standard_conc")) {
      take(plan, i, ColumnKind::standard_conc, c, unit, o, file, header_line);
    } else if (o.match_column.empty() ? iequals(c, "match") : iequals(c, o.match_column)) {
      take(plan, i, ColumnKind::match, c, "", o, file, header_line);
    } else if (is_compound_conc(c, base, unit, o)) {
      take(plan, i, ColumnKind::compound_conc, c, unit, o, file, header_line);
    } else if (o.compound_column.empty() ? iequals(c, "compound") : iequals(c, o.compound_column)) {
      take(plan, i, ColumnKind::compound, c, "", o, file, header_line);
    }
  }
  auto taken = [&](const char* use) {
    for (const auto& u : plan.uses)
      if (u.use == use) return true;
    return false;
  };
  if (!o.substrate_column.empty() && !taken("substrate")) missing(file, header_line, "substrate", o.substrate_column, columns);
  if (!o.match_column.empty() && !taken("match")) missing(file, header_line, "match", o.match_column, columns);
  if (!o.compound_column.empty() && !taken("compound"))
    missing(file, header_line, "compound", o.compound_column, columns);
  if (!o.compound_conc_column.empty() && !taken("compound_conc"))
    missing(file, header_line, "compound-conc", o.compound_conc_column, columns);
  for (std::size_t i = 0; i < columns.size(); ++i) {
    const auto [base, unit] = split_header_unit(columns[i]);
    if (plan.kind[i] == ColumnKind::other && looks_like_concentration(columns[i], unit))
      plan.unread_concentrations.push_back(columns[i]);
  }
  if (!taken("substrate")) {
    for (const std::string& column : plan.unread_concentrations) {
      plan.warnings.push_back(fmt::format(
          "{}: plate-map column `{}` looks like a concentration but is not read as the substrate (only a column "
          "named `substrate` is, with or without a unit); if it holds the substrate, give --substrate-column \"{}\" "
          "(method key substrate-column)",
          file, column, column));
    }
  }
  return plan;
}

std::vector<std::string> screen_column_warnings(const ColumnPlan& plan, const std::string& file) {
  for (const auto& u : plan.uses)
    if (u.use == "compound_conc") return plan.warnings;
  std::vector<std::string> out;
  for (const std::string& column : plan.unread_concentrations)
    out.push_back(fmt::format(
        "{}: plate-map column `{}` looks like a concentration but is read as neither the compound concentration "
        "(a column `compound_conc`, or `compound` with a unit such as `compound_uM`) nor the substrate; if it holds "
        "the compounds' concentrations, give --compound-conc-column \"{}\" (method key compound-conc-column), if the "
        "substrate's, --substrate-column \"{}\"",
        file, column, column, column));
  return out;
}

}  // namespace detail
}  // namespace vzero
