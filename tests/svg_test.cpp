// The report's SVG module: nice ticks against hand-worked examples of Heckbert's algorithm,
// number text, escaping, well-formed markup, and the palettes.
#include "vzero/svg.hpp"

#include <algorithm>
#include <cmath>
#include <string>
#include <vector>

#include "test_support.hpp"
#include "xml_check.hpp"

using namespace vzero::svg;
using vzero::test::parse_xml;

namespace {

std::vector<double> ticks_of(double lo, double hi, int target) { return nice_ticks(lo, hi, target).values; }

void check_ticks(const std::vector<double>& got, const std::vector<double>& want) {
  REQUIRE(got.size() == want.size());
  for (std::size_t i = 0; i < got.size(); ++i) {
    if (want[i] == 0)
      CHECK_ABS(got[i], 0.0, 1e-15);
    else
      CHECK_REL(got[i], want[i], 1e-12);
  }
}

}  // namespace

// Expected ticks worked by hand with the algorithm of P. Heckbert, "Nice numbers for graph
// labels", Graphics Gems (1990): range = nicenum(hi − lo, no rounding), step =
// nicenum(range/(target − 1), rounding), ticks from floor(lo/step)·step to ceil(hi/step)·step.
TEST_CASE("nice ticks: hand-worked examples of Heckbert's loose labelling") {
  // [0, 1], 5: range 1; 1/4 = 0.25 rounds to 0.2.
  check_ticks(ticks_of(0, 1, 5), {0, 0.2, 0.4, 0.6, 0.8, 1});
  CHECK(nice_ticks(0, 1, 5).decimals == 1);
  // [105, 543], 5: range nicenum(438) = 500; 125 rounds to 100; 100 … 600.
  check_ticks(ticks_of(105, 543, 5), {100, 200, 300, 400, 500, 600});
  CHECK(nice_ticks(105, 543, 5).decimals == 0);
  // [0, 600] s, 5: range nicenum(600) = 1000; 250 rounds to 200.
  check_ticks(ticks_of(0, 600, 5), {0, 200, 400, 600});
  // [−3.7, 12.2], 5: range nicenum(15.9) = 20; 5 stays 5; floor(−0.74) = −1, ceil(2.44) = 3.
  check_ticks(ticks_of(-3.7, 12.2, 5), {-5, 0, 5, 10, 15});
  // [0.00123, 0.00456], 5: range nicenum(0.00333) = 0.005; 0.00125 rounds to 0.001.
  check_ticks(ticks_of(0.00123, 0.00456, 5), {0.001, 0.002, 0.003, 0.004, 0.005});
  CHECK(nice_ticks(0.00123, 0.00456, 5).decimals == 3);
  // [0, 97.3], 5: range nicenum(97.3) = 100; 25 rounds to 20.
  check_ticks(ticks_of(0, 97.3, 5), {0, 20, 40, 60, 80, 100});
  // [0, 0.6], 5: range nicenum(0.6) = 1; 0.25 rounds to 0.2; 0.6/0.2 is
  // 2.9999999999999996 in doubles, and 0.6 must still be the last tick.
  check_ticks(ticks_of(0, 0.6, 5), {0, 0.2, 0.4, 0.6});
  // [0, 0.6], 4: range 1; 1/3 rounds to 0.5; 0 … 1.
  check_ticks(ticks_of(0, 0.6, 4), {0, 0.5, 1});
  // [0, 12], 3: range nicenum(12) = 20; 10 rounds to 10.
  check_ticks(ticks_of(0, 12, 3), {0, 10, 20});
}

TEST_CASE("nice ticks: degenerate ranges") {
  // lo == hi widens by 10 % of the value: [1.8, 2.2]; range nicenum(0.4) = 0.5, step 0.1.
  check_ticks(ticks_of(2, 2, 5), {1.8, 1.9, 2, 2.1, 2.2});
  // Zero widens to ±1: range 2, 2/4 = 0.5 stays 0.5.
  check_ticks(ticks_of(0, 0, 5), {-1, -0.5, 0, 0.5, 1});
  // Reversed bounds are swapped; non-finite bounds give [0, 1].
  check_ticks(ticks_of(600, 0, 5), {0, 200, 400, 600});
  check_ticks(ticks_of(NAN, 3, 5), {0, 0.2, 0.4, 0.6, 0.8, 1});
  Ticks t = nice_ticks(0, 1, 5);
  CHECK(t.lo == 0);
  CHECK(t.hi == 1);
  CHECK(t.step == doctest::Approx(0.2));
}

