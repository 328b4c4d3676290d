// Assay method files: the settings of `vzero rates` saved once per assay, in TOML.
// Keys are the command's long option names (`epsilon = 6220`, `path-cm = 0.5`,
// `blank = "matched"`). Flags given on the command line override the file. One kind of table
// is read: `[channel.NAME]`, the settings of one channel (ε, path, direction, detector
// limit), which override the file's and the command line's for that channel only, so that
// a multi-wavelength export is one run.
//
// **Example** (`pnp-esterase.toml`):
//   epsilon = 18000
//   path-cm = 0.5
//   blank = "matched"
//   max-conversion = 10
//
//   [channel.A340]       # NADH falls at 340 nm
//   epsilon = 6220
//   direction = "down"
#pragma once

#include <string>
#include <string_view>
#include <vector>

namespace vzero {

struct MethodEntry {
  std::string key;
  std::string value;  // the value as option text: numbers shortest round-trip, booleans "true"/"false"
  std::string type;   // "string", "integer", "float", "boolean"
  std::string channel;  // "" for a top-level key, else NAME of the [channel.NAME] table holding it
  int line = 0;
  int column = 0;
};

struct MethodFile {
  std::vector<MethodEntry> entries;  // in file order
  std::string sha256;                // of the file's bytes (provenance)
};

// Reads a method file. Throws InputError (file:line:column) for invalid TOML, tables other
// than [channel.NAME], arrays, keys not in `known_keys` and channel keys not in
// `channel_keys`, naming the closest known key. With `channel_keys` empty, no table is read.
MethodFile read_method(const std::string& path, const std::vector<std::string>& known_keys,
                       const std::vector<std::string>& channel_keys = {});
std::vector<MethodEntry> parse_method(std::string_view text, const std::string& name,
                                      const std::vector<std::string>& known_keys,
                                      const std::vector<std::string>& channel_keys = {});

}  // namespace vzero
