// fit_table (a rates or summary table in, fits out) and the `vzero fit` command, checked
// against R's nls on Puromycin and against noiseless curves.
#include <cmath>
#include <filesystem>
#include <nlohmann/json.hpp>

#include "fit_data.hpp"
#include "test_support.hpp"
#include "vzero/error.hpp"
#include "vzero/fit.hpp"
#include "vzero/table.hpp"

using namespace vzero::test;

TEST_CASE("fit_table: filters role and flags, groups, units, kcat (Puromycin as a rates table)") {
  const auto table = vzero::read_table(vzero::test::data("fit_puromycin_rates.csv"));
  vzero::FitTableOptions o;
  o.x_column = "substrate_ppm";
  o.group_columns = {"state"};
  o.enzyme_column = "enzyme_nM";
  const auto t = vzero::fit_table(table, o);
  CHECK(t.y_column == "v0");
  CHECK(t.rows_read == 26);
  CHECK(t.rows_used == 23);
  CHECK(t.rows_other_role == 1);
  CHECK(t.rows_flagged == 1);
  CHECK(t.rows_missing == 1);
  CHECK(t.v_unit == "counts/min/min");
  CHECK(t.x_unit == "ppm");
  CHECK(t.enzyme_unit == "nM");
  REQUIRE(t.fits.size() == 2);
  CHECK(t.fits[0].group_values == std::vector<std::string>{"treated"});
  REQUIRE(t.fits[0].result.ok);
  CHECK_REL(t.fits[0].result.parameters[0].estimate, 212.683743142536, 1e-6);
  CHECK_REL(t.fits[1].result.parameters[1].estimate, 0.0477081845059544, 1e-6);
  REQUIRE(t.fits[0].derived.size() == 2);
  CHECK_REL(t.fits[0].derived[0].estimate, 212.683743142536 / 2, 1e-6);
  CHECK(t.fits[0].units ==
        std::vector<std::string>{"counts/min/min", "ppm", "counts/min/min per nM", "counts/min/min per nM per ppm"});
  const auto csv = vzero::parse_table("fit.csv", vzero::fit_csv(t));
  CHECK(csv.header == std::vector<std::string>{"state", "model", "parameter", "estimate", "se", "ci_low", "ci_high",
                                               "profile_low", "profile_high", "unit", "n", "df", "rss", "residual_sd",
                                               "aic", "converged", "iterations", "weighting", "message"});
  CHECK(csv.rows.size() == 8);  // 2 groups × (Vmax, Km, kcat, kcat/Km)
  const auto diag = vzero::parse_table("diag.csv", vzero::fit_diagnostics_csv(t));
  CHECK(diag.rows.size() == 23 + 2 * 41);
  CHECK_THROWS_WITH_AS(
      [&] {
        auto bad = o;
        bad.x_column = "conc";
        vzero::fit_table(table, bad);
      }(),
      doctest::Contains("expected a column named \"conc\""), vzero::InputError);
}

TEST_CASE("fit_table: summary table with v0_mean and replicate-sd weights 1/sd^2") {
  // Puromycin treated replicate pairs as a summary (mean, sd of each pair), computed here.
  std::string text = "state,substrate,v0_mean,v0_sd,n\n";
  std::vector<double> s, m, w;
  for (std::size_t k = 0; k < 12; k += 2) {
    const double a = puro_treated_v[k], b = puro_treated_v[k + 1];
    const double mean = (a + b) / 2, sd = std::fabs(a - b) / std::sqrt(2.0);
    text += "treated," + vzero::format_number(puro_treated_S[k]) + "," + vzero::format_number(mean) + "," +
            vzero::format_number(sd) + ",2\n";
    s.push_back(puro_treated_S[k]);
    m.push_back(mean);
    w.push_back(1 / (sd * sd));
  }
  vzero::FitTableOptions o;
  o.x_column = "substrate";
  o.weighting = vzero::Weighting::replicate_sd;
  const auto t = vzero::fit_table(vzero::parse_table("summary.csv", text), o);
  CHECK(t.y_column == "v0_mean");
  CHECK(t.sd_column == "v0_sd");
  REQUIRE(t.fits.size() == 1);
  REQUIRE(t.fits[0].result.ok);
  const auto direct = vzero::fit_model(s, m, w, builtin("mm"));
  REQUIRE(direct.ok);
  CHECK_REL(t.fits[0].result.parameters[0].estimate, direct.parameters[0].estimate, 1e-12);
  CHECK_REL(t.fits[0].result.parameters[1].se, direct.parameters[1].se, 1e-12);
}

