// lobfix: how well a planned geometry will do, by Monte Carlo: many simulated hunts of one
// scenario, each solved like `lobfix solve`, against the Cramer-Rao bound, with the coverage
// of the confidence ellipses. Method: docs/planning.md.
#pragma once

#include <cstdint>
#include <vector>

#include "lobfix/fix.hpp"
#include "lobfix/planning.hpp"
#include "lobfix/posterior.hpp"
#include "lobfix/simulate.hpp"
#include "lobfix/solver.hpp"

namespace lobfix {

struct EvaluationOptions {
  int trials = 1000;  ///< 1 to 10,000,000
  /// Trial t (0-based) is simulated with seed simulation.seed + t.
  SimulationOptions simulation;
  SolveOptions solve;
  std::vector<double> probabilities{0.5, 0.95};  ///< ellipses whose coverage is counted
  /// Also count how often the highest-density regions of the probability map (posterior.hpp,
  /// regions.hpp) of the same probabilities hold the truth (slower: one map per trial).
  bool regions = false;
  PosteriorOptions map;  ///< how those maps are made
  ProgressFn progress;   ///< called after each trial
};

/// One simulated hunt and its fix.
struct TrialOutcome {
  std::uint64_t seed = 0;
  FixStatus status = FixStatus::not_converged;
  double east_error_m = 0.0;  ///< fix minus truth, east (m), in the fix's local frame
  double north_error_m = 0.0;
  /// d^2 = e^T C^-1 e of the error under the fix's own covariance; the truth lies inside the
  /// ellipse of probability p when d^2 <= -2 ln(1 - p).
  double mahalanobis2 = 0.0;
  std::vector<bool> inside;  ///< per probability
  /// Per probability, when regions were asked for: the truth's cell is in the region.
  std::vector<bool> region_inside;
};

struct Evaluation {
  int trials = 0;
  int fixed = 0;               ///< trials with a fix
  int bearings_per_trial = 0;  ///< bearings heard (the same in every trial)
  double rmse_m = 0.0;         ///< sqrt(mean |fix - truth|^2) over the fixed trials
  double median_miss_m = 0.0;  ///< the observed CEP
  CramerRao bound;             ///< for the scenario's bearings (wild ones included as clean)
  std::vector<double> probabilities;
  std::vector<double> coverage;  ///< fraction of fixed trials with the truth inside
  /// The same for the map's regions (empty unless asked for); trials whose map could not be
  /// made count as misses.
  std::vector<double> region_coverage;
  std::vector<TrialOutcome> outcomes;
};

/// Run the trials. The transmitter must stay put (the bound is for one position).
/// @throws InputError for a moving transmitter, a scenario without transmitter or station,
/// or invalid options.
Evaluation evaluate_geometry(const Scenario& scenario, const EvaluationOptions& options);

}  // namespace lobfix
