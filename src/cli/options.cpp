#include "cli/options.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <sstream>
#include <string_view>
#include <vector>

#include "core/text.hpp"
#include "vzero/error.hpp"
#include "vzero/profile.hpp"

namespace vzero::cli {

namespace po = boost::program_options;

namespace {
// The option a mistyped name most likely meant: the nearest long name within 2 edits (ties:
// the first in the help's order); "" when none is that close. (The start of a long name is
// already taken for it by program_options when only one option starts so.)
std::string nearest_option(const std::string& typed, const po::options_description& visible) {
  std::string name = typed;
  while (!name.empty() && name.front() == '-') name.erase(0, 1);
  if (const auto eq = name.find('='); eq != std::string::npos) name.resize(eq);
  if (name.size() < 3) return "";
  std::vector<std::string> names;
  for (const auto& o : visible.options())
    if (!o->long_name().empty()) names.push_back(o->long_name());
  std::string best = detail::nearest_name(name, names, 2);
  // The start of a name is never taken for it (exact names only), but it is suggested.
  if (best.empty())
    for (const auto& n : names)
      if (n.rfind(name, 0) == 0) {
        best = n;
        break;
      }
  return best.empty() ? "" : "--" + best;
}
}  // namespace

po::variables_map parse_command_line(const Args& args, const po::options_description& visible,
                                     const po::options_description& hidden,
                                     const po::positional_options_description& positional) {
  po::options_description all;
  all.add(visible).add(hidden);
  po::variables_map vm;
  try {
    // Exact option names only: a prefix (--path for --path-cm) is an unknown option, with a
    // suggestion, never a guess.
    po::store(po::command_line_parser(args)
                  .options(all)
                  .positional(positional)
                  .style(po::command_line_style::default_style & ~po::command_line_style::allow_guessing)
                  .run(),
              vm);
    po::notify(vm);
  } catch (const po::too_many_positional_options_error&) {
    throw UsageError("too many file names; see the usage line");
  } catch (const po::unknown_option& e) {
    const std::string near = nearest_option(e.get_option_name(), visible);
    throw UsageError(near.empty() ? std::string(e.what()) : fmt::format("{}; did you mean {}?", e.what(), near));
  } catch (const po::error& e) {
    throw UsageError(e.what());
  }
  return vm;
}

std::string help_text(const po::options_description& opts) {
  std::ostringstream ss;
  ss << opts;
  return ss.str();
}

std::string builtin_profile_list() {
  std::string out;
  for (const auto& n : builtin_profile_names()) out += (out.empty() ? "" : ", ") + n;
  return out;
}

std::string format_seconds(double s) { return fmt::format("{:g}", s); }

boost::program_options::variables_map parse_with_file(const Args& args,
                                                      const boost::program_options::options_description& visible,
                                                      std::string& file) {
  namespace po = boost::program_options;
  po::options_description hidden;
  hidden.add_options()("file", po::value(&file));
  po::positional_options_description pos;
  pos.add("file", 1);
  return parse_command_line(args, visible, hidden, pos);
}

}  // namespace vzero::cli
