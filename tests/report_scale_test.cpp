// The well panels' vertical scales, checked against values worked out here: the shared
// range of a plate, its scale bar, a well's own range, a runaway well on its own scale,
// and a curving well's parabola whose tangent is its v0. The plates are invented.
#include <fmt/format.h>

#include <cmath>
#include <string>
#include <vector>

#include "report_sim.hpp"
#include "test_support.hpp"
#include "vzero/report.hpp"
#include "vzero/table.hpp"
#include "xml_check.hpp"

using namespace vzero;
using vzero::test::XmlNode;

namespace {

// One unconverted well: its reads at 0, 10, …, 100 s and the fitted line (slope per min).
struct WellSpec {
  std::string well;
  std::vector<double> y;
  double slope_per_min = 0, intercept = 0;
  std::string role = "sample";
};

ReportInput plate_of(const std::vector<WellSpec>& wells) {
  std::string rates = "source,channel,well,role,v0,v0_unit,slope,intercept,t_start_s,t_end_s,flags\n";
  std::string traces = "source,channel,well,time_s,status,raw,blank,corrected,concentration,used\n";
  for (const auto& w : wells) {
    rates += fmt::format("x.csv,A340,{},{},{},AU/min,{},{},0,100,\n", w.well, w.role, w.slope_per_min, w.slope_per_min,
                         w.intercept);
    for (std::size_t i = 0; i < w.y.size(); ++i)
      traces += fmt::format("x.csv,A340,{},{},ok,{},0,{},,1\n", w.well, 10 * i, w.y[i], w.y[i]);
  }
  ReportInput in;
  in.rates = parse_table("r.csv", rates);
  in.traces = parse_table("t.csv", traces);
  in.package_json = test::mini_package("x.csv", "A340", "up");
  in.package_source = "datapackage.json";
  return in;
}

std::vector<double> linear(double a, double b) {
  std::vector<double> y;
  for (int i = 0; i <= 10; ++i) y.push_back(a + (b - a) * i / 10.0);
  return y;
}

const XmlNode* panel(const XmlNode& root, const std::string& well) {
  auto all =
      root.all([&](const XmlNode& n) { return n.name == "g" && n.has_class("well") && n.attr("data-well") == well; });
  REQUIRE(all.size() == 1);
  return all[0];
}

}  // namespace

TEST_CASE("a shared scale: the plate's range padded by 8 %, a 1-2-5 scale bar of at most half of it") {
  // A1 rises 0 → 6 (line 3.6 per min from 0 lies on it), A2 is flat at 1, A3 rises −1 → 2.
  const auto in = plate_of({{"A1", linear(0, 6), 3.6, 0}, {"A2", linear(1, 1), 0, 1}, {"A3", linear(-1, 2), 1.8, -1}});
  const std::string html = render_report(in);
  auto doc = test::parse_xml(html);
  REQUIRE_MESSAGE(doc.error == "", doc.error);
  // Range −1 … 6, span 7; padded by 0.08·7 = 0.56 each side: −1.56 … 6.56 (span 8.12).
  for (const char* w : {"A1", "A2", "A3"}) {
    const XmlNode* g = panel(*doc.root, w);
    CHECK(std::stod(g->attr("data-y-lo")) == doctest::Approx(-1.56).epsilon(1e-12));
    CHECK(std::stod(g->attr("data-y-hi")) == doctest::Approx(6.56).epsilon(1e-12));
    CHECK_FALSE(g->has_class("own-scale"));
  }
  // The bar: the largest of 1, 2, 5 × 10^k not above 8.12 / 2 = 4.06 is 2; drawn 2/8.12 of
  // the plot's height (the panel's data-y0 − data-y1).
  auto bars = doc.root->all([](const XmlNode& n) { return n.has_class("scale-bar") && n.has("data-length"); });
  REQUIRE(bars.size() == 8);  // one per row of the 96-well plate
  const XmlNode* g = panel(*doc.root, "A1");
  const double plot_h = std::stod(g->attr("data-y0")) - std::stod(g->attr("data-y1"));
  CHECK(bars[0]->attr("data-value") == "2");
  CHECK(std::stod(bars[0]->attr("data-length")) == doctest::Approx(2 / 8.12 * plot_h).epsilon(0.005));
  CHECK(html.find("(\u22121.56 to 6.56 AU; the bar left of each row is 2 AU)") != std::string::npos);
}

TEST_CASE("a standard on a shared plate: its own scale, as tall as the plate's, centred on its value") {
  // Samples as above (plate range −1.56 … 6.56, span 8.12); a standard flat at 100 is drawn
  // on 100 ± 4.06 and looks flat.
  const auto in = plate_of({{"A1", linear(0, 6), 3.6, 0},
                            {"A2", linear(1, 1), 0, 1},
                            {"A3", linear(-1, 2), 1.8, -1},
                            {"B1", linear(100, 100), 0, 100, "standard"}});
  auto doc = test::parse_xml(render_report(in));
  REQUIRE(doc.error == "");
  const XmlNode* g = panel(*doc.root, "B1");
  CHECK(g->has_class("own-scale"));
  CHECK(std::stod(g->attr("data-y-lo")) == doctest::Approx(95.94).epsilon(1e-12));
  CHECK(std::stod(g->attr("data-y-hi")) == doctest::Approx(104.06).epsilon(1e-12));
  CHECK(std::stod(panel(*doc.root, "A1")->attr("data-y-hi")) == doctest::Approx(6.56).epsilon(1e-12));
}

