// The user's profile folders: VZERO_PROFILES, then the config folder (profile.hpp).
#include <fmt/format.h>
#include <algorithm>
#include <cstdlib>
#include <filesystem>

#include "vzero/error.hpp"
#include "vzero/profile.hpp"

namespace vzero {

namespace fs = std::filesystem;

namespace {

std::string env(const char* name) {
  const char* v = std::getenv(name);
  return v ? std::string(v) : std::string();
}

}  // namespace

std::string user_profile_folder() {
  std::string config = env("XDG_CONFIG_HOME");
  if (config.empty() || !fs::path(config).is_absolute()) {
    const std::string home = env("HOME");
    if (home.empty()) return {};
    config = (fs::path(home) / ".config").string();
  }
  return (fs::path(config) / "vzero" / "profiles").string();
}

std::vector<ProfileFolder> profile_folders() {
  std::vector<ProfileFolder> out;
  std::error_code ec;
  if (const std::string named = env("VZERO_PROFILES"); !named.empty()) {
    if (!fs::is_directory(named, ec)) {
      throw InputError(Where{named},
                       fmt::format("expected a folder of profiles (*.toml) in VZERO_PROFILES, found \"{}\", {}", named,
                                   fs::exists(named, ec) ? "which is not a folder" : "which does not exist"),
                       {"set VZERO_PROFILES to the folder that holds your profiles, or unset it"});
    }
    out.push_back({named, "VZERO_PROFILES"});
  }
  if (const std::string folder = user_profile_folder(); !folder.empty()) {
    const bool same = !out.empty() && fs::equivalent(out[0].path, folder, ec);
    if (!same && fs::is_directory(folder, ec)) out.push_back({folder, "user config folder"});
  }
  return out;
}

std::vector<Profile> folder_profiles() {
  std::vector<Profile> out;
  for (const auto& folder : profile_folders()) {
    std::vector<std::string> files;
    std::error_code ec;
    for (fs::directory_iterator it(folder.path, ec), end; !ec && it != end; it.increment(ec)) {
      const fs::path& p = it->path();
      if (p.extension() == ".toml" && it->is_regular_file(ec)) files.push_back(p.string());
    }
    if (ec) {
      throw InputError(Where{folder.path}, fmt::format("could not list the profile folder ({}): {}", folder.from,
                                                       ec.message()),
                       {"check the folder's permissions, or move it away"});
    }
    std::sort(files.begin(), files.end());
    for (const auto& f : files) out.push_back(load_profile(f));
  }
  return out;
}

}  // namespace vzero
