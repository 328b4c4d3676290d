// Fitting a rates or summary table: row filters, groups, weights, units, and one fit per
// group × model.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <map>

#include "core/text.hpp"
#include "fit/dose_response.hpp"
#include "fit/turnover_units.hpp"
#include "vzero/error.hpp"
#include "vzero/fit.hpp"

namespace vzero {

std::string FitTableOptions::validate() const {
  if (x_column.empty()) return "x_column is empty; name the substrate concentration column";
  if (models.empty()) return "models is empty; give at least one model";
  for (const KineticModel* m : models) {
    if (!m) return "models holds a null model; take models from kinetic_models() or find_model()";
    if (m->needs_inhibitor() && inhibitor_column.empty())
      return fmt::format("model {} needs inhibitor_column, which is empty", m->name);
  }
  return fit.validate();
}

namespace {

std::string num(double x) { return fmt::format("{:.6g}", x); }

bool ends_with(std::string_view s, std::string_view tail) {
  return s.size() >= tail.size() && s.substr(s.size() - tail.size()) == tail;
}

// The concentration unit a column name carries as its last "_" word ("inhibitor_uM" → "uM").
std::string unit_suffix(std::string_view name) {
  static const char* const k_units[] = {"M", "mM", "uM", "µM", "nM", "pM", "fM", "ppm", "ppb", "mg_ml", "ug_ml"};
  for (const char* u : k_units) {
    const std::string tail = std::string("_") + u;
    if (ends_with(name, tail) && name.size() > tail.size()) return u;
  }
  return {};
}

// One distinct value of column `col` over `rows` (empty cells ignored); "" when the column
// is absent, empty or holds several values.
std::string unique_text(const Table& t, int col, const std::vector<std::size_t>& rows) {
  if (col < 0) return {};
  std::string found;
  for (std::size_t r : rows) {
    const std::string& cell = t.rows[r][static_cast<std::size_t>(col)];
    if (cell.empty()) continue;
    if (!found.empty() && cell != found) return {};
    found = cell;
  }
  return found;
}

// Unit of a value column: a companion "<name>_unit" column, else the name's suffix, else
// what the options know from outside the table (the data package's schema).
std::string column_unit(const Table& t, const std::string& name, const std::vector<std::size_t>& rows,
                        const std::map<std::string, std::string>& known) {
  if (name.empty()) return {};
  if (auto u = unique_text(t, t.column(name + "_unit"), rows); !u.empty()) return u;
  if (auto u = unit_suffix(name); !u.empty()) return u;
  const auto it = known.find(name);
  return it == known.end() ? std::string() : it->second;
}

std::string stem_of(const std::string& y) { return ends_with(y, "_mean") ? y.substr(0, y.size() - 5) : y; }

// A parameter's unit from its unit role and the units the table gives.
std::string unit_for(UnitRole role, const TableFit& t) {
  switch (role) {
    case UnitRole::rate:
      return t.v_unit;
    case UnitRole::substrate:
      return t.x_unit;
    case UnitRole::inhibitor:
      return t.inhibitor_unit;
    case UnitRole::none:
      return "1";
  }
  return {};
}

struct Row {
  double s = NAN, i = 0, v = NAN, sd = NAN, e = NAN;
  int line = 0;
};

// Weights for one group, or a message saying why they cannot be formed.
std::string group_weights(const std::vector<Row>& rows, Weighting w, bool sd_from_column, const std::string& sd_name,
                          std::vector<double>& out) {
  out.assign(rows.size(), 1.0);
  if (w == Weighting::none) return {};
  if (w == Weighting::relative) {
    int bad = 0;
    for (std::size_t k = 0; k < rows.size(); ++k) {
      if (rows[k].v > 0)
        out[k] = 1 / (rows[k].v * rows[k].v);
      else
        ++bad;
    }
    if (bad > 0)
      return fmt::format("relative weighting (1/v^2) needs positive rates; {} of {} rates are <= 0", bad, rows.size());
    return {};
  }
  if (sd_from_column) {
    for (std::size_t k = 0; k < rows.size(); ++k) {
      if (!(rows[k].sd > 0))
        return fmt::format(
            "replicate-sd weighting: column \"{}\" is empty or not > 0 on line {}; a weight 1/sd^2 needs "
            "an sd from at least 2 replicates",
            sd_name, rows[k].line);
      out[k] = 1 / (rows[k].sd * rows[k].sd);
    }
    return {};
  }
  std::map<std::pair<double, double>, std::vector<std::size_t>> cells;
  for (std::size_t k = 0; k < rows.size(); ++k) cells[{rows[k].s, rows[k].i}].push_back(k);
  for (const auto& [key, idx] : cells) {
    double mean = 0;
    for (std::size_t k : idx) mean += rows[k].v;
    mean /= static_cast<double>(idx.size());
    double ss = 0;
    for (std::size_t k : idx) ss += (rows[k].v - mean) * (rows[k].v - mean);
    const double sd = idx.size() > 1 ? std::sqrt(ss / static_cast<double>(idx.size() - 1)) : 0.0;
    if (!(sd > 0))
      return fmt::format(
          "replicate-sd weighting: substrate {} has {} replicate(s) with sd {}; every concentration "
          "needs at least 2 replicates that differ",
          num(key.first), idx.size(), num(sd));
    for (std::size_t k : idx) out[k] = 1 / (sd * sd);
  }
  return {};
}

// A dose-response fit; a model's known [E] (Morrison) comes from the group's enzyme level
// unless FitOptions::fixed gives it, and must be in x's unit.
void fit_dose_response(GroupFit& gf, const TableFit& t, FitOptions fit, double enzyme,
                       const std::string& enzyme_problem) {
  const KineticModel& m = *gf.model;
  bool from_column = false;
  auto fail = [&](std::string why) {
    gf.result.model = &m;
    gf.result.n = static_cast<int>(gf.v.size());
    gf.result.message = std::move(why);
  };
  for (const KineticParameter& p : m.parameters) {
    if (!p.known || fit.fixed.count(p.name) > 0) continue;
    if (!enzyme_problem.empty())
      return fail(fmt::format("{}; the {} model needs one {} per group", enzyme_problem, m.name, p.name));
    if (std::isnan(enzyme)) continue;  // fit_model says what is missing
    if (!t.enzyme_unit.empty() && !t.x_unit.empty() && t.enzyme_unit != t.x_unit) {
      return fail(fmt::format(
          "{} from column {} is in {}, the inhibitor concentration {} in {}; the {} model needs both in one unit "
          "(or give --fix {}=VALUE in {})",
          p.name, t.enzyme_column, t.enzyme_unit, t.x_column, t.x_unit, m.name, p.name, t.x_unit));
    }
    fit.fixed[p.name] = enzyme;
    from_column = true;
  }
  gf.result = fit_model(gf.s, gf.v, gf.weights, m, fit);
  if (gf.result.ok && from_column && (t.enzyme_unit.empty() || t.x_unit.empty()))
    gf.result.warnings.push_back(fmt::format(
        "{} read as being in the unit of {} (the table gives no unit for one of them)", t.enzyme_column, t.x_column));
}

// The table's columns the options name, resolved once.
struct Columns {
  int x = -1, y = -1, inhibitor = -1, enzyme = -1, role = -1, flags = -1, sd = -1;
  std::vector<int> groups;
  std::string y_name;
  bool any_inhibition = false, all_dose_response = true;
};

Columns resolve_columns(const Table& table, const FitTableOptions& options, TableFit& out) {
  Columns c;
  c.x = table.require_column(options.x_column, "name the substrate concentration column as x");
  c.y_name = options.y_column;
  if (c.y_name.empty()) c.y_name = table.column("v0") < 0 && table.column("v0_mean") >= 0 ? "v0_mean" : "v0";
  c.y = table.require_column(c.y_name, "name the rate column as y");
  for (const KineticModel* m : options.models) {
    c.any_inhibition = c.any_inhibition || m->needs_inhibitor();
    c.all_dose_response = c.all_dose_response && m->dose_response;
  }
  if (!options.inhibitor_column.empty())
    c.inhibitor = table.require_column(options.inhibitor_column, "name the inhibitor concentration column");
  if (!options.enzyme_column.empty())
    c.enzyme = table.require_column(options.enzyme_column, "name the enzyme concentration column");
  for (const auto& g : options.group_columns) c.groups.push_back(table.require_column(g, "name an existing group column"));
  c.role = table.column("role");
  c.flags = table.column("flags");
  if (options.weighting == Weighting::replicate_sd) {
    if (!options.sd_column.empty()) {
      c.sd = table.require_column(options.sd_column, "name the standard deviation column");
      out.sd_column = options.sd_column;
    } else {
      for (const std::string& name : {stem_of(c.y_name) + "_sd", c.y_name + "_sd"}) {
        if (table.column(name) >= 0) {
          c.sd = table.column(name);
          out.sd_column = table.header[static_cast<std::size_t>(c.sd)];
          break;
        }
      }
    }
  }
  out.x_column = table.header[static_cast<std::size_t>(c.x)];
  out.y_column = table.header[static_cast<std::size_t>(c.y)];
  if (c.inhibitor >= 0) out.inhibitor_column = table.header[static_cast<std::size_t>(c.inhibitor)];
  if (c.enzyme >= 0) out.enzyme_column = table.header[static_cast<std::size_t>(c.enzyme)];
  return c;
}

// Rows kept, grouped in first-seen order.
struct Groups {
  std::vector<std::vector<std::string>> keys;
  std::vector<std::vector<Row>> points;
  std::vector<std::size_t> used_rows;
  int zero_substrate = 0;  // rows at S = 0 left out under relative weighting
};

// Row r as a point, or nullopt (counted in `out`) when the options leave it out.
std::optional<Row> point_of(const Table& table, std::size_t r, const Columns& c, const FitTableOptions& options,
                            TableFit& out, int& zero_substrate) {
  const auto& cells = table.rows[r];
  if (c.role >= 0 && !options.role.empty() && !detail::iequals(cells[static_cast<std::size_t>(c.role)], options.role)) {
    ++out.rows_other_role;
    return std::nullopt;
  }
  if (c.flags >= 0 && !options.include_flagged && !cells[static_cast<std::size_t>(c.flags)].empty()) {
    ++out.rows_flagged;
    return std::nullopt;
  }
  Row row;
  row.line = table.line_of_row[r];
  auto x = table.number(r, c.x), y = table.number(r, c.y);
  std::optional<double> inh = c.inhibitor >= 0 ? table.number(r, c.inhibitor) : std::optional<double>(0.0);
  if (!x || !y || (c.any_inhibition && !inh)) {
    ++out.rows_missing;
    return std::nullopt;
  }
  auto negative = [&](int col, double value) {
    throw InputError(Where{table.source, row.line, table.column_of_cell[r][static_cast<std::size_t>(col)]},
                     fmt::format("expected a concentration >= 0 in column \"{}\", found {}",
                                 table.header[static_cast<std::size_t>(col)], num(value)),
                     {"correct the plate map; concentrations cannot be negative"});
  };
  if (*x < 0) negative(c.x, *x);
  if (inh && *inh < 0) negative(c.inhibitor, *inh);
  if (*x == 0 && options.weighting == Weighting::relative && !c.all_dose_response) {
    // Every model gives v = 0 at S = 0 whatever its parameters, so such a point only adds
    // to the residuals; weighted 1/v^2 by a rate near 0 it would swamp them (or, v <= 0,
    // have no weight at all). Unweighted or weighted by replicate SDs it is kept.
    ++zero_substrate;
    return std::nullopt;
  }
  row.s = *x;
  row.v = *y;
  row.i = inh.value_or(0.0);
  if (c.sd >= 0) row.sd = table.number(r, c.sd).value_or(NAN);
  if (c.enzyme >= 0) row.e = table.number(r, c.enzyme).value_or(NAN);
  return row;
}

Groups collect_rows(const Table& table, const Columns& c, const FitTableOptions& options, TableFit& out) {
  Groups gs;
  for (std::size_t r = 0; r < table.rows.size(); ++r) {
    ++out.rows_read;
    const std::optional<Row> row = point_of(table, r, c, options, out, gs.zero_substrate);
    if (!row) continue;
    std::vector<std::string> key;
    for (int col : c.groups) key.push_back(table.rows[r][static_cast<std::size_t>(col)]);
    auto it = std::find(gs.keys.begin(), gs.keys.end(), key);
    if (it == gs.keys.end()) {
      gs.keys.push_back(key);
      gs.points.emplace_back();
      it = gs.keys.end() - 1;
    }
    gs.points[static_cast<std::size_t>(it - gs.keys.begin())].push_back(*row);
    gs.used_rows.push_back(r);
    ++out.rows_used;
  }
  return gs;
}

void add_row_notes(const FitTableOptions& options, const Columns& c, int zero_substrate, TableFit& out) {
  if (out.rows_other_role > 0)
    out.notes.push_back(fmt::format("skipped {} rows whose role is not {}", out.rows_other_role, options.role));
  if (out.rows_flagged > 0)
    out.notes.push_back(fmt::format("skipped {} flagged rows (a non-empty flags cell)", out.rows_flagged));
  if (out.rows_missing > 0)
    out.notes.push_back(fmt::format("skipped {} rows with an empty {}, {}{} cell", out.rows_missing, out.x_column,
                                    out.y_column, c.any_inhibition ? " or " + out.inhibitor_column : ""));
  if (zero_substrate > 0)
    out.notes.push_back(
        fmt::format("skipped {} rows with {} = 0 (no-substrate controls): every model gives v = 0 "
                    "there, and relative weighting (1/v^2) has no weight for them",
                    zero_substrate, out.x_column));
}

// The group's one enzyme level, or NaN and why kcat cannot be computed.
double group_enzyme(const std::vector<Row>& points, const TableFit& out, std::string& problem) {
  std::vector<double> levels;
  for (const Row& row : points)
    if (std::isfinite(row.e) && std::find(levels.begin(), levels.end(), row.e) == levels.end()) levels.push_back(row.e);
  if (levels.size() == 1 && levels[0] > 0) return levels[0];
  if (levels.size() > 1)
    problem = fmt::format("{} differs within the group ({} values); kcat not computed: group by {}",
                          out.enzyme_column, levels.size(), out.enzyme_column);
  else
    problem = fmt::format("{} is empty or not > 0 in this group; kcat not computed", out.enzyme_column);
  return NAN;
}

// One model fitted to one group's points, with its units and derived constants.
GroupFit fit_group_model(const KineticModel& m, const std::vector<std::string>& key, const std::vector<Row>& points,
                         const std::vector<double>& w, const std::string& weight_problem, double enzyme,
                         const std::string& enzyme_problem, const detail::TurnoverUnits* turnover_units,
                         const FitOptions& fit, TableFit& out) {
  GroupFit gf;
  gf.group_values = key;
  gf.model = &m;
  gf.enzyme_conc = enzyme;
  for (const Row& row : points) {
    gf.s.push_back(row.s);
    gf.v.push_back(row.v);
    gf.lines.push_back(row.line);
    if (m.needs_inhibitor()) gf.inhibitor.push_back(row.i);
  }
  gf.weights = w;
  if (!weight_problem.empty()) {
    gf.result.model = &m;
    gf.result.n = static_cast<int>(gf.v.size());
    gf.result.message = weight_problem;
  } else if (m.needs_inhibitor()) {
    gf.result = fit_inhibition(gf.s, gf.inhibitor, gf.v, gf.weights, m, fit);
  } else if (m.dose_response) {
    fit_dose_response(gf, out, fit, enzyme, enzyme_problem);
  } else {
    gf.result = fit_model(gf.s, gf.v, gf.weights, m, fit);
  }
  for (const auto& p : m.parameters) gf.units.push_back(unit_for(p.unit_role, out));
  if (gf.result.ok && m.dose_response) {
    std::string why;
    gf.derived = detail::p_ic50(gf.result, out.x_unit, why);
    if (!gf.derived.empty()) gf.units.push_back("log10(1/M)");
    if (!why.empty()) gf.result.warnings.push_back(why);
  } else if (gf.result.ok && turnover_units) {
    if (enzyme_problem.empty()) {
      detail::add_turnover(gf, enzyme, *turnover_units, fit);
    } else {
      gf.result.warnings.push_back(enzyme_problem);
    }
  }
  return gf;
}

}  // namespace

TableFit fit_table(const Table& table, const FitTableOptions& options) {
  if (auto why = options.validate(); !why.empty()) throw UsageError("FitTableOptions: " + why);
  TableFit out;
  out.source = table.source;
  out.weighting = options.weighting;
  out.group_columns = options.group_columns;
  const Columns c = resolve_columns(table, options, out);
  Groups gs = collect_rows(table, c, options, out);
  add_row_notes(options, c, gs.zero_substrate, out);
  // y's unit: its own unit column, else its header suffix or the schema's unit (activity_pct:
  // %); v0_unit only for v0 itself — never lent to another column.
  out.v_unit = unique_text(table, std::max(table.column(c.y_name + "_unit"), table.column(stem_of(c.y_name) + "_unit")),
                           gs.used_rows);
  if (out.v_unit.empty()) out.v_unit = column_unit(table, c.y_name, gs.used_rows, options.column_units);
  out.x_unit = column_unit(table, out.x_column, gs.used_rows, options.column_units);
  out.inhibitor_unit = column_unit(table, out.inhibitor_column, gs.used_rows, options.column_units);
  out.enzyme_unit = column_unit(table, out.enzyme_column, gs.used_rows, options.column_units);
  const detail::TurnoverUnits units =
      detail::turnover_units(out.v_unit, out.enzyme_unit, out.x_unit, options.kcat_per_min);
  if (c.enzyme >= 0 && !units.why.empty()) out.notes.push_back(units.why);
  if (gs.keys.empty()) {
    // Nothing survived the filters: still one failed fit per model, so the output says why.
    gs.keys.emplace_back(c.groups.size(), std::string());
    gs.points.emplace_back();
  }
  for (std::size_t g = 0; g < gs.keys.size(); ++g) {
    std::vector<double> w;
    const std::string weight_problem = group_weights(gs.points[g], options.weighting, c.sd >= 0, out.sd_column, w);
    std::string enzyme_problem;
    const double enzyme = c.enzyme >= 0 ? group_enzyme(gs.points[g], out, enzyme_problem) : NAN;
    for (const KineticModel* model : options.models)
      out.fits.push_back(fit_group_model(*model, gs.keys[g], gs.points[g], w, weight_problem, enzyme, enzyme_problem,
                                         c.enzyme >= 0 ? &units : nullptr, options.fit, out));
  }
  return out;
}

}  // namespace vzero
