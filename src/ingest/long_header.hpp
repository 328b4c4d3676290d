// The long reader's header line: which columns hold the well, the time, the value, the
// channel and the temperature (src/ingest/read_long.cpp reads the rows under it), and the
// errors for a line that is nearly a header. Internal to the readers.
#pragma once

#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "ingest/reader_common.hpp"
#include "vzero/error.hpp"

namespace vzero::detail::long_header {

struct Columns {
  char delimiter = ',';
  int well = -1, time = -1, value = -1, channel = -1, temp = -1;
  std::optional<SectionStart> value_signal;  // the value column is a signal's name ("RFU", "A405")
  std::string value_header;                  // ... and its header as written
  std::string well_header;  // the well column's header when no `columns.well` name matched (lone_well_column)
  std::size_t count = 0;
  TimeUnit time_unit = TimeUnit::seconds;
  int line = 0;
};

// True when one of `names` occurs in `line`, ignoring ASCII case: a line that lacks every
// well-column name cannot be the header, and is passed over without splitting it (detection
// tries this reader on every file, wide ones included).
bool mentions_any(std::string_view line, const std::vector<std::string>& names);
// The first field that one of `names` heads (names in order), or -1.
int find_column(const std::vector<FieldView>& f, const std::vector<std::string>& names);
// The time column: the first field one of `names` heads (names in order), else the first
// that time_header takes ("Time [sec]"), or -1.
int find_time_column(const std::vector<FieldView>& f, const std::vector<std::string>& names);
// No column the profile calls a value: the one other column (not `well` or `time`, nor a
// channel or temperature column) whose header names a signal ("RFU", "OD", "A405";
// signal_header), if exactly one does; -1 otherwise. `signal` gets what that header says.
int lone_signal_column(const Profile& p, const std::vector<FieldView>& views, int well, int time,
                       std::optional<SectionStart>* signal = nullptr);
// No column the profile calls the well's: the one field whose header has the word "well"
// among its words ("Well ID", "Plate well", "well_name") and no well name ("Well A1" heads a
// wide table's column), if exactly one has; -1 otherwise.
int lone_well_column(const std::vector<FieldView>& views);
// For a line naming the well column and one of the time and value columns but not the
// other (the header, most likely, with that column under another name): the error to give
// if no header is found.
std::optional<InputError> near_header(const Profile& p, Columns c, const std::vector<FieldView>& views,
                                      std::string_view line, const std::string& file, int line_no);

}  // namespace vzero::detail::long_header