TEST_CASE("fit_table: replicate SDs from per-well rows, and weights that cannot be formed") {
  // Puromycin treated: each concentration has 2 wells; weight 1/sd^2 of the pair.
  std::string text = "substrate,v0\n";
  std::vector<double> w;
  for (std::size_t k = 0; k < 12; ++k) {
    text += vzero::format_number(puro_treated_S[k]) + "," + vzero::format_number(puro_treated_v[k]) + "\n";
    const double d = puro_treated_v[k - k % 2] - puro_treated_v[k - k % 2 + 1];
    w.push_back(2 / (d * d));  // sd of a pair = |a - b|/sqrt(2)
  }
  vzero::FitTableOptions o;
  o.x_column = "substrate";
  o.weighting = vzero::Weighting::replicate_sd;
  const auto t = vzero::fit_table(vzero::parse_table("wells.csv", text), o);
  REQUIRE(t.fits.size() == 1);
  REQUIRE(t.fits[0].result.ok);
  const auto direct = vzero::fit_model(puro_treated_S, puro_treated_v, w, builtin("mm"));
  CHECK_REL(t.fits[0].result.parameters[1].estimate, direct.parameters[1].estimate, 1e-12);

  const auto single = vzero::fit_table(vzero::parse_table("wells.csv", "substrate,v0\n1,2\n2,3\n2,3.5\n4,4\n"), o);
  CHECK(single.fits[0].result.message ==
        "replicate-sd weighting: substrate 1 has 1 replicate(s) with sd 0; every concentration needs at least 2 "
        "replicates that differ");
  o.weighting = vzero::Weighting::relative;
  const auto negative = vzero::fit_table(vzero::parse_table("wells.csv", "substrate,v0\n1,-0.1\n2,3\n2,3.5\n4,4\n"), o);
  CHECK(negative.fits[0].result.message == "relative weighting (1/v^2) needs positive rates; 1 of 4 rates are <= 0");
}

TEST_CASE("no-substrate controls: v(0) = 0 is a data point, left out only under relative weighting") {
  // Puromycin treated (R nls, REFERENCES.md §4a) plus two rows at S = 0 with v = 0. Every
  // model gives v(0) = 0 whatever its parameters (closed form), so these points leave the
  // estimates and the RSS as R has them and add one degree of freedom each.
  std::vector<double> s = puro_treated_S, v = puro_treated_v;
  s.insert(s.begin(), {0.0, 0.0});
  v.insert(v.begin(), {0.0, 0.0});
  const auto r = vzero::fit_model(s, v, {}, builtin("mm"));
  REQUIRE(r.ok);
  CHECK(r.n == 14);
  CHECK(r.df == 12);
  CHECK_REL(r.parameters[0].estimate, 212.683743142536, 1e-6);
  CHECK_REL(r.parameters[1].estimate, 0.0641212816815671, 1e-6);
  CHECK_REL(r.rss, 1195.4488144393588, 1e-9);
  CHECK_REL(r.residual_sd, std::sqrt(1195.4488144393588 / 12), 1e-7);

  // As a table: the controls (here a rate 0.8 and one of -0.4, as blank-corrected controls
  // read) are kept unweighted; with relative weights 1/v^2 they have no weight, so they are
  // left out and counted, and the fit equals the weighted fit of the other 12 rows. (They
  // made the whole fit fail before: "relative weighting (1/v^2) needs positive rates".)
  std::string text = "substrate,v0\n0,0.8\n0,-0.4\n";
  std::vector<double> w;
  for (std::size_t k = 0; k < 12; ++k) {
    text += vzero::format_number(puro_treated_S[k]) + "," + vzero::format_number(puro_treated_v[k]) + "\n";
    w.push_back(1 / (puro_treated_v[k] * puro_treated_v[k]));
  }
  const auto table = vzero::parse_table("rates.csv", text);
  vzero::FitTableOptions o;
  o.x_column = "substrate";
  const auto plain = vzero::fit_table(table, o);
  CHECK(plain.rows_used == 14);
  CHECK(plain.notes.empty());
  REQUIRE(plain.fits[0].result.ok);
  CHECK(plain.fits[0].result.df == 12);
  CHECK_REL(plain.fits[0].result.parameters[0].estimate, 212.683743142536, 1e-6);
  CHECK_REL(plain.fits[0].result.rss, 1195.4488144393588 + 0.8 * 0.8 + 0.4 * 0.4, 1e-9);
  o.weighting = vzero::Weighting::relative;
  const auto relative = vzero::fit_table(table, o);
  CHECK(relative.rows_read == 14);
  CHECK(relative.rows_used == 12);
  CHECK(relative.notes == std::vector<std::string>{"skipped 2 rows with substrate = 0 (no-substrate controls): every "
                                                   "model gives v = 0 there, and relative weighting (1/v^2) has no "
                                                   "weight for them"});
  REQUIRE(relative.fits[0].result.ok);
  const auto direct = vzero::fit_model(puro_treated_S, puro_treated_v, w, builtin("mm"));
  REQUIRE(direct.ok);
  CHECK(relative.fits[0].result.n == 12);
  CHECK_REL(relative.fits[0].result.parameters[0].estimate, direct.parameters[0].estimate, 1e-12);
  CHECK_REL(relative.fits[0].result.parameters[1].se, direct.parameters[1].se, 1e-12);
}

