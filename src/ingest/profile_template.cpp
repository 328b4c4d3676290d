// A built-in profile written out as a template to copy (`vzero profile show NAME`).
#include <fmt/format.h>
#include <toml++/toml.h>

#include "vzero/profile.hpp"

namespace vzero {

namespace {

std::string toml_list(const std::vector<std::string>& v) {
  std::string out = "[";
  for (std::size_t i = 0; i < v.size(); ++i) {
    out += fmt::format("{}\"{}\"", i ? ", " : "", v[i]);
  }
  return out + "]";
}

// The keys a profile text leaves out, as commented lines with the default value.
std::string defaults_left_out(const toml::table& root) {
  const Profile d{};
  std::string top, cols;
  const toml::table* c = root["columns"].as_table();
  auto add = [&](std::string& to, const toml::table* t, const char* key, const std::string& value) {
    if (t && t->contains(key)) return;
    to += fmt::format("# {} = {}{}\n", key, value, &to == &cols && c ? "   (a key of [columns], above)" : "");
  };
  add(top, &root, "delimiter", "\"auto\"");
  add(top, &root, "decimal", "\".\"");
  add(top, &root, "plate", "0");
  add(top, &root, "time_unit", "\"s\"");
  add(top, &root, "overflow", toml_list(d.overflow_tokens));
  add(top, &root, "missing", toml_list(d.missing_tokens));
  add(cols, c, "time", toml_list(d.time_columns));
  add(cols, c, "temperature", toml_list(d.temperature_columns));
  add(cols, c, "well", toml_list(d.well_columns));
  add(cols, c, "value", toml_list(d.value_columns));
  add(cols, c, "channel", toml_list(d.channel_columns));
  add(cols, c, "ignore", "[]");
  std::string out;
  if (!top.empty() || !cols.empty())
    out += "\n# Keys this profile leaves at their defaults (uncomment a line to change it):\n" + top;
  if (!cols.empty()) out += (c ? "" : "# [columns]\n") + cols;
  return out;
}

}  // namespace

std::string profile_template(const std::string& name) {
  const char* text = nullptr;
  for (const auto& e : detail::embedded_profiles())
    if (name == e.name) text = e.text;
  if (!text) return {};
  std::string body(text);
  // The copy gets a name of its own, so it does not hide the built-in in a profile folder.
  const std::string line = fmt::format("name = \"{}\"", name);
  if (auto at = body.find(line); at != std::string::npos)
    body.replace(at, line.size(), fmt::format("name = \"my-{}\"   # your instrument's name", name));
  std::string out = fmt::format(
      "# Template made from the built-in vzero profile \"{0}\". To make it yours:\n"
      "#   vzero profile show {0} > my-{0}.toml      then edit the keys that differ\n"
      "#   vzero profile check EXPORT --profile my-{0}.toml\n"
      "#   copy it into $VZERO_PROFILES or ~/.config/vzero/profiles/ (tried before the built-ins)\n"
      "# Every key: instrument-profiles/README.md.\n\n",
      name);
  out += body;
  if (!out.empty() && out.back() != '\n') out += '\n';
  out += defaults_left_out(toml::parse(text));
  return out;
}

}  // namespace vzero
