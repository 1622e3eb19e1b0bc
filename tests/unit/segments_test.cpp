// Tests of lobfix/segments.hpp and lobfix/search_area.hpp.
//
// References: the POA/POD update after an unsuccessful search, POA' = POA (1 - POD) /
// (1 - POA POD) for the searched segment and POA / (1 - POA POD) for the others (search-
// and-rescue planning texts, as quoted in METHODS.md), worked by hand below; MGRS labels
// from GeographicLib's GeoConvert tool (`GeoConvert -m -p -1`, geographiclib-tools 2.1.2,
// run on the segment centres printed by this test when it was written). Scenarios invented.
#include "lobfix/segments.hpp"

#include <GeographicLib/Geodesic.hpp>

#include <cmath>
#include <cstdio>
#include <string>
#include <vector>

#include "detail/cell_polygons.hpp"
#include "lobfix/error.hpp"
#include "lobfix/search_area.hpp"
#include "lobfix/solver.hpp"
#include "test_support.hpp"

using namespace lobfix;

namespace {

// A plan of three segments and a rest, built by hand (the update does not look at shapes).
SearchPlan hand_plan() {
  SearchPlan p;
  const double poa[] = {0.5, 0.3, 0.15};
  for (int i = 0; i < 3; ++i) {
    SearchSegment s;
    s.id = "S0" + std::to_string(i + 1);
    s.rank = i + 1;
    s.poa = s.initial_poa = poa[i];
    s.mgrs = "13TEL" + std::to_string(1000 + i) + "2000";
    p.segments.push_back(s);
  }
  p.rest_poa = p.initial_rest_poa = 0.05;
  return p;
}

const SearchSegment& by_id(const SearchPlan& p, const std::string& id) {
  for (const SearchSegment& s : p.segments) {
    if (s.id == id)
      return s;
  }
  FAIL("no segment " << id);
  return p.segments.front();
}

std::vector<Bearing> scenario(LatLon t) {
  const GeographicLib::Geodesic& g = GeographicLib::Geodesic::WGS84();
  std::vector<Bearing> out;
  const double az[] = {200, 280, 20, 110};
  const double range[] = {3000, 4200, 2500, 5000};
  const double noise[] = {0.8, -1.5, 0.4, 1.1};
  for (int i = 0; i < 4; ++i) {
    double lat = 0, lon = 0, s12 = 0, a1 = 0, a2 = 0;
    g.Direct(t.lat_deg, t.lon_deg, az[i], range[i], lat, lon);
    g.Inverse(lat, lon, t.lat_deg, t.lon_deg, s12, a1, a2);
    Bearing b;
    b.station = "W" + std::to_string(i);
    b.lat_deg = lat;
    b.lon_deg = lon;
    b.azimuth_deg = wrap_deg360(a1 + noise[i]);
    b.sigma_deg = 3.0;
    out.push_back(b);
  }
  return out;
}

}  // namespace

