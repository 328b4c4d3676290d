// The words vzero writes in the `flags` and `notes` columns of rates.csv: one table, from
// which the README's lists, `vzero rates --help`, the report's legend and the console digest
// take their meanings.
//
// A flag withholds trust: the well's v0 is left out of the replicate summary and, by default,
// the fit. A note records a correction vzero made on the way; the well keeps its rate. A
// word can be a flag for one role and a note for another (or, like `ceiling`, either,
// depending on whether the rate used the reads in question), so a word is looked up with
// its kind.
//
// **Example**:
//   for (const vzero::MarkInfo& m : vzero::mark_table())
//     fmt::print("{:<18} {:<5} {}\n", m.word, to_string(m.kind), m.meaning);
#pragma once

#include <span>
#include <string>
#include <string_view>

namespace vzero {

enum class MarkKind { flag, note };
std::string_view to_string(MarkKind k);

struct MarkInfo {
  std::string_view word;
  MarkKind kind;
  std::string_view roles;    // the plate-map roles that can carry it: "sample", "blank", "sample, standard", …
  std::string_view meaning;  // one sentence, in the words a bench scientist uses
};

// Every flag and note, flags first, in the order the README lists them.
std::span<const MarkInfo> mark_table();

// The entry of `word` as `kind`; nullptr when vzero never writes it.
const MarkInfo* find_mark(std::string_view word, MarkKind kind);

// The tables as the README carries them (Markdown, one per kind), and as `--help` prints
// them (plain text, wrapped at `width` columns).
std::string marks_markdown(MarkKind kind);
std::string marks_text(int width = 100);

}  // namespace vzero
