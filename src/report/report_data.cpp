// The report's tables read into plates of wells with their traces.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <unordered_map>

#include "core/text.hpp"
#include "report/report_model.hpp"
#include "report/report_panel.hpp"
#include "vzero/error.hpp"
#include "vzero/svg.hpp"

namespace vzero::detail::report {

namespace {

std::vector<std::string> split_flags(const std::string& text) {
  std::vector<std::string> out;
  for (const auto& f : split_fields(text, ';')) {
    auto t = trim(f.text);
    if (!t.empty()) out.emplace_back(t);
  }
  return out;
}

// Column lookups of one table with the report's fix hint.
struct Columns {
  const Table& t;
  int need(std::string_view name) const {
    return t.require_column(name, "give the table vzero rates wrote (it has this column)");
  }
  int opt(std::string_view name) const { return t.column(name); }
  const std::string& cell(std::size_t r, int c) const { return t.rows[r][static_cast<std::size_t>(c)]; }
  double number(std::size_t r, int c) const {
    if (c < 0) return NAN;
    auto v = t.number(r, c);
    return v ? *v : NAN;
  }
};

std::string key_of(std::string_view source, std::string_view channel, std::string_view well) {
  std::string k;
  k.reserve(source.size() + channel.size() + well.size() + 2);
  k.append(source).append(1, '\x1f').append(channel).append(1, '\x1f').append(well);
  return k;
}

// The plate facts of one (source, channel) as datapackage.json records them.
const ChannelFacts& facts_of(const PageData& m, const Table& t, std::size_t r, const std::string& src,
                             const std::string& ch) {
  for (const auto& f : m.channels)
    if (f.source == src && f.channel == ch) return f;
  throw InputError(Where{t.source, t.line_of_row[r]},
                   fmt::format("datapackage.json records no channel \"{}\" of \"{}\"", ch, src),
                   {"give the datapackage.json written in the same vzero rates call as this rates table"});
}

void read_rates(const Table& t, PageData& m,
                std::unordered_map<std::string, std::pair<std::size_t, std::size_t>>& index) {
  Columns c{t};
  const int source = c.need("source"), channel = c.need("channel"), well = c.need("well"), role = c.need("role");
  const int v0 = c.need("v0"), unit = c.need("v0_unit"), slope = c.need("slope"), intercept = c.need("intercept");
  const int t0 = c.need("t_start_s"), t1 = c.need("t_end_s"), flags = c.need("flags");
  const int se = c.opt("v0_se"), r2 = c.opt("r2"), conv = c.opt("conversion_pct"), np = c.opt("n_points");
  const int no = c.opt("n_outliers"), tangent = c.opt("tangent");
  // The plate-map columns are the ones datapackage.json names.
  std::vector<int> map_cols;
  for (const auto& name : m.map_columns)
    map_cols.push_back(t.require_column(name,
                                        "datapackage.json lists it as a plate-map column: give the rates "
                                        "table written with it"));
  std::map<std::string, std::size_t> plate_of;
  for (std::size_t r = 0; r < t.rows.size(); ++r) {
    const std::string& src = c.cell(r, source);
    const std::string& ch = c.cell(r, channel);
    auto id = parse_well(c.cell(r, well));
    if (!id)
      throw InputError(Where{t.source, t.line_of_row[r], t.column_of_cell[r][static_cast<std::size_t>(well)]},
                       fmt::format("\"{}\" is not a well name", c.cell(r, well)), {"wells are named A1 … AF48"});
    std::string pk = key_of(src, ch, "");
    auto it = plate_of.find(pk);
    if (it == plate_of.end()) {
      const ChannelFacts& f = facts_of(m, t, r, src, ch);
      PlateView p;
      p.id = fmt::format("p{}", m.plates.size() + 1);
      p.source = src;
      p.channel = ch;
      p.v0_unit = c.cell(r, unit);
      p.signal_unit = f.signal_unit;
      p.format = f.format;
      p.sign = f.sign;
      p.converted = f.converted;
      p.factor = f.factor;
      m.plates.push_back(std::move(p));
      it = plate_of.emplace(pk, m.plates.size() - 1).first;
    }
    PlateView& p = m.plates[it->second];
    if (!p.format.holds(*id))
      throw InputError(Where{t.source, t.line_of_row[r], t.column_of_cell[r][static_cast<std::size_t>(well)]},
                       fmt::format("well {} lies outside the {}-well plate datapackage.json records", c.cell(r, well),
                                   p.format.wells()),
                       {"give the datapackage.json written in the same vzero rates call as this rates table"});
    WellView w;
    w.name = well_name(*id);
    w.id = *id;
    w.anchor = p.id + "-" + w.name;
    w.role = c.cell(r, role);
    w.flags = split_flags(c.cell(r, flags));
    for (std::size_t k = 0; k < map_cols.size(); ++k)
      if (!trim(c.cell(r, map_cols[k])).empty()) w.map_values.emplace_back(m.map_columns[k], c.cell(r, map_cols[k]));
    w.v0 = c.number(r, v0);
    w.v0_se = c.number(r, se);
    w.slope_per_min = c.number(r, slope);
    w.intercept = c.number(r, intercept);
    w.r2 = c.number(r, r2);
    w.conversion_pct = c.number(r, conv);
    w.t_start_s = c.number(r, t0);
    w.t_end_s = c.number(r, t1);
    w.t_start_text = std::string(trim(c.cell(r, t0)));
    w.t_end_text = std::string(trim(c.cell(r, t1)));
    w.n_points = np >= 0 ? static_cast<int>(c.number(r, np)) : 0;
    w.n_outliers = no >= 0 ? static_cast<int>(c.number(r, no)) : 0;
    if (tangent >= 0) w.tangent = c.cell(r, tangent);
    w.line = t.line_of_row[r];
    w.factor = p.converted ? p.factor : 1;
    index[key_of(src, ch, w.name)] = {it->second, p.wells.size()};
    p.by_index[p.format.index(*id)] = p.wells.size();
    p.wells.push_back(std::move(w));
  }
}

using WellIndex = std::unordered_map<std::string, std::pair<std::size_t, std::size_t>>;

// The traces as drawn: the concentration when the channel was converted, else the
// blank-corrected signal times the recorded direction (+1 up, −1 down). Reads one row at a
// time (TableLines), so the table itself is never held.
class TraceRows {
 public:
  TraceRows(PageData& m, const WellIndex& index) : m_(m), index_(index) {}
  // The columns are checked at the first row, or here for a table without rows.
  void check(const Table& head) {
    if (source_ < 0) columns(head);
  }
  void row(const TableRow& r) {
    if (source_ < 0) columns(r.head);
    auto id = parse_well(r.cells[static_cast<std::size_t>(well_)]);
    if (!id) return;
    key_.clear();
    key_.append(r.cells[static_cast<std::size_t>(source_)]).append(1, '\x1f');
    key_.append(r.cells[static_cast<std::size_t>(channel_)]).append(1, '\x1f').append(well_name(*id));
    auto it = index_.find(key_);
    if (it == index_.end()) return;  // a well the rates table does not hold
    auto [pi, wi] = it->second;
    PlateView& p = m_.plates[pi];
    WellView& w = p.wells[wi];
    p.has_traces = true;
    const double corr = number(r, corrected_);
    w.time_s.push_back(number(r, time_));
    w.read_ok.push_back(status_ < 0 || r.cells[static_cast<std::size_t>(status_)] == "ok");
    w.used.push_back(r.cells[static_cast<std::size_t>(used_)] == "1" ? 1 : 0);
    if (!p.converted) {
      w.y.push_back(p.sign * corr);
      return;
    }
    if (conc_ < 0) r.head.require_column("concentration", "a converted channel's traces carry its concentration");
    const double y = number(r, conc_);
    w.y.push_back(y);
    // A factor that varies per well (a path per well) is the ratio the trace records.
    if (std::isnan(w.factor) && std::isfinite(y) && std::isfinite(corr) && corr != 0) w.factor = std::fabs(y / corr);
  }

