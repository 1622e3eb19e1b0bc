// Tests of lobfix/solver.hpp against ground truth from GeographicLib (Karney 2013):
// bearings are the exact geodesic azimuths from each station to a placed transmitter.
#include "lobfix/solver.hpp"

#include <GeographicLib/Geodesic.hpp>

#include <Eigen/Dense>
#include <cmath>
#include <cstdio>
#include <random>
#include <string>
#include <vector>

#include "lobfix/error.hpp"
#include "test_support.hpp"

using namespace lobfix;

namespace {

const GeographicLib::Geodesic& geod() {
  return GeographicLib::Geodesic::WGS84();
}

// A bearing from `station` exactly toward `target` per GeographicLib, plus `noise_deg`.
Bearing exact_bearing(const std::string& station, LatLon at, LatLon target, double sigma_deg,
                      double noise_deg = 0.0) {
  double s12 = 0, azi1 = 0, azi2 = 0;
  geod().Inverse(at.lat_deg, at.lon_deg, target.lat_deg, target.lon_deg, s12, azi1, azi2);
  Bearing b;
  b.station = station;
  b.lat_deg = at.lat_deg;
  b.lon_deg = at.lon_deg;
  b.azimuth_deg = wrap_deg360(azi1 + noise_deg);
  b.sigma_deg = sigma_deg;
  return b;
}

// A station at distance s (m) and azimuth azi (deg) from `target`.
LatLon around(LatLon target, double azi_deg, double s_m) {
  double lat = 0, lon = 0;
  geod().Direct(target.lat_deg, target.lon_deg, azi_deg, s_m, lat, lon);
  return {lat, lon};
}

double miss_m(const Fix& fix, LatLon truth) {
  double s12 = 0, azi1 = 0, azi2 = 0;
  geod().Inverse(fix.position.lat_deg, fix.position.lon_deg, truth.lat_deg, truth.lon_deg, s12,
                 azi1, azi2);
  return s12;
}

std::vector<Bearing> ring_of_bearings(LatLon target, const std::vector<double>& azimuths_deg,
                                      const std::vector<double>& ranges_m, double sigma_deg) {
  std::vector<Bearing> out;
  for (std::size_t i = 0; i < azimuths_deg.size(); ++i) {
    out.push_back(exact_bearing("S" + std::to_string(i + 1),
                                around(target, azimuths_deg[i], ranges_m[i]), target, sigma_deg));
  }
  return out;
}

}  // namespace

TEST_CASE("noise-free bearings give the transmitter back within 1 mm at every scale") {
  // Ground truth: GeographicLib Geodesic::Inverse azimuths (Karney 2013). Issue requirement:
  // within 1 mm for walker, HF, antimeridian and high-latitude cases.
  SUBCASE("walkers around a transmitter 300 m away") {
    const LatLon t{46.80123, -99.50234};
    const auto b = ring_of_bearings(t, {10, 100, 215, 290}, {300, 250, 180, 320}, 3.0);
    const Fix f = solve_fix(b);
    REQUIRE(f.ok());
    CHECK(miss_m(f, t) < 1e-3);
    CHECK(f.dof == 2);
    CHECK(f.chi2 < 1e-12);
  }
  SUBCASE("HF stations 1,000 to 4,000 km away") {
    const LatLon t{-8.25, 62.5};
    const auto b =
        ring_of_bearings(t, {20, 95, 160, 250, 320}, {1.0e6, 2.2e6, 4.0e6, 3.1e6, 1.7e6}, 1.5);
    const Fix f = solve_fix(b);
    REQUIRE(f.ok());
    CHECK(miss_m(f, t) < 1e-3);
  }
  SUBCASE("a transmitter on the antimeridian with stations on both sides") {
    const LatLon t{-17.5, 179.99};
    const auto b = ring_of_bearings(t, {45, 135, 225, 315}, {40e3, 55e3, 35e3, 60e3}, 2.0);
    CHECK(b[0].lon_deg < 0.0);  // east of the line, longitudes near -180
    CHECK(b[2].lon_deg > 0.0);
    const Fix f = solve_fix(b);
    REQUIRE(f.ok());
    CHECK(miss_m(f, t) < 1e-3);
  }
  SUBCASE("a transmitter above 80 degrees north, stations across the pole") {
    const LatLon t{84.5, 30.0};
    const auto b = ring_of_bearings(t, {0, 80, 170, 260}, {600e3, 150e3, 200e3, 300e3}, 2.0);
    const Fix f = solve_fix(b);
    REQUIRE(f.ok());
    CHECK(miss_m(f, t) < 1e-3);
  }
}

