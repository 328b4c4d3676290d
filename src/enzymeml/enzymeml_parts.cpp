#include "enzymeml/enzymeml_parts.hpp"

#include <fmt/format.h>

#include <cctype>
#include <cmath>

#include "core/text.hpp"
#include "vzero/error.hpp"

namespace vzero::detail {

namespace {

Json base_unit(std::string_view kind, int exponent, double multiplier = 1, int scale = 0) {
  Json b;
  b["kind"] = kind;
  b["exponent"] = exponent;
  b["multiplier"] = multiplier;
  b["scale"] = scale;
  return b;
}

Json unit(std::string_view id, std::string_view name, Json base_units) {
  Json u;
  u["id"] = id;
  u["name"] = name;
  u["base_units"] = std::move(base_units);
  return u;
}

// Power of ten of a concentration unit on mole (the run's units are M, mM, uM, nM).
int mole_scale(const std::string& u) {
  if (u == "mM") return -3;
  if (u == "uM") return -6;
  if (u == "nM") return -9;
  return 0;
}

std::string lower(std::string s) {
  for (char& c : s) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return s;
}

}  // namespace

Json conc_unit(const std::string& u) {
  return unit(id_part(u), u, Json::array({base_unit("mole", 1, 1, mole_scale(u)), base_unit("litre", -1)}));
}

Json conc_per_min_unit(const std::string& u) {
  return unit(id_part(u) + "_per_min", u + "/min",
              Json::array({base_unit("mole", 1, 1, mole_scale(u)), base_unit("litre", -1), base_unit("second", -1, 60)}));
}

Json second_unit() { return unit("s", "s", Json::array({base_unit("second", 1)})); }

Json microlitre_unit() { return unit("uL", "uL", Json::array({base_unit("litre", 1, 1, -6)})); }

Json celsius_unit() { return unit("C", "C", Json::array({base_unit("celsius", 1)})); }

Json signal_unit(const std::string& u) {
  return unit(id_part(u.empty() ? "signal" : u), u.empty() ? "signal" : u,
              Json::array({base_unit("dimensionless", 1)}));
}

Json signal_per_min_unit(const std::string& u) {
  const std::string name = u.empty() ? "signal" : u;
  return unit(id_part(name) + "_per_min", name + "/min",
              Json::array({base_unit("dimensionless", 1), base_unit("second", -1, 60)}));
}

std::string id_part(std::string_view text) {
  std::string out;
  for (char c : text) out += std::isalnum(static_cast<unsigned char>(c)) || c == '_' ? c : '_';
  return out;
}

FactColumns fact_columns(const PlateMap& map) {
  FactColumns f;
  for (std::size_t i = 0; i < map.columns.size(); ++i) {
    const int k = static_cast<int>(i);
    const std::string name = lower(std::string(trim(map.columns[i])));
    const auto [base, conc] = split_header_unit(map.columns[i]);
    if (name == "ph") f.ph = k;
    if (name == "temperature_c") f.temperature_c = k;
    if (name == "volume_ul") f.volume_ul = k;
    if (name == "buffer") f.buffer = k;
    if (name == "enzyme") f.enzyme = k;
    if (!conc.empty() && lower(std::string(trim(base))) == "enzyme") {
      f.enzyme_conc = k;
      f.enzyme_conc_unit = conc;
    }
  }
  return f;
}

namespace {

// The number in column `k` of the well's map row; NaN when the cell is empty.
double map_number(const PlateMap& map, const WellInfo& info, int k, std::string_view meaning, double lo, double hi) {
  const std::string& text = info.values[static_cast<std::size_t>(k)];
  if (trim(text).empty()) return NAN;
  const auto v = parse_number(text);
  const std::string& column = map.columns[static_cast<std::size_t>(k)];
  if (!v || *v < lo || *v > hi)
    throw InputError(Where{map.source, info.line, info.column, info.line_text},
                     fmt::format("expected {} in column `{}` of well {}, found {}", meaning, column,
                                 well_name(info.well), describe_found(text)),
                     {fmt::format("correct the value, or leave the cell empty when it is not known (column `{}` "
                                  "goes into the EnzymeML document, --enzymeml)",
                                  column)});
  return *v;
}

}  // namespace

WellFacts well_facts(const PlateMap& map, const FactColumns& c, const WellInfo* info, const EnzymeMLOptions& o) {
  WellFacts f;
  f.ph = o.ph;
  f.temperature_c = o.temperature_c;
  f.volume_ul = o.volume_ul;
  f.buffer = o.buffer;
  f.enzyme = o.enzyme;
  if (!std::isnan(o.enzyme_conc_nm)) {
    f.enzyme_conc = o.enzyme_conc_nm;
    f.enzyme_conc_unit = "nM";
  }
  if (!info) return f;
  auto number = [&](int k, double& out, std::string_view meaning, double lo, double hi) {
    if (k < 0) return;
    const double v = map_number(map, *info, k, meaning, lo, hi);
    if (!std::isnan(v)) out = v;
  };
  auto text = [&](int k, std::string& out) {
    if (k >= 0 && !trim(info->values[static_cast<std::size_t>(k)]).empty())
      out = std::string(trim(info->values[static_cast<std::size_t>(k)]));
  };
  number(c.ph, f.ph, "a pH from 0 to 14", 0, 14);
  number(c.temperature_c, f.temperature_c, "a temperature in °C", -273.15, 1e300);
  number(c.volume_ul, f.volume_ul, "a volume in µL above 0", 1e-300, 1e300);
  if (c.enzyme_conc >= 0) {
    double v = NAN;
    number(c.enzyme_conc, v, "an enzyme concentration of 0 or more", 0, 1e300);
    if (!std::isnan(v)) {
      f.enzyme_conc = v;
      f.enzyme_conc_unit = c.enzyme_conc_unit;
    }
  }
  text(c.buffer, f.buffer);
  text(c.enzyme, f.enzyme);
  return f;
}

}  // namespace vzero::detail

