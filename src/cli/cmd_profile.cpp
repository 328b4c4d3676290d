// vzero profile: list, show and check instrument profiles (built-in and the user's folders).
#include <fmt/format.h>
#include <boost/program_options.hpp>

#include "cli/commands.hpp"
#include "cli/options.hpp"
#include "core/files.hpp"
#include "vzero/error.hpp"
#include "vzero/ingest.hpp"

namespace vzero::cli {

namespace {

constexpr const char* k_usage = R"(usage: vzero profile list
       vzero profile show NAME
       vzero profile check FILE --profile NAME|PATH [--sheet NAME] [--time-unit s|min|h]

Instrument profiles tell vzero how an export is laid out (instrument-profiles/README.md).
  list    the built-in profiles and yours, with where each comes from
  show    a built-in profile as a commented template to copy (a profile of yours: its text)
  check   reads FILE with that profile only: what it reads, or the first problem (exit 1)

Your profiles are the *.toml files in the folder named by the environment variable
VZERO_PROFILES, then in $XDG_CONFIG_HOME/vzero/profiles (else ~/.config/vzero/profiles).
Detection (vzero inspect and rates without --profile) tries them before the built-ins, and
--profile NAME finds them by name.

options)";

std::string profile_line(const Profile& p) {
  std::string line = fmt::format("  {:<22} {:<5} {}", p.name, to_string(p.shape), p.description);
  line.erase(line.find_last_not_of(' ') + 1);
  return line + "\n";
}

int list_profiles() {
  std::string out = "built-in profiles (tried by detection after yours):\n";
  for (const auto& name : builtin_profile_names()) out += profile_line(*builtin_profile(name));
  const auto folders = profile_folders();
  const auto own = folder_profiles();
  out += "your profiles (tried first):\n";
  if (own.empty()) out += "  none\n";
  for (const auto& p : own) {
    out += profile_line(p);
    std::string from;
    for (const auto& f : folders)
      if (p.source.rfind(f.path, 0) == 0 && from.empty()) from = f.from;
    out += fmt::format("  {:<22} from {} ({})\n", "", p.source, from);
    if (builtin_profile(p.name)) out += fmt::format("  {:<22} hides the built-in profile {}\n", "", p.name);
  }
  out += "profile folders:\n";
  for (const auto& f : folders) out += fmt::format("  {} ({})\n", f.path, f.from);
  if (folders.empty()) {
    const std::string user = user_profile_folder();
    out += fmt::format("  none yet: set VZERO_PROFILES to a folder{}\n",
                       user.empty() ? "" : ", or create " + user);
  }
  print_out(out);
  return 0;
}

int show_profile(const std::string& name) {
  // A profile of the user's folders (or a path) is shown as it is; a built-in as a template.
  for (const auto& p : folder_profiles()) {
    if (p.name == name || p.source == name) {
      print_out(fmt::format("# {} (from {})\n", p.name, p.source) +
                detail::read_whole_file(p.source, "check the profile file").text);
      return 0;
    }
  }
  if (std::string t = profile_template(name); !t.empty()) {
    print_out(t);
    return 0;
  }
  load_profile(name);  // a path: parsed first, so a broken profile is named with its line
  print_out(detail::read_whole_file(name, "check the profile path").text);
  return 0;
}

int check_profile(const std::string& file, const std::string& profile, const std::string& sheet,
                  const std::string& time_unit) {
  if (profile.empty())
    throw UsageError("expected --profile NAME|PATH: check reads the file with that profile only");
  ProfileChoice choice = choose_profile(file, profile, sheet);
  if (!time_unit.empty()) state_time_unit(choice.profile, time_unit);
  choice.reason = "given with --profile";
  try {
    Run run = read_run(file, choice.profile, sheet);
    print_out(describe_run(run, choice) + fmt::format("check     {} reads this file\n", choice.profile.name));
    return 0;
  } catch (const InputError& e) {
    print_out(fmt::format("check     {} does not read {}; the first problem:\n", choice.profile.name, file));
    print_err(e.formatted());
    return 1;
  }
}

}  // namespace

int cmd_profile(const Args& args) {
  namespace po = boost::program_options;
  std::string action, name, profile, sheet, time_unit;
  po::options_description opts(k_usage);
  opts.add_options()("profile,p", po::value(&profile), "check: the profile to read FILE with (name or .toml path)")(
      "sheet", po::value(&sheet), "check: sheet of an .xlsx workbook (default: the first sheet)")(
      "time-unit", po::value(&time_unit), "check: unit of plain-number read times, s, min, h or ms (as vzero rates)")(
      "help,h", "show this help");
  po::options_description hidden;
  hidden.add_options()("action", po::value(&action))("name", po::value(&name));
  po::positional_options_description pos;
  pos.add("action", 1).add("name", 1);
  auto vm = parse_command_line(args, opts, hidden, pos);
  if (vm.count("help") || action.empty()) {
    print_out(help_text(opts) + "\nbuilt-in profiles: " + builtin_profile_list() + "\n");
    return action.empty() && !vm.count("help") ? 2 : 0;
  }
  if (action != "check" && (!profile.empty() || !sheet.empty() || !time_unit.empty()))
    throw UsageError(fmt::format("--profile, --sheet and --time-unit belong to `vzero profile check`, not {}", action));
  if (action == "list") {
    if (!name.empty()) throw UsageError(fmt::format("list takes no argument, found \"{}\"", name));
    return list_profiles();
  }
  if (action == "show") {
    if (name.empty()) throw UsageError("expected a profile NAME to show (vzero profile list names them)");
    return show_profile(name);
  }
  if (action == "check") {
    if (name.empty()) throw UsageError("expected the FILE to check: vzero profile check FILE --profile P");
    return check_profile(name, profile, sheet, time_unit);
  }
  throw UsageError(fmt::format("unknown action \"{}\"; use list, show or check", action));
}

}  // namespace vzero::cli
