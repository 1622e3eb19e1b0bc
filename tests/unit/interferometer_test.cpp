// Tests of lobfix/interferometer.hpp: bearings from a two-element interferometer.
// Physics and its sources: /work/shared/METHODS.md, "Two-element interferometer", and
// docs/interferometer.md. Phases in these tests are made from a known direction with the
// plane-wave formula dphi = (2 pi d / lambda) cos(psi) [derived, physics], written out here
// independently of the library.
#include "lobfix/interferometer.hpp"

#include <cmath>
#include <random>
#include <string>
#include <vector>

#include "lobfix/error.hpp"
#include "lobfix/geodesy.hpp"
#include "test_support.hpp"

using namespace lobfix;

namespace {

constexpr double kPi = 3.14159265358979323846;
// c = 299 792 458 m/s, exact by the SI definition of the metre (BIPM, SI Brochure, 9th ed.
// 2019); typed here rather than taken from the library.
constexpr double kC = 299792458.0;

// The phase (deg) that a plane wave from psi_deg gives: dphi = 2 pi d cos(psi) / lambda.
double phase_for(double psi_deg, double spacing_m, double frequency_hz) {
  const double lambda = kC / frequency_hz;
  return 360.0 * spacing_m * std::cos(psi_deg * kPi / 180.0) / lambda;
}

InterferometerReading reading(double phase_deg, double spacing_m, double frequency_hz,
                              double axis_deg, double phase_sigma_deg = 5.0) {
  InterferometerReading r;
  r.phase_deg = phase_deg;
  r.phase_sigma_deg = phase_sigma_deg;
  r.spacing_m = spacing_m;
  r.frequency_hz = frequency_hz;
  r.axis_deg = axis_deg;
  return r;
}

// Smallest angular distance (deg) from a direction to any candidate.
double nearest_candidate_deg(const InterferometerBearings& b, double azimuth_deg) {
  double best = 360.0;
  for (const BearingCandidate& c : b.candidates)
    best = std::fmin(best, std::fabs(angle_diff_deg(c.azimuth_deg, azimuth_deg)));
  return best;
}

std::string field_of_error(const InterferometerReading& r) {
  try {
    (void)interferometer_bearings(r);
  } catch (const InputError& e) {
    return e.diagnostic().field;
  }
  return "(no error)";
}

}  // namespace

TEST_CASE("the wavelength is c / f with the SI value of c") {
  // SI definition: c = 299 792 458 m/s exactly; 299.792458 MHz has a wavelength of 1 m.
  CHECK(kSpeedOfLightMps == kC);
  const InterferometerBearings one_m = interferometer_bearings(reading(0.0, 0.5, 299792458.0, 0));
  CHECK_ABS(one_m.wavelength_m, 1.0, 1e-15);
  // A 2 m band frequency (invented reading): lambda = c / f by the same definition.
  const double f = 145.2e6;
  const InterferometerBearings b = interferometer_bearings(reading(10.0, 0.5, f, 0));
  CHECK_ABS(b.wavelength_m, kC / f, 1e-12);
}

TEST_CASE("half-wavelength spacing: dphi = pi cos(psi), and back") {
  // At d = lambda / 2 the phase is pi cos(psi) [common practice; METHODS.md]. A wave from
  // psi = 60 deg gives 180 cos 60 = 90 deg of phase (values by hand).
  const double f = 433.1e6;
  const double d = kC / f / 2.0;
  CHECK_ABS(phase_for(60.0, d, f), 90.0, 1e-12);
  const InterferometerBearings b = interferometer_bearings(reading(90.0, d, f, 30.0));
  CHECK_FALSE(b.phase_wraps);
  REQUIRE(b.candidates.size() == 2);
  CHECK_ABS(b.candidates[0].psi_deg, 60.0, 1e-9);
  CHECK_ABS(b.candidates[0].azimuth_deg, 90.0, 1e-9);   // axis 30 + 60
  CHECK_ABS(b.candidates[1].azimuth_deg, 330.0, 1e-9);  // axis 30 - 60, wrapped to [0, 360)
  CHECK(b.candidates[0].wrap_k == 0);
  // Phase 0 is broadside (psi = 90), phase +-180 endfire along or against the axis.
  const InterferometerBearings broadside = interferometer_bearings(reading(0.0, d, f, 0.0));
  REQUIRE(broadside.candidates.size() == 2);
  CHECK_ABS(broadside.candidates[0].azimuth_deg, 90.0, 1e-9);
  CHECK_ABS(broadside.candidates[1].azimuth_deg, 270.0, 1e-9);
}

