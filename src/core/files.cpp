#include "core/files.hpp"

#include <cerrno>
#include <cstring>
#include <filesystem>
#include <fmt/format.h>
#include <fstream>
#include <sstream>

#include "vzero/error.hpp"

namespace vzero::detail {

FileBytes read_whole_file(const std::string& path, const std::string& fix) {
  std::error_code ec;
  if (std::filesystem::is_directory(path, ec))
    throw InputError(Where{path}, fmt::format("cannot open {}: it is a folder, not a file", path), {fix});
  std::ifstream in(path, std::ios::binary);
  if (!in) throw InputError(Where{path}, fmt::format("cannot open {}: {}", path, std::strerror(errno)), {fix});
  std::ostringstream ss;
  ss << in.rdbuf();
  FileBytes f;
  f.text = std::move(ss).str();
  f.sha256 = sha256_hex(f.text);
  return f;
}

}  // namespace vzero::detail
