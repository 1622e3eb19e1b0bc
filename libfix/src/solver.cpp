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
#include <atomic>
#include <cmath>
#include <limits>
#include <map>
#include <mutex>
#include <random>
#include <sstream>
#include <thread>
#include <utility>

#include "detail/ray_crossing.hpp"
#include "detail/robust_ceres.hpp"
#include "lobfix/error.hpp"
#include "lobfix/robust.hpp"

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

// Runs fn(begin, end) over [0, n) split into contiguous ranges, one per thread. Each index
// is handled by exactly one call, so results written per index do not depend on the count.
template <typename Fn>
void parallel_ranges(std::size_t n, int threads, Fn&& fn) {
  constexpr std::size_t kMinPerThread = 1000;
  std::size_t k = threads > 0 ? static_cast<std::size_t>(threads)
                              : std::max(1U, std::thread::hardware_concurrency());
  k = std::min(k, std::max<std::size_t>(1, n / kMinPerThread));
  if (k <= 1) {
    fn(std::size_t{0}, n);
    return;
  }
  std::vector<std::thread> pool;
  pool.reserve(k - 1);
  const std::size_t chunk = (n + k - 1) / k;
  for (std::size_t t = 1; t < k; ++t) {
    const std::size_t begin = std::min(n, t * chunk);
    const std::size_t end = std::min(n, begin + chunk);
    pool.emplace_back([&fn, begin, end] { fn(begin, end); });
  }
  fn(std::size_t{0}, std::min(n, chunk));
  for (std::thread& th : pool)
    th.join();
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
  // Residuals of bearings [begin, end).
  BearingsCost(const std::vector<Bearing>& bearings, const std::vector<double>& sigma_rad,
               const LatLon& centre, int threads, std::size_t begin, std::size_t end)
      : bearings_(bearings),
        sigma_rad_(sigma_rad),
        centre_(centre),
        threads_(threads),
        begin_(begin),
        end_(end) {
    set_num_residuals(static_cast<int>(end - begin));
    mutable_parameter_block_sizes()->push_back(2);
  }

  bool Evaluate(double const* const* parameters, double* residuals,
                double** jacobians) const override {
    const double x = parameters[0][0];
    const double y = parameters[0][1];
    const LocalPoint p = local_to_geo(centre_, x, y);
    const FrameJacobian fj = frame_jacobian(x, y, p);
    double* jac = jacobians != nullptr ? jacobians[0] : nullptr;
    bool ok = true;
    std::mutex failed_mutex;  // each range writes only its own residuals and Jacobian rows
    parallel_ranges(end_ - begin_, threads_, [&](std::size_t begin, std::size_t end) {
      for (std::size_t i = begin; i < end; ++i) {
        const Bearing& b = bearings_[begin_ + i];
        const GeodesicLine12 g = geodesic_inverse_azimuths({b.lat_deg, b.lon_deg}, p.point);
        // The derivative below holds for a signed m12 (negative beyond a conjugate point);
        // only m12 = 0, a conjugate point itself, leaves the azimuth non-differentiable.
        if (!(std::fabs(g.m12_m) > 0.0)) {
          const std::lock_guard<std::mutex> lock(failed_mutex);
          ok = false;
          return;
        }
        const double inv_sigma = 1.0 / sigma_rad_[begin_ + i];
        residuals[i] = angle_diff_deg(b.azimuth_deg, g.azi1_deg) * kDegToRad * inv_sigma;
        if (jac != nullptr) {
          const double ca2 = std::cos(g.azi2_deg * kDegToRad);
          const double sa2 = std::sin(g.azi2_deg * kDegToRad);
          const double dazi_dE = ca2 / g.m12_m;
          const double dazi_dN = -sa2 / g.m12_m;
          // residual = (theta - azi1) / sigma, so d residual = -d azi1 / sigma.
          jac[2 * i] = -(dazi_dE * fj.dE_dx + dazi_dN * fj.dN_dx) * inv_sigma;
          jac[2 * i + 1] = -(dazi_dE * fj.dE_dy + dazi_dN * fj.dN_dy) * inv_sigma;
        }
      }
    });
    return ok;
  }

 private:
  const std::vector<Bearing>& bearings_;
  const std::vector<double>& sigma_rad_;
  LatLon centre_;
  int threads_;
  std::size_t begin_;
  std::size_t end_;
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
  if (!(station_bias_prior_deg >= 0.0) || station_bias_prior_deg > 90.0)
    return "the station-offset prior must be between 0 and 90 degrees";
  if (!(outlier_z > 0.0))
    return "the outlier threshold must be a positive number of sigmas";
  if (!(loss_tuning >= 0.0) || !std::isfinite(loss_tuning))
    return "the loss tuning constant must be >= 0 (0: the default)";
  if (max_start_pairs < 1)
    return "at least one start pair is needed";
  if (num_threads < 0)
    return "the thread count must be >= 0 (0: one per hardware thread)";
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

namespace {

Fix solve_from(const std::vector<Bearing>& bearings, const LatLon& start,
               const SolveOptions& options);
Fix solve_ambiguous(const std::vector<Bearing>& bearings, const LatLon& start,
                    const SolveOptions& options);
Fix refit_without_outliers(const std::vector<Bearing>& bearings, const Fix& robust,
                           const SolveOptions& options);
Fix estimate_station_biases(const std::vector<Bearing>& bearings, const Fix& base,
                            const SolveOptions& options);

// A start for bearings with mirror candidates: every candidate is a ray; the crossing of two
// rays of different bearings that the most bearings agree with (one of their candidates
// within 3 sigma) wins, ties going to the smaller sum of squared normalised residuals
// (each capped at 9). A consensus search in the manner of RANSAC (Fischler and Bolles 1981),
// over all pairs or a seeded sample.
std::optional<LatLon> consensus_start(const std::vector<Bearing>& bearings,
                                      const SolveOptions& options) {
  struct Ray {
    std::size_t bearing;
    double azimuth_deg;
  };
  std::vector<Ray> rays;
  for (std::size_t i = 0; i < bearings.size(); ++i) {
    rays.push_back({i, bearings[i].azimuth_deg});
    if (bearings[i].alt_azimuth_deg)
      rays.push_back({i, *bearings[i].alt_azimuth_deg});
  }
  std::vector<std::pair<std::size_t, std::size_t>> pairs;
  const std::size_t m = rays.size();
  // Scoring costs one geodesic per bearing per crossing: fewer crossings for many bearings.
  const std::size_t budget = std::max<std::size_t>(
      20, std::min<std::size_t>(static_cast<std::size_t>(options.max_start_pairs),
                                200000 / std::max<std::size_t>(1, bearings.size())));
  if (m * (m - 1) / 2 <= budget) {
    for (std::size_t a = 0; a < m; ++a)
      for (std::size_t b = a + 1; b < m; ++b)
        if (rays[a].bearing != rays[b].bearing)
          pairs.emplace_back(a, b);
  } else {
    std::mt19937_64 rng(options.seed);
    std::uniform_int_distribution<std::size_t> pick(0, m - 1);
    for (std::size_t k = 0; k < 4 * budget && pairs.size() < budget; ++k) {
      const std::size_t a = pick(rng);
      const std::size_t b = pick(rng);
      if (rays[a].bearing != rays[b].bearing)
        pairs.emplace_back(a, b);
    }
  }
  std::optional<LatLon> best;
  int best_votes = -1;
  double best_cost = 0.0;
  for (const auto& [a, b] : pairs) {
    const Bearing& ba = bearings[rays[a].bearing];
    const Bearing& bb = bearings[rays[b].bearing];
    const auto c =
        detail::cross_rays({ba.lat_deg, ba.lon_deg}, rays[a].azimuth_deg, {bb.lat_deg, bb.lon_deg},
                           rays[b].azimuth_deg, options.max_range_m);
    if (!c)
      continue;
    int votes = 0;
    double cost = 0.0;
    for (const Bearing& x : bearings) {
      const GeodesicLine12 g = geodesic_inverse({x.lat_deg, x.lon_deg}, c->point);
      double z = std::fabs(angle_diff_deg(x.azimuth_deg, g.azi1_deg)) / x.sigma_deg;
      if (x.alt_azimuth_deg) {
        z = std::min(z, std::fabs(angle_diff_deg(*x.alt_azimuth_deg, g.azi1_deg)) /
                            x.alt_sigma_deg.value_or(x.sigma_deg));
      }
      votes += z <= 3.0 ? 1 : 0;
      cost += std::min(z * z, 9.0);
    }
    if (votes > best_votes || (votes == best_votes && cost < best_cost)) {
      best = c->point;
      best_votes = votes;
      best_cost = cost;
    }
  }
  return best;
}

}  // namespace

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
    bool one_spot = true;
    for (std::size_t i = 1; i < n && one_spot; ++i) {
      const Bearing& b = bearings[i];
      if (b.lat_deg == first.lat_deg && b.lon_deg == first.lon_deg)
        continue;
      one_spot = geodesic_inverse(first, {b.lat_deg, b.lon_deg}).s12_m < options.same_spot_m;
    }
    if (one_spot) {
      return failed(FixStatus::single_spot,
                    "all " + std::to_string(n) +
                        " bearings were taken from one spot: bearings from one place give a "
                        "direction, not a fix; take bearings from at least two places");
    }
  }
  const bool any_ambiguous = std::any_of(bearings.begin(), bearings.end(), [](const Bearing& b) {
    return b.alt_azimuth_deg.has_value();
  });
  // Wild bearings and mirror candidates both call for a start that most bearings agree
  // with, rather than the median of all crossings.
  const bool consensus = any_ambiguous || options.loss != RobustLoss::none;
  const std::optional<LatLon> start =
      consensus ? consensus_start(bearings, options) : start_point(bearings, options);
  if (!start) {
    return failed(FixStatus::no_crossing,
                  "no two rays cross ahead of their stations within " +
                      km_text(options.max_range_m) +
                      ": the bearings are parallel or diverge; take a bearing from a place "
                      "at a wider angle to the others");
  }
  Fix fix = any_ambiguous ? solve_ambiguous(bearings, *start, options)
                          : solve_from(bearings, *start, options);
  if (fix.ok() && options.exclude_outliers && fix.outliers > 0) {
    fix = refit_without_outliers(bearings, fix, options);
  }
  if (fix.ok() && options.station_bias_prior_deg > 0.0) {
    // Verdicts are remade once the offsets are removed (a misaligned station's bearings can
    // look wild before), and the offsets estimated again, until the verdicts settle.
    Fix base = fix;
    Fix with_offsets = estimate_station_biases(bearings, base, options);
    for (int round = 0; round < 3 && with_offsets.ok() && options.loss != RobustLoss::none;
         ++round) {
      bool changed = false;
      for (std::size_t i = 0; i < base.bearings.size(); ++i) {
        const bool out =
            std::fabs(with_offsets.bearings[i].normalized_residual) > options.outlier_z;
        changed = changed || out != base.bearings[i].outlier;
        base.bearings[i].outlier = out;
      }
      if (!changed)
        break;
      base.outliers =
          static_cast<int>(std::count_if(base.bearings.begin(), base.bearings.end(),
                                         [](const BearingFit& b) { return b.outlier; }));
      with_offsets = estimate_station_biases(bearings, base, options);
    }
    fix = with_offsets;
  }
  return fix;
}

