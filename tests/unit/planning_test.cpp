// Tests of lobfix/planning.hpp: the Cramer-Rao bound and CEP against the hand value of
// /work/shared/METHODS.md (two stations 90 deg apart, sigma 2 deg, range 10 km: 349 m per
// axis, CEP 411 m [derived]), the coverage map at a test cell, and the next-bearing ranking
// against D-optimal geometry (Bishop, Fidan, Anderson, Dogancay, Pathirana, "Optimality
// analysis of sensor-target localization geometries", Automatica 46, 2010 [volume and pages
// from memory]: a new bearing helps most across the long axis of the current ellipse).
// Stations are placed with GeographicLib's own solvers (Karney 2013), not lobfix's.
#include "lobfix/planning.hpp"

#include <gdal_priv.h>
#include <ogrsf_frmts.h>
#include <GeographicLib/Geodesic.hpp>
#include <GeographicLib/UTMUPS.hpp>

#include <algorithm>
#include <cmath>
#include <fstream>
#include <memory>
#include <string>
#include <vector>

#include "lobfix/error.hpp"
#include "lobfix/planning_export.hpp"
#include "lobfix/solver.hpp"
#include "test_support.hpp"

using namespace lobfix;

namespace {

constexpr double kPi = 3.14159265358979323846;
// Invented transmitter in open country.
const LatLon kTx{44.61230, 11.20410};

LatLon around(LatLon centre, double azi_deg, double s_m) {
  double lat = 0, lon = 0;
  GeographicLib::Geodesic::WGS84().Direct(centre.lat_deg, centre.lon_deg, azi_deg, s_m, lat, lon);
  return {lat, lon};
}

double azimuth_deg(LatLon from, LatLon to) {
  double s12 = 0, azi1 = 0, azi2 = 0;
  GeographicLib::Geodesic::WGS84().Inverse(from.lat_deg, from.lon_deg, to.lat_deg, to.lon_deg, s12,
                                           azi1, azi2);
  return azi1;
}

Bearing exact_bearing(const std::string& station, LatLon at, LatLon target, double sigma_deg) {
  Bearing b;
  b.station = station;
  b.lat_deg = at.lat_deg;
  b.lon_deg = at.lon_deg;
  b.azimuth_deg = wrap_deg360(azimuth_deg(at, target));
  b.sigma_deg = sigma_deg;
  return b;
}

// The METHODS.md check: stations 10 km south and 10 km west of the transmitter.
std::vector<PlannedStation> square_pair() {
  return {{"south", around(kTx, 180.0, 10000.0), 2.0, std::nullopt},
          {"west", around(kTx, 270.0, 10000.0), 2.0, std::nullopt}};
}

// 349 m per axis: sigma * range = (2 pi / 180) * 10,000 m = 349.07 m. CEP for equal axes:
// 1.1774 sigma (METHODS.md, CEP table, r = 1) = sqrt(2 ln 2) sigma = 410.99 m.
const double kHandSigmaM = 2.0 * kPi / 180.0 * 10000.0;
const double kHandCepM = std::sqrt(2.0 * std::log(2.0)) * kHandSigmaM;

}  // namespace

TEST_CASE("planning: Cramer-Rao bound of two stations 90 deg apart matches the hand value") {
  const CramerRao b = cramer_rao(square_pair(), kTx);
  REQUIRE(b.usable);
  CHECK(b.stations_in_range == 2);
  CHECK_ABS(b.max_crossing_deg, 90.0, 0.01);
  // On the ellipsoid the reduced length differs from the distance by s^3 / (6 R^2), about
  // 4 mm at 10 km: the plane's hand value holds to well under a metre.
  CHECK_ABS(std::sqrt(b.covariance[0][0]), kHandSigmaM, 0.5);
  CHECK_ABS(std::sqrt(b.covariance[1][1]), kHandSigmaM, 0.5);
  CHECK_ABS(b.covariance[0][1], 0.0, 1.0);
  CHECK_ABS(kHandSigmaM, 349.07, 0.01);
  CHECK_ABS(b.cep_m, kHandCepM, 0.5);
  CHECK_ABS(b.cep_m, 411.0, 0.5);  // METHODS.md
  CHECK_ABS(b.rms_m, std::sqrt(2.0) * kHandSigmaM, 0.7);
}