TEST_CASE("one case cross-checked against the GeodSolve tool") {
  // Reference: GeodSolve from geographiclib-tools (an implementation independent of this
  // library's calls), `GeodSolve -i -p 12` gives azi1 for each station -> transmitter.
  const LatLon t{51.012345, 7.654321};
  const LatLon stations[] = {{51.05, 7.60}, {50.98, 7.59}, {51.00, 7.72}};
  std::vector<Bearing> b;
  for (int i = 0; i < 3; ++i) {
    char cmd[256];
    std::snprintf(cmd, sizeof cmd, "echo '%.9f %.9f %.9f %.9f' | GeodSolve -i -p 12",
                  stations[i].lat_deg, stations[i].lon_deg, t.lat_deg, t.lon_deg);
    FILE* pipe = popen(cmd, "r");
    REQUIRE(pipe != nullptr);
    double azi1 = 0, azi2 = 0, s12 = 0;
    const int got = std::fscanf(pipe, "%lf %lf %lf", &azi1, &azi2, &s12);
    pclose(pipe);
    REQUIRE_MESSAGE(got == 3, "GeodSolve (geographiclib-tools) must be installed");
    Bearing x;
    x.station = "S" + std::to_string(i);
    x.lat_deg = stations[i].lat_deg;
    x.lon_deg = stations[i].lon_deg;
    x.azimuth_deg = wrap_deg360(azi1);
    x.sigma_deg = 2.0;
    b.push_back(x);
  }
  const Fix f = solve_fix(b);
  REQUIRE(f.ok());
  CHECK(miss_m(f, t) < 1e-3);
}

TEST_CASE("rays, not lines: a crossing behind a station is refused") {
  // Geometry (common practice): two stations 10 km apart east-west; bearings 045 and 315 from
  // the western/eastern one cross north of them; 225 and 135 cross south (behind both).
  const LatLon west{45.0, 10.0};
  const LatLon east = around(west, 90.0, 10000.0);
  const auto ahead = cross_rays(west, 45.0, east, 315.0, 5e6);
  REQUIRE(ahead.has_value());
  CHECK(ahead->lat_deg > 45.0);
  CHECK_FALSE(cross_rays(west, 225.0, east, 135.0, 5e6).has_value());
  // Diverging: lines cross behind, rays never (except near the antipode, beyond range).
  CHECK_FALSE(cross_rays(west, 315.0, east, 45.0, 5e6).has_value());
  // ... but geodesic rays that diverge here meet again on the far side of the Earth, near
  // the antipode of the point where their lines cross (Karney 2013: geodesics from nearby
  // points reconverge). The maximum range is what refuses that spurious solution.
  SolveOptions widest;
  widest.max_range_m = 1.5e7;
  CHECK(widest.validate().empty());
  CHECK_FALSE(cross_rays(west, 315.0, east, 45.0, widest.max_range_m).has_value());
}

