// vzero merge: the runs read and checked, and the merged set written and published (the
// tables' rows: merge_tables.cpp).
#include "vzero/merge.hpp"

#include <fmt/format.h>

#include <filesystem>
#include <map>
#include <memory>

#include "core/files.hpp"
#include "merge/merge_tables.hpp"
#include "vzero/outputs.hpp"

namespace vzero {

namespace {

namespace fs = std::filesystem;
using detail::RunPackage;
using detail::where_in;
using nlohmann::ordered_json;

const char* const k_fix_alike =
    "run every part with the same vzero, plate map (--layout), method file and options, from the same folder, "
    "and merge only those";

std::string shown(const ordered_json& j) { return j.is_null() ? "nothing" : j.dump(); }

RunPackage load_run(const std::string& dir) {
  RunPackage r;
  r.dir = dir;
  r.path = (fs::path(dir) / "datapackage.json").string();
  r.text = detail::read_whole_file(
               r.path, "give the folder a `vzero rates` run wrote into (datapackage.json is beside its rates.csv)")
               .text;
  r.pkg = ordered_json::parse(r.text, nullptr, false);
  const auto& p = r.pkg;
  const bool ours = !p.is_discarded() && p.is_object() && p.contains("resources") && p["resources"].is_array() &&
                    p.contains("vzero") && p["vzero"].is_object() && p["vzero"].value("tool", "") == "vzero" &&
                    p["vzero"].contains("inputs") && p["vzero"]["inputs"].is_array() &&
                    p["vzero"].contains("options") && p["vzero"]["options"].is_object();
  if (!ours)
    throw InputError(Where{r.path},
                     fmt::format("expected the datapackage.json of a `vzero rates` run (with its `vzero` provenance), "
                                 "found {}",
                                 p.is_discarded() ? "text that is not JSON" : "another kind of file"),
                     {"give the folders `vzero rates` wrote into"});
  for (const auto& in : p["vzero"]["inputs"])
    if (in.value("kind", "") == "export") r.exports.push_back(in.value("path", ""));
  return r;
}

// Every table the run lists is inside its folder, has its recorded hash, and is those bytes.
void check_complete(const RunPackage& run) {
  for (const auto& r : run.pkg["resources"]) {
    const std::string name = r.value("name", ""), rel = r.value("path", "");
    const Where at = where_in(run, "\"name\": \"" + name + "\"");
    if (!r.contains("hash"))
      throw InputError(at, fmt::format("expected the sha256 of {} (the resource's `hash`), found none", rel),
                       {"run that part again with this vzero (it records each table's hash, so a merge can check it)"});
    bool inside = !rel.empty() && fs::path(rel).is_relative();
    for (const auto& part : fs::path(rel)) inside &= part != "..";
    if (!inside)
      throw InputError(at, fmt::format("expected {} inside the run folder, found the path \"{}\"", name, rel),
                       {"write every table of a part into its own folder (-o DIR/rates.csv --traces DIR/traces.csv)"});
  }
  if (auto bad = unpublished_tables(run.path); !bad.empty())
    throw InputError(Where{run.path}, "the run is incomplete or was changed since: " + bad.front(),
                     {"run that part again (or wait until it has finished), then merge"});
}

// The resources without their hashes: what a run wrote, whatever its rows.
ordered_json without_hashes(ordered_json resources) {
  for (auto& r : resources) r.erase("hash");
  return resources;
}

// The inputs every part shares (plate map, method), as recorded.
ordered_json shared_inputs(const RunPackage& run) {
  ordered_json out = ordered_json::array();
  for (const auto& in : run.pkg["vzero"]["inputs"])
    if (in.value("kind", "") == "plate-map" || in.value("kind", "") == "method") out.push_back(in);
  return out;
}

// A resource's path (nothing when there is no such resource).
ordered_json path_of(const ordered_json& resource) {
  return resource.is_object() ? resource.value("path", ordered_json()) : ordered_json();
}

[[noreturn]] void unlike(const RunPackage& first, const std::string& field, const Where& at, const ordered_json& want,
                         const ordered_json& found) {
  throw InputError(at,
                   fmt::format("expected {} as in {} ({}), found {}: the runs are not parts of one run", field,
                               first.path, shown(want), shown(found)),
                   {k_fix_alike});
}

// Everything a single run would share across its exports is the same in `run` as in `first`.
void check_alike(const RunPackage& first, const RunPackage& run) {
  const auto& a = first.pkg["vzero"];
  const auto& b = run.pkg["vzero"];
  if (a.value("version", "") != b.value("version", ""))
    unlike(first, "vzero.version", where_in(run, "\"version\""), a["version"], b["version"]);
  for (const auto* o : {&a["options"], &b["options"]})
    for (const auto& [k, v] : o->items())
      if (!a["options"].contains(k) || !b["options"].contains(k) || a["options"][k] != b["options"][k])
        unlike(first, "option " + k, where_in(run, "\"" + k + "\":", "\"options\""),
               a["options"].value(k, ordered_json()), b["options"].value(k, ordered_json()));
  const ordered_json ia = shared_inputs(first), ib = shared_inputs(run);
  for (std::size_t i = 0; i < std::max(ia.size(), ib.size()); ++i) {
    const ordered_json x = i < ia.size() ? ia[i] : ordered_json(), y = i < ib.size() ? ib[i] : ordered_json();
    if (x == y) continue;
    const std::string kind = (x.is_null() ? y : x).value("kind", "");
    const std::string field = x.is_null() || y.is_null() || x["path"] == y["path"] ? "sha256" : "path";
    unlike(first, "the " + kind + " input's " + field, where_in(run, "\"" + kind + "\""), x.is_null() ? x : x[field],
           y.is_null() ? y : y[field]);
  }
  for (const char* key : {"map_columns", "map_column_uses"})
    if (a.value(key, ordered_json()) != b.value(key, ordered_json()))
      unlike(first, std::string("vzero.") + key, where_in(run, std::string("\"") + key + "\""),
             a.value(key, ordered_json()), b.value(key, ordered_json()));
  const ordered_json ra = without_hashes(first.pkg["resources"]), rb = without_hashes(run.pkg["resources"]);
  for (std::size_t i = 0; i < std::max(ra.size(), rb.size()); ++i) {
    const ordered_json x = i < ra.size() ? ra[i] : ordered_json(), y = i < rb.size() ? rb[i] : ordered_json();
    if (x == y) continue;
    const bool same_table = !x.is_null() && !y.is_null() && x["name"] == y["name"] && x["path"] == y["path"];
    unlike(first, same_table ? "the columns of " + x.value("name", "") : fmt::format("table {}", i + 1),
           where_in(run, "\"resources\""), same_table ? ordered_json("its schema") : path_of(x),
           same_table ? ordered_json("other columns") : path_of(y));
  }
}

// The merged inputs (shared ones, then each run's exports with the profiles they used, once
// each) and the per-export provenance (detected profiles, channels) in run order.
struct Merged {
  ordered_json inputs = ordered_json::array(), detected, channels = ordered_json::array();
  std::map<std::string, std::string> export_run;   // "path:P" and "sha256:S" → the run's datapackage.json
  std::map<std::string, std::string> profile_sha;  // profile path → sha256
};

void add_provenance(const RunPackage& run, Merged& m) {
  for (const auto& in : run.pkg["vzero"]["inputs"]) {
    const std::string kind = in.value("kind", ""), path = in.value("path", ""), sha = in.value("sha256", "");
    const Where at = where_in(run, "\"path\": " + ordered_json(path).dump());
    if (kind == "plate-map" || kind == "method" || kind == "file-list") continue;
    if (kind == "profile") {
      auto [it, fresh] = m.profile_sha.emplace(path, sha);
      if (fresh) m.inputs.push_back(in);
      if (!fresh && it->second != sha)
        throw InputError(at,
                         fmt::format("expected the profile {} with sha256 {} (as an earlier run read it), found {}",
                                     path, it->second, sha),
                         {"let every part read the same profile file; merge only runs made with it"});
      continue;
    }
    if (kind != "export")
      throw InputError(at,
                       fmt::format("expected inputs of kind export, profile, plate-map, method or file-list, "
                                   "found \"{}\" (written by another vzero?)",
                                   kind),
                       {"merge with the vzero that wrote the runs"});
    for (const auto& [key, what] : {std::pair{"path:" + path, "path"}, std::pair{"sha256:" + sha, "sha256"}}) {
      auto [it, fresh] = m.export_run.emplace(key, run.path);
      if (!fresh)
        throw InputError(at,
                         fmt::format("expected each export in one run only, found {} in {} too (same {}): its "
                                     "wells would count twice",
                                     path, it->second, what),
                         {"give each export to one part only (cut one file list into pieces; see docs/cluster.md)"});
    }
    m.inputs.push_back(in);
  }
  const auto& v = run.pkg["vzero"];
  if (v.contains("detected") && v["detected"].is_object())
    for (const auto& [k, x] : v["detected"].items()) m.detected[k] = x;
  if (v.contains("channels") && v["channels"].is_array())
    for (const auto& c : v["channels"]) m.channels.push_back(c);
}

std::vector<std::string> recorded_warnings(const RunPackage& run) {
  const auto& v = run.pkg["vzero"];
  return v.contains("warnings") ? v["warnings"].get<std::vector<std::string>>() : std::vector<std::string>{};
}

}  // namespace

namespace {

// The run's recorded warnings are the plate map's (the same in every part), then the
// missing-substrate warning its own rates give (`own`, "" when none). Returns the map's.
std::vector<std::string> map_warnings(const RunPackage& run, const std::string& own) {
  std::vector<std::string> w = recorded_warnings(run);
  if (own.empty()) return w;
  if (w.empty() || w.back() != own)
    throw InputError(where_in(run, "\"warnings\""),
                     fmt::format("expected the run's warnings to end with the one its rates.csv gives (\"{}\"), "
                                 "found {}",
                                 own, w.empty() ? std::string("no warnings") : "\"" + w.back() + "\""),
                     {"merge the run folder as `vzero rates` wrote it, or run that part again"});
  w.pop_back();
  return w;
}

// datapackage.json of the merged set: the first run's, with the merged provenance in the
// places a single run writes it, and the merged tables' hashes.
std::string merged_package(const RunPackage& first, const Merged& m, const std::vector<std::string>& warnings,
                           const std::map<std::string, std::string>& hashes) {
  ordered_json pkg = first.pkg;
  pkg["resources"] = without_hashes(pkg["resources"]);
  ordered_json v;
  for (const auto& [k, x] : first.pkg["vzero"].items()) {
    if (k == "warnings") continue;
    if (k == "channels" && !warnings.empty()) v["warnings"] = warnings;
    if (k == "inputs")
      v[k] = m.inputs;
    else if (k == "detected")
      v[k] = m.detected;
    else if (k == "channels")
      v[k] = m.channels;
    else
      v[k] = x;
  }
  pkg["vzero"] = v;
  return with_table_hashes(pkg.dump(2) + "\n", hashes);
}

// The merged files, each written in full to its temporary file before any is put in place.
struct Outputs {
  std::vector<std::string> names, paths;
  std::vector<std::unique_ptr<AtomicFile>> files;
  AtomicFile& of(const std::string& name) {
    for (std::size_t i = 0; i < names.size(); ++i)
      if (names[i] == name) return *files[i];
    throw std::logic_error("no merged table " + name);
  }
};

Outputs plan_outputs(const std::vector<RunPackage>& runs, const std::string& output_dir) {
  std::error_code ec;
  fs::create_directories(output_dir, ec);
  if (ec)
    throw InputError(Where{output_dir}, fmt::format("cannot make the folder {}: {}", output_dir, ec.message()),
                     {"give -o a folder you can write to"});
  Outputs out;
  std::vector<detail::NamedPath> inputs, outputs;
  for (const auto& run : runs) {
    inputs.push_back({"a run's datapackage.json", run.path});
    for (const auto& r : run.pkg["resources"]) inputs.push_back({"a run's table", run.table_path(r.value("name", ""))});
  }
  for (const auto& r : runs.front().pkg["resources"]) {
    const std::string name = r.value("name", "");
    if (name != "rates" && name != "traces" && name != "summary" && name != "plate-quality")
      throw InputError(
          where_in(runs.front(), "\"name\": \"" + name + "\""),
          fmt::format("expected the tables rates, traces, summary and plate-quality, found \"{}\" (written by another "
                      "vzero?)",
                      name),
          {"merge with the vzero that wrote the runs"});
    out.names.push_back(name);
    out.paths.push_back((fs::path(output_dir) / r.value("path", "")).string());
    outputs.push_back({"the merged " + name, out.paths.back()});
  }
  outputs.push_back({"the merged datapackage.json", (fs::path(output_dir) / "datapackage.json").string()});
  detail::check_outputs(inputs, outputs);
  for (const auto& p : out.paths) out.files.push_back(std::make_unique<AtomicFile>(p));
  return out;
}

}  // namespace

MergedSet merge_runs(const std::vector<std::string>& run_dirs, const std::string& output_dir) {
  if (run_dirs.empty()) throw UsageError("expected one or more RUN_FOLDERs (the folders `vzero rates` wrote into)");
  if (output_dir.empty()) throw UsageError("-o OUT_FOLDER is required (where the merged set goes)");
  std::vector<RunPackage> runs;
  Merged m;
  for (const auto& dir : run_dirs) {
    runs.push_back(load_run(dir));
    check_complete(runs.back());
    if (runs.size() > 1) check_alike(runs.front(), runs.back());
    if (runs.size() == 1) m.inputs = shared_inputs(runs.front());  // first, as one run lists them
    add_provenance(runs.back(), m);
  }
  Outputs out = plan_outputs(runs, output_dir);
  detail::RatesMerger rates(runs.front());
  std::string header;
  std::vector<std::string> shared_warnings;
  for (const auto& run : runs) {
    const std::vector<std::string> w = map_warnings(run, rates.add_run(run, header, out.of("rates")));
    if (&run == &runs.front())
      shared_warnings = w;
    else if (w != shared_warnings)
      throw InputError(where_in(run, "\"warnings\""),
                       fmt::format("expected the plate map's warnings as in {}, found others", runs.front().path),
                       {k_fix_alike});
  }
  std::map<std::string, std::string> hashes{{"rates", out.of("rates").sha256()}};
  for (std::size_t i = 0; i < out.names.size(); ++i) {
    if (out.names[i] == "traces" || out.names[i] == "plate-quality") {  // rows per plate: they concatenate
      header.clear();
      for (const auto& run : runs) detail::append_table(run.table_path(out.names[i]), header, *out.files[i]);
    } else if (out.names[i] == "summary") {
      out.files[i]->append(summary_csv(rates.summary()));
    }
    hashes[out.names[i]] = out.files[i]->sha256();
  }
  if (std::string w = rates.merged_warning(); !w.empty()) shared_warnings.push_back(w);
  const std::string package_path = (fs::path(output_dir) / "datapackage.json").string();
  AtomicFile package(package_path);
  package.append(merged_package(runs.front(), m, shared_warnings, hashes));
  // Tables first, datapackage.json last, as vzero rates publishes: it records each table's hash.
  MergedSet set;
  for (std::size_t i = 0; i < out.files.size(); ++i) {
    out.files[i]->commit();
    set.files.push_back(out.paths[i]);
  }
  package.commit();
  set.files.push_back(package_path);
  set.exports = 0;
  for (const auto& run : runs) set.exports += run.exports.size();
  set.wells = rates.rows();
  set.warnings = shared_warnings;
  return set;
}

}  // namespace vzero
