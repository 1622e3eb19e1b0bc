// lobfix: confidence regions and goodness of fit for a fix (stage "uncertainty").
// References: docs/method.md and the check values in the tests.
#pragma once

#include <array>
#include <vector>

#include "lobfix/fix.hpp"

namespace lobfix {

/// An error ellipse centred on the fix.
struct Ellipse {
  double probability = 0.0;   ///< probability that the transmitter lies inside, (0, 1)
  double semi_major_m = 0.0;
  double semi_minor_m = 0.0;
  double orientation_deg = 0.0;  ///< major axis, deg clockwise from true north, [0, 180)
};

using Covariance2 = std::array<std::array<double, 2>, 2>;  ///< east/north, m^2

/// Scale factor k of the ellipse holding probability p of a bivariate normal with known
/// covariance: k = sqrt(-2 ln(1 - p)) (chi-square with 2 degrees of freedom).
double ellipse_scale_known(double probability);
/// Scale factor when the covariance is scaled by the residual variance factor chi2/nu:
/// k = sqrt(2 F(2, nu; p)) = sqrt(nu ((1 - p)^(-2/nu) - 1)). Requires nu >= 1.
double ellipse_scale_estimated(double probability, int nu);

/// Ellipse with semi-axes k sqrt(eigenvalues) of `cov`.
Ellipse ellipse_from_covariance(const Covariance2& cov, double probability, double scale_k);

/// Probability that a bivariate normal N(0, diag(sigma_major^2, sigma_minor^2)) falls within
/// radius_m of its centre, by integrating over the angle (exact to ~1e-12).
double circular_probability(double sigma_major_m, double sigma_minor_m, double radius_m);
/// Radius holding `probability` (CEP for 0.5) of that distribution, solved exactly.
double circular_radius(const Covariance2& cov, double probability = 0.5);

/// Upper tail P(X > x) of the chi-square distribution with `dof` degrees of freedom.
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
  double scaled_cep_m = 0.0;  ///< CEP of the scaled covariance (0 when not computed)
};

/// @throws InputError if a probability is outside (0, 1).
Uncertainty describe_uncertainty(const Fix& fix, const UncertaintyOptions& options = {});

/// A solved signal with its uncertainty, as handed to products and export.
struct FixResult {
  Fix fix;
  Uncertainty uncertainty;  ///< meaningful only when fix.ok()
};

}  // namespace lobfix