TEST_CASE("tick labels") {
  Ticks t = nice_ticks(-3.7, 12.2, 5);
  CHECK(tick_label(-5, t) == "\u22125");
  CHECK(tick_label(0, t) == "0");
  CHECK(tick_label(15, t) == "15");
  Ticks d = nice_ticks(0, 1, 5);
  CHECK(tick_label(0.6000000000000001, d) == "0.6");
  CHECK(tick_label(1, d) == "1.0");
  Ticks tiny = nice_ticks(0.00001, 0.00005, 5);  // step 1e-5: exponent form
  CHECK(tick_label(2e-5, tiny) == "2e-5");
  Ticks big = nice_ticks(0, 3e6, 4);  // step 1e6
  CHECK(tick_label(2e6, big) == "2e6");
}

TEST_CASE("number text is fixed, short and locale-free") {
  CHECK(num(12.5) == "12.5");
  CHECK(num(12.50, 2) == "12.5");
  CHECK(num(3.14159, 3) == "3.142");
  CHECK(num(-0.004) == "0");
  CHECK(num(-0.04) == "0");  // rounds to -0.0 at one decimal
  CHECK(num(-0.06) == "-0.1");
  CHECK(num(100) == "100");
  CHECK(num(NAN) == "0");
  CHECK(human(0.000123456) == "0.0001235");
  CHECK(human(-2.5) == "\u22122.5");
  CHECK(human(1234567) == "1.235e6");
  CHECK(human(4.2554377104377155) == "4.255");
  CHECK(human(149.35754436486707) == "149.4");
  CHECK(human(0) == "0");
  CHECK(human(NAN) == "\u2013");
  CHECK(human(3.2e-7, 3) == "3.2e-7");
}

TEST_CASE("escaping for element content and attributes") {
  CHECK(escape("<a href=\"x\">Tom & 'Jerry'</a>") == "&lt;a href=&quot;x&quot;&gt;Tom &amp; &#39;Jerry&#39;&lt;/a&gt;");
  CHECK(escape("µM·min⁻¹") == "µM·min⁻¹");  // UTF-8 passes through
  CHECK(escape(std::string("a\x01"
                           "b\tc\x1f",
                           6)) == "ab\tc");  // control characters dropped
  Document doc(100, 50);
  doc.text(10, 20, "S < Km & v > 0", "label", "start", 0, {{"data-note", "\"quoted\" <here>"}});
  auto x = parse_xml(doc.str());
  REQUIRE(x.error == "");
  REQUIRE(x.root->children.size() == 1);
  CHECK(x.root->children[0]->text == "S < Km & v > 0");
  CHECK(x.root->children[0]->attr("data-note") == "\"quoted\" <here>");
}

TEST_CASE("document markup is well-formed and draws what was asked") {
  Document doc(200, 100);
  doc.open_group("layer", {{"id", "g1"}});
  doc.rect(1, 2, 30.25, 40, "box");
  doc.line(0, 0, 10, 10, "rule");
  doc.polyline({{0, 0}, {1, 1}, {NAN, 2}, {3, 3}, {4, 4}, {5, NAN}, {6, 6}}, "trace");
  doc.markers({{10, 10}, {20, 20}, {NAN, 1}}, Marker::cross, 2, "bad");
  doc.markers({{10, 10}}, Marker::dot, 1.5, "ok");
  doc.polygon({{0, 0}, {10, 0}, {10, 10}}, "band");
  doc.open_link("well-A1");
  doc.text(5, 5, "A1", "name");
  doc.close_link();
  doc.close_group();
  std::string s = doc.str({{"role", "img"}});
  CHECK(s.rfind("<svg viewBox=\"0 0 200 100\" role=\"img\">", 0) == 0);
  CHECK(s.find("http") == std::string::npos);
  auto x = parse_xml(s);
  REQUIRE_MESSAGE(x.error == "", x.error);
  const auto& g = *x.root->children.at(0);
  CHECK(g.attr("id") == "g1");
  auto rects = g.all([](const vzero::test::XmlNode& n) { return n.name == "rect"; });
  REQUIRE(rects.size() == 1);
  CHECK(rects[0]->attr("width") == "30.2");  // one decimal by default; 30.25 is exact, the tie goes to even
  auto paths = g.all([](const vzero::test::XmlNode& n) { return n.name == "path"; });
  REQUIRE(paths.size() == 3);
  // The NaN points split the line into two pieces; single points are dropped.
  CHECK(paths[0]->attr("d") == "M0 0 L1 1 M3 3 L4 4 M6 6");
  CHECK(paths[1]->attr("d") == "M8 8l4 4m0 -4l-4 4M18 18l4 4m0 -4l-4 4");
  CHECK(paths[2]->attr("d") == "M10 10h0");
  CHECK(paths[2]->attr("stroke-width") == "3");
  CHECK(paths[2]->attr("stroke-linecap") == "round");
  auto links = g.all([](const vzero::test::XmlNode& n) { return n.name == "a"; });
  REQUIRE(links.size() == 1);
  CHECK(links[0]->attr("href") == "#well-A1");
}

