#include "cli/rates_settings.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <map>
#include <tuple>

#include "core/text.hpp"
#include "vzero/convert.hpp"
#include "vzero/error.hpp"
#include "vzero/method.hpp"
#include "vzero/settings.hpp"

namespace vzero::cli {

namespace po = boost::program_options;
using Str = std::string;

void add_rates_options(po::options_description& opts) {
  // One section per group of the option table, in its order.
  std::vector<std::pair<std::string, po::options_description>> sections;
  for (const OptionSpec& o : option_table()) {
    if (sections.empty() || sections.back().first != o.group)
      sections.emplace_back(std::string(o.group), po::options_description(std::string(o.group)));
    std::string names(o.name);
    if (o.short_name) names += std::string(",") + o.short_name;
    std::string help(o.help);
    if (!o.default_text.empty()) help += fmt::format(" (default: {})", o.default_text);
    if (o.kind == OptionKind::flag)
      sections.back().second.add_options()(names.c_str(), help.c_str());
    else
      sections.back().second.add_options()(names.c_str(), po::value<std::string>(), help.c_str());
  }
  sections.front().second.add_options()("help,h", "show this help");
  for (auto& [name, section] : sections) opts.add(section);
}

std::string epsilon_preset_list() {
  std::string out;
  for (const auto& p : epsilon_presets())
    out += fmt::format("\n  {} = {} M⁻¹·cm⁻¹ ({}): {}", p.name, p.epsilon_per_m_cm, p.wavelength, p.source);
  return out;
}

ResolvedSettings settings_from(po::variables_map& vm) {
  // Only what the command line says; the library reads the method file (--method) and puts
  // its keys after these, so the command line wins.
  std::vector<GivenOption> given;
  for (const OptionSpec& o : option_table()) {
    const std::string name(o.name);
    if (!vm.count(name)) continue;
    given.push_back({name, o.kind == OptionKind::flag ? "true" : vm[name].as<std::string>(), "", 0, 0});
  }
  ResolvedSettings r = resolve_settings(given);
  if (vm.count("file")) r.settings.files = vm["file"].as<std::vector<std::string>>();
  return r;
}

namespace {

// "name 12, other 3" by count (most first), wrapped at 100 columns under `indent`.
Str counts_line(const std::map<Str, int>& counts, std::size_t indent) {
  std::vector<std::pair<Str, int>> v(counts.begin(), counts.end());
  std::stable_sort(v.begin(), v.end(), [](const auto& x, const auto& y) { return x.second > y.second; });
  Str out, line;
  for (std::size_t i = 0; i < v.size(); ++i) {
    Str item = fmt::format("{} {}{}", v[i].first, v[i].second, i + 1 < v.size() ? "," : "");
    if (!line.empty() && indent + line.size() + 1 + item.size() > 100) {
      out += line + "\n" + Str(indent, ' ');
      line.clear();
    }
    line += (line.empty() ? "" : " ") + item;
  }
  return out + line;
}

// The sample conditions of the summary as (label, mean text, mean), in summary order.
struct ConditionLine {
  Str label, text;
  double mean;
};
std::vector<ConditionLine> condition_lines(const SummaryTable& summary) {
  std::vector<ConditionLine> lines;
  for (const auto& g : summary.groups) {
    if (g.role != "sample") continue;
    Str key = g.source.empty() ? "" : g.source;
    for (std::size_t i = 0; i < g.key.size(); ++i) {
      if (g.key[i].empty() || detail::iequals(summary.columns[i], "match")) continue;
      key += (key.empty() ? "" : " ") + summary.columns[i] + "=" + g.key[i];
    }
    lines.push_back({g.channel + " " + key,
                     std::isnan(g.v0_mean)
                         ? fmt::format("no clean wells ({} flagged)", g.n_flagged)
                         // One clean well has no SD: say so instead of printing "nan".
                         : fmt::format("{:.4g} {} ({}n {}{})", g.v0_mean, g.v0_unit,
                                       std::isnan(g.v0_sd) ? "" : fmt::format("sd {:.2g}, ", g.v0_sd), g.n,
                                       g.n_flagged ? fmt::format(", {} flagged", g.n_flagged) : ""),
                     g.v0_mean});
  }
  return lines;
}

// At most k_all_conditions conditions are listed; beyond that the fastest and slowest few.
constexpr std::size_t k_all_conditions = 20;
constexpr std::size_t k_extremes = 5;

Str conditions_block(const SummaryTable& summary, const RunSettings& s) {
  std::vector<ConditionLine> lines = condition_lines(summary);
  if (lines.empty()) return {};
  std::size_t w = 0;
  for (const auto& l : lines) w = std::max(w, l.label.size());
  const auto print = [&](const ConditionLine& l) { return fmt::format("  {:<{}}  {}\n", l.label, w, l.text); };
  Str out;
  if (lines.size() <= k_all_conditions) {
    out += "mean v0 of the clean replicate wells per condition:\n";
    for (const auto& l : lines) out += print(l);
    return out;
  }
  std::vector<ConditionLine> rated;
  for (const auto& l : lines)
    if (!std::isnan(l.mean)) rated.push_back(l);
  std::stable_sort(rated.begin(), rated.end(), [](const auto& x, const auto& y) { return x.mean > y.mean; });
  const std::size_t k = std::min(k_extremes, rated.size() / 2);
  out += fmt::format("{} conditions; mean v0 of the clean replicate wells, the {} fastest:\n", lines.size(), k);
  for (std::size_t i = 0; i < k; ++i) out += print(rated[i]);
  out += fmt::format("and the {} slowest:\n", k);
  for (std::size_t i = rated.size() - k; i < rated.size(); ++i) out += print(rated[i]);
  const std::size_t none = lines.size() - rated.size();
  if (none) out += fmt::format("{} condition{} with no clean wells\n", none, none == 1 ? "" : "s");
  out += s.summary.empty() ? "every condition: add --summary FILE\n" : "every condition: " + s.summary + "\n";
  return out;
}

// Flagged sample wells per export, when there are several.
Str per_file_block(const std::vector<RunAnalysis>& runs) {
  if (runs.size() < 2) return {};
  std::vector<std::tuple<Str, int, int>> files;  // source, flagged, samples
  for (const auto& ra : runs) {
    int flagged = 0, samples = 0;
    for (const auto& ca : ra.channels)
      for (const auto& row : ca.rows)
        if (row.role == Role::sample) {
          ++samples;
          flagged += !row.flags.empty();
        }
    files.emplace_back(ra.run->source, flagged, samples);
  }
  Str out = "flagged sample wells per file:";
  if (files.size() <= 6) {
    for (const auto& [src, f, n] : files) out += fmt::format("\n  {}  {} of {}", src, f, n);
    return out + "\n";
  }
  const auto [lo, hi] = std::minmax_element(
      files.begin(), files.end(), [](const auto& x, const auto& y) { return std::get<1>(x) < std::get<1>(y); });
  return out + fmt::format(" {} to {} (fewest: {}, most: {}); each well in rates.csv\n", std::get<1>(*lo),
                           std::get<1>(*hi), std::get<0>(*lo), std::get<0>(*hi));
}

}  // namespace

std::string run_digest(const std::vector<RunAnalysis>& runs, const SummaryTable& summary, const RunSettings& s,
                       const std::string& package_path) {
  int wells = 0, samples = 0, flagged = 0, blanks = 0, standards = 0, empty = 0, controls = 0;
  int blanks_flagged = 0, standards_flagged = 0;
  std::map<Str, int> by_flag, by_note, blank_flags, standard_flags;
  for (const auto& ra : runs)
    for (const auto& ca : ra.channels)
      for (const auto& row : ca.rows) {
        ++wells;
        blanks += row.role == Role::blank;
        standards += row.role == Role::standard;
        empty += row.role == Role::empty;
        controls += is_control(row.role);
        // Blanks and standards are judged by their own words (docs/outputs.md): counted apart.
        if (row.role == Role::blank || row.role == Role::standard) {
          auto& words = row.role == Role::blank ? blank_flags : standard_flags;
          for (const auto& f : row.flags) ++words[f];
          (row.role == Role::blank ? blanks_flagged : standards_flagged) += !row.flags.empty();
        }
        if (row.role != Role::sample) continue;
        ++samples;
        for (const auto& f : row.flags) ++by_flag[f];
        for (const auto& f : row.notes) ++by_note[f];
        flagged += !row.flags.empty();
      }
  Str out = fmt::format("{} file{}, {} well rows: {} sample, {} blank, {} standard, {} empty", runs.size(),
                        runs.size() == 1 ? "" : "s", wells, samples, blanks, standards, empty);
  if (controls)
    out += fmt::format(", {} control (full-activity, no-activity; plate quality: --plate-quality)", controls);
  out += "\n";
  out += fmt::format("{} sample well{} flagged", flagged, flagged == 1 ? "" : "s");
  if (flagged) out += " (a well may have several reasons; meanings: vzero rates --help):\n  " + counts_line(by_flag, 2);
  out += "\n";
  if (blanks_flagged)
    out += fmt::format("{} blank well{} flagged: {}\n", blanks_flagged, blanks_flagged == 1 ? "" : "s",
                       counts_line(blank_flags, 2));
  if (standards_flagged)
    out += fmt::format("{} standard well{} flagged: {}\n", standards_flagged, standards_flagged == 1 ? "" : "s",
                       counts_line(standard_flags, 2));
  if (!by_note.empty())
    out += "corrections made (notes; these wells keep their rate):\n  " + counts_line(by_note, 2) + "\n";
  const bool per_plate = per_plate_digest(runs, condition_lines(summary).size());
  if (!per_plate) out += per_file_block(runs);
  for (const auto& ra : runs)
    for (const auto& ca : ra.channels)
      if (ca.conversion.curve) {
        const auto& sc = *ca.conversion.curve;
        out += fmt::format(
            "standard curve {}: signal = {:.6g} + {:.6g}·c (r² {:.6f}, {} wells), calibrated {:g}–{:g} {}, "
            "LOD {:.3g} {} ({})\n",
            ca.channel->name, sc.intercept, sc.slope, sc.r2, sc.n, sc.conc_min, sc.conc_max, ca.conversion.conc_unit,
            sc.lod, ca.conversion.conc_unit, sc.lod_basis);
      }
  out += per_plate ? plate_digest(runs, s) : conditions_block(summary, s);
  out += fmt::format("wrote {}", s.output);
  if (!s.traces.empty()) out += ", " + s.traces;
  if (!s.summary.empty()) out += ", " + s.summary;
  if (!s.plate_quality.empty()) out += ", " + s.plate_quality;
  out += ", " + package_path;
  if (!s.report.empty()) out += ", " + s.report;
  if (!s.enzymeml.empty()) out += ", " + s.enzymeml;
  out += "\n";
  return out;
}

}  // namespace vzero::cli
