// The wide shape laid the other way: one row per well and one column per read, the read
// times across a header line ("Well,0,30,60,…" or "Time [s],0,30,60,…"), optional rows of
// temperatures or read numbers, then a row per well ("A1,0.046,0.047,…"). Read by the wide
// reader (read_wide.cpp) when a line is no header of its own kind. Internal to the readers.
#pragma once

#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "ingest/reader_common.hpp"
#include "vzero/error.hpp"

namespace vzero::detail {

// A header line of read times: the first field names the well column (`columns.well`) or the
// time column (`columns.time`, which may state the unit: "Time [min]"), every other field
// but empty ones at the end is a read time, at least two of them, strictly increasing.
struct AcrossHeader {
  char delimiter = ',';
  int line = 0;
  std::vector<double> time_s;  // one per read
  std::vector<int> time_column;  // the column of each read's time cell
  std::size_t fields = 0;       // fields of the header line, empty ones at the end left out
  TimeUnit time_unit = TimeUnit::seconds;
  std::string time_basis;  // what states the unit; empty when nothing does
  Where where;             // the first time cell
  std::vector<std::string> time_text;  // each read's time cell as written
};

// The header, or nullopt when `line` is not one (`delimiter` 0: guessed from the line).
std::optional<AcrossHeader> try_across_header(const Profile& p, std::string_view line, const std::string& file,
                                              int line_no, char delimiter);

// The rows under an across header, gathered until the block ends, then made a channel.
class AcrossBlock {
 public:
  explicit AcrossBlock(AcrossHeader h) : h_(std::move(h)) {}
  // A line of the block: a well's row, a temperature row or a row of an ignored name
  // (`columns.ignore`: read numbers): `yes`. `no` when the line is none of these (the block
  // ends before it); `cut_short` for a row cut off at the end of the start that detection
  // reads. InputError for a row of the block that cannot be read.
  enum class Taken { yes, no, cut_short };
  Taken add(const CompiledProfile& cp, std::string_view line, int line_no, const std::string& file, ReadInfo& info,
            bool prefix_only, Where* first_value);
  bool empty() const { return wells_.empty(); }
  const AcrossHeader& header() const { return h_; }
  // The channel of the rows read.
  ChannelBuilder finish(const SectionStart& s, const std::string& file) const;

 private:
  AcrossHeader h_;
  std::vector<WellId> wells_;
  std::vector<int> well_line_;
  std::vector<double> values_;  // well-major: wells_ × reads
  std::vector<ReadStatus> status_;
  std::vector<double> temperature_;
  std::vector<FieldView> fields_;
  std::string scratch_;
};

}  // namespace vzero::detail