TEST_CASE("fit_table: a rate too large for a double says so; one too small for a double reads as 0") {
  // DBL_MAX = 1.7976931348623157e308 (C11 §5.2.4.2.2); 1e-400 rounds to 0 (IEEE 754, from memory).
  vzero::FitTableOptions o;
  o.x_column = "substrate";
  try {
    vzero::fit_table(vzero::parse_table("rates.csv", "substrate,v0\n1,2\n2,1e999\n"), o);
    FAIL("expected an InputError");
  } catch (const vzero::InputError& e) {
    CHECK(e.formatted() ==
          "rates.csv:3:3: expected a number in column \"v0\", found \"1e999\", which is too large for a double (the "
          "largest is 1.7976931348623157e308)\n"
          "  possible fix: write numbers with '.' as the decimal mark and no units or thousands separators");
  }
  const auto t = vzero::fit_table(vzero::parse_table("rates.csv", "substrate,v0\n1e-400,1\n2,3\n"), o);
  REQUIRE(t.fits.at(0).s.size() == 2);
  CHECK(t.fits[0].s[0] == 0.0);
}

TEST_CASE("fit_table: global inhibition fit, JSON and per-level diagnostic curves") {
  std::vector<double> s, i, v;
  make_data({builtin("competitive"), {12, 50, 25}}, s, i, v);
  std::string text = "substrate,inhibitor_uM,v0\n";
  for (std::size_t k = 0; k < s.size(); ++k)
    text += vzero::format_number(s[k]) + "," + vzero::format_number(i[k]) + "," + vzero::format_number(v[k]) + "\n";
  vzero::FitTableOptions o;
  o.x_column = "substrate";
  o.inhibitor_column = "inhibitor_uM";
  o.models = {&builtin("competitive"), &builtin("mm")};
  const auto t = vzero::fit_table(vzero::parse_table("inh.csv", text), o);
  REQUIRE(t.fits.size() == 2);
  REQUIRE(t.fits[0].result.ok);
  CHECK_REL(t.fits[0].result.parameters[2].estimate, 25, 1e-8);
  CHECK(t.fits[0].units[2] == "uM");
  const auto diag = vzero::parse_table("diag.csv", vzero::fit_diagnostics_csv(t));
  // competitive: 40 points + 4 inhibitor levels x 41; mm (pooled): 40 points + 41.
  CHECK(diag.rows.size() == 40 + 4 * 41 + 40 + 41);
  const auto j = nlohmann::json::parse(vzero::fit_json(t, o));
  CHECK(j["fits"].size() == 2);
  CHECK(j["fits"][0]["model"] == "competitive");
  CHECK(j["fits"][0]["parameters"][2]["name"] == "Kic");
  CHECK(j["fits"][0]["correlation"].size() == 3);
}

