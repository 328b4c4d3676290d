// The wide shape with one row per well (wide_across.hpp).
#include "ingest/wide_across.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <cmath>

namespace vzero::detail {

namespace {

}  // namespace

std::optional<AcrossHeader> try_across_header(const Profile& p, std::string_view line, const std::string& file,
                                              int line_no, char delimiter) {
  const char d = delimiter ? delimiter : guess_delimiter(line);
  if (d == 0) return std::nullopt;
  std::vector<Field> f;
  split_fields_into(line, d, f);
  std::size_t n = f.size();  // empty fields at the end left out
  while (n > 0 && trim(f[n - 1].text).empty()) --n;
  if (n < 3) return std::nullopt;
  const std::string_view first = trim(f[0].text);
  const bool by_time = time_header(first, p.time_columns);
  if (!by_time && !named_in(first, p.well_columns)) return std::nullopt;
  AcrossHeader h;
  h.delimiter = d;
  h.line = line_no;
  h.fields = n;
  const std::optional<TimeUnit> stated = by_time ? unit_in_header(first) : std::nullopt;
  h.time_unit = stated.value_or(p.time_unit);
  h.time_basis = stated ? fmt::format("the time header \"{}\"", first) : p.time_unit_from;
  for (std::size_t i = 1; i < n; ++i) {
    const auto t = parse_time(f[i].text, h.time_unit, p.decimal);
    if (!t || (!h.time_s.empty() && !(*t > h.time_s.back()))) return std::nullopt;
    h.time_s.push_back(*t);
    h.time_column.push_back(f[i].column);
    h.time_text.emplace_back(trim(f[i].text));
  }
  h.where = Where{file, line_no, f[1].column, std::string(line)};
  if (stated) check_stated_unit(p, stated, Where{file, line_no, f[0].column, std::string(line)}, h.time_basis);
  return h;
}

AcrossBlock::Taken AcrossBlock::add(const CompiledProfile& cp, std::string_view line, int ln, const std::string& file,
                                    ReadInfo& info, bool prefix_only, Where* first_value) {
  const Profile& p = cp.profile;
  split_views_into(line, h_.delimiter, fields_, scratch_);
  if (fields_.empty()) return Taken::no;
  const std::string_view first = trim(fields_[0].text);
  const std::optional<WellId> well = parse_well(first);
  const bool temperature = !well && temperature_header(first, p.temperature_columns);
  std::size_t n = fields_.size();  // empty cells past the header's last read: a spreadsheet's padding
  while (n > h_.fields && trim(fields_[n - 1].text).empty()) --n;
  if (!well && !temperature && !named_in(first, p.ignore_columns)) {
    // A row of the table's width under a name vzero does not know is refused, not skipped: it
    // may be a well written another way. A line of another width ends the block.
    if (n != h_.fields || (prefix_only && !wells_.empty())) return Taken::no;
    throw InputError(Where{file, ln, fields_[0].column, std::string(line)},
                     fmt::format("expected a well name (A1 … AF48), a temperature row or a row name listed in "
                                 "`columns.ignore` first in this row of the table of line {}, found \"{}\"",
                                 h_.line, first),
                     {fmt::format("add \"{}\" to `columns.ignore` (or `columns.temperature`) in the profile", first),
                      "end the table with an empty line before any text that follows it"});
  }
  if (n != h_.fields) {
    if (prefix_only && !wells_.empty()) return Taken::cut_short;
    const int col = n > h_.fields ? fields_[h_.fields].column : static_cast<int>(line.size()) + 1;
    throw InputError(Where{file, ln, col, std::string(line)},
                     fmt::format("expected {} fields as in the header at line {} (the row's name and a value for "
                                 "each of its {} reads), found {}",
                                 h_.fields, h_.line, h_.time_s.size(), n),
                     {"check for a truncated or extra field; a file cut off mid-row must be re-exported or the "
                      "incomplete last line deleted"});
  }
  const std::size_t reads = h_.time_s.size();
  if (temperature) {
    if (!temperature_.empty())
      throw InputError(Where{file, ln, fields_[0].column, std::string(line)},
                       fmt::format("expected one temperature row under the header at line {}, found a second", h_.line),
                       {"delete one of the two rows, or give the other a name listed in `columns.ignore`"});
    for (std::size_t r = 0; r < reads; ++r)
      temperature_.push_back(
          temperature_cell(cp, p, file, ln, fields_[r + 1].column, line, fields_[r + 1].text));
    return Taken::yes;
  }
  if (!well) return Taken::yes;  // a row of read numbers, cycles: no values of a well
  for (std::size_t k = 0; k < wells_.size(); ++k)
    if (wells_[k] == *well)
      throw InputError(Where{file, ln, fields_[0].column, std::string(line)},
                       fmt::format("well {} has two rows (lines {} and {})", well_name(*well), well_line_[k], ln),
                       {"delete or rename the duplicated row"});
  if (const auto fixed = fixed_format(p); fixed && !fixed->holds(*well))
    off_plate_error(*fixed, *well, Where{file, ln, fields_[0].column, std::string(line)});
  wells_.push_back(*well);
  well_line_.push_back(ln);
  for (std::size_t r = 0; r < reads; ++r) {
    const FieldView& c = fields_[r + 1];
    if (first_value && first_value->line == 0) *first_value = Where{file, ln, c.column, std::string(line)};
    double v = 0;
    ReadStatus s = ReadStatus::ok;
    switch (read_cell(cp, c.text, v)) {
      case CellKind::number:
        break;
      case CellKind::overflow:
        s = ReadStatus::overflow;
        v = 0;
        info.saw_overflow(c.text);
        break;
      case CellKind::missing:
        s = ReadStatus::missing;
        v = 0;
        break;
      case CellKind::bad:
        bad_value_error(p, file, ln, c.column, line, c.text, "well " + well_name(*well));
    }
    values_.push_back(v);
    status_.push_back(s);
  }
  return Taken::yes;
}

ChannelBuilder AcrossBlock::finish(const SectionStart& s, const std::string& file) const {
  ChannelBuilder b(s, wells_);
  const std::size_t reads = h_.time_s.size();
  for (std::size_t r = 0; r < reads; ++r) {
    const int read = b.add_read(h_.time_s[r], temperature_.empty() ? std::nan("") : temperature_[r],
                                Where{file, h_.line, h_.time_column[r], h_.where.text});
    for (std::size_t w = 0; w < wells_.size(); ++w)
      b.set(read, static_cast<int>(w), values_[w * reads + r], status_[w * reads + r]);
  }
  return b;
}

}  // namespace vzero::detail
