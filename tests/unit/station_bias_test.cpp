// Station offsets (SolveOptions::station_bias_prior_deg): a misaligned mount recovered, the
// fix freed of its pull, and the refusal where the geometry cannot tell. Seeded scenarios
// built with GeographicLib.
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
const LatLon kTruth{51.9, -8.4};

// 4 walkers, each taking 6 bearings along a 2 km walk, 3-5 km from the transmitter;
// station S2's bearings read offset_deg clockwise of the truth.
std::vector<Bearing> walkers(double offset_deg, std::mt19937_64& rng, bool walking = true) {
  std::normal_distribution<double> noise(0.0, 2.0);
  const double az[] = {20.0, 110.0, 200.0, 290.0};
  const double rg[] = {3000.0, 4000.0, 5000.0, 3500.0};
  std::vector<Bearing> out;
  for (int s = 0; s < 4; ++s) {
    double lat0 = 0, lon0 = 0;
    geod().Direct(kTruth.lat_deg, kTruth.lon_deg, az[s], rg[s], lat0, lon0);
    for (int k = 0; k < 6; ++k) {
      double lat = lat0, lon = lon0;
      if (walking)
        geod().Direct(lat0, lon0, az[s] + 90.0, 400.0 * k, lat, lon);
      double s12 = 0, azi1 = 0, azi2 = 0;
      geod().Inverse(lat, lon, kTruth.lat_deg, kTruth.lon_deg, s12, azi1, azi2);
      Bearing b;
      b.station = "S" + std::to_string(s);
      b.lat_deg = lat;
      b.lon_deg = lon;
      b.azimuth_deg = wrap_deg360(azi1 + noise(rng) + (s == 2 ? offset_deg : 0.0));
      b.sigma_deg = 2.0;
      out.push_back(b);
    }
  }
  return out;
}

Eigen::Vector2d error_en(const Fix& f) {
  double x = 0, y = 0;
  geo_to_local(kTruth, f.position, x, y);
  return {x, y};
}

}  // namespace

TEST_CASE("a station 6 degrees off: the offset is recovered within 2 sigma, the fix unbiased") {
  // Issue requirement (seeded scenario). Over 300 trials: the estimate lies within 2 of its
  // own sigmas of the true 6 deg in about 95% of trials (Gaussian: 95.4%), and the mean error
  // of the fix is consistent with zero (within 3 standard errors), while the plain fit is
  // pulled off by the misaligned station. The prior is wide (40 deg): a prior of the order of
  // the offset shrinks the estimate toward 0 and lets part of the offset through to the fix
  // (measured: about 20 m of mean error with a 10 deg prior here, docs/robust.md).
  std::mt19937_64 rng(606);
  SolveOptions with_bias;
  with_bias.station_bias_prior_deg = 40.0;
  const int trials = 300;
  int within = 0;
  Eigen::Vector2d sum_biased = Eigen::Vector2d::Zero(), sum_plain = Eigen::Vector2d::Zero();
  Eigen::Vector2d sq_biased = Eigen::Vector2d::Zero(), sq_plain = Eigen::Vector2d::Zero();
  for (int t = 0; t < trials; ++t) {
    const auto b = walkers(6.0, rng);
    const Fix f = solve_fix(b, with_bias);
    const Fix p = solve_fix(b);
    REQUIRE(f.ok());
    REQUIRE(p.ok());
    REQUIRE(f.station_biases.size() == 4);
    CHECK(f.bias_refusals.empty());
    for (const StationBias& sb : f.station_biases) {
      if (sb.station == "S2")
        within += std::fabs(sb.bias_deg - 6.0) <= 2.0 * sb.sigma_deg;
    }
    const Eigen::Vector2d eb = error_en(f), ep = error_en(p);
    sum_biased += eb;
    sum_plain += ep;
    sq_biased += eb.cwiseProduct(eb);
    sq_plain += ep.cwiseProduct(ep);
  }
  const Eigen::Vector2d mean_b = sum_biased / trials, mean_p = sum_plain / trials;
  const Eigen::Vector2d se_b =
      ((sq_biased / trials - mean_b.cwiseProduct(mean_b)) / trials).cwiseSqrt();
  const Eigen::Vector2d se_p =
      ((sq_plain / trials - mean_p.cwiseProduct(mean_p)) / trials).cwiseSqrt();
  MESSAGE("offset within 2 sigma: "
          << within << "/" << trials << "; mean error with offsets (" << mean_b.x() << ", "
          << mean_b.y() << ") m +- (" << se_b.x() << ", " << se_b.y() << "), plain (" << mean_p.x()
          << ", " << mean_p.y() << ") m +- (" << se_p.x() << ", " << se_p.y() << ")");
  CHECK(within >= 0.90 * trials);
  CHECK(std::fabs(mean_b.x()) <= 3.0 * se_b.x());
  CHECK(std::fabs(mean_b.y()) <= 3.0 * se_b.y());
  CHECK(std::max(std::fabs(mean_p.x()) / se_p.x(), std::fabs(mean_p.y()) / se_p.y()) > 5.0);
}

TEST_CASE("offsets are refused, with a reason, where the geometry cannot tell them") {
  std::mt19937_64 rng(7);
  const auto b = walkers(0.0, rng, false);  // every station at one spot
  SolveOptions o;
  o.station_bias_prior_deg = 5.0;
  const Fix f = solve_fix(b, o);
  REQUIRE(f.ok());
  CHECK(f.station_biases.empty());
  REQUIRE(f.bias_refusals.size() == 4);  // one line per station
  CHECK(f.bias_refusals[0].find("cannot be told apart") != std::string::npos);
}
