// The one table of flag and note words (include/vzero/flags.hpp).
#include "vzero/flags.hpp"

#include <array>

#include <fmt/format.h>

namespace vzero {
namespace {

// `text` wrapped at `width` columns, continuation lines indented by `indent` spaces.
std::string wrap(const std::string& text, std::size_t width, std::size_t indent) {
  std::string out, line;
  std::size_t i = 0;
  while (i < text.size()) {
    std::size_t j = text.find(' ', i + 1);
    if (j == std::string::npos) j = text.size();
    const std::string word = text.substr(i, j - i);
    if (!line.empty() && line.size() + word.size() > width) {
      out += line + "\n";
      line = std::string(indent, ' ') + (word.front() == ' ' ? word.substr(1) : word);
    } else {
      line += word;
    }
    i = j;
  }
  return out + line;
}

constexpr MarkKind flag = MarkKind::flag;
constexpr MarkKind note = MarkKind::note;

// clang-format off
constexpr std::array<MarkInfo, 30> k_marks{{
    {"too-few-reads", flag, "sample, standard",
     "fewer than `--min-points` usable reads (or a span shorter than `--min-span-s`); any rate given is from all usable reads"},
    {"nonlinear", flag, "sample", "even the shortest window is curved: no straight stretch long enough"},
    {"depleted", flag, "sample",
     "the conversion limit (`--max-conversion` of `substrate`) is passed before the shortest window ends, or "
     "the window after a lag sits where more than half that limit is converted at its middle (no tangent): v0 at "
     "the starting substrate is underestimated"},
    {"noise", flag, "sample",
     "the rate cannot be told from noise: its 95 % interval holds 0, or it is below 3 × the slope SD that the read "
     "noise alone would give"},
    {"negative", flag, "sample", "the rate is below zero (in the reaction direction)"},
    {"rising", flag, "sample",
     "the rate still rises across the chosen window, a later stretch climbs faster, or the window starts inside a "
     "lag's ramp: v0 is underestimated"},
    {"imprecise", flag, "sample",
     "the rate's 95 % interval (read noise over the window, the scatter of the blank wells' own rates, and how far "
     "substrate used or a possible lag bends a straight line, or a parabola misses the curve) reaches further "
     "than `--precision-limit` (default ±15 %) of the rate on either side"},
    {"ceiling", flag, "sample, standard",
     "every read was at or above `--signal-ceiling` (or the absorbance limit), so the rate comes from reads beyond "
     "the linear range"},
    {"saturated", flag, "sample, standard",
     "the trace sits at the detector's maximum (then overflows): its rate says nothing about the enzyme"},
    {"blank-missing", flag, "sample",
     "the sample has no blank to subtract (no matched blank, none on the plate, or none with 3 usable reads)"},
    {"blank-noisy", flag, "sample, blank", "a blank used scatters more than 3 × the median blank scatter"},
    {"blank-substrate", flag, "sample",
     "the blanks' rates change with their substrate and this sample's blanks sit at other levels, missing its own "
     "background by over 5 % of its rate (`--blank matched --match-column substrate` subtracts per level)"},
    {"blank-disturbed", flag, "blank",
     "the blank's first reads jumped or decayed; it is left out of its set (its early reads replaced when all are)"},
    {"blank-drift", flag, "blank", "the blank's trace bends: no straight blank line describes it"},
    {"blank-too-few-reads", flag, "blank",
     "the blank has fewer usable reads than `--min-points`; with fewer than 3 it is left out of its set"},
    {"outside-standards", flag, "sample", "the sample's signal in the window leaves the standard curve's calibrated range"},
    {"no-path", flag, "any",
     "no valid path length for the well (e.g. a water-peak difference ≤ 0)"},
    {"disturbed", note, "sample, standard, blank",
     "the first reads jumped or decayed in a way the rest did not continue; they were set aside"},
    {"lag", note, "sample, standard, blank", "the first reads rose more slowly (a lag) and were skipped"},
    {"lag-possible", note, "sample, standard, blank",
     "a lag too weak to skip may be present: the 95 % interval's upper side allows for its ramp"},
    {"blank-line", note, "sample",
     "every blank of the set had a disturbed start: their disturbed reads were replaced (line plus shared bend)"},
    {"blank-left-out", note, "sample",
     "a blank of the set had a disturbed start or fewer than 3 usable reads: it was left out and the set's other "
     "blanks subtracted"},
    {"blank-spike", note, "sample", "a read of a blank used sat far off its neighbours: their line replaced it"},
    {"blank-filled", note, "sample",
     "a blank used lacked reads (empty cells, missing marks): its line filled them"},
    {"empty", note, "empty", "the well is not in the plate map, or its role is `empty`"},
    {"no-limit", note, "sample",
     "no substrate concentration (or no concentration scale) for the sample: no conversion limit applied"},
    {"judged-by-controls", note, "sample",
     "on a plate with both screening controls, a rate flagged only imprecise, noise or negative whose 95 % interval "
     "spans at most ±10 % of the control window, at an activity not below −10 %: a full inhibitor's result, kept"},
    {"outliers", note, "sample, standard, blank", "reads in the window were rejected as outliers (`n_outliers`)"},
    {"overflow", note, "sample, standard, blank", "the trace has overflow reads; the window leaves them out"},
    {"ceiling", note, "sample, standard, blank", "reads reached `--signal-ceiling`; the window ends before them"},
}};
// clang-format on

}  // namespace

std::string_view to_string(MarkKind k) { return k == MarkKind::flag ? "flag" : "note"; }

std::span<const MarkInfo> mark_table() { return k_marks; }

const MarkInfo* find_mark(std::string_view word, MarkKind kind) {
  for (const MarkInfo& m : k_marks)
    if (m.word == word && m.kind == kind) return &m;
  return nullptr;
}

std::string marks_markdown(MarkKind kind) {
  std::string out = fmt::format("| {} | meaning |\n|---|---|\n", to_string(kind));
  for (const MarkInfo& m : k_marks)
    if (m.kind == kind) out += fmt::format("| `{}` | {} |\n", m.word, m.meaning);
  return out;
}

std::string marks_text(int width) {
  std::string out;
  for (MarkKind kind : {MarkKind::flag, MarkKind::note}) {
    out += kind == MarkKind::flag ? "Flags (the well's v0 is not trusted):\n"
                                  : "Notes (corrections made; the well keeps its rate):\n";
    for (const MarkInfo& m : k_marks) {
      if (m.kind != kind) continue;
      std::string meaning;
      for (char c : m.meaning)
        if (c != '`') meaning += c;
      out += wrap(fmt::format("  {:<17} {}", m.word, meaning), static_cast<std::size_t>(width), 20) + "\n";
    }
  }
  return out;
}

}  // namespace vzero
