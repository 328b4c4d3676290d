// The report's text sections: header with provenance, flag counts, replicate summary.
#include <fmt/format.h>
#include <algorithm>
#include <cmath>
#include <map>

#include "core/text.hpp"
#include "report/report_campaign.hpp"
#include "report/report_model.hpp"
#include "vzero/flags.hpp"
#include "vzero/svg.hpp"

namespace vzero::detail::report {

namespace {

using nlohmann::json;
using svg::escape;

std::string text_of(const json& j) {
  if (j.is_string()) return j.get<std::string>();
  if (j.is_null()) return {};
  return j.dump();
}

// A definition list of key → value pairs in their order.
std::string pairs_list(const json& obj, const char* cls) {
  std::string h = fmt::format("<dl class=\"{}\">", cls);
  for (const auto& [k, v] : obj.items())
    h += "<div><dt>" + escape(k) + "</dt><dd>" + escape(text_of(v)) + "</dd></div>";
  return h + "</dl>";
}

// Whether a recorded option had any effect, judged from the options in effect: settings
// of a path not taken (water band on a fixed path, standard read without standards, blank
// mode without blanks, tangent settings when no tangent is tried) did not apply.
bool applies(const std::string& key, const json& opts) {
  auto is = [&](const char* k, const char* v) { return text_of(member(opts, k)) == v; };
  const bool signal_only = is("signal-only", "true"), water = is("water-peak", "true");
  const bool standards = is("standards", "true");
  if (key == "water-high" || key == "water-low" || key == "water-k") return water && !signal_only;
  if (key == "path-cm") return !water && !standards && !signal_only;
  if (key == "epsilon") return !standards && !signal_only;
  if (key == "standard-read") return standards && !signal_only;
  if (key == "conc-unit" || key == "max-conversion") return !signal_only;
  if (key == "blank-mode" || key == "blank-noise-factor") return !is("blank", "none");
  if (key == "curvature-alpha" || key == "curvature-min-pct") return is("window", "auto");
  if (key == "tangent") return !is("window", "steepest");
  if (key == "tangent-span") return !is("window", "steepest") && !is("tangent", "never");
  if (key == "tangent-min-reads" || key == "tangent-alpha") return !is("window", "steepest") && is("tangent", "auto");
  return true;
}

// The options that applied, and a line naming the ones recorded that did not.
std::string options_list(const json& opts) {
  std::string h = "<dl class=\"options\">", skipped;
  for (const auto& [k, v] : opts.items()) {
    if (applies(k, opts))
      h += "<div><dt>" + escape(k) + "</dt><dd>" + escape(text_of(v)) + "</dd></div>";
    else
      skipped += (skipped.empty() ? "" : ", ") + escape(k);
  }
  h += "</dl>\n";
  if (!skipped.empty())
    h += "<p class=\"note\">Recorded but not applicable to this run (another path was taken): " + skipped + ".</p>\n";
  return h;
}

// What each export says of itself (operator, plate id, start time…), as recorded.
std::string export_metadata(const json& prov) {
  std::string rows;
  for (const auto& in : member(prov, "inputs")) {
    const json& meta = member(in, "metadata");
    if (!meta.is_array() || meta.empty()) continue;
    std::string cells;
    for (const auto& kv : meta)
      cells += "<div><dt>" + escape(text_of(member(kv, "key"))) + "</dt><dd>" + escape(text_of(member(kv, "value"))) +
               "</dd></div>";
    rows += "<h4>" + escape(text_of(member(in, "path"))) + "</h4><dl class=\"options\">" + cells + "</dl>\n";
  }
  return rows.empty() ? std::string() : "<h3>From the exports</h3>\n" + rows;
}

}  // namespace

std::string flag_meaning(const std::string& flag) {
  // The one table of flag and note words (include/vzero/flags.hpp), as HTML: its `code`
  // spans (options such as --max-conversion) kept whole on one line.
  const MarkInfo* m = find_mark(flag, MarkKind::flag);
  if (!m) m = find_mark(flag, MarkKind::note);
  std::string out;
  if (!m) return out;
  const std::string_view text = m->meaning;
  bool code = false;
  for (std::size_t a = 0; a < text.size();) {
    const std::size_t b = std::min(text.find('`', a), text.size());
    out += escape(std::string(text.substr(a, b - a)));
    if (b < text.size()) out += code ? "</span>" : "<span class=\"opt\">";
    if (b < text.size()) code = !code;
    a = b + 1;
  }
  if (code) out += "</span>";
  return out;
}

std::string render_header(const PageData& m, const ReportOptions& o) {
  const json& prov = member(m.package, "vzero");
  std::string title = o.title.empty() ? "Run report: " + export_names(m) : o.title;
  std::string h = "<header>\n<p class=\"kicker\">vzero \u00b7 initial rates</p>\n<h1>" + escape(title) + "</h1>\n";
  std::string meta = "Drawn by vzero " + std::string(VZERO_VERSION);
  if (prov.is_object())
    meta +=
        "; rates computed by " + escape(text_of(member(prov, "tool"))) + " " + escape(text_of(member(prov, "version")));
  meta += o.date.empty() ? "" : "; date: " + escape(o.date);
  h += "<p class=\"meta\">" + meta + ".</p>\n";
  h += "<nav class=\"toc\"><a href=\"#provenance\">Provenance</a><a href=\"#flags\">Flags</a>";
  if (!campaigns_of(m).empty()) h += "<a href=\"#campaign\">Campaign</a>";
  for (const auto& p : m.plates)
    h += fmt::format("<a href=\"#{}\">{} \u00b7 {}</a>", p.id, escape(p.source), escape(p.channel));
  if (m.package.is_object()) {
    for (const auto& ch : member(prov, "channels"))
      if (member(ch, "standard_curve").is_object()) {
        h += "<a href=\"#standards\">Standard curve</a>";
        break;
      }
  }
  h += "<a href=\"#summary\">Replicates</a>";
  if (!m.fits.empty()) h += "<a href=\"#fits\">Kinetics fit</a>";
  h += "</nav>\n</header>\n";

  h += "<section id=\"provenance\">\n<h2>Provenance</h2>\n";
  h += "<table class=\"inputs\"><thead><tr><th>input</th><th>file</th><th>read "
       "as</th><th>sha256</th></tr></thead><tbody>";
  for (const auto& in : member(prov, "inputs")) {
    std::string as = text_of(member(in, "profile"));
    if (!text_of(member(in, "shape")).empty()) as += (as.empty() ? "" : ", ") + text_of(member(in, "shape"));
    h += "<tr><td>" + escape(text_of(member(in, "kind"))) + "</td><td>" + escape(text_of(member(in, "path"))) +
         "</td><td>" + escape(as) + "</td><td class=\"hash\">" + escape(text_of(member(in, "sha256"))) + "</td></tr>";
  }
  h += "</tbody></table>\n";
  h += "<table class=\"inputs\"><thead><tr><th>export</th><th>channel</th><th>conversion</th><th>v0 "
       "unit</th></tr></thead><tbody>";
  for (const auto& ch : member(prov, "channels")) {
    std::string conv = text_of(member(ch, "conversion"));
    if (!text_of(member(ch, "formula")).empty()) conv += ": " + text_of(member(ch, "formula"));
    h += "<tr><td>" + escape(text_of(member(ch, "source"))) + "</td><td>" + escape(text_of(member(ch, "channel"))) +
         "</td><td>" + escape(conv) + "</td><td>" + escape(display_unit(text_of(member(ch, "v0_unit")))) + "</td></tr>";
  }
  h += "</tbody></table>\n";
  h += export_metadata(prov);
  h += "<h3>Options used</h3>\n" + options_list(member(prov, "options"));
  if (member(prov, "detected").is_object() && !member(prov, "detected").empty())
    h += "<h3>Chosen by vzero</h3>\n" + pairs_list(member(prov, "detected"), "options") + "\n";
  h += "</section>\n";
  return h;
}

namespace {

// Channels whose samples subtract blanks of other substrate levels while the blanks' rates
// change with substrate (datapackage.json `blank_substrate_trend`): a bias of every such
// sample, flagged only where it passes 5 % of the rate.
std::string blank_trend_notes(const json& prov) {
  std::string h;
  for (const auto& ch : member(prov, "channels")) {
    const json& tr = member(ch, "blank_substrate_trend");
    if (!tr.is_object() || !member(tr, "significant").is_boolean() || !member(tr, "significant").get<bool>()) continue;
    const json& other = member(tr, "wells_at_other_levels");
    if (!other.is_number_integer() || other.get<long long>() == 0) continue;
    h += fmt::format(
        "<p class=\"note warn\">{}, channel {}: the blank wells' rates change with their substrate ({} blanks at {} "
        "levels) and {} wells subtract blanks of other levels, so their rates carry part of that trend and a Km fitted "
        "to them is biased (flag <span class=\"opt\">blank-substrate</span> where it passes 5 % of a rate). Subtract blanks "
        "per level: "
        "<span class=\"opt\">--blank matched --match-column substrate</span>.</p>\n",
        escape(text_of(member(ch, "source"))), escape(text_of(member(ch, "channel"))), text_of(member(tr, "blanks")),
        text_of(member(tr, "levels")), other.get<long long>());
  }
  return h;
}

}  // namespace

std::string render_flags(const PageData& m) {
  std::map<std::string, std::vector<std::pair<std::string, std::string>>> wells;  // flag → (anchor, label)
  std::size_t total = 0, clean = 0;
  for (const auto& p : m.plates)
    for (const auto& w : p.wells) {
      ++total;
      if (w.flags.empty()) ++clean;
      for (const auto& f : w.flags) wells[f].emplace_back(w.anchor, m.plates.size() > 1 ? p.id + " " + w.name : w.name);
    }
  std::vector<std::string> order;
  for (const auto& [f, list] : wells) order.push_back(f);
  std::stable_sort(order.begin(), order.end(),
                   [&](const std::string& a, const std::string& b) { return wells[a].size() > wells[b].size(); });
  std::string h = "<section id=\"flags\">\n<h2>Flags</h2>\n";
  h += fmt::format("<p class=\"lede\">{} well rows; {} without any flag.</p>\n", total, clean);
  h += blank_trend_notes(member(m.package, "vzero"));
  if (order.empty()) return h + "</section>\n";
  h += "<table class=\"flags\"><thead><tr><th>flag</th><th class=\"num\">wells</th><th>meaning</th><th>which</th></tr>"
       "</thead><tbody>";
  for (const auto& f : order) {
    const auto& list = wells[f];
    std::string which;
    const std::size_t shown = std::min<std::size_t>(list.size(), 24);
    for (std::size_t k = 0; k < shown; ++k)
      which += (k ? " " : "") + fmt::format("<a href=\"#{}\">{}</a>", escape(list[k].first), escape(list[k].second));
    if (list.size() > shown) which += fmt::format(" \u2026 and {} more", list.size() - shown);
    std::string meaning = flag_meaning(f);
    h += fmt::format(
        "<tr><td class=\"flag\">{}</td><td class=\"num\">{}</td><td>{}</td><td class=\"which\">{}</td></tr>", escape(f),
        list.size(), meaning.empty() ? "\u2013" : meaning, which);
  }
  return h + "</tbody></table>\n</section>\n";
}

std::string render_summary(const PageData& m, const Table& t) {
  const int channel = t.column("channel"), wells = t.column("wells");
  auto numeric = [](const std::string& name) {
    for (const char* n : {"n", "n_flagged", "v0_mean", "v0_sd", "v0_sem", "cv_pct"})
      if (iequals(name, n)) return true;
    return false;
  };
  std::string h =
      "<section id=\"summary\">\n<h2>Replicates</h2>\n<p class=\"lede\">Mean, SD, SEM and CV of the clean "
      "wells of each condition; flagged wells are counted, not averaged.</p>\n<div class=\"scroll\">"
      "<table class=\"summary\"><thead><tr>";
  for (std::size_t c = 0; c < t.header.size(); ++c)
    h += std::string(numeric(t.header[c]) ? "<th class=\"num\">" : "<th>") + escape(t.header[c]) + "</th>";
  h += "</tr></thead><tbody>";
  for (std::size_t r = 0; r < t.rows.size(); ++r) {
    h += "<tr>";
    for (std::size_t c = 0; c < t.header.size(); ++c) {
      const std::string& cell = t.rows[r][c];
      if (static_cast<int>(c) == wells) {
        std::string links;
        for (const auto& f : split_fields(cell, ';')) {
          std::string w(trim(f.text));
          if (w.empty()) continue;
          std::string a = channel >= 0 ? m.anchor_of(t.rows[r][static_cast<std::size_t>(channel)], w) : "";
          links += (links.empty() ? "" : " ") +
                   (a.empty() ? escape(w) : "<a href=\"#" + escape(a) + "\">" + escape(w) + "</a>");
        }
        h += "<td class=\"which\">" + links + "</td>";
      } else if (numeric(t.header[c])) {
        auto v = parse_number(cell);
        std::string text = v ? svg::human(*v, iequals(t.header[c], "cv_pct") ? 3 : 4) : "\u2013";
        h += "<td class=\"num\">" + text + "</td>";
      } else {
        h += "<td>" + escape(iequals(t.header[c], "v0_unit") ? display_unit(cell) : cell) + "</td>";
      }
    }
    h += "</tr>";
  }
  return h + "</tbody></table></div>\n</section>\n";
}

}  // namespace vzero::detail::report
