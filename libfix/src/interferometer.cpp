// Bearings from a two-element interferometer.
//
// Notation (METHODS.md, "Two-element interferometer"): d spacing (m), f frequency (Hz),
// lambda = c / f (m), phi phase of element 2 minus element 1 (rad), k integer wrap count,
// psi angle of arrival from the axis (rad). A plane wave from psi gives
//   phi + 2 pi k = (2 pi d / lambda) cos(psi),
// so cos(psi) = lambda (phi + 2 pi k) / (2 pi d), and to first order
//   sigma_psi = lambda sigma_phi / (2 pi d |sin psi|).
// The axis is a line of symmetry: psi fixes a cone about it, which meets the ground in the two
// azimuths axis + psi and axis - psi.
#include "lobfix/interferometer.hpp"

#include <cmath>
#include <cstdio>
#include <string>

#include "lobfix/error.hpp"
#include "lobfix/geodesy.hpp"

namespace lobfix {

namespace {

constexpr double kPi = 3.14159265358979323846;
constexpr double kDegPerRad = 180.0 / kPi;
/// Within this of 0 or 180 deg the two mirror candidates are one (acos turns a rounding error
/// e in cos psi into sqrt(2 e) rad near endfire, about 1e-6 deg; and there sigma is the cap).
constexpr double kEndfireMergeDeg = 1e-4;
/// A phase this close to the endfire value (rad) counts as reaching it (rounding).
constexpr double kPhaseRoundingRad = 1e-12;

std::string number_text(double v) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.6g", v);
  return buf;
}

[[noreturn]] void refuse(const char* field, std::string reason) {
  throw InputError({"", 0, 0, field, std::move(reason)});
}

void require_finite(double v, const char* field, const char* what) {
  if (!std::isfinite(v))
    refuse(field, std::string(field) + " (" + what + ") must be a finite number");
}

void require_positive(double v, const char* field, const char* what) {
  require_finite(v, field, what);
  if (!(v > 0.0))
    refuse(field,
           std::string(field) + " (" + what + ") must be greater than 0, got " + number_text(v));
}

BearingCandidate candidate(double azimuth_deg, double psi_deg, double sigma_deg, int k) {
  BearingCandidate c;
  c.azimuth_deg = wrap_deg360(azimuth_deg);
  c.psi_deg = psi_deg;
  c.sigma_deg = sigma_deg;
  c.wrap_k = k;
  return c;
}

}  // namespace

InterferometerBearings interferometer_bearings(const InterferometerReading& reading) {
  require_finite(reading.phase_deg, "phase_deg", "the phase difference in degrees");
  require_positive(reading.phase_sigma_deg, "phase_sigma_deg",
                   "the 1-sigma of the phase difference in degrees");
  require_positive(reading.spacing_m, "spacing_m", "the distance between the two elements in m");
  require_positive(reading.frequency_hz, "frequency_hz", "the carrier frequency in Hz");
  require_finite(reading.axis_deg, "axis_deg", "the azimuth of the array axis in degrees");

  InterferometerBearings out;
  const double lambda = kSpeedOfLightMps / reading.frequency_hz;
  out.wavelength_m = lambda;
  const double d = reading.spacing_m;
  const double d_over_lambda = d / lambda;
  if (d_over_lambda > kInterferometerMaxSpacingWavelengths) {
    refuse("spacing_m", "spacing_m " + number_text(d) + " m is " + number_text(d_over_lambda) +
                            " wavelengths at frequency_hz " + number_text(reading.frequency_hz) +
                            " (wavelength " + number_text(lambda) + " m), more than " +
                            number_text(kInterferometerMaxSpacingWavelengths) +
                            ": check the units of spacing_m (metres) and frequency_hz (hertz)");
  }
  out.phase_wraps = d > lambda / 2.0;

  const double phi = wrap_deg180(reading.phase_deg) * (kPi / 180.0);  // (-pi, pi]
  const double sigma_phi = reading.phase_sigma_deg * (kPi / 180.0);
  const double phase_max = 2.0 * kPi * d_over_lambda;  // the phase at endfire (rad)
  const double slack = kInterferometerPhaseSlackSigmas * sigma_phi;
  // Broadside sigma (psi = 90 deg), in degrees; divided by |sin psi| elsewhere.
  const double sigma_broadside_deg = sigma_phi / phase_max * kDegPerRad;

  auto add = [&](int k, double cos_psi) {
    const double psi_deg = std::acos(cos_psi) * kDegPerRad;
    const double sin_psi = std::sqrt(std::fmax(0.0, 1.0 - cos_psi * cos_psi));
    double sigma_deg = kInterferometerMaxSigmaDeg;
    if (sigma_broadside_deg < kInterferometerMaxSigmaDeg * sin_psi)
      sigma_deg = sigma_broadside_deg / sin_psi;
    if (psi_deg < kEndfireMergeDeg) {
      out.candidates.push_back(candidate(reading.axis_deg, 0.0, sigma_deg, k));
    } else if (psi_deg > 180.0 - kEndfireMergeDeg) {
      out.candidates.push_back(candidate(reading.axis_deg + 180.0, 180.0, sigma_deg, k));
    } else {
      out.candidates.push_back(candidate(reading.axis_deg + psi_deg, psi_deg, sigma_deg, k));
      out.candidates.push_back(candidate(reading.axis_deg - psi_deg, psi_deg, sigma_deg, k));
    }
  };

  // |phi + 2 pi k| <= phase_max bounds |k| by (phase_max + pi) / (2 pi).
  const int k_max = static_cast<int>(std::ceil((phase_max + kPi) / (2.0 * kPi)));
  int k_nearest = 0;
  double excess_nearest = HUGE_VAL;  // how far |phi + 2 pi k| lies beyond phase_max (rad)
  for (int n = 0; n <= 2 * k_max; ++n) {
    const int k = (n % 2 == 1) ? (n + 1) / 2 : -(n / 2);  // 0, +1, -1, +2, -2, ...
    const double phase = phi + 2.0 * kPi * k;
    const double excess = std::fabs(phase) - phase_max;
    if (excess <= kPhaseRoundingRad) {
      add(k, std::fmax(-1.0, std::fmin(1.0, phase / phase_max)));
    } else if (excess < excess_nearest) {
      excess_nearest = excess;
      k_nearest = k;
    }
  }
  // Only when d < lambda / 2 can every k miss; a phase a little beyond the endfire value is
  // noise about endfire.
  if (out.candidates.empty() && excess_nearest <= slack) {
    add(k_nearest, phi + 2.0 * kPi * k_nearest > 0.0 ? 1.0 : -1.0);
  }

  if (out.candidates.empty()) {
    refuse("phase_deg", "phase_deg " + number_text(reading.phase_deg) +
                            " is impossible for elements " + number_text(d) +
                            " m apart (spacing_m) at " + number_text(reading.frequency_hz) +
                            " Hz (frequency_hz): no direction gives more than +-" +
                            number_text(phase_max * kDegPerRad) +
                            " deg; check the spacing, the frequency and the phase calibration");
  }
  return out;
}

}  // namespace lobfix
