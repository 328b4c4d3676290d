#include "vzero/method.hpp"
#include "core/files.hpp"
#include "core/text.hpp"

#include <fmt/format.h>
#include <toml++/toml.h>
#include <algorithm>
#include <cctype>
#include <cerrno>
#include <cmath>
#include <cstring>
#include <fstream>
#include <sstream>

#include "vzero/error.hpp"
#include "vzero/table.hpp"

namespace vzero {

namespace {

// Line `line` (1-based) of `text`, without its end.
std::string line_text(std::string_view text, int line) {
  std::size_t at = 0;
  for (int k = 1; k < line && at != std::string_view::npos; ++k) {
    at = text.find('\n', at);
    if (at != std::string_view::npos) ++at;
  }
  if (at == std::string_view::npos || at > text.size()) return {};
  std::string_view l = text.substr(
      at, text.find('\n', at) == std::string_view::npos ? std::string_view::npos : text.find('\n', at) - at);
  if (!l.empty() && l.back() == '\r') l.remove_suffix(1);
  return std::string(l);
}

// A non-finite TOML float as the file writes it: nan, +nan, -nan, inf, +inf or -inf.
std::string as_written(std::string_view text, int line, int column, double value) {
  const std::string l = line_text(text, line);
  if (column >= 1 && static_cast<std::size_t>(column) <= l.size()) {
    std::size_t end = static_cast<std::size_t>(column) - 1;
    while (end < l.size() && (l[end] == '+' || l[end] == '-' || std::isalpha(static_cast<unsigned char>(l[end]))))
      ++end;
    std::string token = l.substr(static_cast<std::size_t>(column) - 1, end - (static_cast<std::size_t>(column) - 1));
    std::string bare = token.empty() || std::isalpha(static_cast<unsigned char>(token[0])) ? token : token.substr(1);
    if (bare == "nan" || bare == "inf") return token;
  }
  return std::string(std::signbit(value) ? "-" : "") + (std::isnan(value) ? "nan" : "inf");
}

}  // namespace

namespace {

// The value of one key as option text, with its TOML type. Throws for nan/inf, arrays and
// tables.
void read_value(const toml::node& v, MethodEntry& e, std::string_view text, const std::string& name) {
  if (auto s = v.as_string()) {
    e.value = s->get();
    e.type = "string";
  } else if (auto i = v.as_integer()) {
    e.value = std::to_string(i->get());
    e.type = "integer";
  } else if (auto f = v.as_floating_point()) {
    if (!std::isfinite(f->get())) {
      // TOML's nan and inf are floats, but no setting of vzero rates takes one.
      const int line = static_cast<int>(v.source().begin.line), column = static_cast<int>(v.source().begin.column);
      const std::string written = as_written(text, line, column, f->get());
      throw InputError(Where{name, line, column, line_text(text, line)},
                       fmt::format("method key `{}` is {}; expected a finite number", e.key, written),
                       {"write the value as a plain number (no option takes nan or inf), or remove the key to "
                        "use the default"});
    }
    e.value = format_number(f->get());
    e.type = "float";
  } else if (auto b = v.as_boolean()) {
    e.value = b->get() ? "true" : "false";
    e.type = "boolean";
  } else {
    throw InputError(Where{name, static_cast<int>(v.source().begin.line), static_cast<int>(v.source().begin.column)},
                     fmt::format("method key `{}` must be a string, number or true/false", e.key),
                     {"write lists as one comma-separated string, e.g. channel = \"A405,A340\"; per-channel "
                      "settings go in a table per channel, e.g. [channel.A340] then epsilon = 6220"});
  }
}

MethodEntry named_entry(const toml::key& k, const std::vector<std::string>& known, const std::string& name,
                        const std::string& channel) {
  MethodEntry e;
  e.key = std::string(k.str());
  e.channel = channel;
  e.line = static_cast<int>(k.source().begin.line);
  e.column = static_cast<int>(k.source().begin.column);
  if (std::find(known.begin(), known.end(), e.key) == known.end()) {
    const std::string best = detail::nearest_name(e.key, known, 3);
    std::vector<std::string> fixes;
    if (!best.empty()) fixes.push_back(fmt::format("did you mean `{}`?", best));
    if (channel.empty()) {
      fixes.push_back("method keys are the long option names of vzero rates (see vzero rates --help)");
      throw InputError(Where{name, e.line, e.column}, fmt::format("unknown method key `{}`", e.key), fixes);
    }
    std::string list;
    for (const auto& n : known) list += (list.empty() ? "" : ", ") + n;
    fixes.push_back("a channel's table takes " + list);
    throw InputError(Where{name, e.line, e.column},
                     fmt::format("method key `{}` cannot be set per channel (in [channel.{}])", e.key, channel), fixes);
  }
  return e;
}

// [channel.NAME] tables: one table of settings per channel name.
void read_channel_tables(const toml::table& channels, std::string_view text, const std::string& name,
                         const std::vector<std::string>& channel_keys, std::vector<MethodEntry>& out) {
  for (const auto& [ck, cv] : channels) {
    const auto* t = cv.as_table();
    if (!t)
      throw InputError(
          Where{name, static_cast<int>(ck.source().begin.line), static_cast<int>(ck.source().begin.column)},
          fmt::format("`channel.{}` must be a table of that channel's settings", ck.str()),
          {fmt::format("write [channel.{}] on its own line, then its keys (e.g. epsilon = 6220) below it", ck.str())});
    // An empty table would say nothing, and a misspelt channel name in it nothing either.
    if (t->empty())
      throw InputError(
          Where{name, static_cast<int>(ck.source().begin.line), static_cast<int>(ck.source().begin.column)},
          fmt::format("[channel.{}] holds no settings", ck.str()),
          {fmt::format("give the channel's settings below it (e.g. epsilon = 6220), or remove the table")});
    for (const auto& [k, v] : *t) {
      MethodEntry e = named_entry(k, channel_keys, name, std::string(ck.str()));
      read_value(v, e, text, name);
      out.push_back(std::move(e));
    }
  }
}

}  // namespace

std::vector<MethodEntry> parse_method(std::string_view text, const std::string& name,
                                      const std::vector<std::string>& known,
                                      const std::vector<std::string>& channel_keys) {
  toml::table root;
  try {
    root = toml::parse(text, name);
  } catch (const toml::parse_error& e) {
    throw InputError(Where{name, static_cast<int>(e.source().begin.line), static_cast<int>(e.source().begin.column)},
                     fmt::format("the method file is not valid TOML: {}", e.description()),
                     {"write one `option-name = value` per line (see vzero rates --help for the names)"});
  }
  std::vector<MethodEntry> out;
  for (const auto& [k, v] : root) {
    MethodEntry e = named_entry(k, known, name, "");
    if (e.key == "channel" && v.is_table() && !channel_keys.empty()) {
      read_channel_tables(*v.as_table(), text, name, channel_keys, out);
      continue;
    }
    read_value(v, e, text, name);
    out.push_back(std::move(e));
  }
  std::stable_sort(out.begin(), out.end(), [](const MethodEntry& a, const MethodEntry& b) { return a.line < b.line; });
  return out;
}

MethodFile read_method(const std::string& path, const std::vector<std::string>& known,
                       const std::vector<std::string>& channel_keys) {
  detail::FileBytes f = detail::read_whole_file(path, "check the --method path");
  return MethodFile{parse_method(f.text, path, known, channel_keys), std::move(f.sha256)};
}

}  // namespace vzero
