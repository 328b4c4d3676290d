#include "cli/commands.hpp"
#include "vzero/error.hpp"
namespace vzero::cli {
int cmd_rates(const Args&) { throw UsageError("rates: being written"); }
}  // namespace vzero::cli
