// The report's thinning of a well's reads (src/report/report_thin.cpp), checked against the
// rule worked out by hand here: per column the first, last, lowest and highest read of the
// trace (the M4 rule, Jugel et al. 2014, PVLDB 7(10)), every outlier, the first and last
// read without a value a column, where breaks start, the window's ends,
// the used dots within half a unit; and a 5,000-read well drawn with a bounded number of
// points. The wells are invented.
#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <string>
#include <vector>

#include "report/report_panel.hpp"
#include "report_sim.hpp"
#include "test_support.hpp"
#include "vzero/report.hpp"
#include "vzero/svg.hpp"

using namespace vzero;
using namespace vzero::detail::report;

namespace {

// 128 reads at t = 0, 1, …, 127 s; on the scale 0–128 s → 0–16 units with one column per
// unit, read t falls in column floor(t / 8) (exact in binary). Within column k the offset
// j = t mod 8 gives y = k + 0.1·j, except j = 2 (the lowest, k − 5) and j = 5 (the highest, k + 5).
WellView stepped_well() {
  WellView w;
  for (int t = 0; t < 128; ++t) {
    const int k = t / 8, j = t % 8;
    w.time_s.push_back(t);
    w.y.push_back(j == 2 ? k - 5.0 : j == 5 ? k + 5.0 : k + 0.1 * j);
    w.read_ok.push_back(1);
    w.used.push_back(0);
  }
  return w;
}

const svg::Scale k_scale{0, 128, 0, 16};
const svg::Scale k_values{0, 1, 55, 0};  // 1 value unit = 55 drawn units, upwards

bool has(const std::vector<std::size_t>& v, std::size_t i) { return std::binary_search(v.begin(), v.end(), i); }

}  // namespace

TEST_CASE("thinning keeps the first, last, lowest and highest read of every column") {
  const WellView w = stepped_well();
  const auto kept = kept_reads(w, k_scale, k_values, 1, k_thin_dot_step);
  // Worked by hand: column k keeps t = 8k (first), 8k + 2 (lowest), 8k + 5 (highest), 8k + 7 (last).
  std::vector<std::size_t> expected;
  for (std::size_t k = 0; k < 16; ++k)
    for (std::size_t j : {0, 2, 5, 7}) expected.push_back(8 * k + j);
  CHECK(kept == expected);
  // Two columns per unit: 4 reads a column, j = 0, 2 | 4, 5, 7 (lowest = first in the
  // first half, highest = 5 in the second; j = 3 and 4 are first and last).
  const auto fine = kept_reads(w, k_scale, k_values, 2, k_thin_dot_step);
  for (std::size_t k = 0; k < 16; ++k) {
    for (std::size_t j : {0, 2, 3, 4, 5, 7}) CHECK(has(fine, 8 * k + j));
    CHECK_FALSE(has(fine, 8 * k + 1));
    CHECK_FALSE(has(fine, 8 * k + 6));
  }
}

TEST_CASE("thinning keeps every marked read, the trace's breaks and the window's ends") {
  WellView w = stepped_well();
  w.t_start_s = 40, w.t_end_s = 90;
  for (std::size_t i = 40; i <= 90; ++i) w.used[i] = 1;
  w.read_ok[20] = 0;                    // no value: a triangle
  w.y[50] = NAN;                        // a break in the trace
  for (std::size_t i = 104; i <= 111; ++i) w.read_ok[i] = 0, w.y[i] = NAN;  // column 13: no values
  w.used[60] = w.used[61] = 0;          // left out inside the window: crosses
  w.used[100] = 0;                      // outside the window: neither dot nor cross
  const auto kept = kept_reads(w, k_scale, k_values, 1, k_thin_dot_step);
  for (std::size_t i : {20, 50, 60, 61}) CHECK(has(kept, i));
  CHECK(has(kept, 49));  // the stretch before the break ends here
  CHECK(has(kept, 51));  // and the next one starts here
  CHECK(has(kept, 40));  // first used read of the window
  CHECK(has(kept, 90));  // last used read of the window
  CHECK(has(kept, 0));
  CHECK(has(kept, 127));
  CHECK_FALSE(has(kept, 100));  // t = 100 is j = 4 of column 12: no rule keeps it
  // Column 13 without values: its first triangle (also where the break starts) and its last.
  CHECK(has(kept, 104));
  CHECK(has(kept, 111));
  for (std::size_t i = 105; i <= 110; ++i) CHECK_FALSE(has(kept, i));
  CHECK(has(kept, 112));  // the trace goes on here
}

