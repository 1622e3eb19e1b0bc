// The robust solve (solver.hpp with a loss): wild bearings, verdicts and honest ellipses.
// Seeded Monte Carlo scenarios; truth and Cramer-Rao bound from GeographicLib geometry.
#include <GeographicLib/Geodesic.hpp>

#include <Eigen/Dense>
#include <cmath>
#include <random>
#include <string>
#include <vector>

#include "lobfix/solver.hpp"
#include "test_support.hpp"

using namespace lobfix;

namespace {

const GeographicLib::Geodesic& geod() {
  return GeographicLib::Geodesic::WGS84();
}

struct Scenario {
  LatLon truth{-19.8, 23.4};
  std::vector<Bearing> clean;  // exact azimuths
  double crb_rms_m = 0.0;      // sqrt(trace(J^-1)) of the clean bearings
};

// 20 bearings from 4 stations (5 each), ranges 5-10 km, sigma 2 deg.
Scenario four_stations() {
  Scenario sc;
  const double az[] = {10.0, 95.0, 190.0, 280.0};
  const double rg[] = {5000.0, 8000.0, 10000.0, 6500.0};
  Eigen::Matrix2d info = Eigen::Matrix2d::Zero();
  for (int s = 0; s < 4; ++s) {
    double lat = 0, lon = 0;
    geod().Direct(sc.truth.lat_deg, sc.truth.lon_deg, az[s], rg[s], lat, lon);
    double s12 = 0, azi1 = 0, azi2 = 0, m12 = 0;
    geod().Inverse(lat, lon, sc.truth.lat_deg, sc.truth.lon_deg, s12, azi1, azi2, m12);
    for (int k = 0; k < 5; ++k) {
      Bearing b;
      b.station = "S" + std::to_string(s);
      b.lat_deg = lat;
      b.lon_deg = lon;
      b.azimuth_deg = wrap_deg360(azi1);
      b.sigma_deg = 2.0;
      sc.clean.push_back(b);
      // Fisher information (METHODS.md: u u^T / (sigma^2 m12^2)).
      const double a2 = azi2 * M_PI / 180.0;
      const Eigen::Vector2d u(std::cos(a2), -std::sin(a2));
      const double d = 2.0 * M_PI / 180.0 * m12;
      info += u * u.transpose() / (d * d);
    }
  }
  sc.crb_rms_m = std::sqrt(info.inverse().trace());
  return sc;
}

double miss_m(const LatLon& a, const LatLon& b) {
  double s12 = 0;
  geod().Inverse(a.lat_deg, a.lon_deg, b.lat_deg, b.lon_deg, s12);
  return s12;
}

}  // namespace

TEST_CASE("20% wild bearings: the robust fix stays within 2x the bound, least squares does not") {
  // Issue requirement (seeded): robust error within 2x the Cramer-Rao bound of the clean
  // bearings in at least 95% of trials, least squares failing that in most; at least 90% of
  // the wild bearings flagged and under 5% of the good ones.
  const Scenario sc = four_stations();
  std::mt19937_64 rng(31337);
  std::normal_distribution<double> noise(0.0, 2.0);
  std::uniform_real_distribution<double> any_direction(0.0, 360.0);
  std::uniform_int_distribution<int> pick(0, 19);
  const int trials = 400;
  int robust_good = 0, plain_good = 0;
  int wild = 0, wild_flagged = 0, good = 0, good_flagged = 0;
  SolveOptions robust;
  robust.loss = RobustLoss::andrews;
  for (int t = 0; t < trials; ++t) {
    std::vector<Bearing> b = sc.clean;
    std::vector<bool> is_wild(b.size(), false);
    for (Bearing& x : b)
      x.azimuth_deg = wrap_deg360(x.azimuth_deg + noise(rng));
    for (int k = 0; k < 4;) {  // 4 of 20 = 20%
      const int i = pick(rng);
      if (is_wild[i])
        continue;
      is_wild[i] = true;
      b[i].azimuth_deg = any_direction(rng);
      ++k;
    }
    const Fix r = solve_fix(b, robust);
    const Fix p = solve_fix(b);
    REQUIRE(r.ok());
    robust_good += miss_m(r.position, sc.truth) <= 2.0 * sc.crb_rms_m ? 1 : 0;
    plain_good += p.ok() && miss_m(p.position, sc.truth) <= 2.0 * sc.crb_rms_m ? 1 : 0;
    for (const BearingFit& bf : r.bearings) {
      if (is_wild[bf.index]) {
        ++wild;
        wild_flagged += bf.outlier ? 1 : 0;
      } else {
        ++good;
        good_flagged += bf.outlier ? 1 : 0;
      }
    }
  }
  MESSAGE("CRB " << sc.crb_rms_m << " m; within 2x CRB: robust " << robust_good << "/" << trials
                 << ", least squares " << plain_good << "/" << trials << "; wild flagged "
                 << wild_flagged << "/" << wild << ", good flagged " << good_flagged << "/"
                 << good);
  CHECK(robust_good >= 0.95 * trials);
  CHECK(plain_good < 0.5 * trials);
  CHECK(wild_flagged >= 0.90 * wild);
  CHECK(good_flagged < 0.05 * good);
}