TEST_CASE("degenerate geometry gives a status and a message, never an invented fix") {
  const LatLon t{-33.2, 20.4};
  SUBCASE("fewer than two bearings") {
    const auto b = ring_of_bearings(t, {10}, {5000}, 2.0);
    const Fix f = solve_fix(b);
    CHECK(f.status == FixStatus::too_few_bearings);
    CHECK_FALSE(f.message.empty());
  }
  SUBCASE("all bearings from one spot") {
    const LatLon s = around(t, 30.0, 4000.0);
    std::vector<Bearing> b = {exact_bearing("A", s, t, 2.0), exact_bearing("A", s, t, 2.0, 1.0),
                              exact_bearing("B", s, t, 2.0, -1.0)};
    const Fix f = solve_fix(b);
    CHECK(f.status == FixStatus::single_spot);
  }
  SUBCASE("diverging rays") {
    const LatLon west = around(t, 270.0, 2000.0);
    const LatLon east = around(t, 90.0, 2000.0);
    std::vector<Bearing> b = {exact_bearing("W", west, t, 2.0), exact_bearing("E", east, t, 2.0)};
    b[0].azimuth_deg = 300.0;
    b[1].azimuth_deg = 60.0;
    const Fix f = solve_fix(b);
    CHECK(f.status == FixStatus::no_crossing);
  }
  SUBCASE("two stations on one line looking along it") {
    const LatLon a = around(t, 180.0, 3000.0);
    const LatLon b2 = around(t, 180.0, 6000.0);
    std::vector<Bearing> b = {exact_bearing("A", a, t, 2.0), exact_bearing("B", b2, t, 2.0)};
    const Fix f = solve_fix(b);
    CHECK(f.status == FixStatus::no_crossing);
  }
  SUBCASE("the crossing falls on a station") {
    const LatLon s1 = around(t, 0.0, 3000.0);
    const LatLon s2 = around(t, 90.0, 3000.0);
    std::vector<Bearing> b = {exact_bearing("A", s1, t, 2.0), exact_bearing("B", s2, t, 2.0),
                              exact_bearing("C", t, s1, 2.0)};
    const Fix f = solve_fix(b);
    CHECK(f.status == FixStatus::at_station);
    CHECK(f.message.find("'C'") != std::string::npos);
  }
  SUBCASE("bad options are an input error") {
    SolveOptions o;
    o.max_range_m = -1.0;
    const auto b = ring_of_bearings(t, {10, 100}, {5000, 5000}, 2.0);
    CHECK_THROWS_AS(solve_fix(b, o), InputError);
  }
}

TEST_CASE("near-parallel rays give an honestly huge ellipse, not a failure") {
  const LatLon t{12.0, -3.0};
  // Two stations 200 m apart looking at a transmitter 20 km away: 0.6 deg between rays.
  const auto b = ring_of_bearings(t, {180.0, 180.6}, {20000.0, 20000.0}, 2.0);
  const Fix f = solve_fix(b);
  REQUIRE(f.ok());
  const double var_max = std::max(f.covariance_en_m2[0][0], f.covariance_en_m2[1][1]);
  CHECK(std::sqrt(var_max) > 20000.0);  // far longer than the baseline along the rays
}

TEST_CASE("the covariance equals the inverse Fisher information from numerical azimuths") {
  // Reference: J = sum_i g_i g_i^T / sigma_i^2 with g_i the gradient of station i's azimuth
  // with respect to the fix, here by central differences of GeographicLib azimuths
  // (METHODS.md, Cramer-Rao bound; Karney 2013 for the geodesic azimuth).
  const LatLon t{-45.5, 169.2};
  const auto b = ring_of_bearings(t, {30, 110, 200}, {8000, 15000, 11000}, 2.5);
  const Fix f = solve_fix(b);
  REQUIRE(f.ok());
  Eigen::Matrix2d info = Eigen::Matrix2d::Zero();
  const double h = 1.0;  // m
  for (const Bearing& x : b) {
    Eigen::Vector2d g;
    for (int k = 0; k < 2; ++k) {
      const double az = k == 0 ? 90.0 : 0.0;
      const LatLon plus = around(t, az, h);
      const LatLon minus = around(t, az + 180.0, h);
      double s12 = 0, a1p = 0, a1m = 0, a2 = 0;
      geod().Inverse(x.lat_deg, x.lon_deg, plus.lat_deg, plus.lon_deg, s12, a1p, a2);
      geod().Inverse(x.lat_deg, x.lon_deg, minus.lat_deg, minus.lon_deg, s12, a1m, a2);
      g(k) = angle_diff_deg(a1p, a1m) * M_PI / 180.0 / (2.0 * h);
    }
    const double s = x.sigma_deg * M_PI / 180.0;
    info += g * g.transpose() / (s * s);
  }
  const Eigen::Matrix2d cov = info.inverse();
  for (int r = 0; r < 2; ++r)
    for (int c = 0; c < 2; ++c)
      CHECK_ABS(f.covariance_en_m2[r][c], cov(r, c), 1e-5 * cov.norm());
}

