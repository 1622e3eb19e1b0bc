// Maximum-likelihood fix from lines of bearing on the WGS 84 ellipsoid.
//
// Notation (Karney 2013, J. Geodesy 87:43-55): for the geodesic from station i (point 1) to
// the candidate fix p (point 2): s12 distance, azi1 azimuth at the station, azi2 azimuth at
// p, m12 reduced length, M12 geodesic scale. theta_i measured bearing, sigma_i its
// effective 1-sigma (rad).
//
// Model: theta_i = azi1_i(p) + e_i, e_i ~ N(0, sigma_i^2). The ML estimate minimises
// sum_i (wrap(theta_i - azi1_i(p)) / sigma_i)^2 (Torrieri 1984, IEEE Trans. AES 20(2)).
// The unknown is (x, y), east/north metres in an azimuthal equidistant frame centred at the
// current estimate c; after each Ceres solve the frame is re-centred on the result until the
// step is below SolveOptions::convergence_m. The Jacobian is analytic:
//   d azi1 = (dE cos azi2 - dN sin azi2) / m12            (Karney 2013, reduced length)
// with (dE, dN) the displacement of p for a displacement (dx, dy) in the frame (exact chain
// rule through the projection, below).
#include "lobfix/solver.hpp"

#include <ceres/ceres.h>
#include <glog/logging.h>

#include <Eigen/Dense>
#include <algorithm>
#include <cmath>
#include <limits>
#include <map>
#include <mutex>
#include <random>
#include <sstream>
#include <utility>

#include "detail/ray_crossing.hpp"
#include "lobfix/error.hpp"

namespace lobfix {

namespace {

constexpr double kDegToRad = M_PI / 180.0;
constexpr double kRadToDeg = 180.0 / M_PI;

std::string km_text(double metres) {
  std::ostringstream out;
  out.precision(metres < 10000.0 ? 3 : 5);
  out << metres / 1000.0 << " km";
  return out.str();
}

// Partial derivatives of the east/north displacement of p = local_to_geo(c, x, y) with
// respect to (x, y). With s = hypot(x, y), a0 = atan2(x, y) the azimuth at the centre, azp
// the azimuth at p and rk = m/s: a radial move dr moves p by dr along azp, a tangential move
// dt (a0 increasing) moves p by rk dt toward azp + 90 deg.
struct FrameJacobian {
  double dE_dx = 1.0, dE_dy = 0.0, dN_dx = 0.0, dN_dy = 1.0;
};

FrameJacobian frame_jacobian(double x_m, double y_m, const LocalPoint& p) {
  FrameJacobian j;
  const double s = std::hypot(x_m, y_m);
  if (!(s > 1e-9))
    return j;
  const double sa0 = x_m / s;
  const double ca0 = y_m / s;
  const double sap = std::sin(p.azi_deg * kDegToRad);
  const double cap = std::cos(p.azi_deg * kDegToRad);
  j.dE_dx = sa0 * sap + p.rk * ca0 * cap;
  j.dE_dy = ca0 * sap - p.rk * sa0 * cap;
  j.dN_dx = sa0 * cap - p.rk * ca0 * sap;
  j.dN_dy = ca0 * cap + p.rk * sa0 * sap;
  return j;
}

// All bearings of one signal as one residual block of n whitened residuals, so that the
// projection from the frame to the ellipsoid is done once per evaluation.
class BearingsCost final : public ceres::CostFunction {
 public:
  BearingsCost(const std::vector<Bearing>& bearings, const std::vector<double>& sigma_rad,
               const LatLon& centre)
      : bearings_(bearings), sigma_rad_(sigma_rad), centre_(centre) {
    set_num_residuals(static_cast<int>(bearings.size()));
    mutable_parameter_block_sizes()->push_back(2);
  }

