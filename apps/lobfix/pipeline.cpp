#include "pipeline.hpp"

#include <fmt/format.h>

#include <cctype>
#include <chrono>
#include <fstream>
#include <iostream>
#include <memory>
#include <utility>

#include "exit_codes.hpp"
#include "lobfix/crs.hpp"
#include "lobfix/normalise.hpp"
#include "lobfix/reader.hpp"
#include "lobfix/robust.hpp"
#include "lobfix/track.hpp"
#include "lobfix/windows.hpp"
#include "verbose.hpp"

namespace lobfix_app {

namespace {

// NMEA 0183 logs by name, or by a first line that starts with '$' (GPX is XML).
bool is_nmea_file(const std::string& path) {
  const auto dot = path.rfind('.');
  std::string ext = dot == std::string::npos ? "" : path.substr(dot + 1);
  for (char& c : ext)
    c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  if (ext == "nmea" || ext == "nme" || ext == "log" || ext == "txt")
    return true;
  if (ext == "gpx")
    return false;
  std::ifstream in(path);
  char first = 0;
  while (in.get(first) && std::isspace(static_cast<unsigned char>(first))) {
  }
  return first == '$';
}

}  // namespace

void add_input_options(CLI::App* cmd, InputArgs& args) {
  cmd->add_option("INPUT", args.input, "bearings file, .csv or .jsonl ('-' reads standard input)")
      ->required();
  cmd->add_option("--track", args.tracks,
                  "a station's GPS track: FILE.gpx (stations from the track names) or "
                  "STATION=FILE (GPX or NMEA 0183 log); repeat for several")
      ->take_all()
      ->allow_extra_args(false);
  cmd->add_option("--declination-deg", args.declination_deg,
                  "magnetic declination (deg, east positive) for all magnetic bearings, "
                  "instead of the World Magnetic Model 2025")
      ->check(CLI::Range(-180.0, 180.0));
  cmd->add_option("--grid-crs", args.grid_crs,
                  "grid bearings refer to this projected CRS (e.g. EPSG:27700) instead of the "
                  "station's UTM zone");
  cmd->add_option("--gps-sigma-m", args.gps_sigma_m,
                  "1-sigma of a track position (m), for positions and courses from tracks")
      ->capture_default_str()
      ->check(CLI::Range(0.1, 1000.0));
  cmd->add_option("--track-gap-s", args.track_gap_s,
                  "no interpolation across a gap in a track longer than this")
      ->capture_default_str()
      ->check(CLI::Range(1.0, 86400.0));
  cmd->add_option("--track-tolerance-s", args.track_tolerance_s,
                  "how far a bearing may lie outside its track's time span")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 3600.0));
  cmd->add_option("--sigma-deg", args.sigma_deg,
                  "bearing sigma (deg) for rows without a sigma_deg value");
  cmd->add_flag("--skip-bad", args.skip_bad,
                "skip rows with bad cells (each is listed on stderr) instead of failing");
}

void add_fix_options(CLI::App* cmd, FixArgs& args, bool with_windows) {
  cmd->add_option("--confidence", args.confidence,
                  "ellipse probabilities, comma-separated, each between 0 and 1")
      ->delimiter(',')
      ->capture_default_str();
  cmd->add_option("--max-range-km", args.max_range_km,
                  "refuse fixes farther than this from any station (long-range HF needs the "
                  "default; geodesic rays meet again near their antipode)")
      ->capture_default_str()
      ->check(CLI::Range(0.001, 15000.0));
  cmd->add_option("--alpha", args.alpha,
                  "significance level of the chi-square check of the stated sigmas")
      ->capture_default_str()
      ->check(CLI::Range(1e-6, 0.5));
  cmd->add_option("--seed", args.seed, "seed for the sampled start pairs (large inputs)")
      ->capture_default_str();
  cmd->add_option("--robust", args.robust,
                  "how to treat wild bearings (reflections): andrews (default: their pull "
                  "fades to nothing beyond about 4 sigma), cauchy, huber, or none (plain least "
                  "squares); see docs/robust.md")
      ->capture_default_str()
      ->check(CLI::IsMember({"none", "huber", "cauchy", "andrews"}));
  cmd->add_option("--robust-tuning", args.robust_tuning,
                  "tuning constant of the loss in sigmas (0: the loss's usual value)")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 100.0));
  cmd->add_option("--outlier-sigma", args.outlier_sigma,
                  "a bearing this many sigmas off the robust fix is called an outlier")
      ->capture_default_str()
      ->check(CLI::Range(1.0, 100.0));
  cmd->add_flag("--exclude-outliers", args.exclude_outliers,
                "leave the outliers out and solve the rest again by least squares");
  cmd->add_flag("--estimate-station-bias", args.estimate_station_bias,
                "estimate a constant bearing offset per station (a misaligned mount or "
                "compass) where its bearings come from places far enough apart");
  cmd->add_option("--bias-prior-deg", args.bias_prior_deg,
                  "1-sigma of the prior on each station offset")
      ->capture_default_str()
      ->check(CLI::Range(0.1, 90.0));
  if (with_windows) {
    cmd->add_option("--window", args.window,
                    "solve per time window, e.g. 10m, 90s, 1h: a sequence of fixes, drawn as a "
                    "track (for a transmitter that moves)");
    cmd->add_option("--window-step", args.window_step,
                    "start a window this often (default: the window's length; shorter: "
                    "sliding, overlapping windows)");
  }
}