TEST_CASE("the two candidates are mirror images about the axis") {
  // psi fixes a cone about the axis; its two ground directions are axis +- psi [derived,
  // METHODS.md]. Invented array: 0.3 m spacing at 400 MHz, axis 347 deg.
  const double f = 400e6;
  const double d = 0.3;
  const double axis = 347.0;
  for (double psi : {12.0, 45.0, 90.0, 133.0, 171.0}) {
    CAPTURE(psi);
    const InterferometerBearings b =
        interferometer_bearings(reading(phase_for(psi, d, f), d, f, axis));
    REQUIRE(b.candidates.size() == 2);
    const BearingCandidate& p = b.candidates[0];
    const BearingCandidate& q = b.candidates[1];
    CHECK_ABS(p.psi_deg, psi, 1e-9);
    CHECK_ABS(q.psi_deg, psi, 1e-9);
    CHECK_ABS(angle_diff_deg(p.azimuth_deg, axis), psi, 1e-9);
    CHECK_ABS(angle_diff_deg(q.azimuth_deg, axis), -psi, 1e-9);
    CHECK(p.sigma_deg == q.sigma_deg);
    CHECK(p.azimuth_deg >= 0.0);
    CHECK(p.azimuth_deg < 360.0);
    CHECK(q.azimuth_deg >= 0.0);
    CHECK(q.azimuth_deg < 360.0);
  }
}

TEST_CASE("at endfire the mirror pair is one candidate") {
  // psi = 0 or 180: the cone degenerates to the axis itself [derived].
  const double f = 150e6;
  const double d = kC / f / 2.0;
  const InterferometerBearings along = interferometer_bearings(reading(180.0, d, f, 20.0));
  // +180 (k = 0) is endfire along the axis, and -180 (k = -1) the same phase wrapped, endfire
  // against it: both directions give +-180 deg at half-wavelength spacing.
  REQUIRE(along.candidates.size() == 2);
  CHECK_ABS(along.candidates[0].psi_deg, 0.0, 1e-12);
  CHECK_ABS(along.candidates[0].azimuth_deg, 20.0, 1e-9);
  CHECK_ABS(along.candidates[1].psi_deg, 180.0, 1e-12);
  CHECK_ABS(along.candidates[1].azimuth_deg, 200.0, 1e-9);
  // A shorter array cannot wrap: phase_for(0) is the one endfire candidate.
  const double short_d = 0.3 * kC / f;
  const InterferometerBearings one =
      interferometer_bearings(reading(phase_for(180.0, short_d, f), short_d, f, 20.0));
  REQUIRE(one.candidates.size() == 1);
  CHECK_ABS(one.candidates[0].azimuth_deg, 200.0, 1e-9);
  CHECK(one.candidates[0].sigma_deg == kInterferometerMaxSigmaDeg);
}

