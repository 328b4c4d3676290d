// Whole-file reads with the file's SHA-256, for the small inputs that are parsed from memory
// (plate maps, profiles, method files, data packages). Exports are streamed by LineSource.
#pragma once

#include <string>
#include <string_view>

namespace vzero::detail {

struct FileBytes {
  std::string text;
  std::string sha256;  // hex digest of exactly these bytes (provenance)
};

// Reads `path` whole. A file that cannot be opened or is not a regular file is an InputError
// "cannot open PATH: REASON" with `fix` as its possible fix.
FileBytes read_whole_file(const std::string& path, const std::string& fix);

// Hex SHA-256 of bytes in memory.
std::string sha256_hex(std::string_view bytes);

}  // namespace vzero::detail