void add_area_options(CLI::App* cmd, AreaOptionArgs& args) {
  cmd->add_option("--segment-m", args.segment_m, "side of a search segment (m, on the UTM grid)")
      ->capture_default_str()
      ->check(CLI::Range(10.0, 100000.0));
  cmd->add_option("--cell-m", args.cell_m,
                  "side of a map cell (m); must divide --segment-m; 0 picks one")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 100000.0));
  cmd->add_option("--area-km", args.area_km,
                  "side of the square mapped around the fix (km); 0 sizes it from the fix's "
                  "uncertainty. The transmitter is assumed to lie inside it.")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 2000.0));
  cmd->add_option("--regions", args.regions,
                  "probabilities of the highest-probability regions, comma-separated")
      ->delimiter(',')
      ->capture_default_str();
  cmd->add_option("--segments-cover", args.segments_cover,
                  "the segments cover the region of this probability")
      ->capture_default_str()
      ->check(CLI::Range(0.5, 0.999));
  cmd->add_option("--wild-fraction", args.wild_fraction,
                  "chance that any one bearing is wild (a reflection): each bearing's "
                  "likelihood keeps this much spread over all directions")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 0.49));
  cmd->add_option("--merge-below", args.merge_below,
                  "a square holding less POA than this joins its best neighbouring segment")
      ->capture_default_str()
      ->check(CLI::Range(0.0, 0.5));
  cmd->add_option("--searched", args.searched,
                  "an unsuccessful search: SEGMENT:POD, e.g. S01:0.7 or S02:60% (segment id or "
                  "MGRS label); repeat for several, in the order searched")
      ->take_all()
      ->allow_extra_args(false);
}

int make_search_areas(const AreaOptionArgs& args, const std::vector<lobfix::Bearing>& bearings,
                      const std::vector<lobfix::FixResult>& results,
                      std::vector<lobfix::SearchArea>& out) {
  using namespace lobfix;
  SearchAreaOptions options;
  options.map.cell_m = args.cell_m;
  options.map.align_m = args.segment_m;
  options.map.half_side_m = args.area_km * 500.0;
  options.map.wild_fraction = args.wild_fraction;
  options.region_probabilities = args.regions;
  options.segments.region_probability = args.segments_cover;
  options.segments.merge_below_poa = args.merge_below;
  for (const std::string& text : args.searched) {
    const auto report = parse_search_report(text);
    if (!report) {
      std::cerr << "lobfix: --searched " << text
                << ": write SEGMENT:POD, e.g. S01:0.7 or S01:70%\n";
      return kExitUsage;
    }
    options.searched.push_back(*report);
  }
  for (const double p : args.regions) {
    if (!(p > 0.0 && p < 1.0)) {
      std::cerr << "lobfix: --regions " << p << " is not a probability between 0 and 1\n";
      return kExitUsage;
    }
  }
  try {
    for (const FixResult& r : results) {
      const auto t_area = std::chrono::steady_clock::now();
      out.push_back(make_search_area(bearings, r, options));
      const SearchArea& a = out.back();
      if (a.map.ok) {
        say(
            fmt::format("search area of '{}': {} x {} cells of {} m, {} computed one by one, "
                        "{} segments, in {:.0f} ms",
                        a.signal, a.map.grid.columns, a.map.grid.rows, a.map.grid.cell_m,
                        a.map.cells_evaluated, a.plan.segments.size(), ms_since(t_area)));
      }
    }
  } catch (const InputError& e) {
    std::cerr << "lobfix: " << e.diagnostic().reason << "\n";
    return kExitUsage;
  }
  return kExitOk;
}

