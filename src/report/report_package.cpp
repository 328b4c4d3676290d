// What the report reads from the files of a run beside the tables: datapackage.json's
// recorded facts (plate, direction, conversion factor, plate-map columns), fit documents
// (fit.json, or the fit table turned into the same shape), and finding a run's files from
// its folder by the names datapackage.json records.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <filesystem>

#include "core/files.hpp"
#include "core/text.hpp"
#include "report/report_model.hpp"
#include "vzero/error.hpp"
#include "vzero/kinetic_model.hpp"
#include "vzero/outputs.hpp"

namespace vzero::detail::report {

namespace {

using nlohmann::json;

const char* const k_package_fix = "give the datapackage.json vzero rates wrote beside this rates table, unchanged";

const json& need(const json& j, const char* key, const char* type, const std::string& where, const std::string& file) {
  const json& v = member(j, key);
  const bool ok = std::string(type) == "string"   ? v.is_string()
                  : std::string(type) == "number" ? v.is_number()
                  : std::string(type) == "array"  ? v.is_array()
                                                  : v.is_object();
  if (!ok)
    throw InputError(Where{file},
                     fmt::format("expected {}\"{}\" ({}) in datapackage.json; found {}", where, key, type,
                                 v.is_null() ? "none" : v.dump()),
                     {k_package_fix});
  return v;
}

// A fit table (vzero fit -o) as a fit document: the groups are the columns before `model`.
json fit_doc_from_table(const Table& t) {
  const std::string fix = "give the fit table vzero fit wrote (-o), or its --json file";
  const int model = t.require_column("model", fix), parameter = t.require_column("parameter", fix);
  const int estimate = t.require_column("estimate", fix), se = t.require_column("se", fix);
  const int message = t.require_column("message", fix), unit = t.require_column("unit", fix);
  auto num = [&](std::size_t r, const char* name) {
    const int c = t.column(name);
    return c >= 0 ? json(t.number(r, c).value_or(NAN)) : json(nullptr);
  };
  auto text = [&](std::size_t r, int c) { return t.rows[r][static_cast<std::size_t>(c)]; };
  json doc = {{"tool", "vzero fit"}, {"source", ""}, {"fits", json::array()}};
  std::vector<std::string> groups(t.header.begin(), t.header.begin() + model);
  doc["group_columns"] = groups;
  std::string last_key;
  for (std::size_t r = 0; r < t.rows.size(); ++r) {
    std::string key;
    for (int c = 0; c <= model; ++c) key += text(r, c) + '\x1f';
    if (key != last_key) {
      const KineticModel* km = find_model(text(r, model));
      if (!km)
        throw InputError(Where{t.source, t.line_of_row[r], t.column_of_cell[r][static_cast<std::size_t>(model)]},
                         fmt::format("expected a kinetic model name; found \"{}\"", text(r, model)), {fix});
      json g = json::object();
      for (std::size_t k = 0; k < groups.size(); ++k) g[groups[k]] = t.rows[r][k];
      json f = {{"group", g},
                {"model", km->name},
                {"formula", km->formula},
                {"ok", text(r, message).empty()},
                {"message", text(r, message)},
                {"n", num(r, "n")},
                {"df", num(r, "df")},
                {"residual_sd", num(r, "residual_sd")},
                {"aic", num(r, "aic")},
                {"iterations", num(r, "iterations")},
                {"converged", t.column("converged") >= 0 && text(r, t.column("converged")) == "true"},
                {"start_method", "not recorded in the fit table"},
                {"parameters", json::array()},
                {"derived", json::array()}};
      doc["fits"].push_back(f);
      last_key = key;
    }
    json& f = doc["fits"].back();
    const KineticModel* km = find_model(f["model"].get<std::string>());
    const std::string name = text(r, parameter);
    json p = {{"name", name},
              {"estimate", t.number(r, estimate).value_or(NAN)},
              {"se", t.number(r, se).value_or(NAN)},
              {"unit", text(r, unit)}};
    p["wald"] = {num(r, "ci_low"), num(r, "ci_high")};
    p["profile"] = {num(r, "profile_low"), num(r, "profile_high")};
    const auto names = km->parameter_names();
    const bool own = std::find(names.begin(), names.end(), name) != names.end();
    f[own ? "parameters" : "derived"].push_back(p);
    if (own && name == names.front()) doc["units"]["v"] = text(r, unit);
  }
  return doc;
}

}  // namespace

json parse_json(const std::string& text, const std::string& name) {
  try {
    return json::parse(text);
  } catch (const json::parse_error& e) {
    throw InputError(Where{name}, fmt::format("cannot read the JSON: {}", e.what()),
                     {"give the file vzero wrote, unchanged"});
  }
}

void read_package(PageData& m, const std::string& file) {
  const json& prov = need(m.package, "vzero", "object", "", file);
  for (const auto& c : need(prov, "map_columns", "array", "vzero.", file))
    if (c.is_string()) m.map_columns.push_back(c.get<std::string>());
  for (const auto& ch : need(prov, "channels", "array", "vzero.", file)) {
    ChannelFacts f;
    f.source = need(ch, "source", "string", "vzero.channels[].", file).get<std::string>();
    f.channel = need(ch, "channel", "string", "vzero.channels[].", file).get<std::string>();
    const json& plate = need(ch, "plate", "object", "vzero.channels[].", file);
    f.format.rows = need(plate, "rows", "number", "vzero.channels[].plate.", file).get<int>();
    f.format.columns = need(plate, "columns", "number", "vzero.channels[].plate.", file).get<int>();
    const std::string dir = need(ch, "direction", "string", "vzero.channels[].", file).get<std::string>();
    if (dir != "up" && dir != "down")
      throw InputError(Where{file},
                       fmt::format("expected vzero.channels[].direction \"up\" or \"down\"; found \"{}\"", dir),
                       {k_package_fix});
    f.sign = dir == "down" ? -1 : 1;
    f.converted = need(ch, "conversion", "string", "vzero.channels[].", file).get<std::string>() != "signal-only";
    const json& factor = member(ch, "conc_per_signal");
    if (factor.is_number()) f.factor = std::fabs(factor.get<double>());
    f.signal_unit = per_min_stem(need(ch, "slope_unit", "string", "vzero.channels[].", file).get<std::string>());
    m.channels.push_back(std::move(f));
  }
}

FitView read_fit(const ReportFit& fit) {
  FitView v;
  v.source = fit.source;
  v.diagnostics = fit.diagnostics ? &*fit.diagnostics : nullptr;
  const auto first = fit.text.find_first_not_of(" \t\r\n\xEF\xBB\xBF");
  if (first != std::string::npos && fit.text[first] == '{') {
    v.doc = parse_json(fit.text, fit.source);
  } else {
    v.doc = fit_doc_from_table(parse_table(fit.source, fit.text));
    v.from_table = true;
  }
  return v;
}

}  // namespace vzero::detail::report

