// The subcommands of the vzero program. Each takes the words after its name, returns the
// exit status, and throws vzero::UsageError (exit 2) or vzero::InputError (exit 1); main()
// prints those. Each lives in its own cmd_<name>.cpp with its --help text at the top.
#pragma once

#include <string>
#include <vector>

#include "vzero/ingest.hpp"

namespace vzero::cli {

using Args = std::vector<std::string>;

int cmd_inspect(const Args& args);
int cmd_rates(const Args& args);
int cmd_fit(const Args& args);
int cmd_progress(const Args& args);
int cmd_report(const Args& args);
int cmd_profile(const Args& args);
int cmd_merge(const Args& args);

// What `vzero inspect` prints about a run read with `choice` (also `vzero profile check`).
std::string describe_run(const Run& run, const ProfileChoice& choice);

// Writes text to stdout; a closed pipe (vzero ... | head) is not an error.
void print_out(const std::string& text);
// Writes a line to stderr (notes, warnings, progress).
void print_err(const std::string& text);

}  // namespace vzero::cli
