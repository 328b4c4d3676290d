// The compiled part of the Python module (`vzero._vzero`): thin calls into the library's
// own entry points. Tables come back as the CSV text the command line writes (one writer,
// one number format); vzero/__init__.py turns them into columns. Library errors become
// vzero.InputError / vzero.UsageError (vzero/errors.py), both ValueError subclasses.
#include <pybind11/numpy.h>
#include <pybind11/pybind11.h>
#include <pybind11/stl.h>

#include <string>
#include <utility>
#include <vector>

#include "vzero/error.hpp"
#include "vzero/ingest.hpp"
#include "vzero/profile.hpp"
#include "vzero/rates_run.hpp"
#include "vzero/settings.hpp"
#include "vzero_py.hpp"

namespace py = pybind11;

namespace vzero::python {

namespace {

using Options = std::vector<std::pair<std::string, std::string>>;

// `vzero rates` as one call: options by their long names (as the method file and the command
// line), files in order; nothing is written to disk (StringSink keeps the tables).
py::dict rates_text(const std::vector<std::string>& files, const Options& options) {
  if (files.empty()) throw UsageError("expected at least one export file in `paths`");
  std::vector<GivenOption> given;
  for (const auto& [name, text] : options) given.push_back({name, text, "", 0, 0, ""});
  ResolvedSettings resolved = resolve_settings(given);
  resolved.settings.files = files;
  StringSink sink;
  RatesOutputs out;
  {
    py::gil_scoped_release release;
    out = run_rates(resolved, sink);
  }
  py::dict tables;
  for (const auto& [name, text] : sink.text()) tables[py::str(name)] = py::bytes(text);
  if (!resolved.settings.summary.empty()) tables["summary"] = py::bytes(out.summary_csv);
  if (!resolved.settings.plate_quality.empty()) tables["plate-quality"] = py::bytes(out.plate_quality_csv);
  py::dict result;
  result["tables"] = tables;
  result["datapackage"] = out.datapackage_json;
  result["notes"] = out.notes;
  result["warnings"] = out.warnings;
  return result;
}

// Every read of every channel as tidy columns (channel, well, read, time_s, temperature_c,
// value, status), wells in plate order and reads in time order within each.
py::dict reads_columns(const Run& run) {
  std::size_t n = 0;
  for (const auto& c : run.channels) n += c.wells.size() * c.time_s.size();
  py::list channel, well, status;
  py::array_t<long> read(static_cast<py::ssize_t>(n));
  py::array_t<double> time(static_cast<py::ssize_t>(n)), temp(static_cast<py::ssize_t>(n)),
      value(static_cast<py::ssize_t>(n));
  auto r = read.mutable_unchecked<1>();
  auto t = time.mutable_unchecked<1>();
  auto tc = temp.mutable_unchecked<1>();
  auto v = value.mutable_unchecked<1>();
  py::ssize_t i = 0;
  for (const auto& c : run.channels) {
    for (std::size_t j = 0; j < c.wells.size(); ++j) {
      const std::string name = well_name(run.format.well(c.wells[j]));
      for (int k = 0; k < c.reads(); ++k, ++i) {
        const auto row = static_cast<Eigen::Index>(k), col = static_cast<Eigen::Index>(j);
        channel.append(c.name);
        well.append(name);
        status.append(std::string(to_string(c.status(row, col))));
        r(i) = k + 1;
        t(i) = c.time_s[static_cast<std::size_t>(k)];
        tc(i) = c.temperature_c.empty() ? NAN : c.temperature_c[static_cast<std::size_t>(k)];
        v(i) = c.values(row, col);
      }
    }
  }
  py::dict cols;
  cols["channel"] = channel;
  cols["well"] = well;
  cols["read"] = read;
  cols["time_s"] = time;
  cols["temperature_c"] = temp;
  cols["value"] = value;
  cols["status"] = status;
  return cols;
}

// `vzero inspect` as data: what was read and how, and every read as columns.
py::dict inspect(const std::string& path, const std::string& profile, const std::string& sheet,
                 const std::string& time_unit) {
  ProfileChoice choice = choose_profile(path, profile, sheet);
  if (!time_unit.empty()) state_time_unit(choice.profile, time_unit);
  Run run = read_run(path, choice.profile, sheet);
  py::dict d;
  d["file"] = run.source;
  d["sha256"] = run.sha256;
  d["sheet"] = run.sheet;
  d["shape"] = run.shape;
  d["profile"] = run.profile;
  d["profile_source"] = choice.profile.source;
  d["profile_reason"] = choice.reason;
  d["plate_wells"] = run.format.wells();
  d["plate_rows"] = run.format.rows;
  d["plate_columns"] = run.format.columns;
  d["plate_inferred"] = run.format_inferred;
  d["metadata"] = run.metadata;
  py::list channels;
  for (const auto& c : run.channels) {
    py::dict ch;
    ch["name"] = c.name;
    ch["quantity"] = std::string(to_string(c.quantity));
    ch["unit"] = c.unit;
    ch["wells"] = c.wells.size();
    ch["reads"] = c.reads();
    channels.append(ch);
  }
  d["channels"] = channels;
  py::list facts;
  for (const auto& f : run.read_facts) facts.append(py::make_tuple(f.name, f.value, f.basis));
  d["read_facts"] = facts;
  d["read_notes"] = run.read_notes;
  d["reads"] = reads_columns(run);
  return d;
}

// The option table: (name, kind) per option, kind one of flag, number, integer, choice,
// text, list (the Python side turns True into "true" for flags and lists into "a,b").
py::list option_kinds() {
  static const char* kinds[] = {"flag", "number", "integer", "choice", "text", "list"};
  py::list out;
  for (const OptionSpec& o : option_table())
    out.append(py::make_tuple(std::string(o.name), kinds[static_cast<int>(o.kind)]));
  return out;
}

void translate_errors(std::exception_ptr p) {
  try {
    if (p) std::rethrow_exception(p);
  } catch (const InputError& e) {
    py::object cls = py::module_::import("vzero.errors").attr("InputError");
    py::object exc = cls(e.formatted(), e.where().file, e.where().line, e.where().column, e.message(), e.fixes(),
                         e.where().text);
    PyErr_SetObject(cls.ptr(), exc.ptr());
  } catch (const UsageError& e) {
    py::object cls = py::module_::import("vzero.errors").attr("UsageError");
    PyErr_SetObject(cls.ptr(), cls(e.what()).ptr());
  }
}

}  // namespace

}  // namespace vzero::python

PYBIND11_MODULE(_vzero, m) {
  using namespace vzero::python;
  m.doc() = "vzero's library entry points (use the vzero package, not this module)";
  py::register_exception_translator(&translate_errors);
  m.def("rates_text", &rates_text, py::arg("files"), py::arg("options"));
  m.def("inspect", &inspect, py::arg("path"), py::arg("profile") = "", py::arg("sheet") = "",
        py::arg("time_unit") = "");
  m.def("option_kinds", &option_kinds);
  add_fit(m);
}