int load_bearings(const InputArgs& args, LoadedInput& out) {
  using namespace lobfix;
  ReadOptions read_options;
  read_options.default_sigma_deg = args.sigma_deg;
  if (args.sigma_deg && !(*args.sigma_deg > 0.0 && *args.sigma_deg <= 90.0)) {
    std::cerr << "lobfix: --sigma-deg must be in (0, 90]\n";
    return kExitUsage;
  }

  const auto t_read = std::chrono::steady_clock::now();
  // Read: the bearings, the tracks, the grid's CRS. Problems in rows are collected, then
  // either fail the run or are skipped with --skip-bad; problems with whole files stop it.
  ReadResult read;
  std::vector<Track> tracks;
  std::vector<Diagnostic> problems;
  std::vector<Diagnostic> warnings;
  std::unique_ptr<ProjectedCrs> grid_crs;
  // A CRS code the user gave on the command line that PROJ cannot use is a bad command line
  // (exit 2), like --crs.
  if (!args.grid_crs.empty()) {
    try {
      grid_crs = std::make_unique<ProjectedCrs>(args.grid_crs);
    } catch (const InputError& e) {
      std::cerr << "lobfix: --grid-crs: " << e.diagnostic().reason << "\n";
      return kExitUsage;
    }
  }
  try {
    read = read_observations_file(args.input, read_options);
    problems = read.row_errors;
    warnings = read.warnings;
    for (const std::string& spec : args.tracks) {
      const std::size_t eq = spec.find('=');
      const std::string station = eq == std::string::npos ? "" : spec.substr(0, eq);
      const std::string file = eq == std::string::npos ? spec : spec.substr(eq + 1);
      if (is_nmea_file(file)) {
        if (station.empty()) {
          std::cerr << "lobfix: --track " << spec
                    << ": an NMEA log does not name its station: write --track STATION=" << file
                    << "\n";
          return kExitUsage;
        }
        NmeaReadResult nmea = read_nmea_track(file, station);
        problems.insert(problems.end(), nmea.errors.begin(), nmea.errors.end());
        tracks.push_back(std::move(nmea.track));
      } else {
        for (Track& t : read_gpx_tracks(file, station))
          tracks.push_back(std::move(t));
      }
    }
  } catch (const InputError& e) {
    std::cerr << e.what() << "\n";
    return kExitInputError;
  }

  say(fmt::format("read {} rows from {} and {} track(s) in {:.0f} ms", read.rows_read, args.input,
                  tracks.size(), ms_since(t_read)));
  const auto t_normalise = std::chrono::steady_clock::now();
  // Normalise: every row becomes a true bearing with its sigma budget.
  NormaliseOptions normalise_options;
  normalise_options.declination_deg = args.declination_deg;
  normalise_options.grid_crs = grid_crs.get();
  normalise_options.track.gps_sigma_m = args.gps_sigma_m;
  normalise_options.track.max_gap_s = args.track_gap_s;
  normalise_options.track.time_tolerance_s = args.track_tolerance_s;
  NormaliseResult normalised;
  try {
    normalised = normalise(read.observations, tracks, normalise_options);
  } catch (const InputError& e) {
    std::cerr << "lobfix: " << e.diagnostic().reason << "\n";
    return kExitUsage;
  }
  std::vector<Observation>().swap(read.observations);  // the bearings carry all from here
  say(fmt::format("normalised to {} true bearings ({} problems) in {:.0f} ms",
                  normalised.bearings.size(), normalised.errors.size(), ms_since(t_normalise)));
  problems.insert(problems.end(), normalised.errors.begin(), normalised.errors.end());
  warnings.insert(warnings.end(), normalised.warnings.begin(), normalised.warnings.end());

  for (const Diagnostic& w : warnings)
    std::cerr << "warning: " << w.to_string() << "\n";
  if (!problems.empty()) {
    for (const Diagnostic& d : problems) {
      std::cerr << (args.skip_bad ? "skipped: " : "") << d.to_string() << "\n";
    }
    if (!args.skip_bad) {
      const std::size_t n = problems.size();
      std::cerr << "lobfix: " << n << (n == 1 ? " problem" : " problems")
                << " in the input; nothing was written. Correct the file, or use --skip-bad "
                   "to leave those rows out.\n";
      return kExitInputError;
    }
    out.skipped = problems;
  }
  out.bearings = std::move(normalised.bearings);
  out.rows_read = read.rows_read;
  out.warnings = std::move(warnings);
  if (out.bearings.empty()) {
    std::cerr << "lobfix: no usable bearings in " << args.input << "\n";
    return kExitNoFix;
  }
  return kExitOk;
}