TEST_CASE("planning: no usable geometry with one station in range or collinear lines") {
  std::vector<PlannedStation> one_in_range = square_pair();
  one_in_range[1].max_range_m = 5000.0;
  const CramerRao far = cramer_rao(one_in_range, kTx);
  CHECK_FALSE(far.usable);
  CHECK(far.stations_in_range == 1);
  // A point on the line through both stations, beyond the south one: lines of sight cross at
  // 0 deg there.
  const std::vector<PlannedStation> pair = square_pair();
  const LatLon beyond =
      around(pair[0].position, azimuth_deg(pair[1].position, pair[0].position), 5000.0);
  const CramerRao collinear = cramer_rao(pair, beyond);
  CHECK_FALSE(collinear.usable);
  CHECK(collinear.stations_in_range == 2);
  CHECK(collinear.max_crossing_deg < 1.0);
  PlannedStation bad = pair[0];
  bad.sigma_deg = 0.0;
  CHECK_THROWS_AS(cramer_rao({bad, pair[1]}, kTx), InputError);
}

TEST_CASE("planning: the tabulated CEP agrees with circular_radius and the METHODS.md table") {
  // 401 ratios, most between the table's nodes (1/256 apart), and the ends.
  double worst = 0.0;
  for (int i = 0; i <= 400; ++i) {
    const double r = i / 400.0;
    const Covariance2 cov{{{4.0e4, 0.0}, {0.0, 4.0e4 * r * r}}};
    const double exact = circular_radius(cov, 0.5);
    worst = std::max(worst, std::fabs(fast_cep_m(cov) - exact) / exact);
  }
  MESSAGE("largest relative error of the tabulated CEP: " << worst);
  CHECK(worst <= 1e-7);
  // METHODS.md: CEP / sigma_max = 1.1774 (r = 1), 0.8704 (0.5), 0.7059 (0.2), 0.6820 (0.1),
  // 0.6745 (0) [derived by integration]; a rotated covariance gives the same.
  const double t = 0.6;
  const double c = std::cos(t), s = std::sin(t);
  const double l1 = 100.0 * 100.0, l2 = 50.0 * 50.0;
  const Covariance2 rotated{
      {{l1 * c * c + l2 * s * s, (l1 - l2) * c * s}, {(l1 - l2) * c * s, l1 * s * s + l2 * c * c}}};
  CHECK_ABS(fast_cep_m(rotated), 87.04, 0.01);
  CHECK_ABS(fast_cep_m({{{1e4, 0.0}, {0.0, 1e4}}}), 117.74, 0.01);
  CHECK_ABS(fast_cep_m({{{1e4, 0.0}, {0.0, 0.0}}}), 67.45, 0.01);
}

TEST_CASE("planning: coverage map cell equals the hand-computed Cramer-Rao CEP") {
  const std::vector<PlannedStation> stations = square_pair();
  // A 41 x 41 grid of 100 m cells whose centre cell (20, 20) is centred on the transmitter,
  // placed with GeographicLib's own UTM.
  int zone = 0;
  bool northp = true;
  double x = 0, y = 0;
  GeographicLib::UTMUPS::Forward(kTx.lat_deg, kTx.lon_deg, zone, northp, x, y);
  UtmGrid grid;
  grid.zone = {zone, northp};
  grid.cell_m = 100.0;
  grid.columns = 41;
  grid.rows = 41;
  grid.west_m = x - 20.5 * grid.cell_m;
  grid.north_m = y + 20.5 * grid.cell_m;
  PlanningOptions options;
  options.num_threads = 2;
  int progress_calls = 0;
  options.progress = [&](std::size_t done, std::size_t total) {
    ++progress_calls;
    CHECK(done <= total);
  };
  const CoverageMap map = coverage_map(stations, grid, options);
  REQUIRE(map.cep_m.size() == grid.size());
  const float centre = map.cep_m[20 * 41 + 20];
  CHECK_ABS(centre, kHandCepM, 0.5);
  CHECK_ABS(centre, 411.0, 0.5);
  CHECK(map.usable_cells == grid.size());
  CHECK(progress_calls > 0);
  // The same with one thread: the same bytes.
  options.num_threads = 1;
  const CoverageMap again = coverage_map(stations, grid, options);
  CHECK(std::equal(map.cep_m.begin(), map.cep_m.end(), again.cep_m.begin()));

  // With the west station's range cut to 9.5 km, cells east of the transmitter are out of its
  // reach: no data there, while the western cells keep a value.
  std::vector<PlannedStation> limited = stations;
  limited[1].max_range_m = 9500.0;
  const CoverageMap cut = coverage_map(limited, grid, options);
  CHECK(std::isnan(cut.cep_m[20 * 41 + 40]));
  CHECK(std::isfinite(cut.cep_m[20 * 41 + 0]));
  CHECK(cut.usable_cells < grid.size());
  CHECK(cut.usable_cells > 0);
}

