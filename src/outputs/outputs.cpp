#include "vzero/outputs.hpp"

#include <algorithm>

#include <fmt/format.h>

#include <nlohmann/json.hpp>

#include <filesystem>

#include "core/files.hpp"
#include "core/line_source.hpp"
#include "outputs/output_tables.hpp"

namespace vzero {

namespace {
using nlohmann::ordered_json;

// One Frictionless tabular-data-resource per table: its file and its Table Schema.
ordered_json resources_json(const std::vector<PackagedTable>& tables) {
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
  return resources;
}

// Each input file: its hash, how it was read, and every fact inferred while reading it.
ordered_json inputs_json(const Provenance& p) {
  ordered_json inputs = ordered_json::array();
  for (const auto& in : p.inputs) {
    ordered_json j;
    j["kind"] = in.kind;
    j["path"] = in.path;
    j["sha256"] = in.sha256;
    if (!in.profile.empty()) j["profile"] = in.profile;
    if (!in.shape.empty()) j["shape"] = in.shape;
    if (!in.sheet.empty()) j["sheet"] = in.sheet;
    if (!in.metadata.empty()) {
      ordered_json meta = ordered_json::array();
      for (const auto& [k, v] : in.metadata) meta.push_back({{"key", k}, {"value", v}});
      j["metadata"] = meta;
    }
    if (!in.read.empty()) {
      // Per fact its value and basis; the channels (one fact each) as a list.
      ordered_json read;
      for (const auto& f : in.read) {
        ordered_json one = {{"value", f.value}, {"basis", f.basis}};
        if (f.name == "channel")
          read["channels"].push_back(one);
        else
          read[f.name] = one;
      }
      read["notes"] = in.read_notes;
      j["read"] = read;
    }
    inputs.push_back(j);
  }
  return inputs;
}

// How each plate-map column was read (a match key or a concentration, with its unit).
ordered_json map_uses_json(const Provenance& p) {
  ordered_json uses = ordered_json::array();
  for (const auto& u : p.map_uses) {
    ordered_json j;
    j["column"] = u.column;
    j["read_as"] = u.use;
    if (u.use != "match") {
      j["unit"] = u.unit;
      j["unit_from"] = u.unit_in_header ? "header" : "conc-unit";
      j["factor_to_conc_unit"] = u.factor;
    }
    uses.push_back(j);
  }
  return uses;
}

ordered_json standard_curve_json(const StandardCurve& sc) {
  ordered_json c = {{"slope", sc.slope},
                    {"slope_se", sc.slope_se},
                    {"intercept", sc.intercept},
                    {"intercept_se", sc.intercept_se},
                    {"r2", sc.r2},
                    {"residual_sd", sc.residual_sd},
                    {"lod", sc.lod},
                    {"lod_basis", sc.lod_basis},
                    {"conc_min", sc.conc_min},
                    {"conc_max", sc.conc_max},
                    {"signal_min", sc.signal_min},
                    {"signal_max", sc.signal_max},
                    {"n", sc.n}};
  ordered_json pts = ordered_json::array();
  for (const auto& [conc, signal] : sc.points) pts.push_back({conc, signal});
  c["points"] = pts;  // (concentration, signal) of each standard used
  return c;
}

// What a later step needs of one channel, stated rather than worked back from the tables: the
// plate, the reaction direction and the conversion factor (per well only when the path varies;
// each well's path is then rates.csv's path_cm).
ordered_json channel_json(const RunAnalysis& ra, const ChannelAnalysis& ca, const std::string& conc_unit) {
  ordered_json c;
  c["source"] = ra.run->source;
  c["channel"] = ca.channel->name;
  c["conversion"] = std::string(to_string(ca.conversion.mode));
  c["formula"] = ca.conversion.formula;
  c["v0_unit"] = ca.v0_unit;
  c["slope_unit"] = ca.slope_unit;
  c["plate"] = {{"wells", ra.run->format.wells()}, {"rows", ra.run->format.rows}, {"columns", ra.run->format.columns}};
  c["direction"] = enum_text(ca.direction_sign < 0 ? Direction::down : Direction::up);
  if (!ca.method_settings.empty()) {  // the channel's own settings, as the method file gives them
    ordered_json m;
    for (const auto& [k, v] : ca.method_settings) m[k] = v;
    c["channel_settings"] = {{"from", ca.method_table}, {"values", m}};
  }
  const auto& f = ca.conversion.factor;
  const bool uniform = !f.empty() && std::all_of(f.begin(), f.end(), [&](double x) { return x == f.front(); });
  if (uniform)
    c["conc_per_signal"] = f.front();
  else
    c["conc_per_signal"] = "per well: 1/(epsilon × path_cm)";
  if (ca.conversion.curve) c["standard_curve"] = standard_curve_json(*ca.conversion.curve);
  // The blank wells' rates against their substrate, when 3 or more blanks at 2 or more levels
  // allowed the test (blank.hpp BlankSubstrateTrend); t is left out for an exact line.
  if (const BlankSubstrateTrend& tr = ca.blank.substrate_trend; std::isfinite(tr.slope)) {
    ordered_json t;
    t["slope"] = tr.slope * 60;
    t["unit"] = ca.slope_unit + " per " + conc_unit;
    if (std::isfinite(tr.t)) t["t"] = tr.t;
    t["blanks"] = tr.blanks;
    t["levels"] = tr.levels;
    t["significant"] = tr.significant;
    t["wells_at_other_levels"] = tr.mismatched;
    c["blank_substrate_trend"] = t;
  }
  return c;
}
}  // namespace

std::string datapackage_json(const std::vector<PackagedTable>& tables, const Provenance& p,
                             const std::vector<RunAnalysis>& runs) {
  ordered_json pkg;
  pkg["profile"] = "tabular-data-package";
  pkg["name"] = "vzero-rates";
  pkg["title"] = "Initial rates computed by vzero";
  pkg["resources"] = resources_json(tables);
  ordered_json prov;
  prov["tool"] = "vzero";
  prov["version"] = p.tool_version;
  prov["inputs"] = inputs_json(p);
  ordered_json opts;
  for (const auto& [k, v] : p.options) opts[k] = v;
  prov["options"] = opts;
  ordered_json det;
  for (const auto& [k, v] : p.detected) det[k] = v;
  prov["detected"] = det;
  prov["map_columns"] = p.map_columns;
  prov["map_column_uses"] = map_uses_json(p);
  if (!p.warnings.empty()) prov["warnings"] = p.warnings;
  std::string conc_unit = "uM";  // the plate map's substrate unit (the library default when unrecorded)
  for (const auto& [k, v] : p.options)
    if (k == "conc-unit") conc_unit = v;
  ordered_json conv = ordered_json::array();
  for (const auto& ra : runs)
    for (const auto& ca : ra.channels) conv.push_back(channel_json(ra, ca, conc_unit));
  prov["channels"] = conv;
  pkg["vzero"] = prov;
  return pkg.dump(2) + "\n";
}

void traces_csv_pieces(const RunAnalysis& run, const std::function<void(std::string_view)>& take) {
  const auto columns = detail::columns_for(detail::trace_declaration(), detail::NoContext{});
  for (const auto& ca : run.channels)
    for (const auto& r : ca.rows) {  // the order of detail::write_trace_rows
      const int j = ca.channel->column_of(r.plate_index);
      const double factor = ca.conversion.factor[static_cast<std::size_t>(j)];
      detail::CsvOut out;
      for (int i = 0; i < ca.channel->reads(); ++i)
        detail::write_row(out, columns, detail::TraceRowRef{run, ca, r, i, j, factor});
      take(out.view());
    }
}

std::string with_table_hashes(const std::string& package_json,
                              const std::map<std::string, std::string>& sha256_by_name) {
  auto pkg = nlohmann::ordered_json::parse(package_json);
  for (auto& r : pkg["resources"]) {
    auto it = sha256_by_name.find(r.value("name", ""));
    if (it != sha256_by_name.end()) r["hash"] = "sha256:" + it->second;
  }
  return pkg.dump(2) + "\n";
}

std::vector<std::string> unpublished_tables(const std::string& package_path) {
  namespace fs = std::filesystem;
  const auto pkg = nlohmann::json::parse(
      detail::read_whole_file(package_path, "check the path and that the file is readable").text, nullptr, false);
  std::vector<std::string> out;
  if (pkg.is_discarded() || !pkg.is_object() || !pkg.contains("resources") || !pkg["resources"].is_array()) return out;
  const fs::path dir = fs::path(package_path).parent_path();
  for (const auto& r : pkg["resources"]) {
    if (!r.is_object() || !r.contains("hash") || !r["hash"].is_string() || !r.contains("path") ||
        !r["path"].is_string())
      continue;
    const std::string hash = r["hash"].get<std::string>(), rel = r["path"].get<std::string>();
    if (hash.rfind("sha256:", 0) != 0) continue;
    const fs::path file = dir / rel;
    std::error_code ec;
    const bool there = fs::is_regular_file(file, ec);
    if (there && detail::sha256_of_file(file.string()) == hash.substr(7)) continue;
    out.push_back(fmt::format(
        "{} is not the one datapackage.json describes ({}): a run was interrupted while publishing its outputs, or "
        "the file was changed since",
        file.string(), there ? "its sha256 differs from the recorded hash" : "it is missing"));
  }
  return out;
}

}  // namespace vzero