int make_fix_options(const FixArgs& args, lobfix::SolveOptions& solve_options,
                     lobfix::UncertaintyOptions& uncertainty_options) {
  using namespace lobfix;
  for (const double p : args.confidence) {
    if (!(p > 0.0 && p < 1.0)) {
      std::cerr << "lobfix: --confidence " << p << " is not a probability between 0 and 1\n";
      return kExitUsage;
    }
  }
  solve_options.max_range_m = args.max_range_km * 1000.0;
  solve_options.seed = args.seed;
  solve_options.loss = *parse_robust_loss(args.robust);  // CLI11 checked the name
  solve_options.loss_tuning = args.robust_tuning;
  solve_options.outlier_z = args.outlier_sigma;
  solve_options.exclude_outliers = args.exclude_outliers;
  if (args.estimate_station_bias)
    solve_options.station_bias_prior_deg = args.bias_prior_deg;
  uncertainty_options.probabilities = args.confidence;
  uncertainty_options.alpha = args.alpha;
  return kExitOk;
}

int solve_bearings(const FixArgs& args, const std::vector<lobfix::Bearing>& bearings,
                   SolvedRun& out) {
  using namespace lobfix;
  SolveOptions& solve_options = out.solve_options;
  UncertaintyOptions uncertainty_options;
  if (const int rc = make_fix_options(args, solve_options, uncertainty_options); rc != kExitOk)
    return rc;

  std::optional<double> window_s;
  std::optional<double> step_s;
  if (!args.window.empty()) {
    window_s = parse_duration_s(args.window);
    step_s = args.window_step.empty() ? window_s : parse_duration_s(args.window_step);
    if (!window_s || !step_s) {
      std::cerr << "lobfix: --window and --window-step take durations like 10m, 90s or 1h\n";
      return kExitUsage;
    }
  } else if (!args.window_step.empty()) {
    std::cerr << "lobfix: --window-step needs --window\n";
    return kExitUsage;
  }

  const auto t_solve = std::chrono::steady_clock::now();
  std::vector<FixResult>& results = out.results;
  const auto add_results = [&](std::vector<Fix> fixes) {
    for (Fix& fix : fixes) {
      FixResult r;
      r.uncertainty = describe_uncertainty(fix, uncertainty_options);
      r.motion = test_for_motion(fix, bearings, args.alpha);
      r.fix = std::move(fix);
      results.push_back(std::move(r));
    }
  };
  try {
    if (!window_s) {
      add_results(solve_by_signal(bearings, solve_options));
    } else {
      for (const TimeWindow& w : make_windows(bearings, *window_s, *step_s)) {
        std::vector<Bearing> subset;
        for (std::size_t i : w.indices)
          subset.push_back(bearings[i]);
        std::vector<Fix> fixes = solve_by_signal(subset, solve_options);
        for (Fix& f : fixes) {
          for (BearingFit& bf : f.bearings)
            bf.index = w.indices[bf.index];
          f.window_start_unix_ns = w.start_unix_ns;
          f.window_end_unix_ns = w.end_unix_ns;
        }
        add_results(std::move(fixes));
      }
    }
  } catch (const InputError& e) {
    std::cerr << "lobfix: " << e.diagnostic().reason << "\n";
    return kExitUsage;
  }

  say(fmt::format("solved {} signal(s) or window(s) in {:.0f} ms ({} loss)", results.size(),
                  ms_since(t_solve), args.robust));
  out.all_fixed = true;
  out.any_fixed = false;
  for (const FixResult& r : results) {
    out.all_fixed = out.all_fixed && r.fix.ok();
    out.any_fixed = out.any_fixed || r.fix.ok();
    if (!r.fix.ok()) {
      std::cerr << "lobfix: no fix for "
                << (r.fix.signal.empty() ? std::string("the bearings")
                                         : "signal '" + r.fix.signal + "'")
                << ": " << r.fix.message << "\n";
    }
  }
  return kExitOk;
}

lobfix::RunInfo make_run_info(const InputArgs& input, const LoadedInput& loaded,
                              const SolvedRun& solved) {
  lobfix::RunInfo run;
  run.input = input.input;
  run.rows_read = loaded.rows_read;
  run.rows_converted = static_cast<int>(loaded.bearings.size());
  run.version = LOBFIX_VERSION;
  run.robust_loss = solved.solve_options.loss;
  run.robust_tuning = solved.solve_options.loss_tuning > 0.0
                          ? solved.solve_options.loss_tuning
                          : lobfix::default_tuning(solved.solve_options.loss);
  run.excluded_outliers = solved.solve_options.exclude_outliers;
  run.skipped = loaded.skipped;
  run.warnings = loaded.warnings;
  return run;
}

}  // namespace lobfix_app