  bool Evaluate(double const* const* parameters, double* residuals,
                double** jacobians) const override {
    const double x = parameters[0][0];
    const double y = parameters[0][1];
    const LocalPoint p = local_to_geo(centre_, x, y);
    const FrameJacobian fj = frame_jacobian(x, y, p);
    for (std::size_t i = 0; i < bearings_.size(); ++i) {
      const Bearing& b = bearings_[i];
      const GeodesicLine12 g = geodesic_inverse({b.lat_deg, b.lon_deg}, p.point);
      // Beyond a conjugate point the azimuth is not a smooth function of p: reject the step.
      if (!(g.m12_m > 0.0))
        return false;
      const double inv_sigma = 1.0 / sigma_rad_[i];
      residuals[i] = angle_diff_deg(b.azimuth_deg, g.azi1_deg) * kDegToRad * inv_sigma;
      if (jacobians != nullptr && jacobians[0] != nullptr) {
        const double ca2 = std::cos(g.azi2_deg * kDegToRad);
        const double sa2 = std::sin(g.azi2_deg * kDegToRad);
        const double dazi_dE = ca2 / g.m12_m;
        const double dazi_dN = -sa2 / g.m12_m;
        // residual = (theta - azi1) / sigma, so d residual = -d azi1 / sigma.
        jacobians[0][2 * i] = -(dazi_dE * fj.dE_dx + dazi_dN * fj.dN_dx) * inv_sigma;
        jacobians[0][2 * i + 1] = -(dazi_dE * fj.dE_dy + dazi_dN * fj.dN_dy) * inv_sigma;
      }
    }
    return true;
  }

 private:
  const std::vector<Bearing>& bearings_;
  const std::vector<double>& sigma_rad_;
  LatLon centre_;
};

// Ceres reports through glog on stderr; the library never prints, and its outcomes reach
// the caller as statuses. Raise glog's threshold once (this affects the process's glog).
void silence_solver_logging() {
  static std::once_flag once;
  std::call_once(once, [] { FLAGS_minloglevel = google::GLOG_FATAL; });
}

Fix failed(FixStatus status, std::string message) {
  Fix f;
  f.status = status;
  f.message = std::move(message);
  return f;
}

// Coordinate-wise median, robust to the wild crossings of nearly parallel pairs.
double median(std::vector<double> v) {
  const std::size_t mid = v.size() / 2;
  std::nth_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(mid), v.end());
  double m = v[mid];
  if (v.size() % 2 == 0) {
    m = 0.5 * (m + *std::max_element(v.begin(), v.begin() + static_cast<std::ptrdiff_t>(mid)));
  }
  return m;
}

}  // namespace

const char* to_string(FixStatus status) {
  switch (status) {
    case FixStatus::ok:
      return "ok";
    case FixStatus::too_few_bearings:
      return "too_few_bearings";
    case FixStatus::single_spot:
      return "single_spot";
    case FixStatus::no_crossing:
      return "no_crossing";
    case FixStatus::out_of_range:
      return "out_of_range";
    case FixStatus::at_station:
      return "at_station";
    case FixStatus::not_converged:
      return "not_converged";
  }
  return "unknown";
}

std::string SolveOptions::validate() const {
  if (!(max_range_m > 0.0) || !std::isfinite(max_range_m))
    return "maximum range must be a positive number of metres";
  if (max_range_m > 1.5e7)
    return "maximum range must be at most 15,000 km";
  if (!(same_spot_m >= 0.0) || !(at_station_m >= 0.0) || !std::isfinite(same_spot_m) ||
      !std::isfinite(at_station_m))
    return "same-spot and at-station distances must be >= 0";
  if (!(convergence_m > 0.0))
    return "convergence step must be > 0";
  if (max_iterations < 1)
    return "at least one iteration is needed";
  if (max_start_pairs < 1)
    return "at least one start pair is needed";
  if (num_threads < 1)
    return "at least one thread is needed";
  return {};
}

