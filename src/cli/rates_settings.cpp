#include "cli/rates_settings.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <map>

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

std::string run_digest(const std::vector<RunAnalysis>& runs, const SummaryTable& summary, const RunSettings& s,
                       const std::string& package_path) {
  int wells = 0, samples = 0, flagged = 0, blanks = 0, standards = 0, empty = 0;
  std::map<Str, int> by_flag, by_note;
  for (const auto& ra : runs)
    for (const auto& ca : ra.channels)
      for (const auto& row : ca.rows) {
        ++wells;
        blanks += row.role == Role::blank;
        standards += row.role == Role::standard;
        empty += row.role == Role::empty;
        if (row.role != Role::sample) continue;
        ++samples;
        for (const auto& f : row.flags) ++by_flag[f];
        for (const auto& f : row.notes) ++by_note[f];
        flagged += !row.flags.empty();
      }
  Str out = fmt::format("{} file{}, {} well rows: {} sample, {} blank, {} standard, {} empty\n", runs.size(),
                        runs.size() == 1 ? "" : "s", wells, samples, blanks, standards, empty);
  out += fmt::format("{} sample well{} flagged{}\n", flagged, flagged == 1 ? "" : "s",
                     flagged ? " (a well may have several reasons):" : "");
  for (const auto& [f, n] : by_flag) out += fmt::format("  {:<22} {}\n", f, n);
  if (!by_note.empty()) {
    out += "corrections made (notes; these wells keep their rate):";
    for (const auto& [f, n] : by_note) out += fmt::format(" {} {},", f, n);
    out.back() = '\n';
  }
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
  // Median v0 per sample condition (the summary's groups), as a short table.
  Str head = "condition";
  std::vector<std::pair<Str, Str>> lines;
  for (const auto& g : summary.groups) {
    if (g.role != "sample") continue;
    Str key;
    for (std::size_t i = 0; i < g.key.size(); ++i) {
      if (g.key[i].empty() || detail::iequals(summary.columns[i], "match")) continue;
      key += (key.empty() ? "" : " ") + summary.columns[i] + "=" + g.key[i];
    }
    lines.emplace_back(g.channel + " " + key,
                       std::isnan(g.v0_mean)
                           ? fmt::format("no clean wells ({} flagged)", g.n_flagged)
                           // One clean well has no SD: say so instead of printing "nan".
                           : fmt::format("{:.4g} {} ({}n {}{})", g.v0_mean, g.v0_unit,
                                         std::isnan(g.v0_sd) ? "" : fmt::format("sd {:.2g}, ", g.v0_sd), g.n,
                                         g.n_flagged ? fmt::format(", {} flagged", g.n_flagged) : ""));
  }
  if (!lines.empty()) {
    out += "mean v0 of the clean replicate wells per condition:\n";
    std::size_t w = head.size();
    for (const auto& l : lines) w = std::max(w, l.first.size());
    for (const auto& l : lines) out += fmt::format("  {:<{}}  {}\n", l.first, w, l.second);
  }
  out += fmt::format("wrote {}", s.output);
  if (!s.traces.empty()) out += ", " + s.traces;
  if (!s.summary.empty()) out += ", " + s.summary;
  out += ", " + package_path;
  if (!s.report.empty()) out += ", " + s.report;
  out += "\n";
  return out;
}

}  // namespace vzero::cli
