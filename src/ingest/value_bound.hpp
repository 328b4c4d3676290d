// An upper bound on the values a profile can read from the head of a file, worked out
// without running its reader: profile detection's shortcut for the files of one batch
// (ingest.cpp) uses it to show that the profile chosen for the last file still wins.
#pragma once

#include <limits>
#include <string_view>

#include "ingest/reader_common.hpp"

namespace vzero::detail {

// No bound: the profile may read any number of values.
inline constexpr long long k_no_value_bound = std::numeric_limits<long long>::max();

// At least the number of cells the profile's reader sets from `head` (the lines detection
// sniffs, read as in detection), so at least the number of numbers it reads there:
//   long: a row per line, a value per row            -> the number of lines;
//   wide: a data row's values are its fields but the  -> the number of lines plus the number of
//         time, fields split at the block's delimiter    the delimiters it may use (the profile's,
//                                                        else ',' ';' and tab) in the head;
//   grid: values only after a line its read_label     -> 0 when no line matches it, else no bound.
// k_no_value_bound when the head is not text a reader goes through (a NUL byte, bad UTF-8).
long long value_bound(const CompiledProfile& cp, std::string_view head);

}  // namespace vzero::detail
