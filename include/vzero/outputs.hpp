// The files `vzero rates` writes: rates.csv, its datapackage.json (Frictionless Data
// Package with Table Schema field types and units, plus provenance), the per-read traces
// table and the replicate summary. Text is built in memory and written atomically by the
// caller (write_file_atomic). RFC 4180, UTF-8, '.' decimals, shortest round-trip numbers.
// Each table's columns are declared once (src/outputs/output_tables.cpp); its header, rows and
// schema fields below all come from that declaration.
#pragma once

#include <functional>
#include <map>
#include <string>
#include <utility>
#include <vector>

#include "vzero/analysis.hpp"
#include "vzero/summary.hpp"
#include "vzero/table.hpp"

namespace vzero {

struct InputRecord {
  std::string kind;  // "export", "plate-map", "method", "profile"
  std::string path;
  std::string sha256;
  std::string profile;                                        // for exports
  std::string shape;                                          // for exports
  std::string sheet;                                          // for exports that are workbooks: the sheet read
  std::vector<std::pair<std::string, std::string>> metadata;  // for exports: what the file says of itself
                                                              // (operator, plate id, start time…), in file order
  std::vector<ReadFact> read;           // for exports: what the reader inferred (Run::read_facts)
  std::vector<std::string> read_notes;  // for exports: lines read through (Run::read_notes)
};

struct Provenance {
  std::string tool_version;
  std::vector<InputRecord> inputs;
  std::vector<std::pair<std::string, std::string>> options;   // every option with its value, in order
  std::vector<std::pair<std::string, std::string>> detected;  // settings vzero chose itself (profiles, …)
  std::vector<std::string> map_columns;  // the plate map's columns passed through to the tables, in order
  std::vector<ColumnUse> map_uses;       // which of them vzero read as substrate, standard_conc, match
  std::vector<std::string> warnings;     // what the run warned of (also on the console)
};

// with_activity adds activity_U and activity_nkat; with_specific adds specific_activity_U_per_mg.
std::vector<FieldSpec> rate_fields(const std::vector<std::string>& map_columns, bool with_activity,
                                   bool with_specific = false, const ScreenColumns& screen = {});
std::string rates_csv(const std::vector<RunAnalysis>& runs, const std::vector<std::string>& map_columns,
                      bool with_activity, bool with_specific = false, const ScreenColumns& screen = {});

// The rows of one run without the header line (batches format each run as it finishes).
std::string rates_csv_rows(const RunAnalysis& run, const std::vector<std::string>& map_columns, bool with_activity,
                           bool with_specific = false, const ScreenColumns& screen = {});

// The plate-quality table (--plate-quality): one row per plate and channel, from each
// channel's controls (ChannelAnalysis::controls) judged against `min_z_prime`
// and the edge and drift trends of its controls at `trend_level`
// (include/vzero/plate_quality.hpp). Rows concatenate across runs.
std::vector<FieldSpec> plate_quality_fields();
std::string plate_quality_csv(const std::vector<RunAnalysis>& runs, double min_z_prime, double trend_level = 0.01);

std::vector<FieldSpec> trace_fields();
std::string traces_csv(const std::vector<RunAnalysis>& runs);
std::string traces_csv_rows(const RunAnalysis& run);
// The same text as traces_csv_rows, handed to `take` in pieces of whole lines (one well's
// reads at a time), so that no more than one well's text is held at once.
void traces_csv_pieces(const RunAnalysis& run, const std::function<void(std::string_view)>& take);

std::vector<FieldSpec> summary_fields(const SummaryTable& s);
std::string summary_csv(const SummaryTable& s);

struct PackagedTable {
  std::string name;  // "rates", "traces", "summary"
  std::string path;  // file name relative to the package
  std::vector<FieldSpec> fields;
};

// The datapackage.json text with the Data Package `hash` ("sha256:HEX") of each table
// resource named in `sha256_by_name` ("rates", "traces", "summary" → hex digest of the file
// as published). vzero rates records them and puts datapackage.json in place last, so a set
// left half-published by a crash between the renames no longer matches it.
std::string with_table_hashes(const std::string& package_json, const std::map<std::string, std::string>& sha256_by_name);

// The tables of the datapackage.json at `package_path` whose file beside it is not the one
// it describes (missing, or other bytes than its recorded hash), one message each, e.g.
// "rates.csv is not the one datapackage.json describes: ...". Empty for a whole set, for a
// package without hashes and for one that does not parse (its readers say so); InputError
// when the file cannot be read.
std::vector<std::string> unpublished_tables(const std::string& package_path);

// The datapackage.json text for the tables written (paths relative to its folder).
std::string datapackage_json(const std::vector<PackagedTable>& tables, const Provenance& provenance,
                             const std::vector<RunAnalysis>& runs);

}  // namespace vzero
