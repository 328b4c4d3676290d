// Placeholder until the fit stage lands (being written now); exits with status 2.
#include "cli/commands.hpp"
#include "vzero/error.hpp"

namespace vzero::cli {
int cmd_fit(const Args&) { throw UsageError("the fit command is not built yet"); }
}  // namespace vzero::cli