namespace vzero::detail {

namespace {

// Exponents of one unit text: mole, litre, per-minute, per-second, and its power of ten.
struct UnitPowers {
  int mole = 0, litre = 0, per_min = 0, per_s = 0, pow10 = 0;
  bool known = true;
};

void add_atom(UnitPowers& u, std::string_view atom, int sign) {
  bool per_min = false;
  if (atom.size() > 4 && atom.substr(atom.size() - 4) == "/min") {
    per_min = true;
    atom.remove_suffix(4);
  } else if (atom.size() > 2 && atom.substr(atom.size() - 2) == "/s") {  // kcat in 1/s
    u.per_s += sign;
    atom.remove_suffix(2);
  }
  if (atom == "M" || atom == "mM" || atom == "uM" || atom == "nM") {
    u.mole += sign;
    u.litre -= sign;
    u.pow10 += sign * mole_scale(std::string(atom));
  } else if (atom != "1") {
    u.known = false;
  }
  if (per_min) u.per_min += sign;
}

}  // namespace

Json unit_from_text(const std::string& text) {
  UnitPowers u;
  std::size_t start = 0;
  for (int sign = 1;; sign = -1) {
    const std::size_t end = text.find(" per ", start);
    add_atom(u, std::string_view(text).substr(start, end == std::string::npos ? std::string::npos : end - start), sign);
    if (end == std::string::npos) break;
    start = end + 5;
  }
  if (!u.known) return Json();
  Json base = Json::array();
  if (u.mole) base.push_back(base_unit("mole", u.mole, 1, u.mole == 1 ? u.pow10 : 0));
  if (u.litre) base.push_back(base_unit("litre", u.litre));
  if (u.per_min) base.push_back(base_unit("second", -u.per_min, 60));
  if (u.per_s) base.push_back(base_unit("second", -u.per_s));
  if (base.empty() || (u.pow10 && u.mole != 1)) base.push_back(base_unit("dimensionless", 1, 1, u.mole == 1 ? 0 : u.pow10));
  return unit(id_part(text), text, std::move(base));
}

}  // namespace vzero::detail
