// The steps every subcommand shares: the input options (bearings, tracks, conversions), the
// fix options (robust loss, windows, confidence), reading and normalising the bearings, and
// solving them. Each step prints its own diagnostics to stderr and returns an exit code.
#pragma once

#include <CLI/CLI.hpp>
#include <optional>
#include <string>
#include <vector>

#include "lobfix/bearing.hpp"
#include "lobfix/error.hpp"
#include "lobfix/search_area.hpp"
#include "lobfix/solver.hpp"
#include "lobfix/summary.hpp"
#include "lobfix/uncertainty.hpp"

namespace lobfix_app {

/// Where the bearings come from and how they are turned into true bearings.
struct InputArgs {
  std::string input;
  std::vector<std::string> tracks;  ///< FILE.gpx or STATION=FILE
  std::optional<double> sigma_deg;
  std::optional<double> declination_deg;
  std::string grid_crs;
  double gps_sigma_m = 5.0;
  double track_gap_s = 60.0;
  double track_tolerance_s = 2.0;
  bool skip_bad = false;
};

/// How the bearings are solved and described.
struct FixArgs {
  std::vector<double> confidence{0.5, 0.95};
  double max_range_km = 5000.0;
  double alpha = 0.05;
  unsigned long long seed = 1;
  std::string robust = "andrews";
  double robust_tuning = 0.0;
  double outlier_sigma = 3.0;
  bool exclude_outliers = false;
  bool estimate_station_bias = false;
  double bias_prior_deg = 10.0;
  std::string window;
  std::string window_step;
};

/// How the search area is mapped and cut (`area`, `report`).
struct AreaOptionArgs {
  double cell_m = 0.0;
  double segment_m = 250.0;
  double area_km = 0.0;
  std::vector<double> regions{0.5, 0.95};
  double segments_cover = 0.95;
  double wild_fraction = 0.01;
  double merge_below = 0.002;
  std::vector<std::string> searched;
};

/// Register INPUT and the input options on `cmd`; `args` must outlive the parse.
void add_input_options(CLI::App* cmd, InputArgs& args);
/// Register the solve options on `cmd`; `args` must outlive the parse. With
/// `with_windows` false, --window and --window-step are left out.
void add_fix_options(CLI::App* cmd, FixArgs& args, bool with_windows = true);

/// Register the search-area options on `cmd`; `args` must outlive the parse.
void add_area_options(CLI::App* cmd, AreaOptionArgs& args);

/// The search area of every solved signal (one per result, in order). Prints bad options
/// (a malformed --searched, a region probability outside (0, 1), an unknown segment) and
/// returns kExitUsage for them; else kExitOk. With -v, each map's size and time.
int make_search_areas(const AreaOptionArgs& args, const std::vector<lobfix::Bearing>& bearings,
                      const std::vector<lobfix::FixResult>& results,
                      std::vector<lobfix::SearchArea>& out);

/// The true bearings of a run and what reading them said.
struct LoadedInput {
  std::vector<lobfix::Bearing> bearings;
  int rows_read = 0;
  std::vector<lobfix::Diagnostic> skipped;   ///< rows left out with --skip-bad
  std::vector<lobfix::Diagnostic> warnings;  ///< printed already
};

/// Read and normalise the input. Prints warnings and problems; returns kExitOk, or the exit
/// code to stop with (nothing has been written then).
int load_bearings(const InputArgs& args, LoadedInput& out);

/// The solver's and the uncertainty's options from the fix options. Prints a problem;
/// returns kExitOk or the exit code to stop with.
int make_fix_options(const FixArgs& args, lobfix::SolveOptions& solve_options,
                     lobfix::UncertaintyOptions& uncertainty_options);

/// The solved signals (one per signal, or per signal and window) and the options used.
struct SolvedRun {
  std::vector<lobfix::FixResult> results;
  lobfix::SolveOptions solve_options;
  bool all_fixed = false;
  bool any_fixed = false;
};

/// Solve and describe every signal. Prints the reason of each signal without a fix; returns
/// kExitOk (even when some signal has no fix: see SolvedRun) or the exit code to stop with.
int solve_bearings(const FixArgs& args, const std::vector<lobfix::Bearing>& bearings,
                   SolvedRun& out);

/// The run's description for the summaries.
lobfix::RunInfo make_run_info(const InputArgs& input, const LoadedInput& loaded,
                              const SolvedRun& solved);

}  // namespace lobfix_app