TEST_CASE(
    "planning: the coverage map's interpolated geodesics match the exact bound cell by cell") {
  // A 60 km square with stations inside and outside it, one with a range limit: every 7th
  // cell of the map against cramer_rao() at the cell's centre, which uses GeographicLib's
  // Inverse directly (Karney 2013).
  const LatLon c{47.8, 10.3};
  std::vector<PlannedStation> stations;
  const double az[] = {0, 72, 144, 216, 288, 30};
  const double rg[] = {5000, 18000, 26000, 9000, 40000, 70000};
  for (int i = 0; i < 6; ++i) {
    double lat = 0, lon = 0;
    GeographicLib::Geodesic::WGS84().Direct(c.lat_deg, c.lon_deg, az[i], rg[i], lat, lon);
    stations.push_back({"site" + std::to_string(i), {lat, lon}, 1.5 + 0.25 * i, std::nullopt});
  }
  stations[2].max_range_m = 45000.0;
  const UtmZone zone = utm_zone_of(c);
  const UtmPoint u = utm_forward(zone, c);
  UtmGrid grid;
  grid.zone = zone;
  grid.cell_m = 500.0;
  grid.columns = grid.rows = 120;
  grid.west_m = u.easting_m - 30000.0;
  grid.north_m = u.northing_m + 30000.0;
  const CoverageMap map = coverage_map(stations, grid, {});
  MESSAGE("field check: azimuth " << map.max_azimuth_error_deg << " deg, relative "
                                  << map.max_relative_error);
  double worst = 0.0;
  int compared = 0;
  int nodata_agree = 0;
  for (std::size_t k = 0; k < grid.size(); k += 7) {
    const int row = static_cast<int>(k / 120);
    const int col = static_cast<int>(k % 120);
    const LatLon p = utm_reverse(zone, grid.centre_easting_m(col), grid.centre_northing_m(row));
    const CramerRao b = cramer_rao(stations, p, {});
    const float v = map.cep_m[k];
    if (!b.usable) {
      nodata_agree += std::isnan(v) ? 1 : 0;
      CHECK(std::isnan(v));
      continue;
    }
    REQUIRE(std::isfinite(v));
    worst = std::max(worst, std::fabs(v - b.cep_m) / b.cep_m);
    ++compared;
  }
  MESSAGE(compared << " cells compared, worst relative CEP difference " << worst << ", "
                   << nodata_agree << " no-data cells agree");
  CHECK(compared > 1500);
  CHECK(worst < 1e-4);
}

TEST_CASE("planning: grid_around covers the stations with the margin") {
  const std::vector<PlannedStation> stations = square_pair();
  const UtmGrid grid = grid_around(stations, 2000.0, 250.0);
  for (const PlannedStation& s : stations) {
    const UtmPoint p = utm_forward(grid.zone, s.position);
    CHECK(p.easting_m - grid.west_m >= 2000.0);
    CHECK(grid.west_m + grid.columns * grid.cell_m - p.easting_m >= 2000.0);
    CHECK(grid.north_m - p.northing_m >= 2000.0);
    CHECK(p.northing_m - (grid.north_m - grid.rows * grid.cell_m) >= 2000.0);
  }
  // No more than one cell beyond the margin on any side.
  CHECK(grid.columns * grid.cell_m <= 10000.0 + 4000.0 + 2 * 250.0 + 1.0);
  CHECK_THROWS_AS(grid_around(stations, 2000.0, 0.1, 1000000), InputError);
  CHECK_THROWS_AS(grid_around({}, 2000.0, 100.0), InputError);
}

