#include "core/files.hpp"

#include <fmt/format.h>
#include <unistd.h>
#include <cerrno>
#include <cstring>
#include <filesystem>
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

namespace {
bool same_file(const std::string& a, const std::string& b) {
  namespace fs = std::filesystem;
  std::error_code ec;
  if (fs::exists(a, ec) && fs::exists(b, ec)) return fs::equivalent(a, b, ec) && !ec;
  return fs::weakly_canonical(fs::absolute(a), ec) == fs::weakly_canonical(fs::absolute(b), ec);
}
}  // namespace

void check_outputs(const std::vector<NamedPath>& inputs, const std::vector<NamedPath>& outputs) {
  namespace fs = std::filesystem;
  std::error_code ec;
  for (std::size_t i = 0; i < outputs.size(); ++i) {
    const NamedPath& o = outputs[i];
    if (fs::is_character_file(o.path, ec)) continue;  // written directly, never replaced
    for (const auto& in : inputs)
      if (same_file(o.path, in.path))
        throw UsageError(fmt::format("{} ({}) is {} {}; vzero never overwrites an input: choose another output path",
                                     o.role, o.path, in.role, in.path));
    for (std::size_t j = 0; j < i; ++j)
      if (same_file(o.path, outputs[j].path))
        throw UsageError(
            fmt::format("{} and {} both name {}; each output needs its own file", outputs[j].role, o.role, o.path));
    fs::path dir = fs::path(o.path).parent_path();
    if (dir.empty()) dir = ".";
    if (!fs::is_directory(dir, ec))
      throw InputError(Where{o.path},
                       fmt::format("cannot write {}: the folder {} does not exist", o.path, dir.string()),
                       {fmt::format("create it first (mkdir -p {}) or choose another output path", dir.string())});
    if (::access(dir.c_str(), W_OK) != 0)
      throw InputError(Where{o.path},
                       fmt::format("cannot write {}: the folder {} is not writable", o.path, dir.string()),
                       {"choose an output folder you may write to"});
  }
}

}  // namespace vzero::detail
