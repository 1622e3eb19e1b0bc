// lobfix: confidence regions and goodness of fit for a fix (stage "uncertainty").
// Formulas, derivations and references: docs/uncertainty.md; check values in
// tests/unit/uncertainty_test.cpp. Probabilities are plain fractions in (0, 1); a bad one
// throws InputError with field "confidence".
#pragma once

#include <array>
#include <vector>

#include "lobfix/consistency.hpp"
#include "lobfix/fix.hpp"

namespace lobfix {

/// An error ellipse centred on the fix.
struct Ellipse {
  double probability = 0.0;  ///< probability that the transmitter lies inside, (0, 1)
  double semi_major_m = 0.0;
  double semi_minor_m = 0.0;
  double orientation_deg = 0.0;  ///< major axis, deg clockwise from true north, [0, 180)
};

using Covariance2 = std::array<std::array<double, 2>, 2>;  ///< east/north, m^2

/// Scale factor k of the ellipse holding probability p of a bivariate normal with known
/// covariance: k = sqrt(-2 ln(1 - p)) (chi-square with 2 degrees of freedom).
/// @throws InputError (field "confidence") unless 0 < p < 1.
double ellipse_scale_known(double probability);
/// Scale factor when the covariance is scaled by the residual variance factor chi2/nu:
/// k = sqrt(2 F(2, nu; p)) = sqrt(nu ((1 - p)^(-2/nu) - 1)). Tends to ellipse_scale_known(p)
/// as nu grows. @throws InputError unless 0 < p < 1 (field "confidence") and nu >= 1
/// (field "dof").
double ellipse_scale_estimated(double probability, int nu);

/// Ellipse with semi-axes k sqrt(eigenvalues) of `cov` (its symmetric part) and the
/// orientation of the major axis, atan2(v_east, v_north) of its eigenvector, in [0, 180); 0
/// for a circular covariance. A negative eigenvalue within rounding (1e-9 of the larger) is
/// taken as 0; a clearly negative one or a non-finite entry is not a covariance and gives NaN
/// axes. @throws InputError unless 0 < probability < 1 and scale_k is finite and >= 0.
Ellipse ellipse_from_covariance(const Covariance2& cov, double probability, double scale_k);

/// Probability that a bivariate normal N(0, diag(sigma_major^2, sigma_minor^2)) falls within
/// radius_m of its centre, by adaptive Gauss-Legendre quadrature of an angle integral
/// (relative error ~1e-14 for any ratio of the sigmas). The two sigmas may come in either
/// order; sigma_minor_m == 0 is the 1-D normal erf(r / (sigma sqrt 2)); both zero give 1.
/// A negative radius gives 0; a negative or NaN sigma gives NaN.
double circular_probability(double sigma_major_m, double sigma_minor_m, double radius_m);
/// Radius holding `probability` (CEP for 0.5) of N(0, cov), solved by bisection on
/// circular_probability to ~1e-13 relative. A zero covariance gives 0, one that is not a
/// covariance NaN. @throws InputError unless 0 < probability < 1.
double circular_radius(const Covariance2& cov, double probability = 0.5);

/// Upper tail P(X > x) of the chi-square distribution with `dof` degrees of freedom, the
/// regularised incomplete gamma Q(dof / 2, x / 2): relative error ~1e-13 up to dof 300,
/// growing like dof * eps beyond (2e-12 at dof 3000). Returns 1 when dof <= 0 or x <= 0, 0
/// for x = +inf, NaN for NaN.
double chi2_survival(double x, int dof);

struct UncertaintyOptions {
  std::vector<double> probabilities{0.5, 0.95};  ///< ellipse probabilities, each in (0, 1)
  /// The fit is called inconsistent (stated sigmas too small) when p-value < alpha.
  double alpha = 0.05;
};

/// Everything said about how far to trust a fix.
struct Uncertainty {
  std::vector<Ellipse> ellipses;  ///< one per requested probability, from the stated sigmas
  double cep_m = 0.0;             ///< exact radius holding 50%
  double p_value = 1.0;           ///< chi-square goodness of fit (1 when dof == 0)
  bool sigmas_too_small = false;  ///< p_value < alpha: the bearings scatter more than stated
  double variance_factor = 1.0;   ///< chi2 / dof (1 when dof == 0)
  /// When sigmas_too_small: ellipses from the covariance times variance_factor with the F
  /// distribution's scale; empty otherwise.
  std::vector<Ellipse> scaled_ellipses;
  /// CEP of the scaled covariance under the normal law (0 when not computed). Unlike
  /// scaled_ellipses it does not widen for the sampling error of variance_factor itself.
  double scaled_cep_m = 0.0;
};

/// The ellipses, CEP and chi-square test of a fix. A fix that is not ok() gets a default
/// Uncertainty (no ellipses). The options are checked either way.
/// @throws InputError if a probability (field "confidence") or alpha (field "alpha") is
/// outside (0, 1).
Uncertainty describe_uncertainty(const Fix& fix, const UncertaintyOptions& options = {});

/// A solved signal with its uncertainty, as handed to products and export.
struct FixResult {
  Fix fix;
  MotionTest motion;        ///< does one stationary transmitter explain the bearings over time?
  Uncertainty uncertainty;  ///< meaningful only when fix.ok()
};

}  // namespace lobfix
