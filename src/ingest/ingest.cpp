#include "vzero/ingest.hpp"

#include <fmt/format.h>
#include <algorithm>
#include <optional>

#include "ingest/reader_common.hpp"
#include "ingest/value_bound.hpp"
#include "ingest/xlsx.hpp"
#include "vzero/error.hpp"

namespace vzero {

namespace {

Run dispatch(detail::LineSource& src, const Profile& profile, bool prefix_only, Where* first_value = nullptr) {
  detail::CompiledProfile cp(profile);
  detail::ReadInfo info;
  detail::ReaderInput in{src, cp, info, prefix_only, first_value};
  Run run;
  switch (profile.shape) {
    case Shape::wide:
      run = detail::read_wide(in);
      break;
    case Shape::grid:
      run = detail::read_grid(in);
      break;
    case Shape::long_form:
      run = detail::read_long(in);
      break;
  }
  run.profile = profile.name;
  run.shape = std::string(to_string(profile.shape));
  if (!prefix_only) detail::settle_reading(run, info, profile);
  return run;
}

// The built-in profiles, parsed once per process: detection tries each on every file.
const std::vector<Profile>& builtin_profiles() {
  static const std::vector<Profile> all = [] {
    std::vector<Profile> v;
    for (const auto& name : builtin_profile_names()) v.push_back(*builtin_profile(name));
    return v;
  }();
  return all;
}

long long count_status(const Run& run, ReadStatus s) {
  long long n = 0;
  for (const auto& c : run.channels)
    for (Eigen::Index j = 0; j < c.status.size(); ++j) n += c.status.data()[j] == s;
  return n;
}

long long ok_values(const Run& run) { return count_status(run, ReadStatus::ok); }

// A built-in profile that read the start of a file without error but found no number in it:
// every value an overflow or missing token.
struct TokensOnly {
  std::string name;
  Where first_value;
  long long overflow = 0, missing = 0;
};

// What detection learnt from the profiles tried on the head of a file.
struct Trial {
  const std::string& path;
  const std::string& head;
  std::string tried;  // what each profile found, a line each
  long long best = 0;
  // The error of the profile that got furthest into the file (a line, not "found no header").
  std::optional<InputError> furthest;
  std::string furthest_name;
  std::optional<TokensOnly> tokens;  // the first profile that read the layout but no number
};

// The error when no profile reads a file (`none` says which were tried), naming the nearest:
// one that read its layout but found only tokens, else the one that stopped furthest into the
// file (its name, place and reason, and its fixes), else what each found.
InputError no_profile_error(const std::string& path, const std::string& head, const std::string& scope,
                            const std::string& none, const Trial& t) {
  if (const auto& tokens = t.tokens) {
    return InputError(
        tokens->first_value,
        fmt::format("expected numbers among the values, found only overflow or missing tokens: the {} profile {} "
                    "reads this file's layout, and all {} values {} are tokens ({} overflow, {} missing)",
                    none == "no built-in profile" ? "built-in" : "nearest", tokens->name,
                    tokens->overflow + tokens->missing, scope, tokens->overflow, tokens->missing),
        {"check that the plate was read as intended: with no number in any well there is no rate to find",
         fmt::format("to read the file as it is (every well then flagged), pass --profile {}", tokens->name)});
  }
  if (const auto& furthest = t.furthest) {
    // One profile recognised the layout and stopped at a line: its name, that line and its
    // reason tell the user more than the list of what every profile found.
    std::vector<std::string> fixes = furthest->fixes();
    fixes.push_back(fmt::format(
        "if the file has another layout, write a profile for it (instrument-profiles/README.md: start from `vzero "
        "profile show {}`, test it with `vzero profile check FILE --profile yours.toml`) and put it in your "
        "profile folder or pass it with --profile",
        t.furthest_name));
    return InputError(furthest->where(),
                      fmt::format("{} reads this file; the nearest, {}, stops here: {}", none, t.furthest_name,
                                  furthest->message()),
                      std::move(fixes));
  }
  std::vector<std::string> fixes;
  // A plate map given where the export belongs is a common slip.
  std::string first;
  for (std::size_t at = 0; at < head.size() && first.empty();) {
    std::size_t end = head.find('\n', at);
    std::string_view l = detail::trim(std::string_view(head).substr(at, end - at));
    if (!l.empty() && l.front() != '#') first = std::string(l);
    at = end == std::string::npos ? head.size() : end + 1;
  }
  std::string lowered = detail::lower(first);
  if (lowered.find("well") != std::string::npos && lowered.find("role") != std::string::npos)
    fixes.emplace_back("this looks like a plate map (it has `well` and `role` columns): pass it with --layout");
  fixes.emplace_back("write a profile for this export (see instrument-profiles/README.md) and pass it with --profile");
  return InputError(Where{path}, none + " reads this file; what each found:" + t.tried, fixes);
}

// A workbook's cells written as the profile reads them: its decimal mark, its delimiter (else
// ',' or, with decimal commas, ';').
detail::SheetStyle style_for(const Profile& p) {
  return {p.delimiter != 0 ? p.delimiter : (p.decimal == ',' ? ';' : ','), p.decimal};
}

void check_no_sheet(const std::string& path, const std::string& sheet) {
  if (sheet.empty()) return;
  throw InputError(
      Where{path},
      fmt::format("expected a spreadsheet workbook (.xlsx) for --sheet \"{}\", found a text export", sheet),
      {"leave out --sheet: it chooses a sheet of a workbook"});
}

ProfileChoice choose_in(const std::string& path, const std::string& requested, const detail::SheetText* book);

}  // namespace

Run read_run(const std::string& path, const Profile& profile, const std::string& sheet) {
  if (detail::is_workbook(path)) {
    const detail::SheetText book = detail::read_workbook(path, sheet, style_for(profile));
    return detail::in_sheet(book, [&] {
      detail::LineSource src(path, book.text, detail::LineSource::NoHash{});
      Run run = dispatch(src, profile, false);
      run.source = path;
      run.sha256 = book.sha256;
      run.sheet = book.sheet;
      return run;
    });
  }
  check_no_sheet(path, sheet);
  detail::LineSource src(path);
  Run run = dispatch(src, profile, false);
  run.source = path;
  run.sha256 = src.sha256();
  return run;
}

Run read_run_text(const std::string& name, std::string_view text, const Profile& profile) {
  detail::LineSource src(name, text);
  Run run = dispatch(src, profile, false);
  run.source = name;
  run.sha256 = src.sha256();
  return run;
}

ProfileChoice choose_profile(const std::string& path, const std::string& requested, const std::string& sheet) {
  if (!detail::is_workbook(path)) {
    check_no_sheet(path, sheet);
    return choose_in(path, requested, nullptr);
  }
  if (!requested.empty()) return choose_in(path, requested, nullptr);
  const detail::SheetText book = detail::read_workbook(path, sheet, detail::SheetStyle{});
  return detail::in_sheet(book, [&] { return choose_in(path, requested, &book); });
}

namespace {

// One profile tried on the head of a file: the best reader so far is kept in `choice`, the
// nearest miss (the error furthest into the file) and the first reader of tokens only in `t`.
void try_profile(Trial& t, const Profile& p, const std::string& lines, ProfileChoice& choice) {
  try {
    detail::LineSource src(t.path, t.head, detail::LineSource::NoHash{});
    Where first_value;
    Run run = dispatch(src, p, true, &first_value);
    long long n = ok_values(run);
    t.tried += fmt::format("\n    {}: reads {} values", p.name, n);
    if (n > t.best) {
      t.best = n;
      choice.profile = p;
      choice.reason = p.source == "built-in"
                          ? fmt::format("detected: it reads {} values in {} without error", n, lines)
                          : fmt::format("detected, from your profile folder: it reads {} values in {} without error",
                                        n, lines);
    }
    if (first_value.line == 0) first_value = Where{t.path};
    if (n == 0 && !t.tokens)
      t.tokens = TokensOnly{p.name, first_value, count_status(run, ReadStatus::overflow),
                            count_status(run, ReadStatus::missing)};
  } catch (const InputError& e) {
    t.tried += fmt::format("\n    {}: {}", p.name, e.message());
    const Where& w = e.where();
    if (w.line > 0 && (!t.furthest || w.line > t.furthest->where().line ||
                       (w.line == t.furthest->where().line && w.column > t.furthest->where().column))) {
      t.furthest = e;
      t.furthest_name = p.name;
    }
  }
}

// The built-in profile detection chose last on this thread (an index into builtin_profiles()),
// −1 for none: the files of a batch are mostly of one family.
thread_local int t_last_builtin = -1;

// Detection's shortcut, when the user's profiles read nothing: the built-in profile chosen
// last on this thread is tried first, and if it reads n > 0 values and every other built-in
// profile can be shown (value_bound) to read fewer than n if tried before it, or at most n if
// tried after it, the full loop would choose it too (the most values wins, ties the first
// tried), with the same reason. Sets `choice` and `trial.best` then; false leaves both as they
// were, for the full loop (whose messages, when nothing reads the file, need every profile).
bool last_choice_holds(Trial& trial, const std::string& lines, ProfileChoice& choice) {
  const int last = t_last_builtin;
  const auto& all = builtin_profiles();
  if (last < 0 || static_cast<std::size_t>(last) >= all.size()) return false;
  Trial probe = trial;
  ProfileChoice found;
  try_profile(probe, all[static_cast<std::size_t>(last)], lines, found);
  if (probe.best == 0) return false;
  for (int i = 0; i < static_cast<int>(all.size()); ++i) {
    if (i == last) continue;
    const detail::CompiledProfile cp(all[static_cast<std::size_t>(i)]);
    const long long bound = detail::value_bound(cp, trial.head);
    if (i < last ? bound >= probe.best : bound > probe.best) return false;
  }
  choice = std::move(found);
  trial.best = probe.best;
  return true;
}

// choose_profile for a text export, or for a workbook's sheet rendered as text (`book`).
ProfileChoice choose_in(const std::string& path, const std::string& requested, const detail::SheetText* book) {
  ProfileChoice choice;
  if (!requested.empty()) {
    choice.profile = load_profile(requested);
    choice.reason = "given with --profile";
    return choice;
  }
  // The first lines of the file are enough to tell the shape: a few reads of a wide or
  // grid export, or a few hundred rows of a long one. At most 400 lines, and no more once
  // 64 KiB are held besides the longest line (a 1536-well wide export has ~10 KiB lines):
  // every built-in profile parses this head, so its size is paid five times per file.
  constexpr int k_sniff_lines = 400;
  constexpr std::size_t k_sniff_bytes = 64 * 1024;
  // Bytes read for it: the first MiB; past it only when its lines run on (see below), and
  // then no more than the lines kept, so at most about 64 KiB + 2 lines of < 16 MiB each
  // (LineSource's longest) are held, whatever the size of the file.
  constexpr long long k_sniff_prefix_bytes = 1024 * 1024;
  std::string head;
  int sniffed = 0;
  bool capped = false;
  bool head_is_file = false;  // the head holds the whole file
  // Lines from the start of the file; false when `src` ran out at a byte limit (the last
  // line may then be cut short).
  auto sniff = [&](detail::LineSource& src) {
    head.clear();
    sniffed = 0;
    capped = false;
    std::string_view line;
    bool more = true;
    std::size_t longest = 0;  // one huge line (a long preamble cell) does not count
    while (sniffed < k_sniff_lines && (more = src.next(line))) {
      if (head.size() - longest >= k_sniff_bytes) {
        capped = true;
        break;
      }
      longest = std::max(longest, line.size() + 1);
      head.append(line);
      head.push_back('\n');
      ++sniffed;
    }
    head_is_file = !more && !src.cut();
    return more || !src.cut();
  };
  if (book) {
    detail::LineSource src(path, book->text, detail::LineSource::NoHash{});
    sniff(src);
  } else {
    // The first MiB is read, not the whole file as a full LineSource does; only when the
    // lines run past it (lines of 100s of KiB) is the file read again without a limit.
    detail::LineSource src(path, k_sniff_prefix_bytes, detail::LineSource::NoHash{});
    if (!sniff(src)) {
      detail::LineSource whole(path, -1, detail::LineSource::NoHash{});
      sniff(whole);
    }
  }
  if (detail::trim(head).empty()) {
    throw InputError(
        Where{path}, book ? "the sheet is empty" : "the file is empty",
        {book ? "pass the sheet that holds the reads with --sheet" : "check that the right file was given"});
  }
  Trial trial{path, head, "", 0, {}, {}, {}};
  const std::string lines = fmt::format("the first {} lines", capped ? sniffed : k_sniff_lines);
  // The user's profile folders first: one of them that reads the file wins over the built-ins.
  const std::vector<Profile> own = folder_profiles();
  for (const auto& p : own) try_profile(trial, p, lines, choice);
  if (trial.best == 0 && !last_choice_holds(trial, lines, choice)) {
    const auto& all = builtin_profiles();
    for (std::size_t i = 0; i < all.size(); ++i) {
      const long long before = trial.best;
      try_profile(trial, all[i], lines, choice);
      if (trial.best > before) t_last_builtin = static_cast<int>(i);  // the one chosen so far
    }
  }
  if (trial.best == 0) {
    throw no_profile_error(path, head, head_is_file ? "in the file" : fmt::format("in its first {} lines", sniffed),
                           own.empty() ? "no built-in profile" : "no profile (built-in or of your profile folders)",
                           trial);
  }
  choice.detected = true;
  return choice;
}

}  // namespace

}  // namespace vzero
