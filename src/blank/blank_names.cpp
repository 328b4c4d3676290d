// The names of the blank strategies and modes, as options, method files and outputs write them.
#include "vzero/blank.hpp"

namespace vzero {

namespace {
constexpr EnumName<BlankStrategy> k_strategies[] = {
    {BlankStrategy::plate, "plate"}, {BlankStrategy::matched, "matched"}, {BlankStrategy::none, "none"}};
constexpr EnumName<BlankMode> k_modes[] = {
    {BlankMode::smooth, "smooth"}, {BlankMode::trace, "trace"}, {BlankMode::rate, "rate"}};
}  // namespace

template <>
std::span<const EnumName<BlankStrategy>> enum_names<BlankStrategy>() {
  return k_strategies;
}
template <>
std::span<const EnumName<BlankMode>> enum_names<BlankMode>() {
  return k_modes;
}

std::string_view to_string(BlankStrategy s) { return enum_text(s); }
std::string_view to_string(BlankMode m) { return enum_text(m); }
bool parse_blank_strategy(std::string_view t, BlankStrategy& out) { return parse_enum(t, out); }
bool parse_blank_mode(std::string_view t, BlankMode& out) { return parse_enum(t, out); }

}  // namespace vzero
