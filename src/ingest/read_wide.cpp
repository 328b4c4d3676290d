// Wide shape: optional preamble, then per channel a header row (time, optional
// temperature, one column per well) and one row per read.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>

#include "ingest/reader_common.hpp"
#include "ingest/wide_across.hpp"
#include "ingest/wide_header.hpp"
#include "vzero/error.hpp"

namespace vzero::detail {

namespace {

// Detection reads the start of a file: a row cut short after a complete read ends it.
struct CutShort {};

// The channel of a tag on the well columns (open_block). A tag that names a signal ("A340",
// "OD 600", "Abs (405 nm)") gives that channel; a bare wavelength ("340", "405 nm") an
// absorbance channel A340 unless the block's label says another quantity; any other tag is the
// channel's name as written when there are several tags, and the block's own channel when
// there is one ("Well A1": the word is no channel).
SectionStart tagged_channel(const SectionStart& block, const std::string& tag, bool several) {
  if (auto s = signal_header(tag)) return *s;
  const std::string wl = bare_wavelength(tag);
  if (!wl.empty() && (block.quantity == Quantity::absorbance || block.quantity == Quantity::other))
    return SectionStart{"A" + wl, Quantity::absorbance, "AU", 0};
  if (!several) return block;
  SectionStart s{tag, Quantity::other, "", 0};
  guess_quantity(tag, s.quantity, s.unit);
  if (s.quantity == Quantity::other) {
    s.quantity = block.quantity;
    s.unit = block.unit;
  }
  return s;
}

// The reading of one file: a header opens a block of data rows; a blank line inside it is
// read through with a note, and a line of another kind closes it. A data row that would
// belong to a closed block is an error at the line that closed it (nothing dropped).
class WideReader {
 public:
  explicit WideReader(ReaderInput in) : in_(in), p_(in.cp.profile), file_(in.src.name()) {}
  Run read();

 private:
  bool block_line(std::string_view line, int ln);
  bool across_line(std::string_view line, int ln);
  void close_across();
  void keep_channel(ChannelBuilder b, int header_line, const char* fix);
  void data_row(std::string_view line, int ln, double t, std::size_t tcol);
  void outside_line(std::string_view line, int ln);
  void open_block(Header h);
  void close_block();
  std::optional<double> row_time(const Header& h, std::string_view line);
  bool starts_block(std::string_view line, int ln);

