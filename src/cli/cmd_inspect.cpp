// vzero inspect: show what vzero reads from a raw export.
#include <fmt/format.h>
#include <boost/program_options.hpp>
#include <cmath>

#include "cli/commands.hpp"
#include "cli/options.hpp"
#include "core/stats.hpp"
#include "vzero/error.hpp"
#include "vzero/ingest.hpp"

namespace vzero::cli {

namespace {

constexpr const char* k_usage = R"(usage: vzero inspect FILE [--profile NAME|PATH] [--sheet NAME] [--time-unit s|min|h]

Shows what vzero reads from a raw plate-reader export: the shape (wide, grid or long),
the profile used and why, the plate format, each channel with its quantity and unit, the
number of reads, the first and last read time in seconds, the temperature range, the
captured metadata, and how many values were overflow or missing, in which wells; then
what the reader inferred (delimiter, decimal mark, time unit, plate format, channels,
overflow tokens), each with its basis, and the lines it read through (a blank line inside a
data block, …). `vzero rates` records the same in datapackage.json.

Without --profile every built-in profile is tried on the start of the file and the best
reader is named. A spreadsheet workbook (.xlsx) is read from its first sheet or the one
named by --sheet. Nothing is written; the file is only read.

options)";

std::string well_list(const Run& run, const Channel& c, ReadStatus s, int* count) {
  std::string out;
  int shown = 0;
  *count = 0;
  for (Eigen::Index j = 0; j < c.status.cols(); ++j) {
    int n = 0;
    for (Eigen::Index r = 0; r < c.status.rows(); ++r) n += c.status(r, j) == s;
    if (n == 0) continue;
    *count += n;
    if (shown < 12)
      out += fmt::format("{}{} ({})", shown ? ", " : "",
                         well_name(run.format.well(c.wells[static_cast<std::size_t>(j)])), n);
    else if (shown == 12)
      out += ", …";
    ++shown;
  }
  return out;
}

}  // namespace

// What inspect prints about a run read with `choice`.
std::string describe_run(const Run& run, const ProfileChoice& choice) {
  std::string out;
  out += fmt::format("file      {}\n", run.source);
  out += fmt::format("sha256    {}\n", run.sha256);
  if (!run.sheet.empty()) out += fmt::format("sheet     {}\n", run.sheet);
  out += fmt::format("shape     {}\n", run.shape);
  out += fmt::format("profile   {} ({}; {})\n", run.profile, choice.profile.source, choice.reason);
  out +=
      fmt::format("plate     {} wells ({} rows × {} columns{})\n", run.format.wells(), run.format.rows,
                  run.format.columns, run.format_inferred ? ", inferred from the wells read" : ", set by the profile");
  if (!run.metadata.empty()) {
    out += "metadata\n";
    for (const auto& [k, v] : run.metadata) out += fmt::format("  {}: {}\n", k, v);
  }
  for (const auto& c : run.channels) {
    out +=
        fmt::format("channel   {}  {}{}\n", c.name, to_string(c.quantity), c.unit.empty() ? "" : " (" + c.unit + ")");
    out += fmt::format("  wells   {}\n", c.wells.size());
    out += fmt::format("  reads   {}, from {} s to {} s", c.reads(), format_seconds(c.time_s.front()),
                       format_seconds(c.time_s.back()));
    if (c.reads() > 1) out += fmt::format(" (median step {} s)", format_seconds(detail::median_step(c.time_s)));
    out += "\n";
    if (!c.temperature_c.empty()) {
      double lo = INFINITY, hi = -INFINITY;
      for (double t : c.temperature_c)
        if (!std::isnan(t)) {
          lo = std::min(lo, t);
          hi = std::max(hi, t);
        }
      out += fmt::format("  temperature {}–{} °C\n", lo, hi);
    }
    int n = 0;
    std::string list = well_list(run, c, ReadStatus::overflow, &n);
    out += fmt::format("  overflow {}{}\n", n, n ? " in " + list : "");
    list = well_list(run, c, ReadStatus::missing, &n);
    out += fmt::format("  missing  {}{}\n", n, n ? " in " + list : "");
  }
  out += "read\n";
  for (const auto& f : run.read_facts)
    out += fmt::format("  {:<15} {}{}\n", f.name, f.value, f.basis.empty() ? "" : "  (" + f.basis + ")");
  for (const auto& n : run.read_notes) out += fmt::format("  note: {}\n", n);
  for (const auto& w : run.read_warnings) out += fmt::format("  warning: {}\n", w);
  return out;
}

int cmd_inspect(const Args& args) {
  namespace po = boost::program_options;
  std::string file, profile, sheet, time_unit;
  po::options_description opts(k_usage);
  opts.add_options()("profile,p", po::value(&profile),
                     "instrument profile: a built-in name or a .toml path (default: detect)")(
      "sheet", po::value(&sheet), "sheet of an .xlsx workbook, by name (default: the first sheet)")(
      "time-unit", po::value(&time_unit),
      "unit of plain-number read times when the time header names none: s, min, h or ms (as vzero rates)")(
      "help,h", "show this help");
  auto vm = parse_with_file(args, opts, file);
  if (vm.count("help")) {
    print_out(help_text(opts) + "\nbuilt-in profiles: " + builtin_profile_list() + "\n");
    return 0;
  }
  if (file.empty()) throw UsageError("expected a FILE to inspect");

  ProfileChoice choice = choose_profile(file, profile, sheet);
  if (!time_unit.empty()) state_time_unit(choice.profile, time_unit);
  Run run = read_run(file, choice.profile, sheet);
  const std::string out = describe_run(run, choice);
  print_out(out);
  return 0;
}

}  // namespace vzero::cli
