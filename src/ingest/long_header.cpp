// The long reader's header line (long_header.hpp).
#include "ingest/long_header.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cctype>

namespace vzero::detail::long_header {

// True when one of `names` occurs in `line`, ignoring ASCII case: a line that lacks every
// well-column name cannot be the header, and is passed over without splitting it (detection
// tries this reader on every file, wide ones included).
bool mentions_any(std::string_view line, const std::vector<std::string>& names) {
  thread_local std::string lowered;
  lowered.assign(line);
  for (char& c : lowered)
    if (c >= 'A' && c <= 'Z') c = static_cast<char>(c - 'A' + 'a');
  for (const auto& n : names) {
    std::string name(trim(n));
    if (name.empty()) return true;  // an empty name matches an empty field: split to see
    for (char& c : name)
      if (c >= 'A' && c <= 'Z') c = static_cast<char>(c - 'A' + 'a');
    if (lowered.find(name) != std::string::npos) return true;
  }
  return false;
}

int find_column(const std::vector<FieldView>& f, const std::vector<std::string>& names) {
  for (const auto& n : names)
    for (std::size_t i = 0; i < f.size(); ++i)
      if (iequals(trim(f[i].text), n)) return static_cast<int>(i);
  return -1;
}

// No column the profile calls a value: the one other column (not `well` or `time`, nor a
// channel or temperature column) whose header names a signal ("RFU", "OD", "A405";
// signal_header), if exactly one does; -1 otherwise. `signal` gets what that header says.
int lone_signal_column(const Profile& p, const std::vector<FieldView>& views, int well, int time,
                       std::optional<SectionStart>* signal) {
  int found = -1, count = 0;
  for (std::size_t i = 0; i < views.size(); ++i) {
    const auto k = static_cast<int>(i);
    if (k == well || k == time) continue;
    const std::string_view name = trim(views[i].text);
    if (named_in(name, p.channel_columns) || temperature_header(name, p.temperature_columns)) continue;
    if (auto s = signal_header(name)) {
      ++count;
      found = k;
      if (signal) *signal = std::move(s);
    }
  }
  return count == 1 ? found : -1;
}

// For a line naming the well column and one of the time and value columns but not the
// other (the header, most likely, with that column under another name): the error to give
// if no header is found.
std::optional<InputError> near_header(const Profile& p, Columns c, const std::vector<FieldView>& views,
                                      std::string_view line, const std::string& file, int line_no) {
  if (c.time < 0) c.value = find_column(views, p.value_columns);
  // Or, as try_header would take it, the one column whose header names a signal ("OD405").
  if (c.time < 0 && c.value < 0) c.value = lone_signal_column(p, views, c.well, c.time);
  if (c.time < 0 && c.value < 0) return std::nullopt;
  // The one field that no column of the profile names, if there is one: the missing column.
  const FieldView* unknown = nullptr;
  int unknowns = 0;
  for (std::size_t i = 0; i < views.size(); ++i) {
    const auto k = static_cast<int>(i);
    const std::string_view name = trim(views[i].text);
    if (name.empty() || k == c.well || k == c.time || k == c.value) continue;
    if (named_in(name, p.channel_columns) || temperature_header(name, p.temperature_columns)) continue;
    unknown = &views[i];
    ++unknowns;
  }
  if (unknowns != 1) unknown = nullptr;
  return missing_column_error(Where{file, line_no, unknown ? unknown->column : 1, std::string(line)},
                              c.time < 0 ? "time" : "value", c.time < 0 ? p.time_columns : p.value_columns, "",
                              unknown ? trim(unknown->text) : std::string_view());
}

int find_time_column(const std::vector<FieldView>& f, const std::vector<std::string>& names) {
  const int exact = find_column(f, names);
  if (exact >= 0) return exact;
  for (std::size_t i = 0; i < f.size(); ++i)
    if (time_header(f[i].text, names)) return static_cast<int>(i);
  return -1;
}

int lone_well_column(const std::vector<FieldView>& views) {
  int found = -1, count = 0;
  for (std::size_t i = 0; i < views.size(); ++i) {
    const std::string_view name = trim(views[i].text);
    // Words of letters and digits; a word that is a well ("Well A1") makes the cell a wide
    // table's well column, not a long table's.
    bool has = false, names_a_well = false;
    for (std::size_t at = 0; at < name.size();) {
      while (at < name.size() && !std::isalnum(static_cast<unsigned char>(name[at]))) ++at;
      std::size_t end = at;
      while (end < name.size() && std::isalnum(static_cast<unsigned char>(name[end]))) ++end;
      const std::string_view word = name.substr(at, end - at);
      has = has || iequals(word, "well");
      names_a_well = names_a_well || (!word.empty() && parse_well(word));
      at = end;
    }
    if (has && !names_a_well) {
      ++count;
      found = static_cast<int>(i);
    }
  }
  return count == 1 ? found : -1;
}

}  // namespace vzero::detail::long_header