TEST_CASE("Bayes update after an unsuccessful search, against a hand-worked example") {
  // POA 0.50, 0.30, 0.15 and rest 0.05; S01 searched with POD 0.6:
  //   1 - POA POD = 1 - 0.5 x 0.6 = 0.7
  //   S01: 0.5 x 0.4 / 0.7 = 0.2857143;  S02: 0.3 / 0.7 = 0.4285714
  //   S03: 0.15 / 0.7 = 0.2142857;       rest: 0.05 / 0.7 = 0.0714286  (sum 1)
  // Then S02 searched with POD 0.5: 1 - 0.4285714 x 0.5 = 0.7857143
  //   S01: 0.2857143 / 0.7857143 = 0.3636364; S02: 0.2142857 / 0.7857143 = 0.2727273
  //   S03: 0.2142857 / 0.7857143 = 0.2727273; rest: 0.0714286 / 0.7857143 = 0.0909091
  SearchPlan p = hand_plan();
  apply_searches(p, {{"S01", 0.6}});
  CHECK_ABS(by_id(p, "S01").poa, 0.2857143, 1e-7);
  CHECK_ABS(by_id(p, "S02").poa, 0.4285714, 1e-7);
  CHECK_ABS(by_id(p, "S03").poa, 0.2142857, 1e-7);
  CHECK_ABS(p.rest_poa, 0.0714286, 1e-7);
  CHECK(p.segments.front().id == "S02");  // ranked again
  CHECK(by_id(p, "S01").rank == 2);
  apply_searches(p, {{"13TEL10012000", 0.5}});  // S02 by its MGRS label
  CHECK_ABS(by_id(p, "S01").poa, 0.3636364, 1e-7);
  CHECK_ABS(by_id(p, "S02").poa, 0.2727273, 1e-7);
  CHECK_ABS(by_id(p, "S03").poa, 0.2727273, 1e-7);
  CHECK_ABS(p.rest_poa, 0.0909091, 1e-7);
  CHECK_ABS(by_id(p, "S02").combined_pod, 0.5, 1e-12);
  CHECK_ABS(p.segments.back().cumulative_poa + p.rest_poa, 1.0, 1e-12);
  // Searching the same segment twice combines the PODs: 1 - (1 - 0.6)(1 - 0.5) = 0.8, and
  // the POA is the same as one search with POD 0.8: 0.5 x 0.2 / (1 - 0.4) = 0.1666667.
  SearchPlan q = hand_plan();
  apply_searches(q, {{"S01", 0.6}, {"S01", 0.5}});
  CHECK_ABS(by_id(q, "S01").combined_pod, 0.8, 1e-12);
  CHECK_ABS(by_id(q, "S01").poa, 0.1666667, 1e-7);

  CHECK_THROWS_AS(apply_searches(p, {{"S09", 0.5}}), InputError);
  CHECK_THROWS_AS(apply_searches(p, {{"S01", 1.5}}), InputError);
  const auto r = parse_search_report("S03:70%");
  REQUIRE(r.has_value());
  CHECK(r->segment == "S03");
  CHECK_ABS(r->pod, 0.7, 1e-12);
  CHECK_FALSE(parse_search_report("S03").has_value());
  CHECK_FALSE(parse_search_report("S03:x").has_value());
  CHECK_FALSE(parse_search_report(":0.5").has_value());
}

TEST_CASE("segments and the rest hold all the probability, on MGRS-aligned squares") {
  const LatLon t{45.37, -104.84};
  const std::vector<Bearing> b = scenario(t);
  FixResult r;
  r.fix = solve_fix(b);
  REQUIRE(r.fix.ok());
  r.uncertainty = describe_uncertainty(r.fix, {});
  SearchAreaOptions o;
  o.map.cell_m = 10;
  o.map.align_m = 250;
  const SearchArea a = make_search_area(b, r, o);
  REQUIRE(a.map.ok);
  REQUIRE(!a.plan.segments.empty());
  double sum = a.plan.rest_poa;
  for (const SearchSegment& s : a.plan.segments)
    sum += s.poa;
  MESSAGE(a.plan.segments.size() << " segments, rest " << a.plan.rest_poa);
  CHECK_ABS(sum, 1.0, 1e-9);
  // The segments cover the 95% region: together they hold at least 95%.
  CHECK(a.plan.segments.back().cumulative_poa >= 0.95);
  // Ranked by POA, cumulative POA adds up.
  for (std::size_t i = 1; i < a.plan.segments.size(); ++i) {
    CHECK(a.plan.segments[i - 1].poa >= a.plan.segments[i].poa);
    CHECK_ABS(a.plan.segments[i].cumulative_poa,
              a.plan.segments[i - 1].cumulative_poa + a.plan.segments[i].poa, 1e-12);
  }
  // Centres lie on the 250 m UTM lattice (centre = multiple of 250 + 125), and merged
  // segments only arise from squares under the threshold.
  for (const SearchSegment& s : a.plan.segments) {
    const UtmPoint u = utm_forward(a.map.grid.zone, s.centre);
    CHECK_ABS(std::remainder(u.easting_m - 125.0, 250.0), 0.0, 1e-3);
    CHECK_ABS(std::remainder(u.northing_m - 125.0, 250.0), 0.0, 1e-3);
    CHECK(s.squares >= 1);
    CHECK(s.outline.size() == 1);
  }
  // MGRS labels of the first two centres against GeoConvert (see the file header): the
  // centres printed here were fed to `GeoConvert -m -p -1`.
  for (std::size_t i = 0; i < std::min<std::size_t>(2, a.plan.segments.size()); ++i) {
    const SearchSegment& s = a.plan.segments[i];
    char line[96];
    std::snprintf(line, sizeof line, "%.9f %.9f", s.centre.lat_deg, s.centre.lon_deg);
    MESSAGE(s.id << " centre " << line << " MGRS " << s.mgrs);
  }
  // GeoConvert gave 13TEL12622412 for "45.370524878 -104.838772834" (S01) and
  // 13TEL12622437 for "45.372775204 -104.838766440" (S02).
  REQUIRE(a.plan.segments.size() >= 2);
  CHECK(a.plan.segments[0].mgrs == "13TEL12622412");
  CHECK(a.plan.segments[1].mgrs == "13TEL12622437");
}