namespace {

// Everything the fix needs at one point: the per-bearing fits, the Fisher information
// J^T J of the whitened residuals with respect to east/north at the point, and J^T r, whose
// solve is the Gauss-Newton step from the point.
struct PointFit {
  std::vector<BearingFit> fits;
  Eigen::Matrix2d information = Eigen::Matrix2d::Zero();
  Eigen::Vector2d jtr = Eigen::Vector2d::Zero();
  double chi2 = 0.0;
  std::size_t nearest = 0;
  std::size_t farthest = 0;
};

// The loss in use and its tuning constant (in sigmas).
struct Robustness {
  RobustLoss loss = RobustLoss::none;
  double a = 1.0;
};

Robustness robustness(const SolveOptions& options) {
  return {options.loss,
          options.loss_tuning > 0.0 ? options.loss_tuning : default_tuning(options.loss)};
}

// With a robust loss, each bearing enters with the weight rho'(z^2) (iteratively reweighted
// least squares: Holland and Welsch 1977), which is also its reported weight.
PointFit fit_at(const std::vector<Bearing>& bearings, const LatLon& p, int threads,
                const Robustness& rob) {
  const std::size_t n = bearings.size();
  PointFit out;
  out.fits.resize(n);
  std::vector<Eigen::Vector2d> rows(n, Eigen::Vector2d::Zero());
  parallel_ranges(n, threads, [&](std::size_t begin, std::size_t end) {
    for (std::size_t i = begin; i < end; ++i) {
      const Bearing& b = bearings[i];
      const GeodesicLine12 g = geodesic_inverse({b.lat_deg, b.lon_deg}, p);
      BearingFit& bf = out.fits[i];
      bf.index = i;
      bf.predicted_azimuth_deg = wrap_deg360(g.azi1_deg);
      bf.residual_deg = angle_diff_deg(b.azimuth_deg, g.azi1_deg);
      bf.effective_sigma_deg = effective_sigma_deg(b, g);
      bf.normalized_residual = bf.residual_deg / bf.effective_sigma_deg;
      bf.range_m = g.s12_m;
      if (g.m12_m != 0.0) {
        // Whitened gradient of azi1 with respect to (E, N) at p (Karney 2013).
        const double inv = 1.0 / (bf.effective_sigma_deg * kDegToRad * g.m12_m);
        rows[i] = {std::cos(g.azi2_deg * kDegToRad) * inv, -std::sin(g.azi2_deg * kDegToRad) * inv};
      }
    }
  });
  // Sums in input order, whatever the thread count.
  for (std::size_t i = 0; i < n; ++i) {
    BearingFit& bf = out.fits[i];
    const double z2 = bf.normalized_residual * bf.normalized_residual;
    bf.weight = robust_rho(rob.loss, z2, rob.a).d1;
    out.chi2 += z2;
    out.information += bf.weight * rows[i] * rows[i].transpose();
    out.jtr += bf.weight * rows[i] * bf.normalized_residual;
    if (bf.range_m < out.fits[out.nearest].range_m)
      out.nearest = i;
    if (bf.range_m > out.fits[out.farthest].range_m)
      out.farthest = i;
  }
  return out;
}

// One Ceres solve in the frame centred at `centre`; returns the new centre, or a message.
std::optional<LatLon> ceres_step(const std::vector<Bearing>& bearings,
                                 const std::vector<double>& sigma_rad, const LatLon& centre,
                                 const SolveOptions& options, int* iterations,
                                 std::string* message) {
  double xy[2] = {0.0, 0.0};
  ceres::Problem::Options problem_options;
  ceres::Problem problem(problem_options);
  const Robustness rob = robustness(options);
  if (rob.loss == RobustLoss::none) {
    problem.AddResidualBlock(
        new BearingsCost(bearings, sigma_rad, centre, options.num_threads, 0, bearings.size()),
        nullptr, xy);
  } else {
    // A loss acts on a whole residual block, so each bearing gets a block of its own.
    for (std::size_t i = 0; i < bearings.size(); ++i) {
      problem.AddResidualBlock(new BearingsCost(bearings, sigma_rad, centre, 1, i, i + 1),
                               new detail::RobustCeresLoss(rob.loss, rob.a), xy);
    }
  }
  ceres::Solver::Options solver_options;
  solver_options.linear_solver_type = ceres::DENSE_QR;
  solver_options.trust_region_strategy_type = ceres::LEVENBERG_MARQUARDT;
  solver_options.max_num_iterations = 100;
  // Ceres brings the estimate into the quadratic region; Gauss-Newton polishing at the
  // re-centred point (solve_from) finishes it, so Ceres need not chase the last digits.
  solver_options.function_tolerance = 1e-10;
  solver_options.gradient_tolerance = 1e-12;
  solver_options.parameter_tolerance = 1e-8;
  solver_options.num_threads = 1;  // the cost function spreads its own work
  solver_options.logging_type = ceres::SILENT;
  solver_options.minimizer_progress_to_stdout = false;
  ceres::Solver::Summary summary;
  ceres::Solve(solver_options, &problem, &summary);
  *iterations += static_cast<int>(summary.iterations.size());
  // At the optimum Ceres can stop on rounding ("invalid steps") with the best point kept:
  // that point is as good as any, and the caller checks convergence.
  const bool usable = summary.IsSolutionUsable() || (summary.termination_type == ceres::FAILURE &&
                                                     std::isfinite(summary.final_cost) &&
                                                     summary.final_cost <= summary.initial_cost);
  if (!usable) {
    *message = "the estimator failed: " + summary.message;
    return std::nullopt;
  }
  return local_to_geo(centre, xy[0], xy[1]).point;
}

Fix solve_from(const std::vector<Bearing>& bearings, const LatLon& start,
               const SolveOptions& options) {
  const std::size_t n = bearings.size();
  // Effective sigmas depend on the range only through the station-position term.
  const bool range_dependent = std::any_of(bearings.begin(), bearings.end(),
                                           [](const Bearing& b) { return b.pos_sigma_m > 0.0; });
  std::vector<double> sigma_rad(n);
  for (std::size_t i = 0; i < n; ++i) {
    const Bearing& b = bearings[i];
    sigma_rad[i] =
        (range_dependent ? effective_sigma_deg(b, geodesic_inverse({b.lat_deg, b.lon_deg}, start))
                         : b.sigma_deg) *
        kDegToRad;
  }
  int iterations = 0;
  std::string message;
  std::optional<LatLon> centre =
      ceres_step(bearings, sigma_rad, start, options, &iterations, &message);
  if (!centre)
    return failed(FixStatus::not_converged, message);

  // Re-centre and check: the Gauss-Newton step at the new centre (in its own east/north
  // frame) must be below convergence_m. Small steps are taken directly (quadratic
  // convergence, one pass over the bearings each); a large one goes back to Ceres.
  PointFit fit;
  bool converged = false;
  for (int k = 0; k < options.max_iterations && !converged; ++k) {
    fit = fit_at(bearings, *centre, options.num_threads, robustness(options));
    const Eigen::Vector2d step = fit.information.ldlt().solve(fit.jtr);
    const double step_m = step.allFinite() ? step.norm() : 0.0;
    converged = step_m < options.convergence_m;
    if (converged)
      break;
    ++iterations;
    if (step_m < 10.0) {
      centre = local_to_geo(*centre, step(0), step(1)).point;
    } else {
      for (std::size_t i = 0; i < n; ++i)
        sigma_rad[i] = fit.fits[i].effective_sigma_deg * kDegToRad;
      centre = ceres_step(bearings, sigma_rad, *centre, options, &iterations, &message);
      if (!centre)
        return failed(FixStatus::not_converged, message);
    }
  }
  if (!converged) {
    return failed(FixStatus::not_converged, "the estimator did not settle within " +
                                                std::to_string(options.max_iterations) +
                                                " re-centrings");
  }

  Fix fix;
  fix.position = *centre;
  fix.iterations = iterations;
  fix.start_distance_m = geodesic_inverse(start, *centre).s12_m;
  fix.chi2 = fit.chi2;
  fix.dof = static_cast<int>(n) - 2;
  if (options.loss != RobustLoss::none) {
    // Verdicts: a bearing more than outlier_z sigmas off the robust fix is an outlier; the
    // goodness of fit is then that of the others.
    fix.chi2 = 0.0;
    int inliers = 0;
    for (BearingFit& bf : fit.fits) {
      bf.outlier = std::fabs(bf.normalized_residual) > options.outlier_z;
      if (bf.outlier) {
        ++fix.outliers;
      } else {
        ++inliers;
        fix.chi2 += bf.normalized_residual * bf.normalized_residual;
      }
    }
    fix.dof = inliers - 2;
  }
  const BearingFit& nearest = fit.fits[fit.nearest];
  const BearingFit& farthest = fit.fits[fit.farthest];
  if (nearest.range_m < options.at_station_m) {
    return failed(FixStatus::at_station,
                  "the solution falls on station '" + bearings[nearest.index].station +
                      "', where its own bearing is undefined; leave that station's bearings "
                      "out or take bearings from elsewhere");
  }
  if (farthest.range_m > options.max_range_m) {
    return failed(FixStatus::out_of_range,
                  "the only solution lies " + km_text(farthest.range_m) + " from station '" +
                      bearings[farthest.index].station + "', beyond the maximum range of " +
                      km_text(options.max_range_m) + "; raise it only for long-range HF");
  }
  // Near-parallel rays give an honestly huge ellipse; exactly collinear rays give none.
  const Eigen::SelfAdjointEigenSolver<Eigen::Matrix2d> eig(fit.information);
  const double lmax = eig.eigenvalues()(1);
  const double lmin = eig.eigenvalues()(0);
  if (!(lmax > 0.0) || !(lmin > lmax * 1e-14)) {
    return failed(FixStatus::no_crossing,
                  "the rays are collinear: they cannot locate the transmitter along their "
                  "common line; take a bearing from a place off that line");
  }
  const Eigen::Matrix2d cov = fit.information.inverse();
  fix.covariance_en_m2 = {{{cov(0, 0), cov(0, 1)}, {cov(1, 0), cov(1, 1)}}};
  fix.bearings = std::move(fit.fits);
  fix.status = FixStatus::ok;
  return fix;
}

// Mirror-image candidates (two-antenna arrays): at the current estimate each ambiguous
// bearing takes the candidate with the smaller normalised residual; the fix is solved with
// those choices and the choices are made again at the new fix, until they settle. The start
// is a consensus crossing (consensus_start), so the first choices are already right for all
// but a few.
Fix solve_ambiguous(const std::vector<Bearing>& bearings, const LatLon& start,
                    const SolveOptions& options) {
  const std::size_t n = bearings.size();
  std::vector<bool> use_alt(n, false);
  const auto choose = [&](const LatLon& at) {
    bool changed = false;
    for (std::size_t i = 0; i < n; ++i) {
      const Bearing& b = bearings[i];
      if (!b.alt_azimuth_deg)
        continue;
      const GeodesicLine12 g = geodesic_inverse({b.lat_deg, b.lon_deg}, at);
      const double z0 = angle_diff_deg(b.azimuth_deg, g.azi1_deg) / b.sigma_deg;
      const double z1 =
          angle_diff_deg(*b.alt_azimuth_deg, g.azi1_deg) / b.alt_sigma_deg.value_or(b.sigma_deg);
      const bool alt = std::fabs(z1) < std::fabs(z0);
      changed = changed || alt != use_alt[i];
      use_alt[i] = alt;
    }
    return changed;
  };
  choose(start);
  LatLon at = start;
  Fix fix;
  for (int round = 0; round < 10; ++round) {
    std::vector<Bearing> chosen = bearings;
    for (std::size_t i = 0; i < n; ++i) {
      if (use_alt[i]) {
        chosen[i].azimuth_deg = *bearings[i].alt_azimuth_deg;
        chosen[i].sigma_deg = bearings[i].alt_sigma_deg.value_or(bearings[i].sigma_deg);
      }
    }
    fix = solve_from(chosen, at, options);
    if (!fix.ok())
      return fix;
    at = fix.position;
    if (!choose(at))
      break;
  }
  for (BearingFit& bf : fix.bearings) {
    const Bearing& b = bearings[bf.index];
    if (!b.alt_azimuth_deg)
      continue;
    bf.ambiguous = true;
    bf.used_alt = use_alt[bf.index];
    bf.rejected_azimuth_deg = use_alt[bf.index] ? b.azimuth_deg : *b.alt_azimuth_deg;
  }
  return fix;
}

// The bearings with the mirror candidates a fit chose put in place and no alternative left.
std::vector<Bearing> with_choices(const std::vector<Bearing>& bearings,
                                  const std::vector<BearingFit>& fits) {
  std::vector<Bearing> chosen = bearings;
  for (const BearingFit& bf : fits) {
    Bearing& b = chosen[bf.index];
    if (bf.used_alt) {
      b.azimuth_deg = *bearings[bf.index].alt_azimuth_deg;
      b.sigma_deg = bearings[bf.index].alt_sigma_deg.value_or(bearings[bf.index].sigma_deg);
    }
    b.alt_azimuth_deg.reset();
  }
  return chosen;
}

// --exclude-outliers: least squares on the bearings the robust fit trusted, starting from
// its fix (with the mirror choices it made); the excluded bearings are still listed, with
// their residuals at the new fix, weight 0 and the outlier verdict.
Fix refit_without_outliers(const std::vector<Bearing>& bearings, const Fix& robust,
                           const SolveOptions& options) {
  std::vector<Bearing> kept;
  const std::vector<Bearing> chosen = with_choices(bearings, robust.bearings);
  for (const BearingFit& bf : robust.bearings) {
    if (!bf.outlier)
      kept.push_back(chosen[bf.index]);
  }
  SolveOptions plain = options;
  plain.loss = RobustLoss::none;
  plain.exclude_outliers = false;
  Fix refit = solve_from(kept, robust.position, plain);
  if (!refit.ok())
    return refit;
  Fix out = refit;
  out.outliers = robust.outliers;
  out.message = std::to_string(robust.outliers) +
                " outlier bearing(s) excluded and the rest solved again by least squares";
  const PointFit all = fit_at(chosen, refit.position, options.num_threads, Robustness{});
  out.bearings = all.fits;
  for (const BearingFit& before : robust.bearings) {
    BearingFit& now = out.bearings[before.index];
    now.ambiguous = before.ambiguous;
    now.used_alt = before.used_alt;
    now.rejected_azimuth_deg = before.rejected_azimuth_deg;
    now.outlier = before.outlier;
    if (now.outlier)
      now.weight = 0.0;
  }
  return out;
}

// One bearing's whitened residual (theta - b - azi1(p)) / sigma with respect to the frame
// offset (x, y) and, when the station has one, its offset b (rad).
class BiasedBearingCost final : public ceres::CostFunction {
 public:
  BiasedBearingCost(const Bearing& bearing, double sigma_rad, const LatLon& centre, bool biased)
      : bearing_(bearing), sigma_rad_(sigma_rad), centre_(centre), biased_(biased) {
    set_num_residuals(1);
    mutable_parameter_block_sizes()->push_back(2);
    if (biased)
      mutable_parameter_block_sizes()->push_back(1);
  }

