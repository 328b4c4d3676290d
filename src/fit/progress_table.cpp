// The progress-curve fit of vzero rates' tables: wells and their trusted reads from rates.csv
// and the traces, grouped, each group fitted, beside the initial-rate fit of the same wells.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <map>
#include <set>

#include "vzero/error.hpp"
#include "vzero/progress.hpp"

namespace vzero {

std::string ProgressTableOptions::validate() const {
  if (x_column.empty()) return "x_column is empty; name the initial-substrate column";
  if (!(x_factor > 0) || !std::isfinite(x_factor))
    return fmt::format("x_factor is {}; give the traces' concentration unit per unit of {} (> 0)", x_factor,
                       x_column);
  if ((fit.use_enzyme || fit.vmax_per_level) && enzyme_column.empty())
    return "enzyme_column is empty; name the enzyme column for kcat or Vmax per level";
  return fit.validate();
}

namespace {

// Flags whose wells the fit cannot use at all (blank-substrate: a wrong blank bends every
// read of the curve), and words (flags or notes) after which only the reads the rate finder
// trusted (`used` = 1) enter: a rate law explains neither spikes, overflowing or compressed
// reads, disturbed starts nor lags.
const std::set<std::string> k_leave_out = {"saturated", "ceiling",  "too-few-reads",     "blank-missing",
                                           "no-path",   "negative", "outside-standards", "blank-substrate"};
const std::set<std::string> k_trusted_only_notes = {"outliers", "overflow", "disturbed", "lag", "ceiling"};
const std::set<std::string> k_trusted_only_flags = {"rising"};

std::vector<std::string> words(const std::string& cell) {
  std::vector<std::string> out;
  std::size_t start = 0;
  while (start < cell.size()) {
    std::size_t end = cell.find(';', start);
    if (end == std::string::npos) end = cell.size();
    if (end > start) out.push_back(cell.substr(start, end - start));
    start = end + 1;
  }
  return out;
}

struct Candidate {
  ProgressWell well;
  std::size_t row = 0;     // in rates
  bool trusted_only = false;
  std::vector<std::string> group_values;
  double v0 = NAN;
  bool rate_clean = false;  // empty flags: the initial-rate fit uses it
  int reads_seen = 0;       // reads of the well kept from the traces
  double start_s = -INFINITY;  // the rate finder's window start: reads before it were set aside
};

std::string cell(const Table& t, std::size_t row, int col) { return col < 0 ? std::string() : t.rows[row][static_cast<std::size_t>(col)]; }

// The sample wells of rates.csv with a positive substrate; those the fit cannot use go to `left_out`.
std::vector<Candidate> candidates(const Table& rates, const ProgressTableOptions& o,
                                  std::map<std::vector<std::string>, std::vector<std::string>>& left_out) {
  const int c_well = rates.require_column("well", "pass the rates.csv that vzero rates wrote");
  const int c_x = rates.require_column(o.x_column, "pass --x with the initial-substrate column");
  const int c_flags = rates.require_column("flags", "pass the rates.csv that vzero rates wrote");
  const int c_notes = rates.column("notes"), c_role = rates.column("role"), c_v0 = rates.column("v0");
  const int c_blanks = rates.column("blank_wells");
  const int c_e = o.enzyme_column.empty() ? -1
                  : rates.require_column(o.enzyme_column, "pass --enzyme or --enzyme-levels with an existing column");
  std::vector<int> c_groups;
  for (const auto& g : o.group_columns) c_groups.push_back(rates.require_column(g, "pass --group with existing columns"));
  std::vector<Candidate> out;
  for (std::size_t r = 0; r < rates.rows.size(); ++r) {
    if (c_role >= 0 && !o.role.empty() && cell(rates, r, c_role) != o.role) continue;
    const auto x = rates.number(r, c_x);
    if (!x || !(*x > 0)) continue;  // no substrate: not part of a series
    Candidate c;
    c.row = r;
    for (int g : c_groups) c.group_values.push_back(cell(rates, r, g));
    c.well.well = cell(rates, r, c_well);
    c.well.s0 = *x * o.x_factor;
    // Wells that subtract the same blank wells share that blank's noise: one cluster of the
    // fit's robust covariance (a blank names wells of its own export and channel).
    if (const std::string b = cell(rates, r, c_blanks); !b.empty())
      c.well.cluster = cell(rates, r, rates.column("source")) + '\n' + cell(rates, r, rates.column("channel")) + '\n' + b;
    const std::string name = cell(rates, r, c_well);
    const auto flags = words(cell(rates, r, c_flags)), notes = words(cell(rates, r, c_notes));
    c.rate_clean = flags.empty();
    if (c_v0 >= 0) c.v0 = rates.number(r, c_v0).value_or(NAN);
    // With the automatic window, reads before its start were set aside by the rate finder (a
    // disturbed or spike-screened first read, a lag): they are not the curve's either.
    const int c_start = rates.column("t_start_s"), c_window = rates.column("window");
    if (c_start >= 0 && c_window >= 0 && cell(rates, r, c_window) == "auto")
      c.start_s = rates.number(r, c_start).value_or(-INFINITY);
    std::string why;
    for (const auto& f : flags)
      if (k_leave_out.count(f)) why = f;
    if (c_e >= 0) {
      c.well.enzyme = rates.number(r, c_e).value_or(NAN);
      if (!(c.well.enzyme > 0)) why = "no positive enzyme concentration";
    }
    if (!why.empty()) {
      left_out[c.group_values].push_back(name + ": " + why);
      continue;
    }
    for (const auto& f : flags) c.trusted_only |= k_trusted_only_flags.count(f) > 0;
    for (const auto& n : notes) c.trusted_only |= k_trusted_only_notes.count(n) > 0;
    c.well.trusted_only = c.trusted_only;
    out.push_back(std::move(c));
  }
  return out;
}

// The reads of every candidate from the traces (time_s, status, concentration, used).
void read_traces(const Table& rates, const Table& traces, std::vector<Candidate>& cands) {
  const int cs = traces.require_column("source", "pass the traces file vzero rates --traces wrote");
  const int cc = traces.require_column("channel", "pass the traces file vzero rates --traces wrote");
  const int cw = traces.require_column("well", "pass the traces file vzero rates --traces wrote");
  const int ct = traces.require_column("time_s", "pass the traces file vzero rates --traces wrote");
  const int cst = traces.require_column("status", "pass the traces file vzero rates --traces wrote");
  const int cp = traces.require_column("concentration", "pass the traces file vzero rates --traces wrote");
  const int cu = traces.require_column("used", "pass the traces file vzero rates --traces wrote");
  const int rs = rates.column("source"), rc = rates.column("channel"), rw = rates.column("well");
  std::map<std::string, std::size_t> index;
  for (std::size_t k = 0; k < cands.size(); ++k)
    index[cell(rates, cands[k].row, rs) + '\n' + cell(rates, cands[k].row, rc) + '\n' + cell(rates, cands[k].row, rw)] = k;
  for (std::size_t r = 0; r < traces.rows.size(); ++r) {
    const auto it = index.find(cell(traces, r, cs) + '\n' + cell(traces, r, cc) + '\n' + cell(traces, r, cw));
    if (it == index.end() || cell(traces, r, cst) != "ok") continue;
    Candidate& c = cands[it->second];
    const auto p = traces.number(r, cp);
    const double t_read = traces.number(r, ct).value_or(NAN);
    if ((c.trusted_only && cell(traces, r, cu) != "1") || t_read < c.start_s) {  // not fitted; drawn apart
      if (p) c.well.t_left_s.push_back(traces.number(r, ct).value_or(NAN)), c.well.p_left.push_back(*p);
      continue;
    }
    if (!p)
      throw InputError(
          Where{traces.source, traces.line_of_row[r], traces.column_of_cell[r][static_cast<std::size_t>(cp)]},
          "expected a product concentration for the progress fit, found an empty concentration cell (a "
          "--signal-only run has none)",
          {"rerun vzero rates with a conversion (--epsilon with --path-cm, or standards) and --traces"});
    c.well.t_s.push_back(traces.number(r, ct).value_or(NAN));
    c.well.p.push_back(*p);
    ++c.reads_seen;
  }
  for (const auto& c : cands)
    if (c.reads_seen == 0 && !c.trusted_only)
      throw InputError(Where{rates.source, rates.line_of_row[c.row], 1},
                       fmt::format("expected the reads of well {} in {}, found none", c.well.well, traces.source),
                       {"pass the traces file written by the same vzero rates run as this rates.csv"});
}

// Michaelis–Menten on the same group's initial rates (wells with empty flags, as vzero fit
// takes them), substrate in the traces' unit; v0/[E] when kcat is fitted.
FitResult rates_fit(const std::vector<Candidate>& group, bool per_enzyme, bool per_level) {
  if (per_level) {
    FitResult none;
    none.message = "one Vmax per enzyme level is not fitted from initial rates: pass --enzyme for kcat, or --group "
                   "by the enzyme column";
    return none;
  }
  std::vector<double> s, v;
  for (const auto& c : group) {
    if (!c.rate_clean || !std::isfinite(c.v0)) continue;
    s.push_back(c.well.s0);
    v.push_back(per_enzyme ? c.v0 / c.well.enzyme : c.v0);
  }
  FitOptions o;
  o.profile = true;
  return fit_model(s, v, {}, kinetic_model("mm"), o);
}

// The concentration unit of the traces: v0_unit without its "/min".
void units(const Table& rates, const std::vector<Candidate>& cands, ProgressTable& out) {
  const int c = rates.require_column("v0_unit", "pass the rates.csv that vzero rates wrote");
  for (const auto& k : cands) {
    const std::string u = rates.rows[k.row][static_cast<std::size_t>(c)];
    if (out.rate_unit.empty()) out.rate_unit = u;
    if (u != out.rate_unit || u.size() < 5 || u.substr(u.size() - 4) != "/min")
      throw InputError(Where{rates.source, rates.line_of_row[k.row], 1},
                       fmt::format("expected every well's v0_unit to be one concentration per min, found \"{}\"{}", u,
                                   u == out.rate_unit ? "" : fmt::format(" beside \"{}\"", out.rate_unit)),
                       {"fit one channel at a time (--group channel), from a run with a concentration conversion"});
  }
  out.conc_unit = out.rate_unit.substr(0, out.rate_unit.size() - 4);
}

// Wells of several channels in one series would be fitted as one: refused unless grouped by
// channel. Wells of several exports are named source:well.
void one_channel(const Table& rates, std::vector<Candidate>& cands, const ProgressTableOptions& o) {
  const int cc = rates.column("channel"), cs = rates.column("source");
  std::set<std::string> channels, sources;
  for (const auto& c : cands) channels.insert(cell(rates, c.row, cc)), sources.insert(cell(rates, c.row, cs));
  const bool grouped = std::find(o.group_columns.begin(), o.group_columns.end(), "channel") != o.group_columns.end();
  if (channels.size() > 1 && !grouped)
    throw InputError(Where{rates.source}, fmt::format("expected the wells of one channel, found {} channels",
                                                      channels.size()),
                     {"pass --group channel (with your other --group columns)"});
  if (sources.size() > 1)
    for (auto& c : cands) c.well.well = cell(rates, c.row, cs) + ":" + c.well.well;
}

}  // namespace

ProgressTable fit_progress_tables(const Table& rates, const Table& traces, const ProgressTableOptions& o) {
  if (auto why = o.validate(); !why.empty()) throw UsageError("ProgressTableOptions: " + why);
  ProgressTable out;
  out.group_columns = o.group_columns;
  out.kcat_per_min = o.kcat_per_min;
  std::map<std::vector<std::string>, std::vector<std::string>> left_out;
  std::vector<Candidate> cands = candidates(rates, o, left_out);
  if (cands.empty())
    throw InputError(Where{rates.source}, fmt::format("expected sample wells with a positive {}, found none", o.x_column),
                     {"pass --x with the initial-substrate column of the plate map"});
  read_traces(rates, traces, cands);
  units(rates, cands, out);
  one_channel(rates, cands, o);
  std::vector<std::vector<std::string>> order;
  std::map<std::vector<std::string>, std::vector<Candidate>> groups;
  for (auto& c : cands) {
    if (!groups.count(c.group_values)) order.push_back(c.group_values);
    auto& g = groups[c.group_values];
    if (c.well.p.size() < 3) {
      left_out[c.group_values].push_back(fmt::format("{}: {} trusted reads (3 are needed)", c.well.well, c.well.p.size()));
      continue;
    }
    g.push_back(std::move(c));
  }
  for (const auto& [key, words_left] : left_out)
    if (!groups.count(key)) order.push_back(key);
  for (const auto& key : order) {
    ProgressGroup g;
    g.group_values = key;
    g.left_out = left_out[key];
    for (const auto& c : groups[key]) g.wells.push_back(c.well);
    g.mm = fit_progress(g.wells, o.fit);
    if (o.both_models) {
      ProgressOptions pi = o.fit;
      pi.product_inhibition = true;
      if (g.mm.ok && pi.start.empty() && !pi.vmax_per_level) pi.start = {g.mm.parameters[0].estimate, g.mm.parameters[1].estimate};
      if (pi.start.size() == 2) pi.start.push_back(10 * g.mm.parameters[0].estimate);
      g.pi = fit_progress(g.wells, pi);
      g.choice = compare_progress_models(g.mm, g.pi);
    }
    g.rates_fit = rates_fit(groups[key], o.fit.use_enzyme, o.fit.vmax_per_level);
    if (!o.enzyme_column.empty()) {
      const ParameterEstimate* lead = g.mm.ok ? g.mm.find("lead_s") : nullptr;
      g.lead_s = lead ? lead->estimate : o.fit.lead_s;
      g.stability = stability_tests(g.wells, g.lead_s, out.conc_unit);
      if (o.fit.fit_lead && !lead)
        for (auto& s : g.stability)
          s.verdict += fmt::format("; [E]·t counted from {} s before the first read, as the progress fit gave no lead",
                                   g.lead_s);
    }
    out.groups.push_back(std::move(g));
  }
  return out;
}

}  // namespace vzero