TEST_CASE("sigma: lambda sigma_phi / (2 pi d) at broadside, growing as 1 / sin(psi)") {
  // sigma_psi = lambda sigma_dphi / (2 pi d |sin psi|) [derived, METHODS.md], in radians.
  const double f = 162.5e6;
  const double lambda = kC / f;
  const double d = 0.4;
  const double sigma_phi_deg = 4.0;
  const double sigma_phi_rad = sigma_phi_deg * kPi / 180.0;
  const double broadside_deg = lambda * sigma_phi_rad / (2.0 * kPi * d) * 180.0 / kPi;
  const InterferometerBearings b90 =
      interferometer_bearings(reading(phase_for(90.0, d, f), d, f, 0.0, sigma_phi_deg));
  REQUIRE(!b90.candidates.empty());
  CHECK_ABS(b90.candidates[0].sigma_deg, broadside_deg, 1e-12);
  for (double psi : {30.0, 10.0, 5.0, 2.0, 178.0}) {
    CAPTURE(psi);
    const InterferometerBearings b =
        interferometer_bearings(reading(phase_for(psi, d, f), d, f, 0.0, sigma_phi_deg));
    REQUIRE(!b.candidates.empty());
    const double expected = broadside_deg / std::sin(psi * kPi / 180.0);
    CHECK_ABS(b.candidates[0].sigma_deg, expected, 1e-9 * expected);
    CHECK(b.candidates[0].sigma_deg > broadside_deg);
  }
  // Closer to endfire the first-order value passes the cap and the cap is given, not inf.
  const InterferometerBearings near =
      interferometer_bearings(reading(phase_for(0.01, d, f), d, f, 0.0, sigma_phi_deg));
  REQUIRE(!near.candidates.empty());
  CHECK(broadside_deg / std::sin(0.01 * kPi / 180.0) > kInterferometerMaxSigmaDeg);
  CHECK(near.candidates[0].sigma_deg == kInterferometerMaxSigmaDeg);
  CHECK(std::isfinite(near.candidates[0].sigma_deg));
}

TEST_CASE("a spacing of one wavelength wraps the phase: more candidates") {
  // d > lambda / 2 lets |2 pi d cos(psi) / lambda| exceed pi, so phi + 2 pi k also fits
  // [derived, METHODS.md]. d = lambda, phi = 90 deg: cos psi = 0.25 + k, so k = 0 (0.25) and
  // k = -1 (-0.75): four candidates (by hand).
  const double f = 868.3e6;
  const double d = kC / f;
  const InterferometerBearings b = interferometer_bearings(reading(90.0, d, f, 100.0));
  CHECK(b.phase_wraps);
  REQUIRE(b.candidates.size() == 4);
  CHECK(b.candidates[0].wrap_k == 0);
  CHECK(b.candidates[1].wrap_k == 0);
  CHECK(b.candidates[2].wrap_k == -1);
  CHECK(b.candidates[3].wrap_k == -1);
  CHECK_ABS(b.candidates[0].psi_deg, std::acos(0.25) * 180.0 / kPi, 1e-9);
  CHECK_ABS(b.candidates[2].psi_deg, std::acos(-0.75) * 180.0 / kPi, 1e-9);
  // Half a wavelength does not wrap.
  CHECK_FALSE(interferometer_bearings(reading(90.0, d / 2.0, f, 100.0)).phase_wraps);
  // 2.6 wavelengths: |k| runs to 3, ordered 0, +1, -1, +2, -2, ...
  const InterferometerBearings wide = interferometer_bearings(reading(40.0, 2.6 * d, f, 0.0));
  CHECK(wide.phase_wraps);
  CHECK(wide.candidates.size() > 4);
  int last_abs_k = 0;
  for (const BearingCandidate& c : wide.candidates) {
    CHECK(std::abs(c.wrap_k) >= last_abs_k);
    last_abs_k = std::abs(c.wrap_k);
    // Every candidate reproduces the measured phase modulo 360 deg.
    const double back = phase_for(c.psi_deg, 2.6 * d, f);
    CHECK_ABS(std::remainder(back - 40.0, 360.0), 0.0, 1e-8);
  }
}