TEST_CASE("planning: the recommended next spot crosses the existing bearings near 90 deg") {
  // Two stations 10 km from the transmitter, seen from it at 180 and 220 deg: their lines
  // cross at 40 deg and the ellipse is long along 200 deg. Candidates on a 10 km circle every
  // 10 deg. D-optimal (Bishop et al. 2010): the next line of sight perpendicular to the long
  // axis, i.e. from 110 or 290 deg.
  const LatLon a = around(kTx, 180.0, 10000.0);
  const LatLon b = around(kTx, 220.0, 10000.0);
  const std::vector<Bearing> bearings{exact_bearing("a", a, kTx, 2.0),
                                      exact_bearing("b", b, kTx, 2.0)};
  SolveOptions solve;
  solve.loss = RobustLoss::none;
  const Fix fix = solve_fix(bearings, solve);
  REQUIRE(fix.ok());
  std::vector<CandidateSpot> spots;
  for (int az = 0; az < 360; az += 10)
    spots.push_back({"c" + std::to_string(az), around(kTx, az, 10000.0), "", 0.0, {}});
  // One spot at the transmitter itself is refused, not ranked.
  spots.push_back({"on-top", kTx, "", 0.0, {}});
  NextBearingOptions options;
  options.sigma_deg = 2.0;
  const NextBearingPlan plan = rank_next_bearings(fix, bearings, spots, options);
  REQUIRE(plan.ranked.size() == 36);
  CHECK(plan.refused.size() == 1);
  const RankedSpot& best = plan.ranked.front();
  const double from_tx = wrap_deg360(azimuth_deg(kTx, best.spot.position));
  INFO("best spot " << best.spot.name << " seen from the transmitter at " << from_tx);
  const double off_axis = std::fabs(angle_diff_deg(from_tx, 200.0));
  CHECK_ABS(off_axis, 90.0, 10.0);
  // Its crossing with each existing line, computed here from GeographicLib azimuths at the
  // transmitter: 90 deg from their mean line, 70 deg from each of the two (110 folded to 70).
  for (const LatLon& st : {a, b}) {
    double crossing =
        std::fabs(angle_diff_deg(azimuth_deg(kTx, best.spot.position), azimuth_deg(kTx, st)));
    crossing = std::fmod(crossing, 180.0);
    if (crossing > 90.0)
      crossing = 180.0 - crossing;
    CHECK_ABS(crossing, 70.0, 10.5);
  }
  CHECK_ABS(best.crossing_deg, 70.0, 10.5);
  CHECK(best.rank == 1);
  CHECK(best.predicted_area_m2 < plan.current_area_m2);
  CHECK(!best.mgrs.empty());
  // Spots in line with the existing bearings (from 200 deg) help least.
  const RankedSpot& worst = plan.ranked.back();
  const double worst_off =
      std::fabs(angle_diff_deg(wrap_deg360(azimuth_deg(kTx, worst.spot.position)), 200.0));
  CHECK((worst_off < 25.0 || worst_off > 155.0));
  for (std::size_t i = 1; i < plan.ranked.size(); ++i)
    CHECK(plan.ranked[i - 1].predicted_area_m2 <= plan.ranked[i].predicted_area_m2);

  // At the fix itself (no averaging), the D-optimal gain det(J + g g^T) / det J = 1 + g^T C g
  // by the matrix determinant lemma: the best spot's predicted area is within a few percent
  // of pi 5.991 sqrt(det C) / sqrt(1 + g^T C g), computed here in the plane (the expected
  // information over the fix's spread differs a little).
  const Covariance2& c = fix.covariance_en_m2;
  double s12 = 0, azi1 = 0, azi2 = 0;
  GeographicLib::Geodesic::WGS84().Inverse(best.spot.position.lat_deg, best.spot.position.lon_deg,
                                           kTx.lat_deg, kTx.lon_deg, s12, azi1, azi2);
  const double sig = 2.0 * kPi / 180.0;
  const double ge = std::cos(azi2 * kPi / 180.0) / (s12 * sig);
  const double gn = -std::sin(azi2 * kPi / 180.0) / (s12 * sig);
  const double gcg = ge * (c[0][0] * ge + c[0][1] * gn) + gn * (c[1][0] * ge + c[1][1] * gn);
  const double det_c = c[0][0] * c[1][1] - c[0][1] * c[1][0];
  const double hand_area = kPi * 5.991 * std::sqrt(det_c / (1.0 + gcg));
  CHECK(std::fabs(best.predicted_area_m2 - hand_area) <= 0.05 * hand_area);
}

