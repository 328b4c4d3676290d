// Placeholder until the report stage lands (being written now); exits with status 2.
#include "cli/commands.hpp"
#include "vzero/error.hpp"

namespace vzero::cli {
int cmd_report(const Args&) { throw UsageError("the report command is not built yet"); }
}  // namespace vzero::cli