TEST_CASE("round trip: the true direction is among the candidates") {
  // Phase computed from a known direction with the plane-wave formula, fed back in; seeded
  // random directions and arrays (seed 20250611).
  std::mt19937 rng(20250611u);
  std::uniform_real_distribution<double> axis_dist(0.0, 360.0);
  std::uniform_real_distribution<double> psi_dist(3.0, 177.0);
  std::uniform_real_distribution<double> f_dist(30e6, 3e9);
  for (double spacing_wavelengths : {0.25, 0.5, 1.0, 2.7, 7.3}) {
    for (int i = 0; i < 50; ++i) {
      const double axis = axis_dist(rng);
      const double psi = psi_dist(rng);
      const double f = f_dist(rng);
      const double d = spacing_wavelengths * kC / f;
      const double side = (i % 2 == 0) ? 1.0 : -1.0;  // either side of the axis
      const double truth = wrap_deg360(axis + side * psi);
      const InterferometerBearings b =
          interferometer_bearings(reading(phase_for(psi, d, f), d, f, axis));
      CAPTURE(spacing_wavelengths);
      CAPTURE(truth);
      CHECK(nearest_candidate_deg(b, truth) < 1e-9);
      CHECK(b.phase_wraps == (spacing_wavelengths > 0.5));
    }
  }
}

TEST_CASE("a phase a little beyond the endfire value is endfire, far beyond is refused") {
  // d = 0.4 lambda: no direction gives more than 0.8 * 180 = 144 deg [derived]. With
  // sigma 5 deg, 150 deg lies within the 3-sigma allowance of endfire; 170 deg does not.
  const double f = 300e6;
  const double d = 0.4 * kC / f;
  const InterferometerBearings b = interferometer_bearings(reading(150.0, d, f, 45.0, 5.0));
  REQUIRE(b.candidates.size() == 1);
  CHECK(b.candidates[0].psi_deg == 0.0);
  CHECK_ABS(b.candidates[0].azimuth_deg, 45.0, 1e-12);
  CHECK(field_of_error(reading(170.0, d, f, 45.0, 5.0)) == "phase_deg");
  try {
    (void)interferometer_bearings(reading(-170.0, d, f, 45.0, 5.0));
    FAIL("expected InputError");
  } catch (const InputError& e) {
    const std::string reason = e.diagnostic().reason;
    CHECK(reason.find("impossible") != std::string::npos);
    CHECK(reason.find("144") != std::string::npos);
  }
}

TEST_CASE("bad readings are refused with the field named") {
  const double f = 150e6;
  CHECK(field_of_error(reading(10.0, 0.0, f, 0.0)) == "spacing_m");
  CHECK(field_of_error(reading(10.0, -0.5, f, 0.0)) == "spacing_m");
  CHECK(field_of_error(reading(10.0, 0.5, 0.0, 0.0)) == "frequency_hz");
  CHECK(field_of_error(reading(10.0, 0.5, -1e6, 0.0)) == "frequency_hz");
  CHECK(field_of_error(reading(10.0, 0.5, std::nan(""), 0.0)) == "frequency_hz");
  CHECK(field_of_error(reading(10.0, 0.5, f, 0.0, 0.0)) == "phase_sigma_deg");
  CHECK(field_of_error(reading(10.0, 0.5, f, 0.0, -2.0)) == "phase_sigma_deg");
  CHECK(field_of_error(reading(std::nan(""), 0.5, f, 0.0)) == "phase_deg");
  CHECK(field_of_error(reading(10.0, 0.5, f, HUGE_VAL)) == "axis_deg");
  // 500 m at 150 MHz (a mm/m slip): 250 wavelengths, refused.
  CHECK(field_of_error(reading(10.0, 500.0, f, 0.0)) == "spacing_m");
  try {
    (void)interferometer_bearings(reading(10.0, -0.5, f, 0.0));
    FAIL("expected InputError");
  } catch (const InputError& e) {
    CHECK(e.diagnostic().reason.find("greater than 0") != std::string::npos);
  }
}
