// The written forms of cells every profile reads: times with their units ("0 min 20 s"),
// temperature headers with a Celsius unit, value headers that name a signal, and the
// overflow spellings (reader_common.hpp).
#include <algorithm>
#include <cctype>

#include "ingest/reader_common.hpp"

namespace vzero::detail {

// "1 h 2 min 3.5 s", "0 min 20 s", "20s": numbers each followed by its unit (h, min, s), the
// units in that order, each at most once; nullopt for any other text.
std::optional<double> worded_time(std::string_view text, char decimal) {
  double total = 0;
  int last = -1;  // index of the previous unit in {h, min, s}
  std::size_t at = 0;
  while (at < text.size()) {
    const std::size_t num_end = text.find_first_not_of("0123456789.,", at);
    if (num_end == std::string_view::npos || num_end == at) return std::nullopt;
    const auto v = parse_number(text.substr(at, num_end - at), decimal);
    std::size_t u = text.find_first_not_of(' ', num_end);
    if (!v || *v < 0 || u == std::string_view::npos) return std::nullopt;
    std::size_t u_end = u;
    while (u_end < text.size() && std::isalpha(static_cast<unsigned char>(text[u_end]))) ++u_end;
    const std::string_view word = text.substr(u, u_end - u);
    const int k = word == "h" ? 0 : word == "min" ? 1 : word == "s" ? 2 : -1;
    if (k <= last) return std::nullopt;
    last = k;
    total += *v * (k == 0 ? 3600 : k == 1 ? 60 : 1);
    at = std::min(text.size(), text.find_first_not_of(' ', u_end));
  }
  if (last < 0 || !(total <= k_max_time_s)) return std::nullopt;
  return total;
}

namespace {
// "°C", "C", "degC", "deg C" (any case, "°" or "º" or none): a unit of degrees Celsius.
bool celsius(std::string_view unit) {
  std::string u = lower(trim(unit));
  for (const char* deg : {"\xc2\xb0", "\xc2\xba", "deg"})
    if (u.rfind(deg, 0) == 0) u = std::string(trim(std::string_view(u).substr(std::char_traits<char>::length(deg))));
  return u == "c";
}
}  // namespace

namespace {
// "T°", "T°C", "T° 405", "T° 405 nm": the degree sign after a T marks a temperature; a
// wavelength after it names the channel the temperature was logged with.
bool degree_t(std::string_view h) {
  if (h.size() < 2 || (h[0] != 'T' && h[0] != 't')) return false;
  std::string_view rest = trim(h.substr(1));
  bool degree = false;
  for (const char* deg : {"\xc2\xb0", "\xc2\xba"})
    if (rest.rfind(deg, 0) == 0) {
      rest = trim(rest.substr(2));
      degree = true;
    }
  if (!degree) return false;
  if (rest.empty() || iequals(rest, "c")) return true;
  std::size_t digits = 0;
  while (digits < rest.size() && rest[digits] >= '0' && rest[digits] <= '9') ++digits;
  if (digits < 3 || digits > 4) return false;
  const std::string_view unit = trim(rest.substr(digits));
  return unit.empty() || iequals(unit, "nm");
}
}  // namespace

bool temperature_header(std::string_view header, const std::vector<std::string>& names) {
  const std::string_view h = trim(header);
  if (degree_t(h)) return true;
  const auto named = [&](std::string_view stem, bool with_unit) {
    for (const auto& n : names)
      if (iequals(stem, n)) return true;
    return with_unit &&
           (iequals(stem, "t") || iequals(stem, "temp") || iequals(stem, "temp.") || iequals(stem, "temperature"));
  };
  if (named(h, false)) return true;
  if (h.size() < 2) return false;
  std::size_t open = std::string_view::npos;
  if (h.back() == ')') open = h.rfind('(');
  if (h.back() == ']') open = h.rfind('[');
  if (open != std::string_view::npos) {
    return open > 0 && celsius(h.substr(open + 1, h.size() - open - 2)) && named(trim(h.substr(0, open)), true);
  }
  const std::size_t space = h.rfind(' ');  // "Temp °C"
  return space != std::string_view::npos && celsius(h.substr(space + 1)) && named(trim(h.substr(0, space)), true);
}

bool named_in(std::string_view text, const std::vector<std::string>& names) {
  return std::any_of(names.begin(), names.end(), [t = trim(text)](const std::string& n) { return iequals(t, n); });
}

std::string bare_wavelength(std::string_view text) {
  std::string_view t = trim(text);
  if (t.size() > 2 && iequals(t.substr(t.size() - 2), "nm")) t = trim(t.substr(0, t.size() - 2));
  const bool digits =
      t.size() >= 3 && t.size() <= 4 && std::all_of(t.begin(), t.end(), [](char c) { return c >= '0' && c <= '9'; });
  return digits ? std::string(t) : std::string();
}

bool time_header(std::string_view header, const std::vector<std::string>& names) {
  const std::string_view h = trim(header);
  if (named_in(h, names)) return true;
  if (h.size() < 4 || (h.back() != ')' && h.back() != ']')) return false;
  const std::size_t open = h.rfind(h.back() == ')' ? '(' : '[');
  if (open == std::string_view::npos || open == 0) return false;
  const std::string_view stem = trim(h.substr(0, open));
  if (!std::any_of(names.begin(), names.end(),
                   [&](const std::string& n) { return iequals(stem, n) && !unit_in_header(n); }))
    return false;
  const std::string unit = lower(trim(h.substr(open + 1, h.size() - open - 2)));
  return unit_in_header(h).has_value() || unit == "hh:mm:ss" || unit == "h:mm:ss" || unit == "mm:ss";
}

std::optional<SectionStart> signal_header(std::string_view header) {
  const std::string h = std::string(trim(header));
  std::string l = lower(h);
  std::string inner;  // a bracketed unit or wavelength: "(RFU)", "[AU]", "(405 nm)"
  if (!l.empty() && (l.back() == ')' || l.back() == ']')) {
    const std::size_t open = l.rfind(l.back() == ')' ? '(' : '[');
    if (open == std::string::npos || open == 0) return std::nullopt;
    inner = std::string(trim(std::string_view(l).substr(open + 1, l.size() - open - 2)));
    l = std::string(trim(std::string_view(l).substr(0, open)));
  }
  // A wavelength of 3 or 4 digits, with or without "nm", after the stem or in the brackets.
  const auto wavelength = [](std::string_view t) { return bare_wavelength(t); };
  std::string stem = l, wl;
  for (const char* s : {"absorbance", "abs", "od", "a"}) {
    const std::size_t n = std::char_traits<char>::length(s);
    if (l.size() > n && l.rfind(s, 0) == 0 && !(wl = wavelength(std::string_view(l).substr(n))).empty()) {
      stem = s;
      break;
    }
  }
  if (wl.empty() && !inner.empty()) wl = wavelength(inner);
  SectionStart out;
  const auto is = [&](std::initializer_list<const char*> words) {
    return std::any_of(words.begin(), words.end(), [&](const char* w) { return stem == w; });
  };
  if (is({"absorbance", "abs", "od", "au"}) || (stem == "a" && !wl.empty())) {
    if (!(inner.empty() || inner == "au" || !wl.empty())) return std::nullopt;
    out = {wl.empty() ? h : "A" + wl, Quantity::absorbance, "AU"};
  } else if (is({"fluorescence", "fluor", "rfu"}) && wl.empty() && (inner.empty() || inner == "rfu")) {
    out = {h, Quantity::fluorescence, "RFU"};
  } else if (is({"luminescence", "lum", "rlu"}) && wl.empty() && (inner.empty() || inner == "rlu")) {
    out = {h, Quantity::luminescence, "RLU"};
  } else {
    return std::nullopt;
  }
  return out;
}

bool overflow_form(std::string_view text, char decimal) {
  const std::string_view t = trim(text);
  if (t.empty()) return false;
  if (t.find_first_not_of('*') == std::string_view::npos) return true;
  if (t.front() == '>') return parse_number(trim(t.substr(1)), decimal).has_value();
  for (const char* word : k_overflow_words)
    if (iequals(t, word)) return true;
  return false;
}

}  // namespace vzero::detail
