// vzero: initial rates (v0) from microplate-reader kinetic exports.
#include <fmt/format.h>
#include <signal.h>
#include <unistd.h>

#include <cerrno>
#include <csignal>
#include <cstdio>
#include <cstring>
#include <exception>

#include "cli/commands.hpp"
#include "core/text.hpp"
#include "vzero/error.hpp"
#include "vzero/table.hpp"

namespace {

constexpr const char* k_help = R"(vzero — initial rates (v0) from microplate-reader kinetic exports

usage: vzero COMMAND [OPTIONS]

commands:
  inspect FILE        show what vzero reads from a raw export (shape, profile, channels,
                      reads, times, temperatures, metadata, overflow and missing values)
  rates FILE...       blank, convert and find the initial rate of every well; writes
                      rates.csv and datapackage.json (and optional traces and summary)
  fit TABLE.csv       fit Michaelis–Menten and related models to a rates or summary table
  progress RATES.csv  fit Km and Vmax to whole progress curves (the run's traces)
  report ...          write a self-contained HTML report of a run
  merge RUN_FOLDER... -o OUT  combine the outputs of several rates runs (parts of one
                      campaign, e.g. cluster jobs) into the set one run would write
  profile list|show|check   the instrument profiles (built-in and yours): list them, print
                      one as a template to copy, check one on an export

  vzero COMMAND --help    options of one command
  vzero --version         the version

exit status: 0 success, 1 bad input (the message names file:line:column and the fix),
2 bad usage.
)";

}  // namespace

int main(int argc, char** argv) {
  std::signal(SIGPIPE, SIG_IGN);  // a closed pipe shows as EPIPE, handled in print_out
  // Interrupted (Ctrl-C, kill, a closed terminal): remove the temporary outputs, then end as
  // the signal would have ended the program. Nothing was published, so nothing is half done.
  for (int sig : {SIGINT, SIGTERM, SIGHUP}) {
    struct sigaction sa {};
    sa.sa_handler = [](int s) {
      vzero::remove_temporary_outputs();
      ::signal(s, SIG_DFL);
      ::raise(s);
    };
    sigemptyset(&sa.sa_mask);
    sigaction(sig, &sa, nullptr);
  }
  using namespace vzero::cli;
  Args args(argv + 1, argv + argc);
  if (args.empty() || args[0] == "--help" || args[0] == "-h" || args[0] == "help") {
    print_out(k_help);
    return args.empty() ? 2 : 0;
  }
  if (args[0] == "--version" || args[0] == "-V") {
    print_out(fmt::format("vzero {}\n", VZERO_VERSION));
    return 0;
  }
  const std::string command = args[0];
  Args rest(args.begin() + 1, args.end());
  try {
    if (command == "inspect") return cmd_inspect(rest);
    if (command == "rates") return cmd_rates(rest);
    if (command == "fit") return cmd_fit(rest);
    if (command == "progress") return cmd_progress(rest);
    if (command == "report") return cmd_report(rest);
    if (command == "profile") return cmd_profile(rest);
    if (command == "merge") return cmd_merge(rest);
    const std::string near =
        vzero::detail::nearest_name(command, {"inspect", "rates", "fit", "progress", "report", "profile", "merge"}, 2);
    print_err(fmt::format(
        "vzero: unknown command \"{}\"; {}commands are inspect, rates, fit, progress, report, profile, merge (see vzero "
        "--help)",
                    command, near.empty() ? "" : "did you mean " + near + "? "));
    return 2;
  } catch (const vzero::UsageError& e) {
    print_err(fmt::format("vzero {}: {}\n  see: vzero {} --help", command, e.what(), command));
    return 2;
  } catch (const vzero::InputError& e) {
    print_err(e.formatted());
    return 1;
  } catch (const std::bad_alloc&) {
    print_err("vzero: out of memory; process fewer or smaller files at once");
    return 1;
  } catch (const std::exception& e) {
    print_err(fmt::format("vzero: internal error: {} (please report this with the input that caused it)", e.what()));
    return 3;
  }
}
