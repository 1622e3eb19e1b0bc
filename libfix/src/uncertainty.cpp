// lobfix: confidence regions and goodness of fit for a fix (stage "uncertainty").
//
// Notation (docs/uncertainty.md):
//   C = [[a, b], [b, c]]   east/north covariance of the fix error (m^2)
//   l1 >= l2               eigenvalues of C; s1 = sqrt(l1), s2 = sqrt(l2) (m)
//   k                      ellipse scale: semi-axes k s1, k s2
//   p                      probability held by a region, in (0, 1)
//   nu                     degrees of freedom of the residuals, n - 2
//   chi2                   sum of squared normalised residuals of the fit
//   F = chi2 / nu          variance factor (residual variance of unit weight)
//   P(s1, s2, R)           probability that N(0, diag(s1^2, s2^2)) falls within radius R
//   Q(a, x)                upper regularised incomplete gamma function (A&S 6.5.3)
//                          (A&S equation numbers here are [memory])

#include "lobfix/uncertainty.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <sstream>
#include <string>
#include <vector>

#include "lobfix/error.hpp"

namespace lobfix {
namespace {

constexpr double kPi = 3.14159265358979323846;
constexpr double kRadToDeg = 180.0 / kPi;
constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr double kEps = std::numeric_limits<double>::epsilon();

std::string number_text(double value) {
  std::ostringstream out;
  out.precision(17);
  out << value;
  return out.str();
}

void check_probability(double probability, const char* what) {
  if (!(probability > 0.0 && probability < 1.0)) {
    throw InputError({"", 0, 0, "confidence",
                      std::string(what) + " " + number_text(probability) +
                          " is not a probability strictly between 0 and 1"});
  }
}

/// Eigenvalues l1 >= l2 of a symmetric 2x2 matrix and the orientation of the eigenvector of
/// l1 (deg clockwise from north, [0, 180); 0 when the matrix is a multiple of the identity).
/// l2 is clamped to 0 when it is negative by rounding only; a clearly negative eigenvalue
/// (not a covariance) or a non-finite entry gives NaN.
struct Eigen2 {
  double l1 = kNaN;
  double l2 = kNaN;
  double orientation_deg = 0.0;
};

Eigen2 eigen_symmetric(const Covariance2& cov) {
  Eigen2 out;
  const double a = cov[0][0];                      // east-east
  const double c = cov[1][1];                      // north-north
  const double b = 0.5 * (cov[0][1] + cov[1][0]);  // east-north, symmetric part
  if (!std::isfinite(a) || !std::isfinite(b) || !std::isfinite(c)) {
    return out;
  }
  const double mean = 0.5 * (a + c);
  const double half_diff = 0.5 * (a - c);
  const double d = std::hypot(half_diff, b);
  out.l1 = mean + d;
  // The smaller eigenvalue as det / l1 rather than mean - d, which loses it entirely once
  // l2 < eps l1. The determinant a c - b^2 by Kahan's fma algorithm is accurate to a few ulp
  // of the entries.
  const double bb = b * b;
  const double det = std::fma(a, c, -bb) + std::fma(-b, b, bb);
  out.l2 = out.l1 > 0.0 ? det / out.l1 : mean - d;
  // A negative eigenvalue of the order of rounding is a zero one; a larger one means the
  // matrix is not a covariance.
  const double rounding = 1e-9 * std::max(std::fabs(out.l1), std::fabs(mean));
  if (out.l2 < 0.0) {
    out.l2 = (out.l2 >= -rounding) ? 0.0 : kNaN;
  }
  if (out.l1 < 0.0) {
    out.l1 = (out.l1 >= -rounding) ? 0.0 : kNaN;
  }
  if (d <= 8.0 * kEps * std::fabs(mean)) {
    out.orientation_deg = 0.0;  // circular: every direction is an axis
    return out;
  }
  // The eigenvector of l1 makes the angle phi = atan2(2b, a - c) / 2 with the east axis
  // (counter-clockwise); as an azimuth that is atan2(v_east, v_north) = 90 deg - phi.
  const double phi_deg = 0.5 * std::atan2(b, half_diff) * kRadToDeg;  // [-90, 90]
  double orientation_deg = 90.0 - phi_deg;                            // [0, 180]
  if (orientation_deg >= 180.0) {
    orientation_deg -= 180.0;
  }
  if (orientation_deg < 0.0) {
    orientation_deg = 0.0;
  }
  out.orientation_deg = orientation_deg;
  return out;
}

// ---- Quadrature -----------------------------------------------------------------------

constexpr int kGaussOrder = 20;

struct GaussLegendre {
  std::array<double, kGaussOrder> x{};  ///< nodes on [-1, 1]
  std::array<double, kGaussOrder> w{};  ///< weights, summing to 2
};

/// Gauss-Legendre nodes and weights by Newton's method on the Legendre recurrence
/// (Abramowitz & Stegun 25.4 [memory]; the classic "gauleg" construction).
GaussLegendre make_gauss_legendre() {
  GaussLegendre g;
  const int n = kGaussOrder;
  for (int i = 0; i < (n + 1) / 2; ++i) {
    double z = std::cos(kPi * (i + 0.75) / (n + 0.5));
    double dp = 1.0;
    for (int iter = 0; iter < 100; ++iter) {
      double p0 = 1.0;
      double p1 = 0.0;
      for (int j = 1; j <= n; ++j) {
        const double p2 = p1;
        p1 = p0;
        p0 = ((2.0 * j - 1.0) * z * p1 - (j - 1.0) * p2) / j;
      }
      dp = n * (z * p0 - p1) / (z * z - 1.0);
      const double step = p0 / dp;
      z -= step;
      if (std::fabs(step) <= 1e-16) {
        break;
      }
    }
    g.x[i] = -z;
    g.x[n - 1 - i] = z;
    g.w[i] = 2.0 / ((1.0 - z * z) * dp * dp);
    g.w[n - 1 - i] = g.w[i];
  }
  return g;
}

const GaussLegendre& gauss_legendre() {
  static const GaussLegendre g = make_gauss_legendre();
  return g;
}

template <class F>
double gauss_panel(const F& f, double lo, double hi) {
  const GaussLegendre& g = gauss_legendre();
  const double mid = 0.5 * (lo + hi);
  const double half = 0.5 * (hi - lo);
  double sum = 0.0;
  for (int i = 0; i < kGaussOrder; ++i) {
    sum += g.w[i] * f(mid + half * g.x[i]);
  }
  return sum * half;
}

/// Adaptive Gauss-Legendre: a panel is accepted when it agrees with its two halves to
/// `tolerance`. A 20-point rule is exact for degree-39 polynomials, so the halves are far
/// better than the difference says; the tolerance is not halved with depth.
template <class F>
double adaptive_gauss(const F& f, double lo, double hi, double whole, double tolerance, int depth) {
  const double mid = 0.5 * (lo + hi);
  const double left = gauss_panel(f, lo, mid);
  const double right = gauss_panel(f, mid, hi);
  const double halves = left + right;
  // Accept at the requested tolerance, at the rounding level of the panel itself (so that
  // rounding can never force endless splitting), or at the depth limit.
  const double difference = std::fabs(halves - whole);
  if (depth <= 0 || difference <= tolerance || difference <= 64.0 * kEps * std::fabs(halves)) {
    return halves;
  }
  return adaptive_gauss(f, lo, mid, left, tolerance, depth - 1) +
         adaptive_gauss(f, mid, hi, right, tolerance, depth - 1);
}

// ---- Incomplete gamma -----------------------------------------------------------------

/// log of x^a e^-x / Gamma(a), the common factor of the series and the continued fraction.
double log_gamma_prefactor(double a, double x) {
  return a * std::log(x) - x - std::lgamma(a);
}

/// P(a, x) by the series A&S 6.5.29 (x < a + 1).
double gamma_p_series(double a, double x) {
  double term = 1.0 / a;
  double sum = term;
  for (int n = 1; n < 100000; ++n) {
    term *= x / (a + n);
    sum += term;
    if (std::fabs(term) < std::fabs(sum) * kEps) {
      break;
    }
  }
  return sum * std::exp(log_gamma_prefactor(a, x));
}

/// Q(a, x) by the continued fraction A&S 6.5.31, evaluated with the modified Lentz method
/// (x >= a + 1).
double gamma_q_fraction(double a, double x) {
  constexpr double kTiny = 1e-300;
  double b = x + 1.0 - a;
  double c = 1.0 / kTiny;
  double d = 1.0 / b;
  double h = d;
  for (int i = 1; i < 100000; ++i) {
    const double an = -i * (i - a);
    b += 2.0;
    d = an * d + b;
    if (std::fabs(d) < kTiny) {
      d = kTiny;
    }
    c = b + an / c;
    if (std::fabs(c) < kTiny) {
      c = kTiny;
    }
    d = 1.0 / d;
    const double delta = d * c;
    h *= delta;
    if (std::fabs(delta - 1.0) < kEps) {
      break;
    }
  }
  return std::exp(log_gamma_prefactor(a, x)) * h;
}

}  // namespace

double ellipse_scale_known(double probability) {
  check_probability(probability, "ellipse probability");
  // k^2 is the p-quantile of chi-square with 2 dof: 1 - exp(-k^2 / 2) = p.
  return std::sqrt(-2.0 * std::log1p(-probability));
}

double ellipse_scale_estimated(double probability, int nu) {
  check_probability(probability, "ellipse probability");
  if (nu < 1) {
    throw InputError({"", 0, 0, "dof",
                      "degrees of freedom " + std::to_string(nu) +
                          " are too few to scale an ellipse by the residuals (need 1 or more)"});
  }
  // k^2 = 2 F(2, nu; p) with the F quantile in closed form: nu ((1 - p)^(-2/nu) - 1).
  const double nu_d = static_cast<double>(nu);
  return std::sqrt(nu_d * std::expm1(-(2.0 / nu_d) * std::log1p(-probability)));
}

Ellipse ellipse_from_covariance(const Covariance2& cov, double probability, double scale_k) {
  check_probability(probability, "ellipse probability");
  if (!(scale_k >= 0.0) || !std::isfinite(scale_k)) {
    throw InputError({"", 0, 0, "confidence",
                      "ellipse scale " + number_text(scale_k) + " is not a finite number >= 0"});
  }
  const Eigen2 e = eigen_symmetric(cov);
  Ellipse out;
  out.probability = probability;
  out.semi_major_m = scale_k * std::sqrt(e.l1);
  out.semi_minor_m = scale_k * std::sqrt(e.l2);
  out.orientation_deg = e.orientation_deg;
  return out;
}

double circular_probability(double sigma_major_m, double sigma_minor_m, double radius_m) {
  if (std::isnan(sigma_major_m) || std::isnan(sigma_minor_m) || std::isnan(radius_m) ||
      sigma_major_m < 0.0 || sigma_minor_m < 0.0) {
    return kNaN;
  }
  if (radius_m < 0.0) {
    return 0.0;
  }
  // The probability is symmetric in the two sigmas; s1 is the larger.
  const double s1 = std::max(sigma_major_m, sigma_minor_m);
  const double s2 = std::min(sigma_major_m, sigma_minor_m);
  const double r = radius_m;
  if (s1 == 0.0) {
    return 1.0;  // all the mass at the centre
  }
  if (r == 0.0) {
    return 0.0;
  }
  if (std::isinf(r)) {
    return 1.0;
  }
  if (s2 == 0.0) {
    return std::erf(r / (s1 * std::sqrt(2.0)));  // a 1-D normal along the major axis
  }
  // Beyond 9 s1 the circle misses at most exp(-r^2 / (2 s1^2)) < 3e-18 (the circular law of
  // s1 holds less): 1 to double precision.
  if (r > 9.0 * s1) {
    return 1.0;
  }
  // Condition on the major-axis coordinate x = r cos(u), u in [0, pi]:
  //   P = integral_{-r}^{r} phi(x / s1) / s1 * erf(sqrt(r^2 - x^2) / (s2 sqrt 2)) dx
  //     = sqrt(2 / pi) (r / s1) integral_0^{pi/2} sin u exp(-(r cos u)^2 / (2 s1^2))
  //                                               erf(r sin u / (s2 sqrt 2)) du.
  // The integrand is entire; its only sharp feature is the erf step near u = 0, of width
  // about w = s2 / r. Panels graded geometrically from w up to pi/8 put nodes on it (an
  // adaptive rule alone cannot see a step that falls between all its nodes), then each
  // panel is refined adaptively.
  const double front = std::sqrt(2.0 / kPi) * r / s1;
  const double ax = r / (s1 * std::sqrt(2.0));
  const double ay = r / (s2 * std::sqrt(2.0));
  const auto integrand = [front, ax, ay](double u) {
    const double cu = std::cos(u);
    return front * std::sin(u) * std::exp(-(ax * cu) * (ax * cu)) * std::erf(ay * std::sin(u));
  };
  constexpr double kHalfPi = 0.5 * kPi;
  std::vector<double> breaks{0.0};
  // Below a width of 1e-10 the step carries a relative part of P of order 1e-20: the
  // grading stops there.
  const double w = std::max(s2 / r, 1e-10);
  // Doubling is exact in binary floating point: the count of edges does not depend on
  // rounding. NOLINTNEXTLINE(clang-analyzer-security.FloatLoopCounter)
  for (double edge = w; edge < 0.125 * kPi; edge *= 2.0) {
    breaks.push_back(edge);
  }
  for (int i = 1; i <= 4; ++i) {
    breaks.push_back(0.25 * kHalfPi * i);
  }
  std::vector<double> panel(breaks.size() - 1);
  double coarse = 0.0;
  for (std::size_t i = 0; i + 1 < breaks.size(); ++i) {
    panel[i] = gauss_panel(integrand, breaks[i], breaks[i + 1]);
    coarse += panel[i];
  }
  const double tolerance = 1e-15 * std::max(coarse, std::numeric_limits<double>::min());
  double total = 0.0;
  for (std::size_t i = 0; i + 1 < breaks.size(); ++i) {
    total += adaptive_gauss(integrand, breaks[i], breaks[i + 1], panel[i], tolerance, 50);
  }
  return std::min(total, 1.0);
}

double circular_radius(const Covariance2& cov, double probability) {
  check_probability(probability, "circle probability");
  const Eigen2 e = eigen_symmetric(cov);
  if (std::isnan(e.l1) || std::isnan(e.l2)) {
    return kNaN;
  }
  const double s1 = std::sqrt(e.l1);
  const double s2 = std::sqrt(e.l2);
  if (s1 == 0.0) {
    return 0.0;
  }
  // P(s1, s2, R) decreases in each sigma, so the circular laws of s2 and of s1 bracket the
  // radius: s2 k <= R <= s1 k with k = sqrt(-2 ln(1 - p)).
  const double k = ellipse_scale_known(probability);
  double lo = s2 * k;
  double hi = s1 * k;
  // Bisection on the sign of P - p: about 45 halvings from a bracket of width s1 k.
  for (int iter = 0; iter < 200 && hi - lo > 1e-14 * hi; ++iter) {
    const double mid = 0.5 * (lo + hi);
    if (circular_probability(s1, s2, mid) < probability) {
      lo = mid;
    } else {
      hi = mid;
    }
  }
  return 0.5 * (lo + hi);
}

double chi2_survival(double x, int dof) {
  if (dof <= 0) {
    return 1.0;
  }
  if (std::isnan(x)) {
    return kNaN;
  }
  if (x <= 0.0) {
    return 1.0;
  }
  if (std::isinf(x)) {
    return 0.0;
  }
  // P(chi2_dof > x) = Q(dof / 2, x / 2)  (A&S 26.4.19).
  const double a = 0.5 * dof;
  const double half_x = 0.5 * x;
  if (half_x < a + 1.0) {
    return 1.0 - gamma_p_series(a, half_x);
  }
  return gamma_q_fraction(a, half_x);
}

Uncertainty describe_uncertainty(const Fix& fix, const UncertaintyOptions& options) {
  for (const double probability : options.probabilities) {
    check_probability(probability, "ellipse probability");
  }
  if (!(options.alpha > 0.0 && options.alpha < 1.0)) {
    throw InputError(
        {"", 0, 0, "alpha",
         "significance level " + number_text(options.alpha) + " is not strictly between 0 and 1"});
  }
  Uncertainty out;
  if (!fix.ok()) {
    return out;
  }
  const Covariance2& cov = fix.covariance_en_m2;
  out.ellipses.reserve(options.probabilities.size());
  for (const double probability : options.probabilities) {
    out.ellipses.push_back(
        ellipse_from_covariance(cov, probability, ellipse_scale_known(probability)));
  }
  out.cep_m = circular_radius(cov, 0.5);
  if (fix.dof >= 1) {
    out.p_value = chi2_survival(fix.chi2, fix.dof);
    out.variance_factor = fix.chi2 / fix.dof;
  }
  out.sigmas_too_small = fix.dof >= 1 && out.p_value < options.alpha;
  if (out.sigmas_too_small) {
    Covariance2 scaled = cov;
    for (auto& row : scaled) {
      for (double& v : row) {
        v *= out.variance_factor;
      }
    }
    out.scaled_ellipses.reserve(options.probabilities.size());
    for (const double probability : options.probabilities) {
      out.scaled_ellipses.push_back(ellipse_from_covariance(
          scaled, probability, ellipse_scale_estimated(probability, fix.dof)));
    }
    out.scaled_cep_m = circular_radius(scaled, 0.5);
  }
  return out;
}

}  // namespace lobfix