  ReaderInput in_;
  const Profile& p_;
  const std::string& file_;
  Run run_;
  std::vector<ChannelBuilder> done_;
  std::vector<int> done_header_line_;  // header line of each finished channel, for messages
  std::optional<SectionStart> section_;
  std::optional<Header> header_;
  std::optional<AcrossBlock> across_;  // an open block of one row per well
  std::vector<ChannelBuilder> current_;  // the open block's channels (one per tag), empty = none
  std::vector<int> blanks_;  // blank lines inside the open block, not yet followed by a row
  // The block a line of another kind closed, that line and its text: a data row of that
  // block further on is an error there.
  std::optional<Header> ended_;
  int ended_line_ = 0;
  std::string ended_text_;
  std::vector<Field> fields_;
  std::vector<FieldView> fields_v_;  // data lines: views, no allocation per value
  std::string scratch_;
  std::optional<InputError> near_header_;  // a header of wells without a time column
  std::optional<InputError> near_delim_;   // a header split with another delimiter than the profile's
  std::optional<InputError> headless_;     // a data row before any header
};

void WideReader::open_block(Header h) {
  header_ = std::move(h);
  ended_.reset();
  const SectionStart s = section_ ? *section_ : default_section(p_);
  current_.clear();
  if (header_->tags.empty()) {
    in_.info.channels.emplace_back(s.name, channel_basis(s, p_));
    current_.emplace_back(s, header_->wells);
  } else {
    std::string names;
    for (std::size_t k = 0; k < header_->tags.size(); ++k) {
      const std::string& tag = header_->tags[k];
      SectionStart c = tagged_channel(s, tag, header_->tags.size() > 1);
      in_.info.channels.emplace_back(
          c.name, c.name == s.name && c.line == s.line
                      ? channel_basis(s, p_)
                      : fmt::format("the tag \"{}\" of the well columns in the header at line {}", tag, header_->line));
      names += (k ? ", " : "") + c.name;
      current_.emplace_back(c, header_->tag_wells[k]);
    }
    in_.info.notes.push_back(fmt::format("line {}: well columns named with a channel tag (\"{}\" is well {}): read as {}",
                                         header_->line, header_->tagged_example,
                                         well_name(header_->tag_wells[0][0]), names));
  }
  if (in_.info.delimiter == 0) {
    in_.info.delimiter = header_->delimiter;
    in_.info.delimiter_line = p_.delimiter ? 0 : header_->line;
    in_.info.time_unit = header_->time_unit;
    in_.info.time_basis = header_->time_basis;
    in_.info.time_where = header_->time_where;
  }
}

void WideReader::keep_channel(ChannelBuilder b, int header_line, const char* fix) {
  for (const auto& d : done_)
    if (d.name() == b.name())
      throw InputError(Where{file_, header_line}, fmt::format("channel {} appears twice in the file", b.name()), {fix});
  done_.push_back(std::move(b));
  done_header_line_.push_back(header_line);
}

void WideReader::close_block() {
  for (auto& c : current_)
    keep_channel(std::move(c), header_->line,
                 header_->tags.empty() ? "give each channel section its own label, or split the file"
                                       : "give the well columns of each channel their own tag");
  current_.clear();
  header_.reset();
  section_.reset();
  blanks_.clear();
}

std::optional<double> WideReader::row_time(const Header& h, std::string_view line) {
  split_views_into(line, h.delimiter, fields_v_, scratch_);
  const auto tcol = static_cast<std::size_t>(h.time_col);
  if (tcol >= fields_v_.size()) return std::nullopt;
  return parse_time(fields_v_[tcol].text, h.time_unit, p_.decimal);
}

// True when `line` is a header line (of the next block).
bool WideReader::starts_block(std::string_view line, int ln) {
  std::optional<InputError> ignored;
  std::vector<Field> f;
  try {
    return try_header(p_, line, file_, ln, f, ignored, p_.delimiter).has_value();
  } catch (const InputError&) {
    return false;  // a line with a time column but not a header: an error of the block
  }
}

// A line while a block is open; false when it closes the block and must be read as a line
// outside any block.
bool WideReader::block_line(std::string_view line, int ln) {
  if (trim(line).empty()) {
    blanks_.push_back(ln);
    return true;
  }
  if (match_section(in_.cp, line)) {
    close_block();
    return false;
  }
  const auto t = row_time(*header_, line);
  const auto tcol = static_cast<std::size_t>(header_->time_col);
  const std::size_t expected = header_->roles.size();
  if (!t || fields_v_.size() != expected) {
    Where here{file_, ln, 1, std::string(line)};
    if (auto e = delimiter_error(here, line, header_->delimiter, expected, "data fields")) throw *e;
  }
  if (!t && starts_block(line, ln)) {
    close_block();  // the header of the next block (a channel without a section label)
    return false;
  }
  if (!t) {
    if (fields_v_.size() == expected) {
      bad_time_error(Where{file_, ln, tcol < fields_v_.size() ? fields_v_[tcol].column : 1, std::string(line)},
                     tcol < fields_v_.size() ? fields_v_[tcol].text : std::string_view(), header_->time_unit,
                     p_.decimal, "a read time",
                     {"write times as numbers (unit from the header or `time_unit`) or as h:mm:ss",
                      "end the data block with an empty line before any trailing text"});
    }
    // A line of another shape ends the block (trailing notes, a new preamble).
    ended_ = *header_;
    ended_line_ = ln;
    ended_text_ = std::string(line);
    close_block();
    return false;
  }
  data_row(line, ln, *t, tcol);
  return true;
}

void WideReader::data_row(std::string_view line, int ln, double t, std::size_t tcol) {
  std::size_t expected = header_->roles.size();
  if (fields_v_.size() == expected + 1 && trim(fields_v_.back().text).empty()) fields_v_.pop_back();
  if (fields_v_.size() != expected) {
    if (in_.prefix_only && (current_.front().reads() > 0 || !done_.empty())) throw CutShort{};
    int col = fields_v_.size() > expected ? fields_v_[expected].column : static_cast<int>(line.size()) + 1;
    throw InputError(Where{file_, ln, col, std::string(line)},
                     fmt::format("expected {} fields as in the header at line {}, found {}", expected, header_->line,
                                 fields_v_.size()),
                     {"check for a truncated or extra field; a file cut off mid-row must be re-exported or "
                      "the incomplete last line deleted"});
  }
  for (int b : blanks_)
    in_.info.notes.push_back(
        fmt::format("line {}: a blank line inside the data block of line {}, read through", b, header_->line));
  blanks_.clear();
  in_.info.saw_time(fields_v_[tcol].text);
  double temp = std::nan("");
  if (header_->temp_col >= 0) {
    const auto& f = fields_v_[static_cast<std::size_t>(header_->temp_col)];
    temp = temperature_cell(in_.cp, p_, file_, ln, f.column, line, f.text);
  }
  int read = 0;
  for (auto& c : current_) read = c.add_read(t, temp, Where{file_, ln, fields_v_[tcol].column, std::string(line)});
  if (in_.first_value && in_.first_value->line == 0) {
    for (std::size_t i = 0; i < fields_v_.size() && in_.first_value->line == 0; ++i)
      if (header_->roles[i] == ColumnRole::well)
        *in_.first_value = Where{file_, ln, fields_v_[i].column, std::string(line)};
  }
  for (std::size_t i = 0; i < fields_v_.size(); ++i) {
    if (header_->roles[i] == ColumnRole::padding && !trim(fields_v_[i].text).empty()) {
      throw InputError(Where{file_, ln, fields_v_[i].column, std::string(line)},
                       fmt::format("expected an empty cell under the empty header field {} of line {}, found \"{}\"",
                                   i + 1, header_->line, trim(fields_v_[i].text)),
                       {"give the column a header (a well name, or a name listed in `columns.ignore`)"});
    }
    if (header_->roles[i] != ColumnRole::well) continue;
    const int c = header_->chan[i];
    ChannelBuilder& b = current_[static_cast<std::size_t>(c)];
    double v = 0;
    switch (read_cell(in_.cp, fields_v_[i].text, v)) {
      case CellKind::number:
        b.set(read, header_->slot[i], v, ReadStatus::ok);
        break;
      case CellKind::overflow:
        in_.info.saw_overflow(fields_v_[i].text);
        b.set(read, header_->slot[i], 0, ReadStatus::overflow);
        break;
      case CellKind::missing:
        b.set(read, header_->slot[i], 0, ReadStatus::missing);
        break;
      case CellKind::bad:
        bad_value_error(p_, file_, ln, fields_v_[i].column, line, fields_v_[i].text,
                        "well " + well_name(header_->wells_of(c)[static_cast<std::size_t>(header_->slot[i])]) +
                            (header_->tags.empty() ? "" : " of channel " + b.name()));
    }
  }
}

// A line while a block of one row per well is open; false when it ends the block and must be
// read as a line outside any block. Blank lines are held: a well's row after them is read
// with a note, anything else ends the block before them.
bool WideReader::across_line(std::string_view line, int ln) {
  if (trim(line).empty()) {
    blanks_.push_back(ln);
    return true;
  }
  if (match_section(in_.cp, line)) {
    close_across();
    return false;
  }
  switch (across_->add(in_.cp, line, ln, file_, in_.info, in_.prefix_only, in_.first_value)) {
    case AcrossBlock::Taken::yes:
      for (int b : blanks_)
        in_.info.notes.push_back(fmt::format("line {}: a blank line among the well rows of line {}, read through", b,
                                             across_->header().line));
      blanks_.clear();
      return true;
    case AcrossBlock::Taken::cut_short:
      throw CutShort{};
    case AcrossBlock::Taken::no:
      break;
  }
  close_across();
  return false;
}

void WideReader::close_across() {
  const AcrossHeader& h = across_->header();
  if (across_->empty())
    throw InputError(h.where, fmt::format("expected a row per well (A1, A2, …) under the header of read times at line {}, "
                                          "found none", h.line),
                     {"name each row by its well in the first column"});
  const SectionStart s = section_ ? *section_ : default_section(p_);
  in_.info.channels.emplace_back(s.name, channel_basis(s, p_));
  keep_channel(across_->finish(s, file_), h.line, "give each channel section its own label, or split the file");
  across_.reset();
  section_.reset();
  blanks_.clear();
}

void WideReader::outside_line(std::string_view line, int ln) {
  if (trim(line).empty()) return;
  if (auto s = match_section(in_.cp, line)) {
    section_ = *s;
    section_->line = ln;
    return;
  }
  if (auto h = try_header(p_, line, file_, ln, fields_, near_header_, p_.delimiter)) {
    open_block(std::move(*h));
    return;
  }
  if (auto a = try_across_header(p_, line, file_, ln, p_.delimiter)) {
    if (in_.info.delimiter == 0) {
      in_.info.delimiter = a->delimiter;
      in_.info.delimiter_line = p_.delimiter ? 0 : a->line;
      in_.info.time_unit = a->time_unit;
      in_.info.time_basis = a->time_basis;
      in_.info.time_where = a->where;
    }
    for (const auto& t : a->time_text) in_.info.saw_time(t);
    in_.info.notes.push_back(
        fmt::format("line {}: one row per well and the read times across the header: read as such", ln));
    across_.emplace(std::move(*a));
    return;
  }
  if (p_.delimiter != 0 && !near_delim_ && !in_.prefix_only) {
    const char other = guess_delimiter(line);
    std::optional<InputError> ignored;
    try {
      if (other != 0 && other != p_.delimiter && try_header(p_, line, file_, ln, fields_, ignored, other))
        near_delim_ = delimiter_error(Where{file_, ln, 1, std::string(line)}, line, p_.delimiter, fields_.size(),
                                      "header fields");
    } catch (const InputError&) {
      // not a header with that delimiter either
    }
  }
  if (ended_ && row_time(*ended_, line) && fields_v_.size() >= ended_->roles.size() &&
      fields_v_.size() <= ended_->roles.size() + 1) {
    throw InputError(Where{file_, ended_line_, 1, ended_text_},
                     fmt::format("expected a data row or the end of the data block of line {}, found a line of another "
                                 "kind; data rows of that block follow at line {}",
                                 ended_->line, ln),
                     {"delete this line (or make it an empty line) so that the rows after it are read",
                      "if the rows after it are another table, give them their own header line"});
  }
  const char d = p_.delimiter ? p_.delimiter : guess_delimiter(line);
  if (!ended_ && !headless_ && looks_like_data_row(in_.cp, line, d)) {
    std::vector<Field> f;
    split_fields_into(line, d, f);
    if (parse_time(f[0].text, p_.time_unit, p_.decimal) && f.size() >= 3) {
      headless_ = InputError(Where{file_, ln, 1, std::string(line)},
                             "expected a header line (a time column and well columns) before this data row, found none",
                             {"restore the header line of this block, or check `columns.time` in the profile"});
    }
  }
  match_capture(in_.cp, line, run_.metadata);
  in_.info.saw_preamble(line, ln);
}

Run WideReader::read() {
  std::string_view line;
  while (in_.src.next(line)) {
    const int ln = in_.src.line_number();
    try {
      if (header_ && block_line(line, ln)) continue;
      if (across_ && across_line(line, ln)) continue;
    } catch (const CutShort&) {
      break;
    }
    outside_line(line, ln);
  }
  if (across_) close_across();
  close_block();
  if (done_.empty() && near_delim_) throw *near_delim_;
  if (done_.empty() && near_header_) throw *near_header_;
  if (headless_) throw *headless_;  // data rows no header reads: nothing is dropped
  if (done_.empty()) {
    throw InputError(Where{file_},
                     "found no data: expected a header line with a time column and well columns (A1, A2, …)",
                     {"check `columns.time` in the profile names this file's time header",
                      "try another profile with --profile (vzero inspect lists the built-in ones)"});
  }
  std::vector<WellId> all;
  for (const auto& b : done_) all.insert(all.end(), b.wells().begin(), b.wells().end());
  run_.format = decide_format(p_, all, file_, run_.format_inferred);
  for (std::size_t i = 0; i < done_.size(); ++i) {
    if (done_[i].reads() == 0) {
      throw InputError(Where{file_, done_header_line_[i]},
                       fmt::format("channel {} has a header but no reads", done_[i].name()),
                       {"check that the export is complete; delete the header if the channel was not read"});
    }
    run_.channels.push_back(std::move(done_[i]).finish(run_.format));
  }
  return std::move(run_);
}

}  // namespace

Run read_wide(ReaderInput in) { return WideReader(in).read(); }

}  // namespace vzero::detail