namespace vzero {

ReportFiles find_run_files(const std::string& given) {
  namespace fs = std::filesystem;
  const fs::path path(given);
  if (!fs::exists(path))
    throw InputError(Where{given},
                     fmt::format("expected a run folder or its rates table; \"{}\" does not exist", given),
                     {"give the folder vzero rates wrote into, or its rates.csv"});
  const bool is_dir = fs::is_directory(path);
  const fs::path dir = is_dir ? path : path.parent_path();
  const fs::path pkg_path = dir / "datapackage.json";
  if (!fs::exists(pkg_path))
    throw InputError(Where{pkg_path.string()},
                     fmt::format("expected datapackage.json beside the run's tables in \"{}\"; found none",
                                 dir.empty() ? "." : dir.string()),
                     {"give the folder vzero rates wrote into (its -o folder), or --rates and --package"});
  ReportFiles f;
  f.package = pkg_path.string();
  // A set whose tables are not the ones datapackage.json records (by hash) is refused.
  if (const auto stale = unpublished_tables(f.package); !stale.empty()) {
    std::string what = stale.front();
    for (std::size_t i = 1; i < stale.size(); ++i) what += "; " + stale[i];
    throw InputError(Where{f.package}, what,
                     {"rerun vzero rates to write the whole set again",
                      "or draw the tables as they are with --rates, --package and --traces"});
  }
  const nlohmann::json pkg = detail::report::parse_json(
      detail::read_whole_file(f.package, "check the path and that the file is readable").text, f.package);
  for (const auto& r : detail::report::member(pkg, "resources")) {
    const std::string name = detail::report::member(r, "name").is_string() ? r["name"].get<std::string>() : "";
    const std::string rel = detail::report::member(r, "path").is_string() ? r["path"].get<std::string>() : "";
    const std::string p = (dir / rel).string();
    if (name.empty() || rel.empty()) continue;
    if (!fs::exists(p))
      throw InputError(Where{f.package},
                       fmt::format("datapackage.json names the {} table \"{}\"; no such file", name, p),
                       {"keep the run's files together as vzero rates wrote them"});
    if (name == "rates") f.rates = p;
    if (name == "traces") f.traces = p;
    if (name == "summary") f.summary = p;
  }
  if (!is_dir && f.rates.empty()) f.rates = given;
  if (f.rates.empty())
    throw InputError(Where{f.package}, "expected a \"rates\" resource in datapackage.json; found none",
                     {detail::report::k_package_fix});
  // Fits of these tables: fit documents in the folder whose recorded source is one of them.
  std::vector<std::string> fits;
  for (const auto& e : fs::directory_iterator(dir.empty() ? fs::path(".") : dir)) {
    if (e.path().extension() != ".json" || e.path().filename() == "datapackage.json") continue;
    const auto doc = nlohmann::json::parse(
        detail::read_whole_file(e.path().string(), "check that the file is readable").text, nullptr, false);
    if (!doc.is_object() || detail::report::member(doc, "tool") != "vzero fit") continue;
    const auto& src = detail::report::member(doc, "source");
    if (!src.is_string()) continue;
    const std::string name = fs::path(src.get<std::string>()).filename().string();
    for (const std::string* t : {&f.rates, &f.summary})
      if (!t->empty() && fs::path(*t).filename().string() == name) {
        fits.push_back((dir / e.path().filename()).string());
        break;
      }
  }
  std::sort(fits.begin(), fits.end());
  f.fits = fits;
  return f;
}

}  // namespace vzero