  bool Evaluate(double const* const* parameters, double* residuals,
                double** jacobians) const override {
    const double x = parameters[0][0];
    const double y = parameters[0][1];
    const double bias_rad = biased_ ? parameters[1][0] : 0.0;
    const LocalPoint p = local_to_geo(centre_, x, y);
    const GeodesicLine12 g =
        geodesic_inverse_azimuths({bearing_.lat_deg, bearing_.lon_deg}, p.point);
    if (!(std::fabs(g.m12_m) > 0.0))
      return false;
    residuals[0] =
        (angle_diff_deg(bearing_.azimuth_deg, g.azi1_deg) * kDegToRad - bias_rad) / sigma_rad_;
    if (jacobians != nullptr) {
      const FrameJacobian fj = frame_jacobian(x, y, p);
      const double dazi_dE = std::cos(g.azi2_deg * kDegToRad) / g.m12_m;
      const double dazi_dN = -std::sin(g.azi2_deg * kDegToRad) / g.m12_m;
      if (jacobians[0] != nullptr) {
        jacobians[0][0] = -(dazi_dE * fj.dE_dx + dazi_dN * fj.dN_dx) / sigma_rad_;
        jacobians[0][1] = -(dazi_dE * fj.dE_dy + dazi_dN * fj.dN_dy) / sigma_rad_;
      }
      if (biased_ && jacobians[1] != nullptr)
        jacobians[1][0] = -1.0 / sigma_rad_;
    }
    return true;
  }

