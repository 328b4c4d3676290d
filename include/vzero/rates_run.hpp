// `vzero rates` as one library call: from the resolved settings to every output of the run —
// the rates and traces tables (streamed to a sink as the files finish, so a batch never holds
// them whole), the replicate summary, datapackage.json with its provenance, and the report.
// The command line only parses, calls this, publishes the files and prints; any other caller
// (a test, a script binding) gets the same outputs.
//
// **Example**:
//   vzero::ResolvedSettings s = vzero::resolve_settings({{"layout", "map.csv"}, {"signal-only", "true"}});
//   s.settings.files = {"plate.csv"};
//   vzero::StringSink tables;                              // or a sink that writes files
//   vzero::RatesOutputs out = vzero::run_rates(s, tables);
//   // tables.text["rates"] is rates.csv; out.datapackage_json its datapackage.json
#pragma once

#include <functional>
#include <map>
#include <string>
#include <string_view>
#include <vector>

#include "vzero/batch.hpp"
#include "vzero/outputs.hpp"
#include "vzero/settings.hpp"
#include "vzero/summary.hpp"

namespace vzero {

// Receives the streamed tables: `append("rates", text)` and `append("traces", text)`, each
// beginning with its header line, in file order. It may throw (a full disk); the run then
// finishes reading its inputs and rethrows the first such error.
class OutputSink {
 public:
  virtual ~OutputSink() = default;
  virtual void append(std::string_view table, std::string_view text) = 0;
};

// Keeps the streamed tables in memory.
class StringSink : public OutputSink {
 public:
  void append(std::string_view table, std::string_view text) override { text_[std::string(table)] += text; }
  const std::map<std::string, std::string>& text() const { return text_; }

 private:
  std::map<std::string, std::string> text_;
};

struct RatesOutputs {
  std::vector<BatchFile> files;       // owns each export's Run (the analyses point into them)
  std::vector<RunAnalysis> analyses;  // one per file, in order
  PlateMap map;
  SummaryTable summary;
  std::string summary_csv;       // "" unless settings.summary names a file
  std::string plate_quality_csv;  // "" unless settings.plate_quality names a file
  std::string datapackage_json;  // for settings.output's folder
  std::string datapackage_path;  // where it belongs: beside settings.output
  std::string report_html;       // "" unless settings.report names a file
  std::string enzymeml_json;     // "" unless settings.enzymeml names a file (include/vzero/enzymeml.hpp)
  Provenance provenance;
  std::vector<std::string> notes;     // for the console: what was assumed (no conversion given, …)
  std::vector<std::string> warnings;  // for the console and datapackage.json: what may make rates wrong
};

// Runs the whole job. Input problems throw InputError (file:line:column), option problems
// UsageError; a sink error is rethrown after the inputs were read. `progress` as in
// analyse_files.
RatesOutputs run_rates(const ResolvedSettings& settings, OutputSink& sink,
                       const std::function<void(const BatchProgress&)>& progress = {});

// The run's warning for `wells` sample wells (distinct well names, the first `first_well`)
// converted to concentration without a substrate concentration in the plate map
// `map_source`; "" when there are none. `vzero merge` recomputes it over the merged wells.
std::string missing_substrate_text(std::size_t wells, const std::string& first_well, const std::string& map_source);

}  // namespace vzero