TEST_CASE("every dropped used dot lies within half a unit of a kept one in its column") {
  // A noisy window of 4,000 used reads in 16 columns: y = 0.001·t + a sawtooth of 0.3.
  WellView w;
  for (int i = 0; i < 4000; ++i) {
    const double t = i * 0.032;  // 0 … 127.97 s
    w.time_s.push_back(t);
    w.y.push_back(0.001 * t + 0.3 * ((i * 37) % 101) / 100.0);
    w.read_ok.push_back(1);
    w.used.push_back(1);
  }
  w.t_start_s = 0, w.t_end_s = 128;
  const auto kept = kept_reads(w, k_scale, k_values, 1, k_thin_dot_step);
  // Worked out: a column's dots span at most 0.3 + 0.008 values = 16.9 drawn units, so at
  // most 16.9 / 0.5 + 2 dots and 4 trace reads a column are kept, 16 columns: < 16 × 40.
  CHECK(kept.size() < 16 * 40);
  std::size_t checked = 0;
  for (std::size_t i = 0; i < w.time_s.size(); ++i) {
    if (has(kept, i)) continue;
    const double col = std::floor(w.time_s[i] / 8);
    double best = INFINITY;
    for (std::size_t k : kept)
      if (std::floor(w.time_s[k] / 8) == col) best = std::min(best, std::fabs(w.y[k] - w.y[i]) * 55);
    CHECK(best <= k_thin_dot_step * (1 + 1e-9));
    ++checked;
  }
  CHECK(checked > 3000);
}

TEST_CASE("a 5,000-read well is drawn with a few points per column") {
  std::string rates = "source,channel,well,role,v0,v0_unit,slope,intercept,t_start_s,t_end_s,flags\n";
  rates += "x.csv,A340,A1,sample,0.06,AU/min,0.06,0,0,4999,\n";
  std::string traces = "source,channel,well,time_s,status,raw,blank,corrected,concentration,used\n";
  for (int i = 0; i < 5000; ++i)
    traces += fmt::format("x.csv,A340,A1,{},ok,{},0,{},,1\n", i, 0.001 * i + 0.01 * (i % 7), 0.001 * i + 0.01 * (i % 7));
  ReportInput in;
  in.rates = parse_table("r.csv", rates);
  in.traces = parse_table("t.csv", traces);
  in.package_json = test::mini_package("x.csv", "A340", "up");
  in.package_source = "datapackage.json";
  const std::string html = render_report(in);
  const auto at = html.find("class=\"trace\"");
  REQUIRE(at != std::string::npos);
  const auto open = html.rfind("<path", at), close = html.find("/>", at);
  const std::string line = html.substr(open, close - open);
  const auto points = static_cast<std::size_t>(std::count(line.begin(), line.end(), 'L') + 1);
  // The plot is k_panel_w − 6 = 98 units at k_thin_columns = 2 per unit: 196 columns (+1
  // for the last read on the axis's end) of 25.4 reads. Worked out: y spans 0 … 5.059, drawn
  // on 55 units over the padded 5.059 × 1.16, i.e. 9.37 units per value unit; one column's
  // values spread at most 0.0254 + 0.06, 0.80 units, so besides the 4 reads of M4 at most
  // 0.80 / 0.5 + 2 < 4 used dots: under 8 points a column.
  CHECK(points <= 8 * (196 + 1));
  CHECK(points >= 196);  // every column is drawn
}