TEST_CASE("10% wild bearings: the robust 95% ellipse holds the truth 93-97% of the time") {
  // Issue requirement (seeded). Chi-square 2-dof 95% point 5.991 (NIST/SEMATECH e-Handbook
  // 1.3.6.7.4).
  const Scenario sc = four_stations();
  std::mt19937_64 rng(2718);
  std::normal_distribution<double> noise(0.0, 2.0);
  std::uniform_real_distribution<double> any_direction(0.0, 360.0);
  std::uniform_int_distribution<int> pick(0, 19);
  SolveOptions robust;
  robust.loss = RobustLoss::andrews;
  const int trials = 1000;
  int inside = 0;
  for (int t = 0; t < trials; ++t) {
    std::vector<Bearing> b = sc.clean;
    for (Bearing& x : b)
      x.azimuth_deg = wrap_deg360(x.azimuth_deg + noise(rng));
    const int w1 = pick(rng);
    int w2 = pick(rng);
    while (w2 == w1)
      w2 = pick(rng);
    b[w1].azimuth_deg = any_direction(rng);
    b[w2].azimuth_deg = any_direction(rng);
    const Fix f = solve_fix(b, robust);
    REQUIRE(f.ok());
    double x = 0, y = 0;
    geo_to_local(f.position, sc.truth, x, y);
    Eigen::Matrix2d c;
    c << f.covariance_en_m2[0][0], f.covariance_en_m2[0][1], f.covariance_en_m2[1][0],
        f.covariance_en_m2[1][1];
    const Eigen::Vector2d e(x, y);
    inside += e.dot(c.inverse() * e) <= 5.991 ? 1 : 0;
  }
  const double coverage = static_cast<double>(inside) / trials;
  MESSAGE("robust 95% ellipse coverage with 10% wild bearings: " << coverage);
  CHECK(coverage >= 0.93);
  CHECK(coverage <= 0.97);
}

TEST_CASE("excluding the outliers refits the rest by least squares and keeps every verdict") {
  const Scenario sc = four_stations();
  std::vector<Bearing> b = sc.clean;
  b[3].azimuth_deg = wrap_deg360(b[3].azimuth_deg + 40.0);  // a reflection
  b[12].azimuth_deg = wrap_deg360(b[12].azimuth_deg - 25.0);
  SolveOptions o;
  o.loss = RobustLoss::andrews;
  o.exclude_outliers = true;
  const Fix f = solve_fix(b, o);
  REQUIRE(f.ok());
  CHECK(f.outliers == 2);
  REQUIRE(f.bearings.size() == 20);
  CHECK(f.bearings[3].outlier);
  CHECK(f.bearings[3].weight == 0.0);
  CHECK(f.bearings[12].outlier);
  CHECK(f.dof == 16);
  // The other 18 are exact: the refit lands on the truth.
  CHECK(miss_m(f.position, sc.truth) < 1e-3);
}

TEST_CASE("without wild bearings the robust fix is close to least squares") {
  const Scenario sc = four_stations();
  std::mt19937_64 rng(5);
  std::normal_distribution<double> noise(0.0, 2.0);
  std::vector<Bearing> b = sc.clean;
  for (Bearing& x : b)
    x.azimuth_deg = wrap_deg360(x.azimuth_deg + noise(rng));
  SolveOptions o;
  o.loss = RobustLoss::andrews;
  const Fix r = solve_fix(b, o);
  const Fix p = solve_fix(b);
  REQUIRE(r.ok());
  REQUIRE(p.ok());
  CHECK(miss_m(r.position, p.position) < 0.25 * sc.crb_rms_m);
  for (const BearingFit& bf : r.bearings)
    CHECK(bf.weight > 0.0);
}

TEST_CASE("mirror candidates and wild bearings together: resolved jointly by the robust fit") {
  // Every bearing comes as a pair mirrored about a random array axis, and 2 of 20 are wild:
  // the robust fit with its consensus start must still pick the right candidate for the good
  // bearings (at least 99%) and land within 2x the bound in at least 95% of trials.
  const Scenario sc = four_stations();
  std::mt19937_64 rng(4711);
  std::normal_distribution<double> noise(0.0, 2.0);
  std::uniform_real_distribution<double> uni(0.0, 360.0);
  std::uniform_int_distribution<int> pick(0, 19);
  SolveOptions o;
  o.loss = RobustLoss::andrews;
  const int trials = 200;
  int good_fix = 0, right = 0, total = 0;
  for (int t = 0; t < trials; ++t) {
    std::vector<Bearing> b = sc.clean;
    std::vector<bool> wild(20, false), truth_alt(20, false);
    for (Bearing& x : b)
      x.azimuth_deg = wrap_deg360(x.azimuth_deg + noise(rng));
    for (int k = 0; k < 2;) {
      const int i = pick(rng);
      if (wild[i])
        continue;
      wild[i] = true;
      b[i].azimuth_deg = uni(rng);
      ++k;
    }
    for (std::size_t i = 0; i < b.size(); ++i) {
      double axis = 0.0;
      do {
        axis = uni(rng);
      } while (std::fabs(std::sin((b[i].azimuth_deg - axis) * M_PI / 180.0)) < std::sin(0.26));
      const double mirror = wrap_deg360(2.0 * axis - b[i].azimuth_deg);
      truth_alt[i] = uni(rng) < 180.0;
      b[i].alt_azimuth_deg = truth_alt[i] ? b[i].azimuth_deg : mirror;
      b[i].azimuth_deg = truth_alt[i] ? mirror : b[i].azimuth_deg;
      b[i].alt_sigma_deg = b[i].sigma_deg;
    }
    const Fix f = solve_fix(b, o);
    REQUIRE(f.ok());
    good_fix += miss_m(f.position, sc.truth) <= 2.0 * sc.crb_rms_m ? 1 : 0;
    for (const BearingFit& bf : f.bearings) {
      if (wild[bf.index])
        continue;
      ++total;
      right += bf.used_alt == truth_alt[bf.index] ? 1 : 0;
    }
  }
  MESSAGE("mirror + wild: right candidate " << right << "/" << total << ", within 2x CRB "
                                            << good_fix << "/" << trials);
  CHECK(right >= 0.99 * total);
  CHECK(good_fix >= 0.95 * trials);
}