TEST_CASE("the station position term of the sigma budget matches a moved station") {
  // Reference: move the station sideways by d and recompute the azimuth with GeographicLib;
  // the change d * M12 / m12 is the sensitivity used (Karney 2013, geodesic scale).
  const LatLon st{30.0, 40.0};
  const LatLon t = around(st, 70.0, 3.0e6);  // long range, where M12 differs from 1
  const GeodesicLine12 line = geodesic_inverse(st, t);
  const double d = 1.0;
  const LatLon moved = around(st, line.azi1_deg + 90.0, d);
  double s12 = 0, azi1 = 0, azi2 = 0;
  geod().Inverse(moved.lat_deg, moved.lon_deg, t.lat_deg, t.lon_deg, s12, azi1, azi2);
  const double dazi_rad = std::fabs(angle_diff_deg(azi1, line.azi1_deg)) * M_PI / 180.0;
  Bearing b;
  b.sigma_deg = 1e-9;
  b.pos_sigma_m = d;
  const double term_rad = effective_sigma_deg(b, line) * M_PI / 180.0;
  CHECK(term_rad == doctest::Approx(dazi_rad).epsilon(1e-4));
  // At walker scale the term is pos_sigma / range (the formula).
  const LatLon near = around(st, 10.0, 500.0);
  b.pos_sigma_m = 5.0;
  const double walker = effective_sigma_deg(b, geodesic_inverse(st, near)) * M_PI / 180.0;
  CHECK(walker == doctest::Approx(5.0 / 500.0).epsilon(1e-6));
}

TEST_CASE("Monte Carlo: the 95% ellipse covers 95% and the error meets the Cramer-Rao bound") {
  // Seeded: 2,000 trials of 6 bearings, sigma 2 deg, ranges 4-9 km. Expected coverage 95%
  // +- 1.5% (the chi-square 2-dof 95% point 5.991: NIST/SEMATECH e-Handbook 1.3.6.7.4), and
  // RMSE within 10% of sqrt(trace(J^-1)) (METHODS.md, Cramer-Rao bound for bearings).
  const LatLon t{-21.3, 133.7};
  const std::vector<double> az = {5, 62, 118, 181, 239, 300};
  const std::vector<double> rg = {4000, 9000, 6500, 5000, 8000, 7000};
  const auto truth = ring_of_bearings(t, az, rg, 2.0);
  // Cramer-Rao bound at the truth from reduced lengths (flat enough here: m12 ~ s12).
  Eigen::Matrix2d info = Eigen::Matrix2d::Zero();
  for (const Bearing& x : truth) {
    const GeodesicLine12 g = geodesic_inverse({x.lat_deg, x.lon_deg}, t);
    const double a2 = g.azi2_deg * M_PI / 180.0;
    const Eigen::Vector2d u(std::cos(a2), -std::sin(a2));
    const double s = x.sigma_deg * M_PI / 180.0 * g.m12_m;
    info += u * u.transpose() / (s * s);
  }
  const double crb_rms = std::sqrt(info.inverse().trace());
  std::mt19937_64 rng(20261201);
  std::normal_distribution<double> noise(0.0, 2.0);
  const int trials = 2000;
  int inside = 0;
  double sum_sq = 0.0;
  for (int k = 0; k < trials; ++k) {
    auto b = truth;
    for (Bearing& x : b)
      x.azimuth_deg = wrap_deg360(x.azimuth_deg + noise(rng));
    const Fix f = solve_fix(b);
    INFO("trial " << k << ": " << f.message);
    REQUIRE(f.ok());
    double x = 0, y = 0;
    geo_to_local(f.position, t, x, y);
    const Eigen::Vector2d e(x, y);
    Eigen::Matrix2d c;
    c << f.covariance_en_m2[0][0], f.covariance_en_m2[0][1], f.covariance_en_m2[1][0],
        f.covariance_en_m2[1][1];
    if (e.dot(c.inverse() * e) <= 5.991)
      ++inside;
    sum_sq += e.squaredNorm();
  }
  const double coverage = static_cast<double>(inside) / trials;
  const double rmse = std::sqrt(sum_sq / trials);
  MESSAGE("coverage " << coverage << ", RMSE " << rmse << " m, CRB " << crb_rms << " m");
  CHECK(coverage >= 0.935);
  CHECK(coverage <= 0.965);
  CHECK(rmse <= 1.10 * crb_rms);
  CHECK(rmse >= 0.90 * crb_rms);
}

