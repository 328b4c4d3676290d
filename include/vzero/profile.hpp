// Instrument profiles: how one family of raw exports is laid out (TOML, read with toml++).
//
// A profile names the shape (wide, grid or long), the delimiter and decimal mark, the time
// format, header names, overflow and missing tokens, channel section labels and metadata
// lines to capture. Regexes are RE2 syntax (linear time, safe on any line). Every key is
// documented in instrument-profiles/README.md and in `wide-generic.toml`.
//
// **Example**:
//   vzero::Profile p = vzero::load_profile("grid-generic");   // built-in, by name
//   vzero::Profile q = vzero::load_profile("lab/my-reader.toml");  // or a file
#pragma once

#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "vzero/run.hpp"

namespace vzero {

enum class Shape { wide, grid, long_form };
std::string_view to_string(Shape s);

// Unit of read times written as plain numbers. Text with ':' is always clock time
// ("h:mm:ss", "mm:ss", "h:mm:ss.s"), whatever the unit.
enum class TimeUnit { seconds, minutes, hours, milliseconds };
std::string_view to_string(TimeUnit t);

// A line matching `label` starts a channel section; capture group 1, when the regex has
// one, is the channel name, else `name` is.
struct SectionRule {
  std::string label;
  std::string name;                  // used when the regex captures nothing
  std::optional<Quantity> quantity;  // else guessed from the name, else [signal]
  std::string unit;                  // else guessed with the quantity
  int line = 0;                      // line in the profile file, for messages
};

// A line outside the data matching `pattern` stores capture group 1 under `key`; with
// key "$1" and two groups, group 1 is the key and group 2 the value.
struct CaptureRule {
  std::string pattern;
  std::string key;
  int line = 0;
};

struct Profile {
  std::string name;  // file stem, e.g. "wide-generic"
  std::string description;
  std::string source;  // "built-in" or the file path
  std::string sha256;  // of the profile file ("" for built-in profiles)
  Shape shape = Shape::wide;
  char delimiter = 0;   // ',', ';', '\t'; 0 = guess per file
  char decimal = '.';   // '.' or ','
  int plate_wells = 0;  // 0 = smallest standard plate holding the wells read
  TimeUnit time_unit = TimeUnit::seconds;
  // Who states `time_unit`: "profile FILE" when a profile file of the user's sets it,
  // "--time-unit" when the option does; empty for the built-in profiles, whose "s" is a
  // default that plain-number times are checked against (the time unit rule, README.md).
  std::string time_unit_from;
  std::vector<std::string> overflow_tokens{"OVER", "overflow", "SAT"};
  std::vector<std::string> missing_tokens{"", "NA", "N/A", "-", "NaN"};
  // Header names, compared case-insensitively after trimming.
  std::vector<std::string> time_columns{"time", "time_s", "time [s]", "time (s)"};
  std::vector<std::string> temperature_columns{"temperature", "temp", "temperature_c", "temp [c]", "temp (c)"};
  std::vector<std::string> well_columns{"well"};
  std::vector<std::string> value_columns{"value", "signal"};
  std::vector<std::string> channel_columns{"channel"};
  std::vector<std::string> ignore_columns;  // wide shape: other columns that are not wells
  // The channel when the file names none.
  std::string signal_name = "signal";
  Quantity signal_quantity = Quantity::other;
  std::string signal_unit;
  std::vector<SectionRule> sections;
  std::vector<CaptureRule> captures;
  std::string grid_read_label;  // grid shape: regex; group 1 read time, group 2 (optional) temperature, C
  int grid_read_line = 0;

  // Empty if valid, else what is wrong and which key to change (also compiles regexes).
  std::string validate() const;
};

// Parses profile TOML. `source` names the file in messages. Unknown keys, wrong types,
// bad values and regexes that do not compile are InputErrors with the profile's line.
Profile parse_profile(std::string_view toml_text, const std::string& source, const std::string& name);

// A profile name or a path to a .toml file. A name is looked up in the profile folders
// first (see profile_folders), then among the built-in profiles.
Profile load_profile(const std::string& name_or_path);

// Sets the unit of plain-number times as --time-unit does ("s", "min" or "h"; UsageError
// otherwise): it then counts as stated (Profile::time_unit_from), though a unit in the time
// header still wins.
void state_time_unit(Profile& p, const std::string& unit);

// The built-in profile of that name (source "built-in"), if there is one.
std::optional<Profile> builtin_profile(const std::string& name);

// Names of the built-in profiles, sorted.
std::vector<std::string> builtin_profile_names();

// The profile folders of this user, in the order detection tries them: the folder named by
// the environment variable VZERO_PROFILES, then $XDG_CONFIG_HOME/vzero/profiles (else
// ~/.config/vzero/profiles). `from` says which ("VZERO_PROFILES", "user config folder").
// A folder that does not exist is left out, except VZERO_PROFILES naming no folder: an
// InputError with the fix.
struct ProfileFolder {
  std::string path;
  std::string from;
};
std::vector<ProfileFolder> profile_folders();
// $XDG_CONFIG_HOME/vzero/profiles, else ~/.config/vzero/profiles, whether or not it exists
// ("" without HOME).
std::string user_profile_folder();

// A built-in profile as a commented TOML template to copy: a header saying how to use it,
// its text with `name` changed to "my-NAME", and the keys it leaves at their defaults
// written out as comments. Empty when `name` is no built-in profile.
std::string profile_template(const std::string& name);

// Every *.toml profile of the profile folders, folder by folder in that order, by file name
// within one. Each is parsed as load_profile parses a file (source = its path); a profile
// that does not parse is an InputError naming its line, never skipped.
std::vector<Profile> folder_profiles();

namespace detail {
struct EmbeddedProfile {
  const char* name;
  const char* text;
};
// Defined in the generated embedded_profiles.cpp.
const std::vector<EmbeddedProfile>& embedded_profiles();
}  // namespace detail

}  // namespace vzero
