// Robust losses on s = z^2 (Ceres' LossFunction convention: rho(0) = 0, rho'(0) = 1).
//
// Andrews' sine (Andrews 1974, Technometrics 16(4):523-531 [memory]), with u = sqrt(s)/a:
//   rho   = 2 a^2 (1 - cos u)                 for u <= pi, else 4 a^2
//   rho'  = a sin(u) / sqrt(s) = sin(u) / u    (-> 1 as s -> 0)
//   rho'' = (cos u - sin(u) / u) / (2 s)       (-> -1 / (6 a^2) as s -> 0)
// rho'' <= 0 wherever rho' > 0 (tan u > u on (0, pi/2), cos u <= 0 < sin u / u on
// [pi/2, pi)), which Ceres' residual corrector requires.
#include "lobfix/robust.hpp"

#include <cmath>

namespace lobfix {

const char* to_string(RobustLoss loss) {
  switch (loss) {
    case RobustLoss::none:
      return "none";
    case RobustLoss::huber:
      return "huber";
    case RobustLoss::cauchy:
      return "cauchy";
    case RobustLoss::andrews:
      return "andrews";
  }
  return "none";
}

std::optional<RobustLoss> parse_robust_loss(std::string_view name) {
  for (RobustLoss l :
       {RobustLoss::none, RobustLoss::huber, RobustLoss::cauchy, RobustLoss::andrews}) {
    if (name == to_string(l))
      return l;
  }
  return std::nullopt;
}

double default_tuning(RobustLoss loss) {
  switch (loss) {
    case RobustLoss::none:
      return 1.0;
    case RobustLoss::huber:
      return 1.345;
    case RobustLoss::cauchy:
      return 2.3849;
    case RobustLoss::andrews:
      return 1.339;
  }
  return 1.0;
}

RhoValue robust_rho(RobustLoss loss, double s, double a) {
  RhoValue r;
  switch (loss) {
    case RobustLoss::none:
      r = {s, 1.0, 0.0};
      break;
    case RobustLoss::huber: {
      const double a2 = a * a;
      if (s <= a2) {
        r = {s, 1.0, 0.0};
      } else {
        const double root = std::sqrt(s);
        r = {2.0 * a * root - a2, a / root, -0.5 * a / (root * s)};
      }
      break;
    }
    case RobustLoss::cauchy: {
      const double a2 = a * a;
      const double inv = 1.0 / (1.0 + s / a2);
      r = {a2 * std::log1p(s / a2), inv, -inv * inv / a2};
      break;
    }
    case RobustLoss::andrews: {
      const double root = std::sqrt(s);
      const double u = root / a;
      if (u > M_PI) {
        r = {4.0 * a * a, 0.0, 0.0};
      } else if (u < 1e-4) {
        // Series about 0: avoids 0/0 in sin(u)/u and in (cos u - sin(u)/u) / (2 s).
        const double u2 = u * u;
        r = {s * (1.0 - u2 / 12.0), 1.0 - u2 / 6.0, -(1.0 - u2 / 10.0) / (6.0 * a * a)};
      } else {
        const double sinc = std::sin(u) / u;
        r = {2.0 * a * a * (1.0 - std::cos(u)), sinc, (std::cos(u) - sinc) / (2.0 * s)};
      }
      break;
    }
  }
  return r;
}

}  // namespace lobfix