 private:
  const Bearing& bearing_;
  double sigma_rad_;
  LatLon centre_;
  bool biased_;
};

// The Gaussian prior on a station offset: residual b / sigma_prior.
class BiasPrior final : public ceres::SizedCostFunction<1, 1> {
 public:
  explicit BiasPrior(double sigma_rad) : sigma_rad_(sigma_rad) {}
  bool Evaluate(double const* const* parameters, double* residuals,
                double** jacobians) const override {
    residuals[0] = parameters[0][0] / sigma_rad_;
    if (jacobians != nullptr && jacobians[0] != nullptr)
      jacobians[0][0] = 1.0 / sigma_rad_;
    return true;
  }

 private:
  double sigma_rad_;
};

// --estimate-station-bias: a constant offset per station, solved jointly with the position
// from the trusted bearings (with the mirror choices made), a Gaussian prior on each offset.
// A station's offset is identifiable only when its bearings come from places far enough
// apart, seen from the fix, that rotating all of them cannot be mistaken for moving the
// transmitter; the whole set must also separate offsets from position (the information
// matrix without the prior, scaled to unit diagonal, must be well conditioned).
Fix estimate_station_biases(const std::vector<Bearing>& bearings, const Fix& base,
                            const SolveOptions& options) {
  Fix out = base;
  const std::vector<Bearing> chosen = with_choices(bearings, base.bearings);
  // Which stations qualify: positions spread over at least 5% of the range (about 3 deg).
  std::map<std::string, std::vector<std::size_t>> by_station;
  for (const BearingFit& bf : base.bearings) {
    if (!bf.outlier)
      by_station[chosen[bf.index].station].push_back(bf.index);
  }
  std::map<std::string, int> bias_slot;
  for (const auto& [station, idx] : by_station) {
    const Bearing& first = chosen[idx.front()];
    double spread = 0.0;
    double range = 0.0;
    for (std::size_t i : idx) {
      spread = std::max(spread, geodesic_inverse({first.lat_deg, first.lon_deg},
                                                 {chosen[i].lat_deg, chosen[i].lon_deg})
                                    .s12_m);
      range += geodesic_inverse({chosen[i].lat_deg, chosen[i].lon_deg}, base.position).s12_m /
               static_cast<double>(idx.size());
    }
    if (idx.size() >= 2 && spread >= 0.05 * range) {
      const int slot = static_cast<int>(bias_slot.size());
      bias_slot[station] = slot;
    } else {
      out.bias_refusals.push_back(
          idx.size() < 2
              ? "station '" + station +
                    "': it has only one trusted bearing, so an offset cannot be told apart from "
                    "the transmitter's position"
              : "station '" + station + "': its trusted bearings come from places " +
                    std::to_string(static_cast<long>(std::lround(spread))) + " m apart, " +
                    std::to_string(static_cast<long>(std::lround(range))) +
                    " m from the fix: an offset cannot be told apart from the transmitter's "
                    "position "
                    "(take its bearings from places further apart)");
    }
  }
  if (bias_slot.empty())
    return out;
  const std::size_t nb = bias_slot.size();
  const double prior_rad = options.station_bias_prior_deg * kDegToRad;
  const Robustness rob = robustness(options);

  LatLon centre = base.position;
  std::vector<double> bias_rad(nb, 0.0);
  bool converged = false;
  int iterations = base.iterations;
  for (int outer = 0; outer < options.max_iterations && !converged; ++outer) {
    double xy[2] = {0.0, 0.0};
    ceres::Problem problem;
    for (const auto& [station, idx] : by_station) {
      const auto slot = bias_slot.find(station);
      for (std::size_t i : idx) {
        const Bearing& b = chosen[i];
        const double sigma =
            effective_sigma_deg(b, geodesic_inverse({b.lat_deg, b.lon_deg}, centre)) * kDegToRad;
        ceres::LossFunction* loss =
            rob.loss == RobustLoss::none ? nullptr : new detail::RobustCeresLoss(rob.loss, rob.a);
        if (slot != bias_slot.end()) {
          problem.AddResidualBlock(new BiasedBearingCost(b, sigma, centre, true), loss, xy,
                                   &bias_rad[static_cast<std::size_t>(slot->second)]);
        } else {
          problem.AddResidualBlock(new BiasedBearingCost(b, sigma, centre, false), loss, xy);
        }
      }
    }
    for (std::size_t k = 0; k < nb; ++k) {
      problem.AddResidualBlock(new BiasPrior(prior_rad), nullptr, &bias_rad[k]);
    }
    ceres::Solver::Options so;
    so.linear_solver_type = ceres::DENSE_QR;
    so.max_num_iterations = 100;
    so.function_tolerance = 1e-14;
    so.gradient_tolerance = 1e-14;
    so.parameter_tolerance = 1e-12;
    so.logging_type = ceres::SILENT;
    ceres::Solver::Summary summary;
    ceres::Solve(so, &problem, &summary);
    iterations += static_cast<int>(summary.iterations.size());
    const bool usable = summary.IsSolutionUsable() || (summary.termination_type == ceres::FAILURE &&
                                                       std::isfinite(summary.final_cost) &&
                                                       summary.final_cost <= summary.initial_cost);
    if (!usable)
      return failed(FixStatus::not_converged, "the offset estimate failed: " + summary.message);
    centre = local_to_geo(centre, xy[0], xy[1]).point;
    converged = std::hypot(xy[0], xy[1]) < options.convergence_m;
  }
  if (!converged)
    return failed(FixStatus::not_converged, "the offset estimate did not settle");

  // Fits with the offsets removed, and the joint information (position + offsets).
  std::vector<Bearing> corrected = chosen;
  std::vector<int> slot_of(chosen.size(), -1);
  for (std::size_t i = 0; i < chosen.size(); ++i) {
    const auto slot = bias_slot.find(chosen[i].station);
    if (slot == bias_slot.end())
      continue;
    slot_of[i] = slot->second;
    corrected[i].azimuth_deg = wrap_deg360(
        chosen[i].azimuth_deg - bias_rad[static_cast<std::size_t>(slot->second)] * kRadToDeg);
  }
  PointFit fit = fit_at(corrected, centre, options.num_threads, rob);
  const std::size_t dim = 2 + nb;
  Eigen::MatrixXd info =
      Eigen::MatrixXd::Zero(static_cast<Eigen::Index>(dim), static_cast<Eigen::Index>(dim));
  std::vector<bool> trusted(chosen.size(), false);
  for (const BearingFit& bf : base.bearings)
    trusted[bf.index] = !bf.outlier;
  for (std::size_t i = 0; i < chosen.size(); ++i) {
    if (!trusted[i])
      continue;
    const Bearing& b = corrected[i];
    const GeodesicLine12 g = geodesic_inverse({b.lat_deg, b.lon_deg}, centre);
    const double sigma = fit.fits[i].effective_sigma_deg * kDegToRad;
    Eigen::VectorXd row = Eigen::VectorXd::Zero(static_cast<Eigen::Index>(dim));
    row(0) = std::cos(g.azi2_deg * kDegToRad) / (g.m12_m * sigma);
    row(1) = -std::sin(g.azi2_deg * kDegToRad) / (g.m12_m * sigma);
    if (slot_of[i] >= 0)
      row(2 + slot_of[i]) = 1.0 / sigma;
    info += fit.fits[i].weight * row * row.transpose();
  }
  // Identifiability, before the prior: unit-diagonal scaling, then the condition number.
  const Eigen::VectorXd d = info.diagonal().cwiseMax(1e-300).cwiseSqrt().cwiseInverse();
  const Eigen::MatrixXd scaled = d.asDiagonal() * info * d.asDiagonal();
  const Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> eig(scaled);
  if (!(eig.eigenvalues()(0) > 1e-8 * eig.eigenvalues()(static_cast<Eigen::Index>(dim) - 1))) {
    out.bias_refusals.emplace_back(
        "the geometry cannot separate the station offsets from the transmitter's position: "
        "no offsets were estimated");
    return out;
  }
  for (std::size_t k = 0; k < nb; ++k) {
    const auto e = static_cast<Eigen::Index>(2 + k);
    info(e, e) += 1.0 / (prior_rad * prior_rad);
  }
  const Eigen::MatrixXd cov = info.inverse();

  out.position = centre;
  out.iterations = iterations;
  out.covariance_en_m2 = {{{cov(0, 0), cov(0, 1)}, {cov(1, 0), cov(1, 1)}}};
  out.station_biases.clear();
  for (const auto& [station, slot] : bias_slot) {
    const auto k = static_cast<std::size_t>(slot);
    out.station_biases.push_back(
        {station, bias_rad[k] * kRadToDeg, std::sqrt(cov(2 + slot, 2 + slot)) * kRadToDeg});
  }
  out.chi2 = 0.0;
  int inliers = 0;
  for (std::size_t i = 0; i < fit.fits.size(); ++i) {
    BearingFit& bf = fit.fits[i];
    const BearingFit& before = base.bearings[i];
    bf.ambiguous = before.ambiguous;
    bf.used_alt = before.used_alt;
    bf.rejected_azimuth_deg = before.rejected_azimuth_deg;
    bf.bias_deg =
        slot_of[i] >= 0 ? bias_rad[static_cast<std::size_t>(slot_of[i])] * kRadToDeg : 0.0;
    bf.outlier = !trusted[i];
    if (bf.outlier) {
      bf.weight = 0.0;
    } else {
      ++inliers;
      out.chi2 += bf.normalized_residual * bf.normalized_residual;
    }
  }
  out.dof = inliers - 2 - static_cast<int>(nb);
  out.bearings = std::move(fit.fits);
  return out;
}

}  // namespace

