// Whole-file reads with the file's SHA-256, for the small inputs that are parsed from memory
// (plate maps, profiles, method files, data packages). Exports are streamed by LineSource.
#pragma once

#include <string>
#include <string_view>
#include <vector>

namespace vzero::detail {

struct FileBytes {
  std::string text;
  std::string sha256;  // hex digest of exactly these bytes (provenance)
};

// Reads `path` whole. A file that cannot be opened or is not a regular file is an InputError
// "cannot open PATH: REASON" with `fix` as its possible fix.
FileBytes read_whole_file(const std::string& path, const std::string& fix);

// A file a command reads or writes, with the words that name it in a message ("--output",
// "the export").
struct NamedPath {
  std::string role;
  std::string path;
};

// Before anything is read or written: a UsageError when an output is the same file as an
// input or as another output (existing files compared with filesystem::equivalent, links
// followed; others by their normalised absolute paths), and an InputError when an output's
// folder does not exist or cannot be written. Devices (/dev/null, /dev/stdout) are skipped.
void check_outputs(const std::vector<NamedPath>& inputs, const std::vector<NamedPath>& outputs);

// Hex SHA-256 of bytes in memory.
std::string sha256_hex(std::string_view bytes);

}  // namespace vzero::detail
