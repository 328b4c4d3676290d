#include "vzero/run.hpp"

#include <algorithm>
#include <array>
#include <cctype>
#include <stdexcept>

namespace vzero {

namespace {
constexpr std::array<PlateFormat, 7> k_formats = {{{2, 3}, {3, 4}, {4, 6}, {6, 8}, {8, 12}, {16, 24}, {32, 48}}};
}  // namespace

std::optional<PlateFormat> plate_format_for(int wells) {
  for (const auto& f : k_formats)
    if (f.wells() == wells) return f;
  return std::nullopt;
}

std::optional<PlateFormat> smallest_format_holding(const std::vector<WellId>& wells) {
  for (const auto& f : k_formats) {
    if (std::all_of(wells.begin(), wells.end(), [&](WellId w) { return f.holds(w); })) return f;
  }
  return std::nullopt;
}

std::optional<std::pair<double, double>> well_centre_mm(PlateFormat format, WellId w) {
  // ANSI/SLAS 4-2004: A1 offset and pitch; each grid is centred on the 127.76 × 85.48 mm
  // footprint of ANSI/SLAS 1-2004.
  double x0 = 0, y0 = 0, pitch = 0;
  if (format.wells() == 96) {
    x0 = 14.38;
    y0 = 11.24;
    pitch = 9.0;
  } else if (format.wells() == 384) {
    x0 = 12.13;
    y0 = 8.99;
    pitch = 4.5;
  } else if (format.wells() == 1536) {
    x0 = 11.005;
    y0 = 7.865;
    pitch = 2.25;
  } else {
    return std::nullopt;
  }
  if (!format.holds(w)) return std::nullopt;
  return std::pair{x0 + pitch * w.column, y0 + pitch * w.row};
}

std::string row_label(int row) {
  if (row < 26) return std::string(1, static_cast<char>('A' + row));
  return std::string{'A', static_cast<char>('A' + row - 26)};
}

std::string well_name(WellId w) { return row_label(w.row) + std::to_string(w.column + 1); }

std::string well_set_text(std::vector<WellId> wells) {
  std::sort(wells.begin(), wells.end());
  wells.erase(std::unique(wells.begin(), wells.end()), wells.end());
  std::string out;
  if (wells.empty()) return out;
  int rows = 0, cols = 0;
  for (const WellId& w : wells) {
    if (w.row < 0 || w.column < 0) throw std::invalid_argument("well_set_text: negative row or column");
    rows = std::max(rows, w.row + 1);
    cols = std::max(cols, w.column + 1);
  }
  // 0: not in the set, 1: in it and not yet written, 2: written.
  std::vector<unsigned char> cell(static_cast<std::size_t>(rows) * static_cast<std::size_t>(cols), 0);
  const auto at = [&](int r, int c) -> unsigned char& {
    return cell[static_cast<std::size_t>(r) * static_cast<std::size_t>(cols) + static_cast<std::size_t>(c)];
  };
  for (const WellId& w : wells) at(w.row, w.column) = 1;
  for (const WellId& w : wells) {
    if (at(w.row, w.column) != 1) continue;
    int c1 = w.column;
    while (c1 + 1 < cols && at(w.row, c1 + 1) == 1) ++c1;
    int r1 = w.row;
    const auto row_free = [&](int r) {
      for (int c = w.column; c <= c1; ++c)
        if (at(r, c) != 1) return false;
      return true;
    };
    while (r1 + 1 < rows && row_free(r1 + 1)) ++r1;
    if (!out.empty()) out += ';';
    if ((r1 - w.row + 1) * (c1 - w.column + 1) >= 3) {
      for (int r = w.row; r <= r1; ++r)
        for (int c = w.column; c <= c1; ++c) at(r, c) = 2;
      out += well_name(w);
      out += ':';
      out += well_name(WellId{r1, c1});
    } else {
      at(w.row, w.column) = 2;
      out += well_name(w);
    }
  }
  return out;
}

namespace {
// ASCII letters and digits, as <cctype> classifies them in the "C" locale vzero runs in
// (no locale call per character: readers parse a well name per value of a long export).
bool ascii_alpha(char c) { return (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z'); }
bool ascii_digit(char c) { return c >= '0' && c <= '9'; }
char ascii_upper(char c) { return c >= 'a' && c <= 'z' ? static_cast<char>(c - 'a' + 'A') : c; }
}  // namespace

std::optional<int> parse_row_label(std::string_view t) {
  while (!t.empty() && (t.front() == ' ' || t.front() == '\t')) t.remove_prefix(1);
  while (!t.empty() && (t.back() == ' ' || t.back() == '\t')) t.remove_suffix(1);
  auto up = [](char c) { return ascii_upper(c); };
  if (t.size() == 1 && ascii_alpha(t[0])) return up(t[0]) - 'A';
  if (t.size() == 2 && up(t[0]) == 'A' && up(t[1]) >= 'A' && up(t[1]) <= 'F') return 26 + (up(t[1]) - 'A');
  return std::nullopt;
}

std::optional<WellId> parse_well(std::string_view t) {
  while (!t.empty() && (t.front() == ' ' || t.front() == '\t')) t.remove_prefix(1);
  while (!t.empty() && (t.back() == ' ' || t.back() == '\t')) t.remove_suffix(1);
  std::size_t letters = 0;
  while (letters < t.size() && ascii_alpha(t[letters])) ++letters;
  if (letters == 0 || letters > 2 || letters == t.size() || t.size() - letters > 3) return std::nullopt;
  auto row = parse_row_label(t.substr(0, letters));
  if (!row) return std::nullopt;
  int col = 0;
  for (std::size_t i = letters; i < t.size(); ++i) {
    if (!ascii_digit(t[i])) return std::nullopt;
    col = col * 10 + (t[i] - '0');
  }
  if (col < 1 || col > 48) return std::nullopt;
  return WellId{*row, col - 1};
}

std::string_view to_string(Quantity q) {
  switch (q) {
    case Quantity::absorbance:
      return "absorbance";
    case Quantity::fluorescence:
      return "fluorescence";
    case Quantity::luminescence:
      return "luminescence";
    case Quantity::other:
      return "other";
  }
  return "other";
}

std::optional<Quantity> parse_quantity(std::string_view t) {
  if (t == "absorbance") return Quantity::absorbance;
  if (t == "fluorescence") return Quantity::fluorescence;
  if (t == "luminescence") return Quantity::luminescence;
  if (t == "other") return Quantity::other;
  return std::nullopt;
}

std::string_view to_string(ReadStatus s) {
  switch (s) {
    case ReadStatus::ok:
      return "ok";
    case ReadStatus::overflow:
      return "overflow";
    case ReadStatus::missing:
      return "missing";
    case ReadStatus::excluded:
      return "excluded";
  }
  return "ok";
}

int Channel::column_of(int plate_index) const {
  auto it = std::lower_bound(wells.begin(), wells.end(), plate_index);
  if (it == wells.end() || *it != plate_index) return -1;
  return static_cast<int>(it - wells.begin());
}

const Channel* Run::find_channel(std::string_view name) const {
  for (const auto& c : channels)
    if (c.name == name) return &c;
  return nullptr;
}

}  // namespace vzero
