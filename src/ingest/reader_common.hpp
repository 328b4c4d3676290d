// Internals shared by the three shape readers.
#pragma once

#include <re2/re2.h>

#include <algorithm>
#include <cctype>
#include <memory>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/line_source.hpp"
#include "core/text.hpp"
#include "vzero/error.hpp"
#include "vzero/profile.hpp"
#include "vzero/run.hpp"

namespace vzero::detail {

// A profile with its regexes compiled (once per pattern per process: RE2 objects are
// immutable and safe to share between threads; profile detection would otherwise compile
// every built-in profile's regexes for every file).
struct CompiledProfile {
  const Profile& profile;
  std::vector<std::shared_ptr<const RE2>> sections;
  std::vector<std::shared_ptr<const RE2>> captures;
  std::shared_ptr<const RE2> read_label;
  // True when an overflow or missing token reads as a number; otherwise a cell that reads as
  // a number is one, and read_cell tries that first (the tokens only for the rest).
  bool numeric_token = false;
  explicit CompiledProfile(const Profile& p);
};

struct SectionStart {
  std::string name;
  Quantity quantity = Quantity::other;
  std::string unit;
  int line = 0;  // of the section label; 0 for the profile's default channel
};
// Where a channel's name came from, for ReadInfo::channels.
std::string channel_basis(const SectionStart& s, const Profile& p);

// The channel a line starts, if it matches a section label.
std::optional<SectionStart> match_section(const CompiledProfile& cp, std::string_view line);
// Stores metadata if the line matches a capture rule; true when it did.
bool match_capture(const CompiledProfile& cp, std::string_view line,
                   std::vector<std::pair<std::string, std::string>>& metadata);

// Guesses quantity and unit from a channel name ("A405" -> absorbance/AU).
void guess_quantity(const std::string& name, Quantity& quantity, std::string& unit);

// The largest read time accepted, in seconds, on either side of 0: about 317 years, far
// beyond any kinetic run (and beyond clock stamps in seconds since 1970), so a larger time
// is a wrong unit or a wrong column; it also keeps every time finite in seconds.
inline constexpr double k_max_time_s = 1e10;

// Seconds from a time cell: plain numbers in `unit`, clock text h:mm:ss / mm:ss, or numbers
// with their units ("0 min 20 s", "1 h 5 min"); nullopt
// when the text is no time or lies beyond k_max_time_s.
std::optional<double> parse_time(std::string_view text, TimeUnit unit, char decimal);
// "1 h 2 min 3.5 s", "0 min 20 s", "20s": numbers each followed by its unit (h, min, s), the
// units in that order, each at most once, in seconds; nullopt for any other text
// (cell_forms.cpp, as temperature_header and overflow_form).
std::optional<double> worded_time(std::string_view text, char decimal);
// True when parse_time refuses `text` only because it lies beyond k_max_time_s (or beyond a
// double).
bool time_out_of_range(std::string_view text, TimeUnit unit, char decimal);
// The message for a time cell parse_time refused: `expected WHAT, found "TEXT"`, or for a
// time out of range what is wrong and the largest time accepted.
std::string bad_time_message(std::string_view text, TimeUnit unit, char decimal, std::string_view what);
// Throws the InputError for such a cell: bad_time_message, with `fixes`, or for a time out of
// range a fix about the time unit.
[[noreturn]] void bad_time_error(Where where, std::string_view text, TimeUnit unit, char decimal, std::string_view what,
                                 std::vector<std::string> fixes);
// True when `text` (trimmed) is one of `names`, ignoring ASCII case: a header the profile
// names.
bool named_in(std::string_view text, const std::vector<std::string>& names);
// A wavelength of 3 or 4 digits, with or without "nm" after it ("405", "405 nm", "340nm"):
// its digits, or "" for any other text.
std::string bare_wavelength(std::string_view text);
// The unit a time header names ("Time [min]", "time_s", "Time (seconds)"), if any.
std::optional<TimeUnit> unit_in_header(std::string_view header);
// True when a header names the time column: one of `names` (case-insensitive), or one of
// them that states no unit followed by a unit in brackets: "Time (sec)", "Time [minutes]",
// "Time [hh:mm:ss]" (cell_forms.cpp). A bracketed "hh:mm" is refused: "1:30" reads as
// mm:ss, so such a column would be read 60 times too short.
bool time_header(std::string_view header, const std::vector<std::string>& names);

// True when a header names the temperature column: one of `names` (case-insensitive), or
// one of them, "temp" or "t" with a unit of degrees Celsius after it ("Temperature (°C)",
// "Temp [°C]", "T(C)", "temp °C").
bool temperature_header(std::string_view header, const std::vector<std::string>& names);

// "a", "b", "c": names as a message lists them.
std::string quoted_list(const std::vector<std::string>& names);
// The error for a header line without a `what` column ("time" or "value", named one of
// `names`): `context` says what the header has (may be empty), `unknown` is the one field
// no column of the profile names (the missing column under another name; empty if none).
InputError missing_column_error(Where where, std::string_view what, const std::vector<std::string>& names,
                                std::string_view context, std::string_view unknown);

// Overflow as every profile reads it, besides its `overflow` list (case-insensitive): these
// words, a value above the range (">3.5", the profile's decimal mark) or a run of '*'.
inline constexpr const char* k_overflow_words[] = {"OVER", "overflow", "OVRFLW", "OVFL", "OVF", "saturated"};
bool overflow_form(std::string_view text, char decimal);

enum class CellKind { number, overflow, missing, bad };
// Classifies one value cell: overflow token, missing token, number, or bad text.
CellKind read_cell(const Profile& p, std::string_view text, double& value);
// The same result, quicker for numbers.
CellKind read_cell(const CompiledProfile& cp, std::string_view text, double& value);

// The error for a value cell that is not a number, with fixes suited to what it holds.
[[noreturn]] void bad_value_error(const Profile& p, const std::string& file, int line, int column,
                                  std::string_view line_text, std::string_view cell, const std::string& what_cell);
// A read's temperature cell: NaN when it is empty, missing or overflow; text that is not a
// number is the error above, at `column`.
double temperature_cell(const CompiledProfile& cp, const Profile& p, const std::string& file, int line, int column,
                        std::string_view line_text, std::string_view cell);

// Collects one channel's reads; wells in any order (columns are sorted by plate index
// when the channel is finished).
class ChannelBuilder {
 public:
  ChannelBuilder(SectionStart start, std::vector<WellId> wells);
  // Starts a read; returns its row. Checks that time increases (InputError otherwise).
  int add_read(double time_s, double temperature_c, const Where& where);
  void set(int read, int well_slot, double value, ReadStatus status);
  Channel finish(PlateFormat format) &&;
  const std::string& name() const { return start_.name; }
  int reads() const { return static_cast<int>(time_s_.size()); }
  const std::vector<WellId>& wells() const { return wells_; }