TEST_CASE("cell outlines: holes, parts touching at a corner, and areas") {
  // 5 x 4 grid (row 0 at the top):
  //   # # # . #
  //   # . # . .
  //   # # # # .
  //   . . . . #
  const std::vector<char> inside = {1, 1, 1, 0, 1,  //
                                    1, 0, 1, 0, 0,  //
                                    1, 1, 1, 1, 0,  //
                                    0, 0, 0, 0, 1};
  const auto polys = detail::trace_cells(inside, 5, 4);
  // Three parts: the ring with its hole (9 cells), the lone cell top right, and the cell at
  // bottom right, which touches the ring only at a corner.
  REQUIRE(polys.size() == 3);
  long total = 0;
  int with_hole = 0;
  for (const auto& p : polys) {
    total += p.cells;
    if (!p.holes.empty()) {
      ++with_hole;
      CHECK(p.cells == 9);
      CHECK(p.holes.size() == 1);
      CHECK(p.holes[0].size() == 5);  // a unit square, closed
    }
    CHECK(p.outer.front().x == p.outer.back().x);
    CHECK(p.outer.front().y == p.outer.back().y);
  }
  CHECK(with_hole == 1);
  CHECK(total == 11);
}

TEST_CASE("a search area near the pole is made on the UPS grid and holds all the probability") {
  // Above 84 N MGRS and UTM give way to UPS (zone 0; EPSG 32661 is WGS 84 / UPS North).
  const std::vector<Bearing> b = scenario({86.2, 40.0});
  FixResult r;
  r.fix = solve_fix(b);
  REQUIRE(r.fix.ok());
  r.uncertainty = describe_uncertainty(r.fix, {});
  const SearchArea a = make_search_area(b, r, {});
  INFO(a.map.message);
  REQUIRE(a.map.ok);
  CHECK(a.map.grid.zone.zone == 0);
  CHECK(a.map.grid.zone.epsg() == 32661);
  double sum = a.plan.rest_poa;
  for (const SearchSegment& s : a.plan.segments) {
    sum += s.poa;
    CHECK(s.mgrs.rfind("Z", 0) == 0);  // UPS north, east of the 0 meridian: band Z
  }
  CHECK_ABS(sum, 1.0, 1e-9);
  CHECK(!a.plan.segments.empty());
}

TEST_CASE("a search area across the antimeridian stays whole and its outlines continuous") {
  // The fix 3 km west of 180 deg: the map (zone 60) runs past the antimeridian; outline
  // longitudes are continuous (they may pass 180) so that the exporters can cut them there
  // (RFC 7946 section 3.1.9).
  const std::vector<Bearing> b = scenario({-16.8, 179.97});
  FixResult r;
  r.fix = solve_fix(b);
  REQUIRE(r.fix.ok());
  r.uncertainty = describe_uncertainty(r.fix, {});
  SearchAreaOptions o;
  o.map.half_side_m = 6000.0;
  const SearchArea a = make_search_area(b, r, o);
  REQUIRE(a.map.ok);
  CHECK(a.map.grid.zone.zone == 60);
  double sum = a.plan.rest_poa;
  for (const SearchSegment& s : a.plan.segments)
    sum += s.poa;
  CHECK_ABS(sum, 1.0, 1e-9);
  for (const HpdRegion& reg : a.regions) {
    for (const GeoPolygon& part : reg.parts) {
      for (std::size_t i = 1; i < part.outer.size(); ++i)
        CHECK(std::fabs(part.outer[i].lon_deg - part.outer[i - 1].lon_deg) < 1.0);
    }
  }
}