TEST_CASE("planning: rings around the last positions and the nearest team") {
  std::vector<Bearing> bearings{exact_bearing("walker", around(kTx, 0.0, 5000.0), kTx, 2.0),
                                exact_bearing("walker", around(kTx, 10.0, 5000.0), kTx, 2.0),
                                exact_bearing("car", around(kTx, 90.0, 8000.0), kTx, 2.0)};
  bearings[0].time_unix_ns = 100;
  bearings[1].time_unix_ns = 200;
  bearings[2].time_unix_ns = 150;
  const std::vector<TeamPosition> teams = last_positions(bearings);
  REQUIRE(teams.size() == 2);
  CHECK(teams[0].team == "walker");
  CHECK_ABS(teams[0].position.lat_deg, bearings[1].lat_deg, 1e-12);
  const std::vector<CandidateSpot> spots = ring_candidates(teams, 2000.0, 2, 8);
  CHECK(spots.size() == 2 * (1 + 2 * 8));
  for (const CandidateSpot& s : spots) {
    double d = 0, azi1 = 0, azi2 = 0;
    const LatLon& from = s.team == "walker" ? teams[0].position : teams[1].position;
    GeographicLib::Geodesic::WGS84().Inverse(from.lat_deg, from.lon_deg, s.position.lat_deg,
                                             s.position.lon_deg, d, azi1, azi2);
    CHECK_ABS(d, s.distance_m, 1e-6);
  }
  std::vector<CandidateSpot> mine{
      {"near-car", around(teams[1].position, 45.0, 300.0), "", 0.0, {}}};
  assign_nearest_team(mine, teams);
  CHECK(mine[0].team == "car");
  CHECK_ABS(mine[0].distance_m, 300.0, 1e-6);
  CHECK_THROWS_AS(ring_candidates(teams, 0.0, 2, 8), InputError);
}