TEST_CASE("signals are solved separately and indices refer to the input") {
  const LatLon t1{40.0, -5.0};
  const LatLon t2{40.05, -4.9};
  std::vector<Bearing> all;
  for (const double az : {20.0, 140.0, 260.0}) {
    Bearing a = exact_bearing("A", around(t1, az, 3000.0), t1, 2.0);
    a.signal = "ch1";
    Bearing b = exact_bearing("B", around(t2, az + 30.0, 4000.0), t2, 2.0);
    b.signal = "ch2";
    all.push_back(a);
    all.push_back(b);
  }
  const auto fixes = solve_by_signal(all);
  REQUIRE(fixes.size() == 2);
  CHECK(fixes[0].signal == "ch1");
  CHECK(fixes[1].signal == "ch2");
  REQUIRE(fixes[0].ok());
  REQUIRE(fixes[1].ok());
  CHECK(miss_m(fixes[0], t1) < 1e-3);
  CHECK(miss_m(fixes[1], t2) < 1e-3);
  for (const BearingFit& bf : fixes[1].bearings)
    CHECK(all[bf.index].signal == "ch2");
}

TEST_CASE("the start point is deterministic for a given seed") {
  const LatLon t{5.0, 5.0};
  std::vector<double> az, rg;
  for (int i = 0; i < 100; ++i) {
    az.push_back(i * 3.6);
    rg.push_back(2000.0 + 37.0 * i);
  }
  auto b = ring_of_bearings(t, az, rg, 2.0);
  std::mt19937_64 rng(7);
  std::normal_distribution<double> noise(0.0, 2.0);
  for (Bearing& x : b)
    x.azimuth_deg = wrap_deg360(x.azimuth_deg + noise(rng));
  const auto s1 = start_point(b, {});
  const auto s2 = start_point(b, {});
  REQUIRE(s1.has_value());
  REQUIRE(s2.has_value());
  CHECK(s1->lat_deg == s2->lat_deg);
  CHECK(s1->lon_deg == s2->lon_deg);
}