 private:
  SectionStart start_;
  std::vector<WellId> wells_;  // slot -> well
  std::vector<double> time_s_, temperature_c_;
  std::vector<int> time_line_;
  std::vector<double> values_;  // read-major while reading
  std::vector<ReadStatus> status_;
};

// The plate format the profile fixes (`plate` > 0), if any.
std::optional<PlateFormat> fixed_format(const Profile& p);
// The errors for a well, a plate row or a plate column (0-based) that a fixed plate format
// lacks, at the place the file names it.
[[noreturn]] void off_plate_error(const PlateFormat& f, WellId w, Where where);
[[noreturn]] void off_plate_row_error(const PlateFormat& f, int row, Where where);
[[noreturn]] void off_plate_column_error(const PlateFormat& f, int column, Where where);

// Plate format from the profile or the wells read; InputError if a well does not fit.
PlateFormat decide_format(const Profile& p, const std::vector<WellId>& wells, const std::string& file, bool& inferred);

// A column header that names a signal rather than saying "value": "RFU", "RLU", "OD",
// "Absorbance", "Fluorescence (RFU)", "A405", "OD 600", "Abs (405 nm)". The channel it
// gives: a wavelength makes an absorbance channel A405; otherwise the header, with the
// quantity and unit the word implies. nullopt for anything else.
std::optional<SectionStart> signal_header(std::string_view header);

// Default channel when no section label was seen.
SectionStart default_section(const Profile& p);

// What a reader learns about a file beyond its values, turned into Run::read_facts by
// settle_reading once the whole file is read.
struct ReadInfo {
  char delimiter = 0;      // of the data lines
  int delimiter_line = 0;  // the line it was guessed from; 0 when the profile fixes it
  TimeUnit time_unit = TimeUnit::seconds;
  std::string time_basis;    // e.g. "the header \"Time [min]\""; empty when nothing states the unit
  Where time_where;          // the time header cell, or the first read label
  bool plain_times = false;  // some time is a plain number (not a clock time h:mm:ss)
  std::vector<std::pair<std::string, std::string>> channels;  // per channel: name, where it came from
  std::vector<std::string> overflow_seen;                     // overflow tokens as written, distinct, in file order
  // Wavelengths written in lines outside the data ("340 nm"): distinct nm values, with the
  // text and line of the first mention.
  struct Wavelength {
    int nm = 0;
    std::string text;
    int line = 0;
  };
  std::vector<Wavelength> wavelengths;
  void saw_preamble(std::string_view line, int ln);
  std::vector<std::string> notes;
  // Clock times with one ':' (m:ss, or h:mm meant), and with two (h:mm:ss).
  bool short_clock = false, long_clock = false;
  void saw_time(std::string_view text) {
    // A clock time (h:mm:ss) or a time with its units ("0 min 20 s") states its unit.
    const auto colons = std::count(text.begin(), text.end(), ':');
    if (colons == 1) short_clock = true;
    if (colons == 2) long_clock = true;
    if (!plain_times && colons == 0 &&
        (text.empty() || !std::isalpha(static_cast<unsigned char>(trim(text).empty() ? '0' : trim(text).back()))))
      plain_times = true;
  }
  void saw_overflow(std::string_view token);
};

// The InputError for a unit the file states (`stated`, in a time header or read label, at
// `where`) that differs from the one --time-unit states.
void check_stated_unit(const Profile& p, std::optional<TimeUnit> stated, const Where& where, std::string_view what);

// Applies the time unit rule (InputError when plain-number times are implausible as seconds
// and nothing states their unit) and fills run.read_facts and run.read_notes.
void settle_reading(Run& run, ReadInfo& info, const Profile& p);

// The error for a line that splits into the expected `fields` with another delimiter than
// `used`, if it does: a delimiter problem, not a data problem.
std::optional<InputError> delimiter_error(Where where, std::string_view line, char used, std::size_t fields,
                                          std::string_view what);

// True when `line`, split with `d`, has >= 2 fields and every field but the first reads as a
// number or an overflow/missing token, and the first is not empty: a data row's look.
bool looks_like_data_row(const CompiledProfile& cp, std::string_view line, char d);

// A line that reads as a long table's observation: >= 3 fields, exactly one a well name, at
// most one other text (a channel name), the rest numbers or tokens (one number at least).
bool looks_like_observation(const CompiledProfile& cp, std::string_view line, char d);

struct ReaderInput {
  LineSource& src;
  const CompiledProfile& cp;
  ReadInfo& info;
  // Reading the start of a file to detect its shape: a bad line after the first complete
  // read ends the reading instead of failing it (the chosen profile's full read reports it).
  bool prefix_only = false;
  // When given, set to the place of the first value cell read (detection's message about a
  // file whose every value is an overflow or missing token).
  Where* first_value = nullptr;
};

Run read_wide(ReaderInput in);
Run read_grid(ReaderInput in);
Run read_long(ReaderInput in);

}  // namespace vzero::detail