TEST_CASE("CLI: vzero fit reproduces Puromycin from a rates table (REFERENCES.md §4a)") {
  const TempDir dir;
  std::filesystem::copy_file(data("fit_puromycin_rates.csv"), dir / "rates.csv");
  const CommandResult r = run_vzero(
      "fit rates.csv --x substrate_ppm --group state --enzyme enzyme_nM -o fit.csv "
                          "--json fit.json --diagnostics diag.csv",
      dir.path.string());
  INFO("command: " << r.command << "\nstdout:\n" << r.out << "\nstderr:\n" << r.err);
  REQUIRE(r.status == 0);
  const auto fit = vzero::read_table(dir / "fit.csv");
  const int param = fit.require_column("parameter", ""), est = fit.require_column("estimate", "");
  const int se = fit.require_column("se", ""), state = fit.require_column("state", "");
  int checked = 0;
  for (std::size_t k = 0; k < fit.rows.size(); ++k) {
    const auto& row = fit.rows[k];
    const bool treated = row[static_cast<std::size_t>(state)] == "treated";
    const std::string& p = row[static_cast<std::size_t>(param)];
    if (p == "Vmax") {
      CHECK_REL(*fit.number(k, est), treated ? 212.683743142536 : 160.280046182714, 1e-6);
      CHECK_REL(*fit.number(k, se), treated ? 6.94715516 : 6.48024550, 1e-5);
      ++checked;
    } else if (p == "Km") {
      CHECK_REL(*fit.number(k, est), treated ? 0.0641212816815671 : 0.0477081845059544, 1e-6);
      CHECK_REL(*fit.number(k, se), treated ? 0.00828094950 : 0.00778187524, 1e-5);
      ++checked;
    }
  }
  CHECK(checked == 4);
  CHECK(std::filesystem::exists(dir.path / "fit.json"));
  CHECK(std::filesystem::exists(dir.path / "diag.csv"));
  CHECK(r.out.find("state = treated | mm") != std::string::npos);
}

TEST_CASE("CLI: bad usage exits 2, a missing column exits 1 naming the column and the option") {
  const TempDir dir;
  std::filesystem::copy_file(data("fit_puromycin_rates.csv"), dir / "rates.csv");
  {
    const CommandResult r = run_vzero("fit rates.csv --x substrate_ppm --model quadratic", dir.path.string());
    INFO("command: " << r.command << "\nstderr:\n" << r.err);
    CHECK(r.status == 2);
    CHECK(r.err ==
          "vzero fit: --model quadratic: unknown model; choose mm, substrate-inhibition, hill, competitive, "
          "uncompetitive, mixed, 4pl, morrison or all\n  see: vzero fit --help\n");
  }
  {
    const CommandResult r = run_vzero("fit rates.csv --x substrate_ppm --model competitive", dir.path.string());
    CHECK(r.status == 2);
    CHECK(r.err ==
          "vzero fit: --model competitive needs --inhibitor COLUMN (the inhibitor concentration)\n"
          "  see: vzero fit --help\n");
  }
  {
    const CommandResult r = run_vzero("fit rates.csv --x conc", dir.path.string());
    INFO("command: " << r.command << "\nstderr:\n" << r.err);
    CHECK(r.status == 1);
    CHECK(r.err ==
          "rates.csv:1: expected a column named \"conc\"; found: source, channel, well, row, column, role, "
          "substrate_ppm, state, enzyme_nM, v0, v0_se, v0_unit, flags\n"
          "  possible fix: pass --x with the substrate concentration column\n");
    CHECK_FALSE(std::filesystem::exists(dir.path / "fit.csv"));
  }
  {
    // The name with a unit after it is the column most likely meant.
    const CommandResult r = run_vzero("fit rates.csv --x substrate", dir.path.string());
    CHECK(r.status == 1);
    CHECK(r.err.find("  possible fixes:\n    - did you mean \"substrate_ppm\"? Give that name (in quotes) where you "
                     "gave \"substrate\"\n") != std::string::npos);
  }
  {
    const CommandResult r = run_vzero("fit --help", dir.path.string());
    CHECK(r.status == 0);
    CHECK(r.out.find("--weight") != std::string::npos);
  }
}
