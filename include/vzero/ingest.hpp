// Reading raw exports into a `Run`, driven by an instrument profile.
//
// Three shapes (see DESIGN.md): wide (a row per read, a column per well), grid (a
// plate-shaped block per read) and long (a row per observation). Errors name
// file:line:column, what was expected, what was found and the profile key or option to
// change. Overflow and missing tokens become read statuses, never numbers.
//
// **Example**:
//   auto choice = vzero::choose_profile("plate.csv", "");   // "" = detect the shape
//   vzero::Run run = vzero::read_run("plate.csv", choice.profile);
#pragma once

#include <string>
#include <string_view>

#include "vzero/profile.hpp"
#include "vzero/run.hpp"

namespace vzero {

// Reads the file at `path`; never modifies it. A spreadsheet workbook (.xlsx) is read from
// its sheet named `sheet` ("" = the first sheet), rendered as text (one line per row) for the
// same readers; errors then name the cell, `plate.xlsx[Sheet1]!B12`. A `sheet` given for a
// text export is an InputError.
Run read_run(const std::string& path, const Profile& profile, const std::string& sheet = "");
// Reads an export held in memory; `name` stands for the file in messages.
Run read_run_text(const std::string& name, std::string_view text, const Profile& profile);

struct ProfileChoice {
  Profile profile;
  bool detected = false;  // true when vzero chose it
  std::string reason;     // why, in words, e.g. "wide-generic: header at line 7 ..."
};

// `requested` is a profile name (the user's profile folders first, then the built-ins) or a
// path; empty means detect: the profiles of the user's folders (profile_folders()), then,
// if none of them reads a number, every built-in profile, are tried on the start of the file
// and the one that reads the most values without error wins (ties go to the first tried:
// file name order, built-ins by name). When none reads a number, throws an InputError naming
// the nearest profile: one that reads the layout but finds only overflow or missing tokens
// (at the first value), else the one that stops furthest into the file (the message leads
// with its name, then its line:column, what it expected and found, and its fixes), else
// listing what each profile found. The start is bounded whatever the file's
// size: the first 400 lines, no more than 64 KiB of them besides the longest, read from the
// first MiB (further only when its lines run past it; a line is at most 16 MiB).
// A workbook's sheet (`sheet`, as for read_run) is rendered as text and detected the same way.
// The files of a batch are mostly of one family: a thread tries the built-in profile it chose
// last first, and keeps it without running the other built-in profiles only when their
// bounds (src/ingest/value_bound.hpp) show that they read fewer values; the choice, its
// reason and any error are always those of trying every profile.
ProfileChoice choose_profile(const std::string& path, const std::string& requested, const std::string& sheet = "");

}  // namespace vzero
