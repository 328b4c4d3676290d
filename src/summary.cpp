#include "vzero/summary.hpp"

#include <cmath>
#include <map>
#include <unordered_map>

#include "core/text.hpp"

namespace vzero {

SummaryTable summarise(const std::vector<RunAnalysis>& runs, const std::vector<std::string>& map_columns,
                       const std::vector<std::string>& leave_out, bool per_source) {
  SummaryTable t;
  t.per_source = per_source;
  std::vector<std::size_t> keep;
  for (std::size_t i = 0; i < map_columns.size(); ++i) {
    bool drop = false;
    for (const auto& l : leave_out) drop |= detail::iequals(map_columns[i], l);
    if (!drop) {
      keep.push_back(i);
      t.columns.push_back(map_columns[i]);
    }
  }
  std::map<std::vector<std::string>, std::size_t> index;
  std::vector<std::vector<double>> values;
  // A row's group follows from its channel's name and its plate-map entry alone (the role
  // is the entry's): found once per pair, not once per row of every plate.
  std::map<std::pair<std::string, std::string>, std::unordered_map<const WellInfo*, std::size_t>> known;
  for (const auto& ra : runs) {
    const std::string source = per_source ? ra.run->source : std::string();
    for (const auto& ca : ra.channels) {
      auto& group_of = known[{source, ca.channel->name}];
      for (const auto& row : ca.rows) {
        if (row.role == Role::empty || !row.info) continue;
        std::size_t group = 0;
        if (auto hit = group_of.find(row.info); hit != group_of.end()) {
          group = hit->second;
        } else {
          std::vector<std::string> key{source, ca.channel->name, std::string(to_string(row.role))};
          for (std::size_t i : keep) key.push_back(i < row.info->values.size() ? row.info->values[i] : "");
          auto [it, fresh] = index.emplace(key, t.groups.size());
          if (fresh) {
            SummaryGroup g;
            g.source = key[0];
            g.channel = key[1];
            g.role = key[2];
            g.key.assign(key.begin() + 3, key.end());
            g.v0_unit = ca.v0_unit;
            t.groups.push_back(std::move(g));
            values.emplace_back();
          }
          group = it->second;
          group_of.emplace(row.info, group);
        }
        SummaryGroup& g = t.groups[group];
        if (!g.wells.empty()) g.wells += ';';
        g.wells += well_name(row.well);
        if (row.flags.empty() && !std::isnan(row.v0))
          values[group].push_back(row.v0);
        else
          ++g.n_flagged;
      }
    }
  }
  for (std::size_t k = 0; k < t.groups.size(); ++k) {
    SummaryGroup& g = t.groups[k];
    const auto& v = values[k];
    g.n = static_cast<int>(v.size());
    if (v.empty()) continue;
    double m = 0;
    for (double x : v) m += x;
    m /= static_cast<double>(v.size());
    g.v0_mean = m;
    if (v.size() >= 2) {
      double ss = 0;
      for (double x : v) ss += (x - m) * (x - m);
      g.v0_sd = std::sqrt(ss / static_cast<double>(v.size() - 1));
      g.v0_sem = g.v0_sd / std::sqrt(static_cast<double>(v.size()));
      if (m != 0) g.cv_pct = 100 * g.v0_sd / std::fabs(m);
    }
  }
  return t;
}

}  // namespace vzero