TEST_CASE("mirror-image candidates: the right one is picked and the fix is unchanged") {
  // Seeded scenario (issue requirement): every bearing comes as a pair mirrored about a
  // random array axis, as a two-element interferometer gives (METHODS.md: bearing = axis +-
  // psi). The right candidate must be picked for at least 99% of bearings, and the fix must
  // equal the fix from the unambiguous bearings.
  std::mt19937_64 rng(4242);
  std::uniform_real_distribution<double> uni(0.0, 360.0);
  std::uniform_real_distribution<double> range(3000.0, 9000.0);
  std::normal_distribution<double> noise(0.0, 2.0);
  const LatLon t{52.2, -1.7};
  int right = 0;
  int total = 0;
  for (int trial = 0; trial < 200; ++trial) {
    std::vector<Bearing> plain;
    for (int i = 0; i < 8; ++i) {
      plain.push_back(exact_bearing("S" + std::to_string(i), around(t, uni(rng), range(rng)), t,
                                    2.0, noise(rng)));
    }
    std::vector<Bearing> pairs = plain;
    std::vector<bool> truth_is_alt;
    for (Bearing& b : pairs) {
      // Keep the axis at least 15 deg from the bearing, where real arrays are usable.
      double axis = 0.0;
      do {
        axis = uni(rng);
      } while (std::fabs(std::sin((b.azimuth_deg - axis) * M_PI / 180.0)) < std::sin(0.26));
      const double mirror = wrap_deg360(2.0 * axis - b.azimuth_deg);
      const bool swap = uni(rng) < 180.0;  // the right one comes first or second at random
      b.alt_azimuth_deg = swap ? b.azimuth_deg : mirror;
      b.azimuth_deg = swap ? mirror : b.azimuth_deg;
      b.alt_sigma_deg = b.sigma_deg;
      truth_is_alt.push_back(swap);
    }
    const Fix reference = solve_fix(plain);
    const Fix f = solve_fix(pairs);
    REQUIRE(reference.ok());
    REQUIRE(f.ok());
    for (const BearingFit& bf : f.bearings) {
      CHECK(bf.ambiguous);
      right += bf.used_alt == truth_is_alt[bf.index] ? 1 : 0;
      ++total;
    }
    bool all_right = true;
    for (const BearingFit& bf : f.bearings)
      all_right = all_right && bf.used_alt == truth_is_alt[bf.index];
    if (all_right)
      CHECK(miss_m(f, reference.position) < 1e-3);
  }
  const double rate = static_cast<double>(right) / total;
  MESSAGE("right candidate picked for " << right << " of " << total << " bearings");
  CHECK(rate >= 0.99);
}

TEST_CASE("the result does not depend on the thread count, to the last bit") {
  // Convention of docs/architecture.md: same input, same output, byte for byte.
  const LatLon t{-3.5, 36.8};
  std::mt19937_64 rng(99);
  std::uniform_real_distribution<double> az(0.0, 360.0);
  std::uniform_real_distribution<double> rg(2000.0, 20000.0);
  std::normal_distribution<double> noise(0.0, 2.0);
  std::vector<Bearing> b;
  for (int i = 0; i < 5000; ++i) {
    b.push_back(exact_bearing("S", around(t, az(rng), rg(rng)), t, 2.0, noise(rng)));
    b.back().pos_sigma_m = 5.0;
  }
  SolveOptions one;
  one.num_threads = 1;
  SolveOptions two;
  two.num_threads = 2;
  const Fix f1 = solve_fix(b, one);
  const Fix f2 = solve_fix(b, two);
  REQUIRE(f1.ok());
  REQUIRE(f2.ok());
  CHECK(f1.position.lat_deg == f2.position.lat_deg);
  CHECK(f1.position.lon_deg == f2.position.lon_deg);
  CHECK(f1.chi2 == f2.chi2);
  CHECK(f1.covariance_en_m2[0][0] == f2.covariance_en_m2[0][0]);
  CHECK(miss_m(f1, t) < 50.0);
}

TEST_CASE("several signals solved side by side give what one thread gives") {
  std::mt19937_64 rng(12);
  std::normal_distribution<double> noise(0.0, 2.0);
  std::vector<Bearing> all;
  for (int s = 0; s < 6; ++s) {
    const LatLon t{10.0 + 0.1 * s, 20.0};
    for (const double az : {15.0, 100.0, 170.0, 260.0, 330.0}) {
      Bearing b = exact_bearing("A", around(t, az, 4000.0 + 300.0 * s), t, 2.0, noise(rng));
      b.signal = "ch" + std::to_string(s);
      all.push_back(b);
    }
  }
  SolveOptions one;
  one.num_threads = 1;
  SolveOptions two;
  two.num_threads = 2;
  const auto serial = solve_by_signal(all, one);
  const auto parallel = solve_by_signal(all, two);
  REQUIRE(serial.size() == 6);
  REQUIRE(parallel.size() == 6);
  for (std::size_t k = 0; k < 6; ++k) {
    CHECK(serial[k].signal == parallel[k].signal);
    CHECK(serial[k].position.lat_deg == parallel[k].position.lat_deg);
    CHECK(serial[k].position.lon_deg == parallel[k].position.lon_deg);
    CHECK(serial[k].chi2 == parallel[k].chi2);
  }
}