 private:
  void columns(const Table& t) {
    auto need = [&](std::string_view name) {
      return t.require_column(name, "give the table vzero rates wrote (it has this column)");
    };
    source_ = need("source"), channel_ = need("channel"), well_ = need("well"), time_ = need("time_s");
    corrected_ = need("corrected"), used_ = need("used");
    status_ = t.column("status"), conc_ = t.column("concentration");
  }
  static double number(const TableRow& r, int c) {
    if (c < 0) return NAN;
    auto v = r.number(c);
    return v ? *v : NAN;
  }
  PageData& m_;
  const WellIndex& index_;
  std::string key_;
  int source_ = -1, channel_ = -1, well_ = -1, time_ = -1, corrected_ = -1, used_ = -1, status_ = -1, conc_ = -1;
};

void read_traces(const ReportInput& in, PageData& m, const WellIndex& index) {
  TraceRows reader(m, index);
  auto take = [&reader](const TableRow& r) { reader.row(r); };
  if (in.traces) {
    const Table& t = *in.traces;
    std::vector<std::string_view> cells;
    for (std::size_t r = 0; r < t.rows.size(); ++r) {
      cells.assign(t.rows[r].begin(), t.rows[r].end());
      take(TableRow{t, cells, t.column_of_cell[r], t.line_of_row[r]});
    }
    reader.check(t);
  } else if (!in.traces_file.empty()) {
    reader.check(stream_table(in.traces_file, take));
  }
}

// What is taken from every read before the plate is thinned to what its panels show: each
// well's last used read and a tangent well's parabola.
void thin_plates(PageData& m, PanelScale scale) {
  for (auto& p : m.plates) {
    for (auto& w : p.wells) take_from_all_reads(w);
    thin_plate(p, scale);
  }
}

// Sets the plates' units and time axes.
void finish_plates(PageData& m) {
  for (auto& p : m.plates) {
    double t0 = INFINITY, t1 = -INFINITY;
    for (auto& w : p.wells) {
      for (double t : w.time_s)
        if (std::isfinite(t)) t0 = std::min(t0, t), t1 = std::max(t1, t);
      for (double t : {w.t_start_s, w.t_end_s})
        if (std::isfinite(t)) t0 = std::min(t0, t), t1 = std::max(t1, t);
    }
    set_axes(p, t0, t1);
  }
}

}  // namespace

const nlohmann::json& member(const nlohmann::json& j, const char* key) {
  static const nlohmann::json null_value;
  if (!j.is_object()) return null_value;
  auto it = j.find(key);
  return it == j.end() ? null_value : *it;
}

bool WellView::flagged() const {
  for (const auto& f : flags)
    if (f != "empty") return true;
  return false;
}

const PlateView* PageData::plate(const std::string& source, const std::string& channel) const {
  for (const auto& p : plates)
    if (p.source == source && p.channel == channel) return &p;
  return nullptr;
}

std::string PageData::anchor_of(const std::string& channel, const std::string& well) const {
  auto id = parse_well(well);
  if (!id) return {};
  for (const auto& p : plates) {
    if (p.channel != channel) continue;
    auto it = p.by_index.find(p.format.holds(*id) ? p.format.index(*id) : -1);
    if (it != p.by_index.end()) return p.wells[it->second].anchor;
  }
  return {};
}

void set_axes(PlateView& p, double t0, double t1) {
  std::string stem = per_min_stem(p.v0_unit);
  p.y_unit = stem.empty() ? p.v0_unit : stem;
  p.t_min_s = std::isfinite(t0) ? std::min(t0, 0.0) : 0;
  p.t_max_s = std::isfinite(t1) && t1 > p.t_min_s ? t1 : p.t_min_s + 1;
}

std::string display_unit(const std::string& unit) {
  std::string out = unit;
  // "u" as the micro prefix of the concentration units vzero writes.
  for (const char* u : {"uM", "umol", "uL", "ug"}) {
    std::string from = u;
    std::size_t p = 0;
    while ((p = out.find(from, p)) != std::string::npos) {
      bool starts = p == 0 || !std::isalpha(static_cast<unsigned char>(out[p - 1]));
      bool ends = p + from.size() == out.size() || !std::isalpha(static_cast<unsigned char>(out[p + from.size()]));
      if (starts && ends) out.replace(p, 1, "\u00b5");
      p += from.size();
    }
  }
  return out;
}

std::string per_min_stem(const std::string& unit) {
  const std::string tail = "/min";
  if (unit.size() > tail.size() && unit.compare(unit.size() - tail.size(), tail.size(), tail) == 0)
    return unit.substr(0, unit.size() - tail.size());
  return {};
}

std::string export_names(const PageData& m) {
  std::vector<std::string> names;
  for (const auto& p : m.plates)
    if (std::find(names.begin(), names.end(), p.source) == names.end()) names.push_back(p.source);
  std::string out;
  for (const auto& n : names) out += (out.empty() ? "" : ", ") + n;
  return out;
}

PageData build_model(const ReportInput& in, PanelScale scale) {
  PageData m;
  if (in.package_json.empty())
    throw InputError(Where{in.rates.source},
                     "the report needs the run's datapackage.json: it records each channel's plate, reaction "
                     "direction and conversion factor, and which columns came from the plate map",
                     {"give the run folder or its rates.csv (vzero report RUN_FOLDER), or --package datapackage.json"});
  m.package = parse_json(in.package_json, in.package_source);
  read_package(m, in.package_source);
  for (const auto& f : in.fits) m.fits.push_back(read_fit(f));
  WellIndex index;
  read_rates(in.rates, m, index);
  read_traces(in, m, index);
  finish_plates(m);
  thin_plates(m, scale);
  return m;
}

}  // namespace vzero::detail::report
