#include "vzero/outputs.hpp"

#include <cmath>
#include <cstring>
#include <array>
#include <fmt/compile.h>
#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "core/text.hpp"
#include "vzero/table.hpp"

namespace vzero {

namespace {

void put(fmt::memory_buffer& b, std::string_view s) { b.append(s.data(), s.data() + s.size()); }
// csv_field and format_number, written straight into the buffer (no string per value).
// Bytes that make a CSV field need quotes (as csv_field decides).
constexpr auto k_quote_bytes = [] {
  std::array<bool, 256> t{};
  for (unsigned char c : std::string_view(",;\"\r\n\t")) t[c] = true;
  return t;
}();

void put_field(fmt::memory_buffer& b, std::string_view s) {
  bool quote = false;
  if (s.size() < 32) {
    for (char c : s) quote |= k_quote_bytes[static_cast<unsigned char>(c)];
  } else {
    // Long fields are mostly the same list of blank wells row after row: remember the last
    // one; otherwise memchr per byte value is quicker than a loop.
    thread_local std::string last;
    thread_local bool last_quote = false;
    if (s.size() == last.size() && std::memcmp(s.data(), last.data(), s.size()) == 0) {
      quote = last_quote;
    } else {
      for (char c : std::string_view(",;\"\r\n\t"))
        if (!quote && std::memchr(s.data(), c, s.size())) quote = true;
      last.assign(s);
      last_quote = quote;
    }
  }
  if (!quote) {
    put(b, s);
    return;
  }
  b.push_back('"');
  for (char c : s) {
    if (c == '"') b.push_back('"');
    b.push_back(c);
  }
  b.push_back('"');
}
void put_num(fmt::memory_buffer& b, double v) {
  if (std::isnan(v)) return;
  if (v == 0) put(b, "0");  // also for -0
  else fmt::format_to(std::back_inserter(b), FMT_COMPILE("{}"), v);  // format_number's text, parsed at compile time
}
void put_int(fmt::memory_buffer& b, long long v) {
  const fmt::format_int text(v);
  b.append(text.data(), text.data() + text.size());
}
void put_well(fmt::memory_buffer& b, WellId w) {
  put(b, row_label(w.row));
  put_int(b, w.column + 1);
}
void put_flags(fmt::memory_buffer& b, const std::vector<std::string>& f) {
  std::size_t length = 0;
  for (const auto& x : f) length += x.size() + 1;
  if (length <= 256) {
    char text[256];
    std::size_t n = 0;
    for (const auto& x : f) {
      if (n) text[n++] = ';';
      std::copy(x.begin(), x.end(), text + n);
      n += x.size();
    }
    put_field(b, std::string_view(text, n));
  } else {
    std::string out;
    for (const auto& x : f) {
      if (!out.empty()) out += ';';
      out += x;
    }
    put_field(b, out);
  }
}

void header(fmt::memory_buffer& b, const std::vector<FieldSpec>& fields) {
  for (std::size_t i = 0; i < fields.size(); ++i) {
    if (i) put(b, ",");
    put_field(b, fields[i].name);
  }
  put(b, "\n");
}

bool numeric_map_column(const std::string& name) {
  return detail::iequals(name, "substrate") || detail::iequals(name, "standard_conc");
}

}  // namespace

std::vector<FieldSpec> rate_fields(const std::vector<std::string>& map_columns, bool with_activity, bool with_specific) {
  std::vector<FieldSpec> f = {
      {"source", "string", "", "export file the well was read from"},
      {"channel", "string", "", "channel (wavelength pair or read name)"},
      {"well", "string", "", "well name, ANSI/SLAS 4-2004 row letter and column number"},
      {"row", "string", "", "row letter"},
      {"column", "integer", "", "column number"},
      {"role", "string", "", "sample, blank, standard or empty (from the plate map)"},
  };
  for (const auto& c : map_columns)
    f.push_back({c, numeric_map_column(c) ? "number" : "string", "", "plate-map column, passed through"});
  std::vector<FieldSpec> rest = {
      {"v0", "number", "", "initial rate in the reaction direction, unit in v0_unit"},
      {"v0_se", "number", "", "standard error of v0, unit in v0_unit"},
      {"v0_unit", "string", "", "unit of v0 (concentration or signal per minute)"},
      {"slope", "number", "", "blank-corrected signal slope over the window, unit in slope_unit"},
      {"slope_unit", "string", "", "unit of slope (signal per minute)"},
      {"intercept", "number", "", "fitted signal at t = 0 s, signal units"},
      {"r2", "number", "", "coefficient of determination of the straight line over the window"},
      {"n_points", "integer", "", "reads in the window, outliers included"},
      {"n_outliers", "integer", "", "reads in the window rejected as outliers"},
      {"t_start_s", "number", "s", "time of the window's first read"},
      {"t_end_s", "number", "s", "time of the window's last read"},
      {"conversion_pct", "number", "%", "percent of the well's substrate converted by the window's end"},
      {"estimator", "string", "", "slope estimator: theil-sen, ols or huber"},
      {"flags", "string", "", "';'-separated reasons to distrust the rate; empty when clean"},
      {"notes", "string", "", "';'-separated corrections made on the way to v0 (lag skipped, outliers removed, overflow or ceiling reads left out)"},
      {"v0_ci_low", "number", "", "lower end of the 95 % interval of v0, unit in v0_unit"},
      {"v0_ci_high", "number", "", "upper end of the 95 % interval of v0, unit in v0_unit"},
      {"window", "string", "", "how the window was chosen: auto, leading or steepest"},
      {"tangent", "string", "", "which estimate v0 is (slope of the line, or an initial tangent)"},
      {"blank_wells", "string", "", "blank wells subtracted, ';'-separated; a rectangle of 3 or more as its corners (A45:AF48 = rows A to AF, columns 45 to 48)"},
      {"blank_rate", "number", "", "the blank's rate, unit in slope_unit (subtracted in rate mode)"},
      {"path_cm", "number", "cm", "optical path length used for Beer–Lambert"},
  };
  f.insert(f.end(), rest.begin(), rest.end());
  if (with_activity) {
    f.push_back({"activity_U", "number", "U", "enzyme activity in the well, µmol/min"});
    f.push_back({"activity_nkat", "number", "nkat", "enzyme activity in the well, nmol/s"});
  }
  if (with_specific) f.push_back({"specific_activity_U_per_mg", "number", "U/mg", "activity per mg of enzyme"});
  return f;
}

namespace {

void rates_rows(fmt::memory_buffer& b, const RunAnalysis& ra, const std::vector<std::string>& map_columns,
                bool with_activity, bool with_specific) {
  for (const auto& ca : ra.channels) {
    for (const auto& r : ca.rows) {
      put_field(b, ra.run->source); put(b, ",");
      put_field(b, ca.channel->name); put(b, ",");
      put_well(b, r.well); put(b, ",");
      put(b, row_label(r.well.row)); put(b, ",");
      put_int(b, r.well.column + 1); put(b, ",");
      put(b, to_string(r.role));
      for (std::size_t i = 0; i < map_columns.size(); ++i) {
        put(b, ",");
        if (r.info && i < r.info->values.size()) put_field(b, r.info->values[i]);
      }
      const RateResult& x = r.rate;
      put(b, ","); put_num(b, r.v0);
      put(b, ","); put_num(b, r.v0_se);
      put(b, ","); put_field(b, ca.v0_unit);
      put(b, ","); put_num(b, r.slope_per_min);
      put(b, ","); put_field(b, ca.slope_unit);
      put(b, ","); put_num(b, x.intercept);
      put(b, ","); put_num(b, x.r2);
      put(b, ","); put_int(b, x.n_points);
      put(b, ","); put_int(b, x.n_outliers);
      put(b, ","); put_num(b, x.t_start_s);
      put(b, ","); put_num(b, x.t_end_s);
      put(b, ","); put_num(b, x.conversion * 100);
      put(b, ","); put(b, to_string(x.estimator));
      put(b, ","); put_flags(b, r.flags);
      put(b, ","); put_flags(b, r.notes);
      put(b, ","); put_num(b, r.v0_ci_low);
      put(b, ","); put_num(b, r.v0_ci_high);
      put(b, ","); put(b, to_string(x.window));
      put(b, ","); put_field(b, x.tangent);
      put(b, ","); put_field(b, ca.blank.wells[static_cast<std::size_t>(ca.channel->column_of(r.plate_index))].blank_wells);
      put(b, ","); put_num(b, r.blank_rate_per_min);
      put(b, ","); put_num(b, r.path_cm);
      if (with_activity) {
        put(b, ","); put_num(b, r.activity_u);
        put(b, ","); put_num(b, r.activity_u * k_nkat_per_unit);
      }
      if (with_specific) {
        put(b, ","); put_num(b, r.specific_activity);
      }
      put(b, "\n");
    }
  }
}

}  // namespace

std::string rates_csv(const std::vector<RunAnalysis>& runs, const std::vector<std::string>& map_columns,
                      bool with_activity, bool with_specific) {
  fmt::memory_buffer b;
  header(b, rate_fields(map_columns, with_activity, with_specific));
  for (const auto& ra : runs) rates_rows(b, ra, map_columns, with_activity, with_specific);
  return fmt::to_string(b);
}

std::string rates_csv_rows(const RunAnalysis& run, const std::vector<std::string>& map_columns, bool with_activity,
                           bool with_specific) {
  fmt::memory_buffer b;
  rates_rows(b, run, map_columns, with_activity, with_specific);
  return fmt::to_string(b);
}

std::vector<FieldSpec> trace_fields() {
  return {
      {"source", "string", "", "export file"},
      {"channel", "string", "", "channel"},
      {"well", "string", "", "well name"},
      {"time_s", "number", "s", "read time"},
      {"status", "string", "", "ok, overflow, missing or excluded"},
      {"raw", "number", "", "signal as read, channel units"},
      {"blank", "number", "", "blank subtracted, channel units"},
      {"corrected", "number", "", "raw − blank, channel units"},
      {"concentration", "number", "", "corrected signal converted, in the reaction direction, unit as v0 without /min"},
      {"used", "integer", "", "1 when the read is in the rate window and not an outlier"},
  };
}

namespace {

void trace_rows(fmt::memory_buffer& b, const RunAnalysis& ra) {
  for (const auto& ca : ra.channels) {
    const Channel& c = *ca.channel;
    for (const auto& r : ca.rows) {
      int j = c.column_of(r.plate_index);
      double factor = ca.conversion.factor[static_cast<std::size_t>(j)];
      for (int i = 0; i < c.reads(); ++i) {
        put_field(b, ra.run->source); put(b, ",");
        put_field(b, c.name); put(b, ",");
        put_well(b, r.well); put(b, ",");
        put_num(b, c.time_s[static_cast<std::size_t>(i)]); put(b, ",");
        put(b, to_string(ca.blank.status(i, j))); put(b, ",");
        put_num(b, c.values(i, j)); put(b, ",");
        put_num(b, ca.blank.blank(i, j)); put(b, ",");
        put_num(b, ca.blank.corrected(i, j)); put(b, ",");
        put_num(b, ca.conversion.mode == ConvertMode::signal_only ? NAN : ca.direction_sign * ca.blank.corrected(i, j) * factor);
        put(b, ",");
        put(b, !r.rate.used.empty() && r.rate.used[static_cast<std::size_t>(i)] ? "1" : "0");
        put(b, "\n");
      }
    }
  }
}

}  // namespace

std::string traces_csv(const std::vector<RunAnalysis>& runs) {
  fmt::memory_buffer b;
  header(b, trace_fields());
  for (const auto& ra : runs) trace_rows(b, ra);
  return fmt::to_string(b);
}

std::string traces_csv_rows(const RunAnalysis& run) {
  fmt::memory_buffer b;
  trace_rows(b, run);
  return fmt::to_string(b);
}

std::vector<FieldSpec> summary_fields(const SummaryTable& s) {
  std::vector<FieldSpec> f = {{"channel", "string", "", "channel"}, {"role", "string", "", "role of the wells"}};
  for (const auto& c : s.columns) f.push_back({c, numeric_map_column(c) ? "number" : "string", "", "plate-map column"});
  std::vector<FieldSpec> rest = {
      {"n", "integer", "", "clean wells averaged"},
      {"n_flagged", "integer", "", "wells of the group left out because flagged"},
      {"v0_mean", "number", "", "mean v0 of the clean wells, unit in v0_unit"},
      {"v0_sd", "number", "", "sample standard deviation (n − 1) of v0"},
      {"v0_sem", "number", "", "standard error of the mean, v0_sd / √n"},
      {"cv_pct", "number", "%", "coefficient of variation, 100·sd/|mean|"},
      {"v0_unit", "string", "", "unit of v0"},
      {"wells", "string", "", "';'-separated wells of the group"},
  };
  f.insert(f.end(), rest.begin(), rest.end());
  return f;
}

std::string summary_csv(const SummaryTable& s) {
  fmt::memory_buffer b;
  header(b, summary_fields(s));
  for (const auto& g : s.groups) {
    put_field(b, g.channel); put(b, ","); put(b, g.role);
    for (const auto& k : g.key) { put(b, ","); put_field(b, k); }
    put(b, ","); put(b, std::to_string(g.n));
    put(b, ","); put(b, std::to_string(g.n_flagged));
    put(b, ","); put_num(b, g.v0_mean);
    put(b, ","); put_num(b, g.v0_sd);
    put(b, ","); put_num(b, g.v0_sem);
    put(b, ","); put_num(b, g.cv_pct);
    put(b, ","); put_field(b, g.v0_unit);
    put(b, ","); put_field(b, g.wells);
    put(b, "\n");
  }
  return fmt::to_string(b);
}

std::string datapackage_json(const std::vector<PackagedTable>& tables, const Provenance& p,
                             const std::vector<RunAnalysis>& runs) {
  using nlohmann::ordered_json;
  ordered_json pkg;
  pkg["profile"] = "tabular-data-package";
  pkg["name"] = "vzero-rates";
  pkg["title"] = "Initial rates computed by vzero";
  ordered_json resources = ordered_json::array();
  for (const auto& t : tables) {
    ordered_json r;
    r["name"] = t.name;
    r["path"] = t.path;
    r["profile"] = "tabular-data-resource";
    r["format"] = "csv";
    r["mediatype"] = "text/csv";
    r["encoding"] = "utf-8";
    ordered_json fields = ordered_json::array();
    for (const auto& f : t.fields) {
      ordered_json jf;
      jf["name"] = f.name;
      jf["type"] = f.type;
      if (!f.unit.empty()) jf["unit"] = f.unit;
      jf["description"] = f.description;
      fields.push_back(jf);
    }
    r["schema"]["fields"] = fields;
    r["schema"]["missingValues"] = ordered_json::array({""});
    resources.push_back(r);
  }
  pkg["resources"] = resources;
  ordered_json prov;
  prov["tool"] = "vzero";
  prov["version"] = p.tool_version;
  ordered_json inputs = ordered_json::array();
  for (const auto& in : p.inputs) {
    ordered_json j;
    j["kind"] = in.kind;
    j["path"] = in.path;
    j["sha256"] = in.sha256;
    if (!in.profile.empty()) j["profile"] = in.profile;
    if (!in.shape.empty()) j["shape"] = in.shape;
    inputs.push_back(j);
  }
  prov["inputs"] = inputs;
  ordered_json opts;
  for (const auto& [k, v] : p.options) opts[k] = v;
  prov["options"] = opts;
  ordered_json det;
  for (const auto& [k, v] : p.detected) det[k] = v;
  prov["detected"] = det;
  ordered_json conv = ordered_json::array();
  for (const auto& ra : runs) {
    for (const auto& ca : ra.channels) {
      ordered_json c;
      c["source"] = ra.run->source;
      c["channel"] = ca.channel->name;
      c["conversion"] = std::string(to_string(ca.conversion.mode));
      c["formula"] = ca.conversion.formula;
      c["v0_unit"] = ca.v0_unit;
      if (ca.conversion.curve) {
        const auto& sc = *ca.conversion.curve;
        c["standard_curve"] = {{"slope", sc.slope}, {"slope_se", sc.slope_se}, {"intercept", sc.intercept},
                               {"intercept_se", sc.intercept_se}, {"r2", sc.r2}, {"residual_sd", sc.residual_sd},
                               {"lod", sc.lod}, {"lod_basis", sc.lod_basis}, {"conc_min", sc.conc_min},
                               {"conc_max", sc.conc_max}, {"signal_min", sc.signal_min},
                               {"signal_max", sc.signal_max}, {"n", sc.n}};
      }
      conv.push_back(c);
    }
  }
  prov["channels"] = conv;
  pkg["vzero"] = prov;
  return pkg.dump(2) + "\n";
}

}  // namespace vzero
