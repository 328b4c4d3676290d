#include "vzero/summary.hpp"

#include <cmath>
#include <map>
#include <unordered_map>

#include "core/text.hpp"

namespace vzero {

SummaryBuilder::SummaryBuilder(const std::vector<std::string>& map_columns, const std::vector<std::string>& leave_out,
                               bool per_source) {
  t_.per_source = per_source;
  for (std::size_t i = 0; i < map_columns.size(); ++i) {
    bool drop = false;
    for (const auto& l : leave_out) drop |= detail::iequals(map_columns[i], l);
    if (!drop) {
      keep_.push_back(i);
      t_.columns.push_back(map_columns[i]);
    }
  }
}

std::size_t SummaryBuilder::group(const std::string& source, const std::string& channel, std::string_view role,
                                  const std::vector<std::string>& values, const std::string& v0_unit) {
  std::vector<std::string> key{t_.per_source ? source : std::string(), channel, std::string(role)};
  for (std::size_t i : keep_) key.push_back(i < values.size() ? values[i] : "");
  auto [it, fresh] = index_.emplace(key, t_.groups.size());
  if (fresh) {
    SummaryGroup g;
    g.source = key[0];
    g.channel = key[1];
    g.role = key[2];
    g.key.assign(key.begin() + 3, key.end());
    g.v0_unit = v0_unit;
    t_.groups.push_back(std::move(g));
    values_.emplace_back();
  }
  return it->second;
}

void SummaryBuilder::add(std::size_t group, std::string_view well, double v0, bool clean) {
  SummaryGroup& g = t_.groups[group];
  if (!g.wells.empty()) g.wells += ';';
  g.wells += well;
  if (clean)
    values_[group].push_back(v0);
  else
    ++g.n_flagged;
}

SummaryTable SummaryBuilder::finish() {
  for (std::size_t k = 0; k < t_.groups.size(); ++k) {
    SummaryGroup& g = t_.groups[k];
    const auto& v = values_[k];
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
  return std::move(t_);
}

SummaryTable summarise(const std::vector<RunAnalysis>& runs, const std::vector<std::string>& map_columns,
                       const std::vector<std::string>& leave_out, bool per_source) {
  SummaryBuilder b(map_columns, leave_out, per_source);
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
          group = b.group(source, ca.channel->name, to_string(row.role), row.info->values, ca.v0_unit);
          group_of.emplace(row.info, group);
        }
        b.add(group, well_name(row.well), row.v0, row.flags.empty() && !std::isnan(row.v0));
      }
    }
  }
  return b.finish();
}

}  // namespace vzero
