// lobfix: bearings from a two-element interferometer (two coherent receivers), with their
// mirror-image ambiguity (stage "normalise"). Physics: METHODS.md, docs/interferometer.md.
//
// Notation: d element spacing (m); f frequency (Hz); lambda = c / f wavelength (m);
// phi measured phase of element 2 minus element 1 (rad); k an integer (phase wraps);
// psi angle of arrival from the array axis, element 1 towards element 2 (rad, [0, pi]).
// A plane wave from direction psi gives phi = (2 pi d / lambda) cos(psi), modulo 2 pi.
#pragma once

#include <vector>

namespace lobfix {

/// Speed of light in vacuum (m/s), exact by the definition of the metre (SI, 2019).
constexpr double kSpeedOfLightMps = 299792458.0;

/// Largest bearing sigma reported (deg). The first-order sigma grows as 1 / |sin psi| and is
/// infinite at endfire (psi = 0 or 180); it is capped here so that such a candidate carries
/// almost no weight instead of an infinite or NaN one.
constexpr double kInterferometerMaxSigmaDeg = 90.0;

/// Largest spacing accepted, in wavelengths. Beyond it the candidates run to hundreds and a
/// unit slip (mm for m, MHz for Hz) is the likelier cause; the reading is refused.
constexpr double kInterferometerMaxSpacingWavelengths = 100.0;

/// Phase noise allowance (in phase sigmas). When no direction gives the phase exactly (only
/// possible for d < lambda / 2), a phase up to this much beyond the largest one the spacing can
/// produce (2 pi d / lambda, at endfire) is taken as endfire instead of being refused.
constexpr double kInterferometerPhaseSlackSigmas = 3.0;

struct InterferometerReading {
  double phase_deg = 0.0;        ///< phase of element 2 minus element 1 (deg), any range
  double phase_sigma_deg = 0.0;  ///< its 1-sigma (deg), > 0
  double spacing_m = 0.0;        ///< distance between the phase centres of the elements, > 0
  double frequency_hz = 0.0;     ///< carrier frequency (Hz), > 0
  /// Azimuth of the axis from element 1 to element 2 (deg), clockwise from north. The
  /// candidates are in the same north: true azimuths when this is a true azimuth.
  double axis_deg = 0.0;
};

/// One candidate direction of arrival.
struct BearingCandidate {
  double azimuth_deg = 0.0;  ///< azimuth (deg), [0, 360): axis_deg + psi or axis_deg - psi
  /// lambda sigma_phi / (2 pi d |sin psi|) converted to degrees, at most
  /// kInterferometerMaxSigmaDeg.
  double sigma_deg = 0.0;
  double psi_deg = 0.0;  ///< angle from the array axis (deg), [0, 180]
  int wrap_k = 0;        ///< the integer k: the phase was taken as phi + 2 pi k
};

struct InterferometerBearings {
  /// Candidates in pairs mirrored about the axis: psi = arccos(lambda (phi + 2 pi k) /
  /// (2 pi d)) for every integer k that gives |cos psi| <= 1 (phi first wrapped to
  /// (-180, 180] deg); azimuth = axis + psi, then axis - psi. At endfire (psi within 1e-4 deg
  /// of 0 or 180) the two coincide and one candidate is given. Order: k = 0 first, then
  /// k = +1, -1, +2, -2, ...
  std::vector<BearingCandidate> candidates;
  double wavelength_m = 0.0;  ///< c / f
  /// spacing > lambda / 2: the phase wraps and there are more than two candidates.
  bool phase_wraps = false;
};

/// Every direction of arrival consistent with one interferometer reading.
/// @throws InputError (field "spacing_m", "frequency_hz", "phase_sigma_deg", "phase_deg" or
///         "axis_deg") for a value that is not finite, a spacing, frequency or sigma that is not
///         positive, a spacing above kInterferometerMaxSpacingWavelengths wavelengths, or a
///         phase that no direction can produce at this spacing and frequency (beyond the
///         kInterferometerPhaseSlackSigmas allowance).
InterferometerBearings interferometer_bearings(const InterferometerReading& reading);

}  // namespace lobfix