std::vector<Fix> solve_by_signal(const std::vector<Bearing>& bearings,
                                 const SolveOptions& options) {
  if (const std::string why = options.validate(); !why.empty()) {
    throw InputError({"", 0, 0, "", why});
  }
  const std::vector<SignalGroup> groups = group_by_signal(bearings);
  std::vector<Fix> fixes(groups.size());
  const auto solve_group = [&](std::size_t g, const SolveOptions& o) {
    std::vector<Bearing> subset;
    subset.reserve(groups[g].indices.size());
    for (std::size_t i : groups[g].indices)
      subset.push_back(bearings[i]);
    Fix fix = solve_fix(subset, o);
    fix.signal = groups[g].signal;
    for (BearingFit& bf : fix.bearings)
      bf.index = groups[g].indices[bf.index];
    fixes[g] = std::move(fix);
  };
  // Several signals: one worker per hardware thread takes signals in turn, each solved on a
  // single thread; every result lands in its own slot, so the output is the same whatever
  // the scheduling.
  const unsigned hardware = std::max(1U, std::thread::hardware_concurrency());
  const std::size_t workers = std::min<std::size_t>(
      groups.size(),
      options.num_threads > 0 ? static_cast<std::size_t>(options.num_threads) : hardware);
  if (workers <= 1) {
    for (std::size_t g = 0; g < groups.size(); ++g)
      solve_group(g, options);
    return fixes;
  }
  SolveOptions single = options;
  single.num_threads = 1;
  std::atomic<std::size_t> next{0};
  std::vector<std::thread> pool;
  for (std::size_t w = 0; w < workers; ++w) {
    pool.emplace_back([&] {
      for (std::size_t g = next++; g < groups.size(); g = next++)
        solve_group(g, single);
    });
  }
  for (std::thread& t : pool)
    t.join();
  return fixes;
}

}  // namespace lobfix
