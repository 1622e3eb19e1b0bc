// Whole-program check of `lobfix solve --json`: runs the real program on the demo and checks
// its numbers against relations that hold outside the program.
#define DOCTEST_CONFIG_IMPLEMENT_WITH_MAIN
#include <doctest/doctest.h>

#include <GeographicLib/Geodesic.hpp>

#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <nlohmann/json.hpp>
#include <string>

namespace {

std::string run(const std::string& command) {
  std::string out;
  FILE* pipe = popen(command.c_str(), "r");
  REQUIRE(pipe != nullptr);
  char buf[4096];
  std::size_t got = 0;
  while ((got = std::fread(buf, 1, sizeof buf, pipe)) > 0)
    out.append(buf, got);
  REQUIRE(pclose(pipe) == 0);
  return out;
}

}  // namespace

TEST_CASE("the JSON summary of the demo is self-consistent and matches external relations") {
  const char* exe = std::getenv("LOBFIX_EXE");
  const char* sample = std::getenv("LOBFIX_SAMPLE");
  REQUIRE_MESSAGE(exe != nullptr, "set LOBFIX_EXE (CTest does)");
  REQUIRE_MESSAGE(sample != nullptr, "set LOBFIX_SAMPLE (CTest does)");
  const auto doc = nlohmann::json::parse(run(std::string(exe) + " solve " + sample + " --json"));
  REQUIRE(doc["fixes"].size() == 1);
  const auto& fix = doc["fixes"][0];
  REQUIRE(fix["status"] == "ok");
  const double lat = fix["lat"];
  const double lon = fix["lon"];

  // Ellipse axes: k * sqrt(eigenvalue) with k^2 from the chi-square table for 2 dof
  // (NIST/SEMATECH e-Handbook 1.3.6.7.4: 5.991 at 95%; 1.386 at 50% = -2 ln 0.5).
  const double ee = fix["covariance_en_m2"][0][0], en = fix["covariance_en_m2"][0][1];
  const double nn = fix["covariance_en_m2"][1][1];
  const double mean = 0.5 * (ee + nn);
  const double half = std::sqrt(0.25 * (ee - nn) * (ee - nn) + en * en);
  const double lmax = mean + half;
  const double lmin = mean - half;
  for (const auto& e : fix["ellipses"]) {
    const double p = e["probability"];
    const double k2 = p == 0.95 ? 5.991 : p == 0.5 ? 1.386 : -2.0 * std::log(1.0 - p);
    CHECK(double(e["semi_major_m"]) == doctest::Approx(std::sqrt(k2 * lmax)).epsilon(2e-4));
    CHECK(double(e["semi_minor_m"]) == doctest::Approx(std::sqrt(k2 * lmin)).epsilon(2e-4));
  }
  // With a robust loss (the command's default) the outliers are left out of the fit check.
  int inliers = 0;
  for (const auto& b : fix["bearings"])
    inliers += b["outlier"] ? 0 : 1;
  CHECK(fix["dof"] == inliers - 2);
  CHECK(fix["outliers"] == int(fix["bearings"].size()) - inliers);

  // Each residual is the measured bearing minus the GeographicLib azimuth from the station
  // to the reported fix (Karney 2013), wrapped.
  double chi2 = 0.0;
  for (const auto& b : fix["bearings"]) {
    double s12 = 0, azi1 = 0, azi2 = 0;
    GeographicLib::Geodesic::WGS84().Inverse(double(b["lat"]), double(b["lon"]), lat, lon, s12,
                                             azi1, azi2);
    double r = std::remainder(double(b["true_bearing_deg"]) - azi1, 360.0);
    CHECK(double(b["residual_deg"]) == doctest::Approx(r).epsilon(1e-6));
    CHECK(double(b["range_m"]) == doctest::Approx(s12).epsilon(1e-9));
    const double z = r / double(b["effective_sigma_deg"]);
    if (!b["outlier"])
      chi2 += z * z;
    // The verdict: outliers are the bearings over 3 sigma (the default --outlier-sigma).
    CHECK(bool(b["outlier"]) == (std::fabs(z) > 3.0));
  }
  CHECK(double(fix["chi2"]) == doctest::Approx(chi2).epsilon(1e-6));
}
