// One table of words per enum: the words the command line, method files, outputs and
// provenance use for an enum's values, declared once beside the enum's stage
// (`enum_names<Estimator>()` in src/rates/rates.cpp, …) and read through these helpers.
//
// **Example**:
//   vzero::Estimator e;
//   if (vzero::parse_enum("huber", e)) fmt::print("{}\n", vzero::enum_text(e));  // "huber"
#pragma once

#include <span>
#include <string_view>
#include <vector>

namespace vzero {

template <class E>
struct EnumName {
  E value;
  std::string_view name;
};

// Specialised for each enum that has words (declared in the enum's header).
template <class E>
std::span<const EnumName<E>> enum_names();

// The word of `v` (the table's first word when `v` is not in it, which a complete table
// never allows).
template <class E>
std::string_view enum_text(E v) {
  const auto t = enum_names<E>();
  for (const auto& n : t)
    if (n.value == v) return n.name;
  return t.front().name;
}

// Sets `out` to the value whose word is `text` (exact match); false when none is.
template <class E>
bool parse_enum(std::string_view text, E& out) {
  for (const auto& n : enum_names<E>())
    if (n.name == text) {
      out = n.value;
      return true;
    }
  return false;
}

// Every word, in table order (the choices `--help` lists).
template <class E>
std::vector<std::string_view> enum_words() {
  std::vector<std::string_view> w;
  for (const auto& n : enum_names<E>()) w.push_back(n.name);
  return w;
}

}  // namespace vzero
