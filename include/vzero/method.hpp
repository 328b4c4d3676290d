// Assay method files: the settings of `vzero rates` saved once per assay, in TOML.
// Keys are the command's long option names (`epsilon = 6220`, `path-cm = 0.5`,
// `blank = "matched"`); tables group nothing, so the file is flat. Flags given on the
// command line override the file.
//
// **Example** (`pnp-esterase.toml`):
//   epsilon = 18000
//   path-cm = 0.5
//   blank = "matched"
//   max-conversion = 10
#pragma once

#include <string>
#include <string_view>
#include <vector>

namespace vzero {

struct MethodEntry {
  std::string key;
  std::string value;  // the value as option text: numbers shortest round-trip, booleans "true"/"false"
  std::string type;   // "string", "integer", "float", "boolean"
  int line = 0;
  int column = 0;
};

struct MethodFile {
  std::vector<MethodEntry> entries;  // in file order
  std::string sha256;                // of the file's bytes (provenance)
};

// Reads a method file. Throws InputError (file:line:column) for invalid TOML, nested
// tables, arrays and keys not in `known_keys`, naming the closest known key.
MethodFile read_method(const std::string& path, const std::vector<std::string>& known_keys);
std::vector<MethodEntry> parse_method(std::string_view text, const std::string& name,
                                      const std::vector<std::string>& known_keys);

}  // namespace vzero
