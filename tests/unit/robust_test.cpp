// Tests of lobfix/robust.hpp: the losses against Ceres' own (Huber, Cauchy) and against the
// closed form of Andrews' sine written out here.
#include "lobfix/robust.hpp"

#include <ceres/loss_function.h>

#include <cmath>

#include "detail/robust_ceres.hpp"
#include "test_support.hpp"

using namespace lobfix;

TEST_CASE("Huber and Cauchy agree with Ceres' HuberLoss and CauchyLoss") {
  // Reference: Ceres Solver 2.1's own implementations (include/ceres/loss_function.h).
  for (const double a : {0.5, 1.345, 3.0}) {
    const ceres::HuberLoss huber(a);
    const ceres::CauchyLoss cauchy(a);
    for (const double s : {0.0, 0.01, 0.5, 1.0, 1.809, 2.0, 9.0, 100.0, 1e6}) {
      double h[3], c[3];
      huber.Evaluate(s, h);
      cauchy.Evaluate(s, c);
      const RhoValue rh = robust_rho(RobustLoss::huber, s, a);
      const RhoValue rc = robust_rho(RobustLoss::cauchy, s, a);
      INFO("a = " << a << ", s = " << s);
      CHECK(rh.rho == doctest::Approx(h[0]).epsilon(1e-14));
      CHECK(rh.d1 == doctest::Approx(h[1]).epsilon(1e-14));
      CHECK(rh.d2 == doctest::Approx(h[2]).epsilon(1e-14));
      CHECK(rc.rho == doctest::Approx(c[0]).epsilon(1e-14));
      CHECK(rc.d1 == doctest::Approx(c[1]).epsilon(1e-14));
      CHECK(rc.d2 == doctest::Approx(c[2]).epsilon(1e-14));
    }
  }
}

TEST_CASE("Andrews' sine against its closed form, including the redescending part") {
  // Closed form (Andrews 1974 [memory]; LIBRARIES.md): with u = sqrt(s)/a,
  // rho = 2 a^2 (1 - cos u) for u <= pi, else 4 a^2; rho' = sin(u)/u; rho'' = (cos u -
  // sin(u)/u) / (2 s). Derivatives also checked by central differences of rho.
  const double a = 1.339;
  detail::RobustCeresLoss ceres_loss(RobustLoss::andrews, a);
  for (const double z : {0.001, 0.3, 1.0, 2.0, 3.0, 4.0, 4.2, 5.0, 10.0}) {
    const double s = z * z;
    const double u = z / a;
    const RhoValue r = robust_rho(RobustLoss::andrews, s, a);
    INFO("z = " << z);
    if (u <= M_PI) {
      CHECK(r.rho == doctest::Approx(2 * a * a * (1 - std::cos(u))).epsilon(1e-12));
      CHECK(r.d1 == doctest::Approx(std::sin(u) / u).epsilon(1e-12));
      CHECK(r.d2 == doctest::Approx((std::cos(u) - std::sin(u) / u) / (2 * s)).epsilon(1e-9));
      // Ceres' corrector needs rho'' <= 0 where rho' > 0.
      if (r.d1 > 0)
        CHECK(r.d2 <= 0.0);
      const double h = 1e-6 * std::max(s, 1e-3);
      const RhoValue plus = robust_rho(RobustLoss::andrews, s + h, a);
      const RhoValue minus = robust_rho(RobustLoss::andrews, s - h, a);
      CHECK(r.d1 == doctest::Approx((plus.rho - minus.rho) / (2 * h)).epsilon(1e-6));
      CHECK(r.d2 == doctest::Approx((plus.d1 - minus.d1) / (2 * h)).epsilon(1e-5));
    } else {
      // Beyond pi a the loss is flat: a wild bearing has no pull at all.
      CHECK(r.rho == doctest::Approx(4 * a * a));
      CHECK(r.d1 == 0.0);
      CHECK(r.d2 == 0.0);
    }
    double rho[3];
    ceres_loss.Evaluate(s, rho);
    CHECK(rho[0] == r.rho);
    CHECK(rho[1] == r.d1);
  }
  // Near zero it is least squares: rho ~ s, rho' -> 1, rho'' -> -1/(6 a^2).
  const RhoValue zero = robust_rho(RobustLoss::andrews, 0.0, a);
  CHECK(zero.rho == 0.0);
  CHECK(zero.d1 == 1.0);
  CHECK(zero.d2 == doctest::Approx(-1.0 / (6 * a * a)));
  // Continuity at the switch to the series (u = 1e-4).
  const double s_switch = (1e-4 * a) * (1e-4 * a);
  const RhoValue below = robust_rho(RobustLoss::andrews, s_switch * (1 - 1e-9), a);
  const RhoValue above = robust_rho(RobustLoss::andrews, s_switch * (1 + 1e-9), a);
  CHECK(below.d2 == doctest::Approx(above.d2).epsilon(1e-6));
}

TEST_CASE("names and default tuning constants") {
  // Tuning for 95% efficiency at the normal: Huber 1.345, Cauchy 2.3849, Andrews 1.339
  // [memory: Holland and Welsch 1977].
  CHECK(default_tuning(RobustLoss::huber) == 1.345);
  CHECK(default_tuning(RobustLoss::cauchy) == 2.3849);
  CHECK(default_tuning(RobustLoss::andrews) == 1.339);
  for (RobustLoss l :
       {RobustLoss::none, RobustLoss::huber, RobustLoss::cauchy, RobustLoss::andrews}) {
    CHECK(parse_robust_loss(to_string(l)) == l);
  }
  CHECK_FALSE(parse_robust_loss("tukey").has_value());
  const RhoValue ls = robust_rho(RobustLoss::none, 7.0, 1.0);
  CHECK(ls.rho == 7.0);
  CHECK(ls.d1 == 1.0);
}
