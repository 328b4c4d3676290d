// The report's campaign section: when a run holds several exports whose plate map has both
// screening controls, one view across the plates of each channel — Z′ per plate against the
// threshold, the hit rate per plate and the controls' mean rates over the run (drift over
// the day). Everything is worked from the page model (the wells as rates.csv gives them back)
// and what datapackage.json records (--min-z-prime, --hit-threshold, each export's metadata),
// with the same functions that wrote rates.csv and the plate-quality table
// (include/vzero/plate_quality.hpp), so the page and the tables cannot disagree.
#pragma once

#include <string>
#include <vector>

#include "report/report_model.hpp"
#include "vzero/plate_quality.hpp"

namespace vzero::detail::report {

struct CampaignPlate {
  const PlateView* plate = nullptr;
  PlateControls controls;  // unflagged control rates, as analyse_run takes them
  PlateQuality quality;
  int called = 0;         // unflagged samples with an activity (each got a hit call)
  int hits = 0;           // of those, inhibition_pct ≥ the hit threshold
  std::string read_time;  // the export's recorded start, as written ("" when unknown)
  double hours = NAN;     // hours since the campaign's earliest read time
  double hit_rate_pct() const { return called > 0 ? 100.0 * hits / called : NAN; }
};

struct Campaign {
  std::string channel, v0_unit;
  bool mixed_units = false;           // the plates' v0 units differ: their rates are not compared
  std::vector<CampaignPlate> plates;  // in file order (the rates table's)
  double min_z_prime = NAN;           // as recorded; NaN when not recorded
  double hit_threshold_pct = NAN;     // as recorded; NaN when no hit calls were asked for
  std::string time_key;               // the metadata key of the read times; "" = file order
  std::string time_note;              // why the read times are not used, when some are known
  bool by_time() const { return !time_key.empty(); }
};

// One campaign per channel that has at least two plates with both control roles, from at
// least two exports; none otherwise (the section is then left out and the page is as before).
std::vector<Campaign> campaigns_of(const PageData& m);

// "YYYY-MM-DD HH:MM[:SS]" (or with 'T') as hours since 1970-01-01 00:00; NaN for anything else.
double parse_read_time(const std::string& text);

// Each plate's place on the campaign's axis: hours since the first read time, else 1, 2, 3…
std::vector<double> xs_of(const Campaign& c);
// One control's mean rate against xs by least squares, in words: the change over the run
// as % of its average, with its 95 % interval (report_campaign_table.cpp).
std::string campaign_trend(const Campaign& c, const std::vector<double>& xs, bool full);
// The table of the plates: controls, Z′, verdict, hits.
std::string campaign_table(const Campaign& c);

// The section (HTML), "" when there is no campaign.
std::string render_campaign(const std::vector<Campaign>& campaigns);

}  // namespace vzero::detail::report
