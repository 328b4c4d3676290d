// The options that describe the experiment for the EnzymeML document (--enzymeml): the
// STRENDA fields a plate map may also carry per well (map columns win; include/vzero/enzymeml.hpp).
// They change no rate; given ones are recorded in datapackage.json like any analysis option.
#include "vzero/settings.hpp"

namespace vzero::detail {

namespace {

using S = RunSettings;

constexpr std::string_view k_group = "EnzymeML document (STRENDA fields; plate-map columns win per well)";

OptionSpec described(std::string_view name, OptionKind kind, std::string_view unit, std::string_view help) {
  OptionSpec o;
  o.name = name;
  o.group = k_group;
  o.kind = kind;
  o.role = OptionRole::analysis;
  o.unit = unit;
  o.help = help;
  return o;
}

}  // namespace

void add_enzymeml_options(std::vector<OptionSpec>& t) {
  {
    OptionSpec o = described("enzymeml-creator", OptionKind::list, "",
                             "GIVEN,FAMILY,MAIL: the document's creator (given name, family name, e-mail)");
    o.apply = [](S& s, const OptionValue& v) -> std::string {
      if (v.list.size() != 3) return "expected three comma-separated parts: GIVEN,FAMILY,MAIL";
      s.enzymeml_options.creator = v.list;
      return {};
    };
    t.push_back(o);
  }
  {
    OptionSpec o = described("enzyme", OptionKind::text, "", "the enzyme's name (map column `enzyme`)");
    o.text_field = [](S& s) { return &s.enzymeml_options.enzyme; };
    t.push_back(o);
  }
  {
    OptionSpec o = described("enzyme-nm", OptionKind::number, "nM",
                             "enzyme concentration in the well, nM (map column `enzyme (nM)` or `enzyme_nM`; "
                             "any of M, mM, uM, nM in its header)");
    o.range = NumberRange{0, 1e300, false, false};
    o.number_field = [](S& s) { return &s.enzymeml_options.enzyme_conc_nm; };
    t.push_back(o);
  }
  {
    OptionSpec o = described("assay-ph", OptionKind::number, "", "pH of the assay (map column `ph`)");
    o.range = NumberRange{0, 14, false, false};
    o.number_field = [](S& s) { return &s.enzymeml_options.ph; };
    t.push_back(o);
  }
  {
    OptionSpec o = described("assay-temperature-c", OptionKind::number, "°C",
                             "assay temperature, °C (map column `temperature_c`; default: the mean of the "
                             "export's read temperatures, when it has them)");
    o.range = NumberRange{-273.15, 1e300, false, false};
    o.number_field = [](S& s) { return &s.enzymeml_options.temperature_c; };
    t.push_back(o);
  }
  {
    OptionSpec o = described("assay-buffer", OptionKind::text, "", "the assay buffer, e.g. \"50 mM HEPES, 100 mM NaCl\" "
                                                             "(map column `buffer`)");
    o.text_field = [](S& s) { return &s.enzymeml_options.buffer; };
    t.push_back(o);
  }
}

}  // namespace vzero::detail