TEST_CASE("chart: scales map the tick range onto the plot area") {
  Document doc(400, 300);
  Chart c(doc, {50, 20, 300, 200}, nice_ticks(0, 600, 5), nice_ticks(0, 11.7, 5));
  CHECK(c.x(0) == 50);
  CHECK(c.x(600) == 350);
  CHECK(c.x(300) == 200);
  CHECK(c.y(0) == 220);  // y grows upwards
  CHECK(c.y(15) == 20);  // 11.7: range nicenum(11.7) = 20, step 5, axis up to 15
  c.axes("time (s)", "product (\u00b5M)");
  c.vband(120, 240, "window");
  c.band({0, 300, 600}, {1, 2, 3}, {2, 3, 4}, "ci");
  c.polyline({0, 300, 600}, {0, 6, 12}, "fit");
  c.hline(0, "zero");
  auto x = parse_xml(doc.str());
  REQUIRE_MESSAGE(x.error == "", x.error);
  auto texts = x.root->all([](const vzero::test::XmlNode& n) { return n.name == "text"; });
  std::vector<std::string> labels;
  for (auto* t : texts) labels.push_back(t->text);
  for (const char* want : {"0", "200", "400", "600", "5", "10", "15", "time (s)", "product (\u00b5M)"})
    CHECK_MESSAGE(std::find(labels.begin(), labels.end(), want) != labels.end(), std::string(want));
  auto windows = x.root->all([](const vzero::test::XmlNode& n) { return n.has_class("window"); });
  REQUIRE(windows.size() == 1);
  CHECK(windows[0]->attr("x") == "110");  // 50 + 120/600·300
  CHECK(windows[0]->attr("width") == "60");
  auto bands = x.root->all([](const vzero::test::XmlNode& n) { return n.name == "polygon"; });
  REQUIRE(bands.size() == 1);
  // Upper edge left to right, then the lower edge back.
  CHECK(bands[0]->attr("points") == "50,193.3 200,180 350,166.7 350,180 200,193.3 50,206.7");
}

TEST_CASE("sequential palette: fixed anchors, luminance falls monotonically") {
  CHECK(sequential(0) == "#f6f1dc");
  CHECK(sequential(0.5) == "#4f9a8f");
  CHECK(sequential(1) == "#1d2547");
  CHECK(sequential(-3) == "#f6f1dc");
  CHECK(sequential(7) == "#1d2547");
  double previous = 2;
  for (int i = 0; i <= 200; ++i) {
    double l = luminance(sequential(i / 200.0));
    CHECK(l < previous + 1e-3);  // 8-bit rounding may wobble by less than this
    previous = l;
  }
  CHECK(luminance(sequential(0)) - luminance(sequential(1)) > 0.8);
}

TEST_CASE("luminance and ink follow WCAG 2.1") {
  // WCAG 2.1 relative luminance: 0.2126 R + 0.7152 G + 0.0722 B of linearised sRGB;
  // sRGB 128 linearises to ((128/255 + 0.055)/1.055)^2.4 = 0.21586 (computed by hand).
  CHECK_ABS(luminance("#000000"), 0.0, 1e-12);
  CHECK_REL(luminance("#ffffff"), 1.0, 1e-12);
  CHECK_REL(luminance("#808080"), 0.21586050011389926, 1e-9);
  CHECK(ink_on("#1d2547") == "#ffffff");
  CHECK(ink_on("#f6f1dc") == "#000000");
}

TEST_CASE("Okabe-Ito colours") {
  // Okabe & Ito (2008), Color Universal Design, RGB 0–255 (from memory of the published
  // table): orange 230,159,0; sky blue 86,180,233; bluish green 0,158,115; yellow
  // 240,228,66; blue 0,114,178; vermillion 213,94,0; reddish purple 204,121,167.
  const std::vector<std::string> want = {"#000000", "#E69F00", "#56B4E9", "#009E73",
                                         "#F0E442", "#0072B2", "#D55E00", "#CC79A7"};
  for (std::size_t i = 0; i < 8; ++i) CHECK(std::string(k_okabe_ito[i]) == want[i]);
}