TEST_CASE("per-well scales: each panel its own padded range, with tick labels") {
  const auto in = plate_of({{"A1", linear(0, 6), 3.6, 0}, {"A2", linear(1, 1), 0, 1}});
  ReportOptions o;
  o.scale = PanelScale::well;
  const std::string html = render_report(in, o);
  auto doc = test::parse_xml(html);
  REQUIRE(doc.error == "");
  // A1: 0 … 6 padded by 0.48; A2 flat at 1: 0.5 … 1.5 padded by 0.08.
  const XmlNode* a1 = panel(*doc.root, "A1");
  CHECK(std::stod(a1->attr("data-y-lo")) == doctest::Approx(-0.48).epsilon(1e-12));
  CHECK(std::stod(a1->attr("data-y-hi")) == doctest::Approx(6.48).epsilon(1e-12));
  const XmlNode* a2 = panel(*doc.root, "A2");
  CHECK(std::stod(a2->attr("data-y-lo")) == doctest::Approx(0.42).epsilon(1e-12));
  CHECK(std::stod(a2->attr("data-y-hi")) == doctest::Approx(1.58).epsilon(1e-12));
  for (const XmlNode* g : {a1, a2}) {
    CHECK(g->has_class("own-scale"));
    auto labels = g->all([](const XmlNode& n) { return n.name == "text" && n.has_class("ytick"); });
    CHECK(labels.size() == 2);
    auto bar = g->all([](const XmlNode& n) { return n.has_class("scale-bar"); });
    REQUIRE(bar.size() == 1);
    const double v = std::stod(bar[0]->attr("data-value"));
    CHECK(v > 0);
    CHECK(v <= std::stod(g->attr("data-y-hi")) - std::stod(g->attr("data-y-lo")));
  }
  auto rows = doc.root->all([](const XmlNode& n) { return n.has_class("scale-bar") && n.has("data-length"); });
  CHECK(rows.empty());  // no shared bar in the margin
}

TEST_CASE("a runaway well keeps its own scale and does not flatten the plate") {
  // 21 wells rising 0 → 1 and one rising 0 → 100. Nearest rank over n = 22 wells:
  // k = floor(0.05·21) = 1, so the top is the second highest well's 1; 100 lies beyond
  // 1 + 0.25·1, so the range stays 0 … 1, padded to −0.08 … 1.08.
  std::vector<WellSpec> wells;
  for (int k = 0; k < 21; ++k) wells.push_back({well_name({k / 12, k % 12}), linear(0, 1), 0.6, 0});
  wells.push_back({"B10", linear(0, 100), 60, 0});
  auto doc = test::parse_xml(render_report(plate_of(wells)));
  REQUIRE(doc.error == "");
  const XmlNode* runaway = panel(*doc.root, "B10");
  CHECK(runaway->has_class("own-scale"));
  const XmlNode* a1 = panel(*doc.root, "A1");
  CHECK_FALSE(a1->has_class("own-scale"));
  CHECK(std::stod(a1->attr("data-y-lo")) == doctest::Approx(-0.08).epsilon(1e-12));
  CHECK(std::stod(a1->attr("data-y-hi")) == doctest::Approx(1.08).epsilon(1e-12));
}

TEST_CASE("a curving well: the parabola through its used reads touches its v0 tangent at time zero") {
  // y = 2 + 0.3·t − 0.001·t² (t in s): initial tangent 0.3 per s = 18 per min at t = 0.
  std::vector<double> y;
  for (int i = 0; i <= 10; ++i) y.push_back(2 + 0.3 * (10 * i) - 0.001 * (10 * i) * (10 * i));
  ReportInput in = plate_of({{"A1", y, 18, 2}});
  std::string rates =
      "source,channel,well,role,v0,v0_unit,slope,intercept,t_start_s,t_end_s,flags,tangent\n"
      "x.csv,A340,A1,sample,18,AU/min,18,2,0,40,,parabola\n";
  in.rates = parse_table("r.csv", rates);
  auto doc = test::parse_xml(render_report(in));
  REQUIRE(doc.error == "");
  auto tangent = panel(*doc.root, "A1")->all([](const XmlNode& n) { return n.has_class("tangent"); });
  REQUIRE(tangent.size() == 1);
  CHECK(std::stod(tangent[0]->attr("data-touch-s")) == doctest::Approx(0).epsilon(1e-9));
  CHECK(doc.root->all([](const XmlNode& n) { return n.has_class("fit-curve-well"); }).size() == 1);
  // The parabola's reads beyond the 40 s window are shaded apart, up to the last used read.
  CHECK(panel(*doc.root, "A1")->all([](const XmlNode& n) { return n.has_class("window-ext"); }).size() == 1);
}
