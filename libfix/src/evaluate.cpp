// Monte Carlo evaluation of a planned geometry (docs/planning.md). The bound: J = sum over the
// scenario's bearings of g g^T / sigma^2 at the true transmitter (planning.hpp), where sigma
// is the bearing's full sigma budget (receiver and heading in quadrature).
#include "lobfix/evaluate.hpp"

#include "lobfix/regions.hpp"

#include <algorithm>
#include <cmath>
#include <string>

#include "lobfix/error.hpp"
#include "lobfix/uncertainty.hpp"

namespace lobfix {

Evaluation evaluate_geometry(const Scenario& scenario, const EvaluationOptions& options) {
  if (options.trials < 1 || options.trials > 10000000)
    throw InputError({"", 0, 0, "trials", "the number of trials must be 1 to 10,000,000"});
  if (!scenario.transmitter)
    throw InputError({"", 0, 0, "transmitter", "the scenario has no transmitter row"});
  if (scenario.transmitter->speed_m_s > 0.0) {
    throw InputError({scenario.transmitter->source.file, scenario.transmitter->source.line, 0,
                      "speed_m_s",
                      "evaluate needs a transmitter that stays put (speed_m_s 0): the bound "
                      "is for one position"});
  }
  for (const double p : options.probabilities) {
    if (!(p > 0.0 && p < 1.0))
      throw InputError({"", 0, 0, "confidence", "a probability must be between 0 and 1"});
  }
  const LatLon truth = scenario.transmitter->start;

  Evaluation out;
  out.trials = options.trials;
  out.probabilities = options.probabilities;
  out.coverage.assign(options.probabilities.size(), 0.0);
  std::vector<double> k2;
  for (const double p : options.probabilities)
    k2.push_back(-2.0 * std::log(1.0 - p));

  // The bound, from the bearings' positions and sigmas (they do not depend on the seed).
  SimulationOptions first = options.simulation;
  const std::vector<Bearing> layout = to_bearings(simulate_bearings(scenario, first));
  out.bearings_per_trial = static_cast<int>(layout.size());
  std::vector<PlannedStation> as_planned;
  as_planned.reserve(layout.size());
  for (const Bearing& b : layout)
    as_planned.push_back({b.station, {b.lat_deg, b.lon_deg}, b.sigma_deg, std::nullopt});
  PlanningOptions bound_options;
  bound_options.min_crossing_deg = 0.0;
  out.bound = as_planned.empty() ? CramerRao{} : cramer_rao(as_planned, truth, bound_options);

  double sum2 = 0.0;
  std::vector<double> misses;
  std::vector<std::size_t> inside_count(k2.size(), 0);
  std::vector<std::size_t> region_count(k2.size(), 0);
  for (int t = 0; t < options.trials; ++t) {
    SimulationOptions sim = options.simulation;
    sim.seed = options.simulation.seed + static_cast<std::uint64_t>(t);
    const std::vector<Bearing> bearings = to_bearings(simulate_bearings(scenario, sim));
    const Fix fix = solve_fix(bearings, options.solve);
    TrialOutcome o;
    o.seed = sim.seed;
    o.status = fix.status;
    if (fix.ok()) {
      double x = 0.0, y = 0.0;
      geo_to_local(fix.position, truth, x, y);  // truth in the fix's frame
      o.east_error_m = -x;
      o.north_error_m = -y;
      const std::optional<Covariance2> inv = invert2(fix.covariance_en_m2);
      o.mahalanobis2 = inv ? x * ((*inv)[0][0] * x + (*inv)[0][1] * y) +
                                 y * ((*inv)[1][0] * x + (*inv)[1][1] * y)
                           : HUGE_VAL;
      for (std::size_t i = 0; i < k2.size(); ++i) {
        o.inside.push_back(o.mahalanobis2 <= k2[i]);
        if (o.inside.back())
          ++inside_count[i];
      }
      if (options.regions) {
        const PosteriorMap map = posterior_map(bearings, fix, options.map);
        long cell = -1;
        if (map.ok) {
          const UtmPoint u = utm_forward(map.grid.zone, truth);
          cell = grid_cell_of(map.grid, u.easting_m, u.northing_m);
        }
        for (std::size_t i = 0; i < k2.size(); ++i) {
          bool in = false;
          if (cell >= 0) {
            double mass = 0.0;
            long cells = 0;
            in = hpd_cells(map, options.probabilities[i], mass,
                           cells)[static_cast<std::size_t>(cell)] != 0;
          }
          o.region_inside.push_back(in);
          if (in)
            ++region_count[i];
        }
      }
      sum2 += x * x + y * y;
      misses.push_back(std::hypot(x, y));
      ++out.fixed;
    }
    out.outcomes.push_back(std::move(o));
    if (options.progress)
      options.progress(static_cast<std::size_t>(t) + 1, static_cast<std::size_t>(options.trials));
  }
  if (out.fixed > 0) {
    out.rmse_m = std::sqrt(sum2 / out.fixed);
    const std::size_t mid = misses.size() / 2;
    std::nth_element(misses.begin(), misses.begin() + static_cast<std::ptrdiff_t>(mid),
                     misses.end());
    double median = misses[mid];
    if (misses.size() % 2 == 0) {
      median =
          0.5 * (median + *std::max_element(misses.begin(),
                                            misses.begin() + static_cast<std::ptrdiff_t>(mid)));
    }
    out.median_miss_m = median;
    for (std::size_t i = 0; i < k2.size(); ++i)
      out.coverage[i] = static_cast<double>(inside_count[i]) / out.fixed;
    if (options.regions) {
      for (std::size_t i = 0; i < k2.size(); ++i)
        out.region_coverage.push_back(static_cast<double>(region_count[i]) / out.fixed);
    }
  }
  return out;
}

}  // namespace lobfix
