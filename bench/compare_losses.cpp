// Measures the robust losses on the seeded scenario of tests/unit/robust_solve_test.cpp
// (20 bearings from 4 stations 5-10 km out, sigma 2 deg, a share of them replaced by uniform
// random directions): the share of fixes within 2x the Cramer-Rao bound of the clean
// bearings, the RMS error (each miss capped at 100 km) and the time per solve. The figures
// behind the default of `lobfix solve --robust` (docs/robust.md).
// Run: build-bench/bench/lobfix_compare_losses
#include <GeographicLib/Geodesic.hpp>

#include <Eigen/Dense>
#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <random>
#include <string>
#include <vector>

#include "lobfix/solver.hpp"

using namespace lobfix;

int main() {
  const GeographicLib::Geodesic& geod = GeographicLib::Geodesic::WGS84();
  const LatLon truth{-19.8, 23.4};
  const double az[] = {10.0, 95.0, 190.0, 280.0};
  const double rg[] = {5000.0, 8000.0, 10000.0, 6500.0};
  std::vector<Bearing> clean;
  Eigen::Matrix2d info = Eigen::Matrix2d::Zero();
  for (int s = 0; s < 4; ++s) {
    double lat = 0, lon = 0, s12 = 0, azi1 = 0, azi2 = 0, m12 = 0;
    geod.Direct(truth.lat_deg, truth.lon_deg, az[s], rg[s], lat, lon);
    geod.Inverse(lat, lon, truth.lat_deg, truth.lon_deg, s12, azi1, azi2, m12);
    for (int k = 0; k < 5; ++k) {
      Bearing b;
      b.station = "S" + std::to_string(s);
      b.lat_deg = lat;
      b.lon_deg = lon;
      b.azimuth_deg = wrap_deg360(azi1);
      b.sigma_deg = 2.0;
      clean.push_back(b);
      const Eigen::Vector2d u(std::cos(azi2 * M_PI / 180.0), -std::sin(azi2 * M_PI / 180.0));
      const double d = 2.0 * M_PI / 180.0 * m12;
      info += u * u.transpose() / (d * d);
    }
  }
  const double crb = std::sqrt(info.inverse().trace());
  std::printf("Cramer-Rao bound (RMS) of the 20 clean bearings: %.1f m\n", crb);
  std::printf("%-6s %-8s %14s %12s %10s\n", "wild", "loss", "within 2xCRB", "RMSE (m)", "ms/solve");
  for (const int wild : {0, 2, 4, 6}) {
    for (const RobustLoss loss :
         {RobustLoss::none, RobustLoss::huber, RobustLoss::cauchy, RobustLoss::andrews}) {
      std::mt19937_64 rng(31337);
      std::normal_distribution<double> noise(0.0, 2.0);
      std::uniform_real_distribution<double> any(0.0, 360.0);
      std::uniform_int_distribution<int> pick(0, 19);
      SolveOptions options;
      options.loss = loss;
      const int trials = 400;
      int good = 0;
      double sum_sq = 0.0;
      const auto t0 = std::chrono::steady_clock::now();
      for (int t = 0; t < trials; ++t) {
        std::vector<Bearing> b = clean;
        std::vector<bool> is_wild(b.size(), false);
        for (Bearing& x : b)
          x.azimuth_deg = wrap_deg360(x.azimuth_deg + noise(rng));
        for (int k = 0; k < wild;) {
          const int i = pick(rng);
          if (is_wild[i])
            continue;
          is_wild[i] = true;
          b[i].azimuth_deg = any(rng);
          ++k;
        }
        const Fix f = solve_fix(b, options);
        double miss = 1e5;
        if (f.ok()) {
          geod.Inverse(f.position.lat_deg, f.position.lon_deg, truth.lat_deg, truth.lon_deg, miss);
        }
        miss = std::min(miss, 1e5);
        good += miss <= 2.0 * crb ? 1 : 0;
        sum_sq += miss * miss;
      }
      const double ms =
          std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - t0).count() /
          trials;
      std::printf("%4d%%  %-8s %13.1f%% %12.1f %10.2f\n", wild * 5, to_string(loss),
                  100.0 * good / trials, std::sqrt(sum_sq / trials), ms);
    }
  }
  return 0;
}