TEST_CASE("planning: CEP contours lie where the bound gives that CEP, and spots are mapped") {
  const std::vector<PlannedStation> stations = square_pair();
  const UtmGrid grid = grid_around(stations, 5000.0, 200.0);
  const CoverageMap map = coverage_map(stations, grid);
  const std::string path = lobfix_test::tmp_path("cep_contours.geojson");
  write_cep_contours_geojson(path, map, {450.0, 600.0});
  GDALAllRegister();
  GDALDataset* ds = static_cast<GDALDataset*>(
      GDALOpenEx(path.c_str(), GDAL_OF_VECTOR, nullptr, nullptr, nullptr));
  REQUIRE(ds != nullptr);
  OGRLayer* layer = ds->GetLayer(0);
  int vertices = 0;
  int levels_seen[2] = {0, 0};
  for (std::unique_ptr<OGRFeature> f(layer->GetNextFeature()); f;
       f.reset(layer->GetNextFeature())) {
    const double level = f->GetFieldAsDouble("cep_m");
    CHECK(std::string(f->GetFieldAsString("kind")) == "cep_contour");
    CHECK((level == 450.0 || level == 600.0));
    ++levels_seen[level == 450.0 ? 0 : 1];
    const OGRLineString* ls = f->GetGeometryRef()->toLineString();
    for (int i = 0; i < ls->getNumPoints(); i += 7) {
      // The bound recomputed at the vertex: the contour is interpolated between cell centres,
      // so allow the CEP's change over about a cell. Within 2 km of a station the CEP is
      // steep (it has a singularity at the station), and a 200 m grid draws it coarsely.
      const LatLon v{ls->getY(i), ls->getX(i)};
      bool near_station = false;
      for (const PlannedStation& s : stations) {
        double d = 0, azi1 = 0, azi2 = 0;
        GeographicLib::Geodesic::WGS84().Inverse(v.lat_deg, v.lon_deg, s.position.lat_deg,
                                                 s.position.lon_deg, d, azi1, azi2);
        near_station = near_station || d < 2000.0;
      }
      if (near_station)
        continue;
      const CramerRao b = cramer_rao(stations, v);
      REQUIRE(b.usable);
      CHECK(std::fabs(b.cep_m - level) <= 0.03 * level);
      ++vertices;
    }
  }
  GDALClose(ds);
  CHECK(levels_seen[0] > 0);
  CHECK(levels_seen[1] > 0);
  CHECK(vertices > 20);
  CHECK_THROWS_AS(write_cep_contours_geojson(path, map, {-5.0}), InputError);
}

TEST_CASE("planning: the spot file reports each bad cell with line and column") {
  const std::string path = lobfix_test::tmp_path("spots_bad.csv");
  std::ofstream(path) << "# spots\nname,lat,lon,team,note\n"
                         "gate,45.1,11.2,walker,by the road\n"
                         ",45.2,11.3,,\n"
                         "far,45.2,181,,\n"
                         "odd,north,11.3,,\n";
  const SpotReadResult r = read_spots_csv(path);
  REQUIRE(r.errors.size() == 2);
  CHECK(r.errors[0].to_string() == path + ":5:3: lon 181 is outside [-180, 180]");
  CHECK(r.errors[1].to_string() == path + ":6:2: lat 'north' is not a number");
  REQUIRE(r.warnings.size() == 1);
  CHECK(r.warnings[0].to_string() == path + ":2:5: unknown column 'note' ignored");
  REQUIRE(r.spots.size() == 2);
  CHECK(r.spots[0].team == "walker");
  CHECK(r.spots[1].name == "line 4");
  std::ofstream(path) << "name,lat\ngate,45\n";
  CHECK_THROWS_WITH_AS(read_spots_csv(path), doctest::Contains("missing required column 'lon'"),
                       InputError);
}

TEST_CASE("planning: the information's gradient matches GeographicLib's azimuths by differencing") {
  // J = g g^T / sigma^2: g must be the derivative of the station's azimuth (rad) with respect
  // to the transmitter's east and north position (m). Move the transmitter 1 m east and
  // west, north and south with GeographicLib's Direct and take central differences of the
  // azimuths it gives (error of order (1 m / 23 km)^2).
  const LatLon station = around(kTx, 237.0, 23000.0);
  const double sigma_deg = 1.0;
  const BearingInformation bi = bearing_information(station, sigma_deg, kTx);
  REQUIRE(bi.usable);
  const double w = std::pow(180.0 / (kPi * sigma_deg), 2);  // 1 / sigma^2 in rad^-2
  const auto slope = [&](double toward_deg) {
    const double plus = azimuth_deg(station, around(kTx, toward_deg, 1.0));
    const double minus = azimuth_deg(station, around(kTx, toward_deg + 180.0, 1.0));
    return angle_diff_deg(plus, minus) * kPi / 180.0 / 2.0;
  };
  const double de = slope(90.0);
  const double dn = slope(0.0);
  CHECK_ABS(bi.information[0][0], w * de * de, 1e-5 * w * de * de);
  CHECK_ABS(bi.information[1][1], w * dn * dn, 1e-5 * w * dn * dn);
  CHECK_ABS(bi.information[0][1], w * de * dn, 1e-5 * std::fabs(w * de * dn));
  CHECK(bi.information[0][1] * (de * dn) > 0.0);  // the sign of the cross term
}
