// lobfix: robust loss functions for bearings that lie (stage "solve"). Each loss rho(s) acts
// on s = z^2, the squared normalised residual, in Ceres' convention (rho(s) = s for least
// squares, rho'(0) = 1). Tuning constants a are in units of sigma.
#pragma once

#include <optional>
#include <string_view>

namespace lobfix {

enum class RobustLoss {
  none,     ///< least squares: rho = s
  huber,    ///< rho = s for s <= a^2, else 2 a sqrt(s) - a^2
  cauchy,   ///< rho = a^2 log(1 + s / a^2)
  andrews,  ///< rho = 2 a^2 (1 - cos(sqrt(s) / a)) for sqrt(s) <= pi a, else 4 a^2
};

/// "none", "huber", "cauchy", "andrews".
const char* to_string(RobustLoss loss);
/// The loss named by `name` (case-sensitive, as written above), or std::nullopt.
std::optional<RobustLoss> parse_robust_loss(std::string_view name);

/// Default tuning constant, in sigmas, giving about 95% efficiency at the normal
/// distribution: Huber 1.345, Cauchy 2.3849, Andrews 1.339 [memory: Holland and Welsch 1977,
/// "Robust regression using iteratively reweighted least-squares", Commun. Statist. A6(9)].
/// 1 for none (unused).
double default_tuning(RobustLoss loss);

/// rho(s) and its first two derivatives with respect to s.
struct RhoValue {
  double rho = 0.0;
  double d1 = 1.0;  ///< rho'(s): the weight iteratively reweighted least squares gives
  double d2 = 0.0;  ///< rho''(s)
};
/// @param s squared normalised residual, >= 0; @param a tuning constant, > 0.
RhoValue robust_rho(RobustLoss loss, double s, double a);

}  // namespace lobfix