double effective_sigma_deg(const Bearing& bearing, const GeodesicLine12& line) {
  if (bearing.pos_sigma_m <= 0.0)
    return bearing.sigma_deg;
  // Moving the station sideways by dt turns its azimuth toward p by M12 dt / m12 (Karney
  // 2013, geodesic scale; on a plane M12 = 1 and this is pos_sigma / range).
  double pos_term_deg = std::numeric_limits<double>::infinity();
  if (line.m12_m > 0.0)
    pos_term_deg = bearing.pos_sigma_m * std::fabs(line.M12) / line.m12_m * kRadToDeg;
  return std::sqrt(bearing.sigma_deg * bearing.sigma_deg + pos_term_deg * pos_term_deg);
}

std::vector<SignalGroup> group_by_signal(const std::vector<Bearing>& bearings) {
  std::vector<SignalGroup> groups;
  std::map<std::string, std::size_t> where;
  for (std::size_t i = 0; i < bearings.size(); ++i) {
    const auto [it, inserted] = where.emplace(bearings[i].signal, groups.size());
    if (inserted)
      groups.push_back({bearings[i].signal, {}});
    groups[it->second].indices.push_back(i);
  }
  return groups;
}

std::optional<LatLon> cross_rays(const LatLon& station_a, double azimuth_a_deg,
                                 const LatLon& station_b, double azimuth_b_deg,
                                 double max_range_m) {
  const auto c =
      detail::cross_rays(station_a, azimuth_a_deg, station_b, azimuth_b_deg, max_range_m);
  if (!c)
    return std::nullopt;
  return c->point;
}

std::optional<LatLon> start_point(const std::vector<Bearing>& bearings,
                                  const SolveOptions& options) {
  const std::size_t n = bearings.size();
  std::vector<std::pair<std::size_t, std::size_t>> pairs;
  const std::size_t all_pairs = n * (n - 1) / 2;
  if (n < 2)
    return std::nullopt;
  if (all_pairs <= static_cast<std::size_t>(options.max_start_pairs)) {
    for (std::size_t i = 0; i < n; ++i)
      for (std::size_t j = i + 1; j < n; ++j)
        pairs.emplace_back(i, j);
  } else {
    std::mt19937_64 rng(options.seed);
    std::uniform_int_distribution<std::size_t> pick(0, n - 1);
    // A few extra draws allow for pairs of a bearing with itself.
    const int draws = options.max_start_pairs * 2;
    for (int k = 0; k < draws && pairs.size() < static_cast<std::size_t>(options.max_start_pairs);
         ++k) {
      const std::size_t i = pick(rng);
      const std::size_t j = pick(rng);
      if (i != j)
        pairs.emplace_back(std::min(i, j), std::max(i, j));
    }
  }
  // Crossings at a good angle give a start close to the answer; a pair of nearly parallel
  // rays crosses far along its length. Use well-crossing pairs when there are any.
  std::vector<detail::RayCrossing> good;
  std::vector<detail::RayCrossing> any;
  const double good_sin = std::sin(10.0 * kDegToRad);
  for (const auto& [i, j] : pairs) {
    const Bearing& a = bearings[i];
    const Bearing& b = bearings[j];
    const auto c = detail::cross_rays({a.lat_deg, a.lon_deg}, a.azimuth_deg, {b.lat_deg, b.lon_deg},
                                      b.azimuth_deg, options.max_range_m);
    if (!c)
      continue;
    (std::fabs(c->sin_angle) >= good_sin ? good : any).push_back(*c);
  }
  const std::vector<detail::RayCrossing>& use = good.empty() ? any : good;
  if (use.empty())
    return std::nullopt;
  if (use.size() == 1)
    return use.front().point;
  const LatLon ref = use.front().point;
  std::vector<double> xs;
  std::vector<double> ys;
  xs.reserve(use.size());
  ys.reserve(use.size());
  for (const auto& c : use) {
    double x = 0.0;
    double y = 0.0;
    geo_to_local(ref, c.point, x, y);
    xs.push_back(x);
    ys.push_back(y);
  }
  return local_to_geo(ref, median(xs), median(ys)).point;
}

