// vzero merge: the outputs of several `vzero rates` runs as one run's.
#include <fmt/format.h>
#include <boost/program_options.hpp>

#include "cli/commands.hpp"
#include "cli/options.hpp"
#include "vzero/merge.hpp"

namespace vzero::cli {

namespace {

constexpr const char* k_usage = R"(usage: vzero merge RUN_FOLDER... -o OUT_FOLDER

Combines the outputs of several `vzero rates` runs over parts of one campaign (one job per
machine or Slurm array task, each with its own -o folder) into the set one run over all
their exports would have written, byte for byte: rates.csv and the traces (each run's rows
in turn), the replicate summary (pooled over every run, as one run pools its files) and
datapackage.json (every export's provenance, each table's sha256).

The exports come in the order of the runs given, each run's in its own order: cut one file
list into consecutive pieces (--files-from), and give the run folders in piece order. The
merged set is that of one run given the exports by name (a part's file list is not one of
its inputs). No report is merged: `vzero report OUT_FOLDER` draws it.

Refused, with the run and the field (exit 1): a run whose tables are missing or changed
since it wrote them; runs with different options, plate map, method, tool version or
tables; an export in two runs.

example:
  vzero rates --files-from part1.txt --layout map.csv --summary p1/summary.csv -o p1/rates.csv
  vzero rates --files-from part2.txt --layout map.csv --summary p2/summary.csv -o p2/rates.csv
  vzero merge p1 p2 -o all

options)";

}  // namespace

int cmd_merge(const Args& args) {
  namespace po = boost::program_options;
  std::string output;
  std::vector<std::string> runs;
  po::options_description opts(k_usage);
  opts.add_options()("output,o", po::value(&output), "the folder for the merged set (made when missing)")(
      "quiet,q", "print nothing on success")("help,h", "show this help");
  po::options_description hidden;
  hidden.add_options()("run", po::value(&runs));
  po::positional_options_description pos;
  pos.add("run", -1);
  po::variables_map vm = parse_command_line(args, opts, hidden, pos);
  if (vm.count("help")) {
    print_out(help_text(opts));
    return 0;
  }
  const MergedSet set = merge_runs(runs, output);
  if (vm.count("quiet")) return 0;
  for (const auto& w : set.warnings) print_err("warning: " + w);
  print_out(fmt::format("merged {} runs: {} exports, {} wells; wrote {}\n", runs.size(), set.exports, set.wells,
                        fmt::join(set.files, ", ")));
  return 0;
}

}  // namespace vzero::cli