Fix solve_fix(const std::vector<Bearing>& bearings, const SolveOptions& options) {
  if (const std::string why = options.validate(); !why.empty()) {
    throw InputError({"", 0, 0, "", why});
  }
  silence_solver_logging();
  const std::size_t n = bearings.size();
  if (n < 2) {
    return failed(
        FixStatus::too_few_bearings,
        "a fix needs at least two bearings from different places; got " + std::to_string(n));
  }
  {
    const LatLon first{bearings[0].lat_deg, bearings[0].lon_deg};
    double farthest = 0.0;
    for (const Bearing& b : bearings)
      farthest = std::max(farthest, geodesic_inverse(first, {b.lat_deg, b.lon_deg}).s12_m);
    if (farthest < options.same_spot_m) {
      return failed(FixStatus::single_spot,
                    "all " + std::to_string(n) +
                        " bearings were taken from one spot: bearings from one place give a "
                        "direction, not a fix; take bearings from at least two places");
    }
  }
  const std::optional<LatLon> start = start_point(bearings, options);
  if (!start) {
    return failed(FixStatus::no_crossing,
                  "no two rays cross ahead of their stations within " +
                      km_text(options.max_range_m) +
                      ": the bearings are parallel or diverge; take a bearing from a place "
                      "at a wider angle to the others");
  }

  LatLon centre = *start;
  std::vector<double> sigma_rad(n);
  int iterations = 0;
  bool converged = false;
  for (int outer = 0; outer < options.max_iterations && !converged; ++outer) {
    for (std::size_t i = 0; i < n; ++i) {
      const GeodesicLine12 g = geodesic_inverse({bearings[i].lat_deg, bearings[i].lon_deg}, centre);
      sigma_rad[i] = effective_sigma_deg(bearings[i], g) * kDegToRad;
    }
    double xy[2] = {0.0, 0.0};
    ceres::Problem::Options problem_options;
    ceres::Problem problem(problem_options);
    problem.AddResidualBlock(new BearingsCost(bearings, sigma_rad, centre), nullptr, xy);
    ceres::Solver::Options solver_options;
    solver_options.linear_solver_type = ceres::DENSE_QR;
    solver_options.trust_region_strategy_type = ceres::LEVENBERG_MARQUARDT;
    solver_options.max_num_iterations = 100;
    // The outer loop decides convergence (a re-centring step below convergence_m); Ceres
    // only needs to get close. Tolerances much tighter than this make Ceres chase rounding
    // at the optimum and end in "invalid step" failures.
    solver_options.function_tolerance = 1e-12;
    solver_options.gradient_tolerance = 1e-12;
    solver_options.parameter_tolerance = 1e-12;
    solver_options.num_threads = options.num_threads;
    solver_options.logging_type = ceres::SILENT;
    solver_options.minimizer_progress_to_stdout = false;
    ceres::Solver::Summary summary;
    ceres::Solve(solver_options, &problem, &summary);
    iterations += static_cast<int>(summary.iterations.size());
    // At the optimum Ceres can stop on rounding ("invalid steps") with the best point kept:
    // that point is as good as any, and the outer loop checks the step.
    const bool usable = summary.IsSolutionUsable() || (summary.termination_type == ceres::FAILURE &&
                                                       std::isfinite(summary.final_cost) &&
                                                       summary.final_cost <= summary.initial_cost);
    if (!usable) {
      return failed(FixStatus::not_converged, "the estimator failed: " + summary.message);
    }
    const double step = std::hypot(xy[0], xy[1]);
    centre = local_to_geo(centre, xy[0], xy[1]).point;
    converged = step < options.convergence_m;
  }
  if (!converged) {
    return failed(FixStatus::not_converged, "the estimator did not settle within " +
                                                std::to_string(options.max_iterations) +
                                                " re-centrings");
  }

  Fix fix;
  fix.position = centre;
  fix.iterations = iterations;
  fix.start_distance_m = geodesic_inverse(*start, centre).s12_m;
  fix.bearings.reserve(n);
  Eigen::Matrix2d information = Eigen::Matrix2d::Zero();
  double nearest = std::numeric_limits<double>::infinity();
  double farthest = 0.0;
  std::string nearest_station;
  std::string farthest_station;
  for (std::size_t i = 0; i < n; ++i) {
    const Bearing& b = bearings[i];
    const GeodesicLine12 g = geodesic_inverse({b.lat_deg, b.lon_deg}, centre);
    BearingFit bf;
    bf.index = i;
    bf.predicted_azimuth_deg = wrap_deg360(g.azi1_deg);
    bf.residual_deg = angle_diff_deg(b.azimuth_deg, g.azi1_deg);
    bf.effective_sigma_deg = effective_sigma_deg(b, g);
    bf.normalized_residual = bf.residual_deg / bf.effective_sigma_deg;
    bf.range_m = g.s12_m;
    fix.chi2 += bf.normalized_residual * bf.normalized_residual;
    if (g.s12_m < nearest) {
      nearest = g.s12_m;
      nearest_station = b.station;
    }
    if (g.s12_m > farthest) {
      farthest = g.s12_m;
      farthest_station = b.station;
    }
    if (g.m12_m > 0.0) {
      // Whitened gradient of azi1 with respect to (E, N) at the fix (frame = identity).
      const double inv = 1.0 / (bf.effective_sigma_deg * kDegToRad * g.m12_m);
      const Eigen::Vector2d row(std::cos(g.azi2_deg * kDegToRad) * inv,
                                -std::sin(g.azi2_deg * kDegToRad) * inv);
      information += row * row.transpose();
    }
    fix.bearings.push_back(bf);
  }
  fix.dof = static_cast<int>(n) - 2;

  if (nearest < options.at_station_m) {
    return failed(FixStatus::at_station,
                  "the solution falls on station '" + nearest_station +
                      "', where its own bearing is undefined; leave that station's bearings "
                      "out or take bearings from elsewhere");
  }
  if (farthest > options.max_range_m) {
    return failed(FixStatus::out_of_range,
                  "the only solution lies " + km_text(farthest) + " from station '" +
                      farthest_station + "', beyond the maximum range of " +
                      km_text(options.max_range_m) + "; raise it only for long-range HF");
  }
  // Near-parallel rays give an honestly huge ellipse; exactly collinear rays give none.
  const Eigen::SelfAdjointEigenSolver<Eigen::Matrix2d> eig(information);
  const double lmax = eig.eigenvalues()(1);
  const double lmin = eig.eigenvalues()(0);
  if (!(lmax > 0.0) || !(lmin > lmax * 1e-14)) {
    return failed(FixStatus::no_crossing,
                  "the rays are collinear: they cannot locate the transmitter along their "
                  "common line; take a bearing from a place off that line");
  }
  const Eigen::Matrix2d cov = information.inverse();
  fix.covariance_en_m2 = {{{cov(0, 0), cov(0, 1)}, {cov(1, 0), cov(1, 1)}}};
  fix.status = FixStatus::ok;
  return fix;
}

std::vector<Fix> solve_by_signal(const std::vector<Bearing>& bearings,
                                 const SolveOptions& options) {
  std::vector<Fix> fixes;
  for (const SignalGroup& group : group_by_signal(bearings)) {
    std::vector<Bearing> subset;
    subset.reserve(group.indices.size());
    for (std::size_t i : group.indices)
      subset.push_back(bearings[i]);
    Fix fix = solve_fix(subset, options);
    fix.signal = group.signal;
    for (BearingFit& bf : fix.bearings)
      bf.index = group.indices[bf.index];
    fixes.push_back(std::move(fix));
  }
  return fixes;
}

}  // namespace lobfix
