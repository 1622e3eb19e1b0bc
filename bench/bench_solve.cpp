// lobfix benchmarks (Google Benchmark): the solver on synthetic bearings, and the CSV reader.
//
// Scenario (invented): one transmitter in open country, stations scattered 2-20 km around
// it at uniformly drawn azimuths. Each bearing is the exact geodesic azimuth from the station
// to the transmitter (GeographicLib Geodesic::Inverse, Karney 2013, J. Geodesy 87:43-55) plus
// Gaussian noise of 2 deg, drawn from a seeded std::mt19937_64, so every run sees the same
// data. All data are built outside the timed loops.
//
// The search area (posterior map, regions, segments) uses the same bearings.
//
// Run: bench/run_benchmarks.sh (Release build); figures in docs/performance.md.
#include <benchmark/benchmark.h>
#include <GeographicLib/Geodesic.hpp>

#include <cmath>
#include <cstdint>
#include <cstdio>
#include <optional>
#include <random>
#include <sstream>
#include <string>
#include <utility>
#include <vector>

#include "lobfix/bearing.hpp"
#include "lobfix/fix.hpp"
#include "lobfix/geodesy.hpp"
#include "lobfix/posterior.hpp"
#include "lobfix/reader.hpp"
#include "lobfix/search_area.hpp"
#include "lobfix/solver.hpp"
#include "lobfix/time.hpp"

namespace {

// Invented transmitter position (WGS 84), used only to make synthetic data.
constexpr double kTruthLatDeg = 46.03170;
constexpr double kTruthLonDeg = -103.61120;
constexpr double kSigmaDeg = 2.0;
constexpr double kMinRangeM = 2000.0;
constexpr double kMaxRangeM = 20000.0;
constexpr std::uint64_t kSeed = 20260614;
// 2026-06-14T09:00:00Z as seconds since 1970-01-01T00:00:00Z (20618 days * 86400 + 9 h).
constexpr std::int64_t kStartUnixS = 20618LL * 86400LL + 9LL * 3600LL;

std::vector<lobfix::Bearing> make_bearings(std::size_t n) {
  const GeographicLib::Geodesic& geod = GeographicLib::Geodesic::WGS84();
  std::mt19937_64 rng(kSeed);
  std::uniform_real_distribution<double> azimuth_deg(0.0, 360.0);
  std::uniform_real_distribution<double> range_m(kMinRangeM, kMaxRangeM);
  std::normal_distribution<double> noise_deg(0.0, kSigmaDeg);

  std::vector<lobfix::Bearing> out;
  out.reserve(n);
  for (std::size_t i = 0; i < n; ++i) {
    double station_lat_deg = 0.0, station_lon_deg = 0.0;
    geod.Direct(kTruthLatDeg, kTruthLonDeg, azimuth_deg(rng), range_m(rng), station_lat_deg,
                station_lon_deg);
    double s12_m = 0.0, azi1_deg = 0.0, azi2_deg = 0.0;
    geod.Inverse(station_lat_deg, station_lon_deg, kTruthLatDeg, kTruthLonDeg, s12_m, azi1_deg,
                 azi2_deg);

    lobfix::Bearing b;
    b.station = "stn-" + std::to_string(i % 97);
    b.time_unix_ns = (kStartUnixS + static_cast<std::int64_t>(i)) * 1000000000LL;
    b.time_text = lobfix::format_iso8601_utc(b.time_unix_ns);
    b.lat_deg = station_lat_deg;
    b.lon_deg = station_lon_deg;
    b.azimuth_deg = lobfix::wrap_deg360(azi1_deg + noise_deg(rng));
    b.sigma_deg = kSigmaDeg;
    b.source = {"synthetic", static_cast<int>(i) + 2};
    out.push_back(b);
  }
  return out;
}

// The same bearings as lobfix CSV text (docs/input-format.md).
std::string make_csv(std::size_t n) {
  std::string text = "time,station,lat,lon,bearing_deg,sigma_deg\n";
  text.reserve(n * 72 + 64);
  char line[256];
  for (const lobfix::Bearing& b : make_bearings(n)) {
    // Rounded to the written 0.01 deg first, so that no row says 360.00.
    const double bearing_deg = lobfix::wrap_deg360(std::round(b.azimuth_deg * 100.0) / 100.0);
    const int len =
        std::snprintf(line, sizeof line, "%s,%s,%.6f,%.6f,%.2f,%.1f\n", b.time_text.c_str(),
                      b.station.c_str(), b.lat_deg, b.lon_deg, bearing_deg, b.sigma_deg);
    text.append(line, static_cast<std::size_t>(len));
  }
  return text;
}

double miss_distance_m(const lobfix::Fix& fix) {
  const lobfix::GeodesicLine12 g =
      lobfix::geodesic_inverse(fix.position, lobfix::LatLon{kTruthLatDeg, kTruthLonDeg});
  return g.s12_m;
}

// The search area of 1,000 bearings over a 10 km square at 10 m cells (1,000 x 1,000 cells):
// the probability map (coarse pass, refinement), the 50% and 95% regions with their
// outlines, and the 250 m segments, as `lobfix area --cell-m 10 --area-km 10` makes them.
lobfix::SearchAreaOptions area_options_10km() {
  lobfix::SearchAreaOptions o;
  o.map.cell_m = 10.0;
  o.map.half_side_m = 5000.0;
  o.map.align_m = 250.0;
  return o;
}

void BM_SearchArea(benchmark::State& state) {
  const std::vector<lobfix::Bearing> bearings =
      make_bearings(static_cast<std::size_t>(state.range(0)));
  lobfix::FixResult result;
  result.fix = lobfix::solve_fix(bearings, {});
  result.uncertainty = lobfix::describe_uncertainty(result.fix, {});
  const lobfix::SearchAreaOptions options = area_options_10km();
  lobfix::SearchArea last;
  for (auto _ : state) {
    lobfix::SearchArea area = lobfix::make_search_area(bearings, result, options);
    benchmark::DoNotOptimize(area);
    last = std::move(area);
  }
  if (!last.map.ok) {
    state.SkipWithError(("no map: " + last.map.message).c_str());
    return;
  }
  state.counters["cells"] = static_cast<double>(last.map.grid.size());
  state.counters["cells_evaluated"] = static_cast<double>(last.map.cells_evaluated);
  state.counters["segments"] = static_cast<double>(last.plan.segments.size());
  state.counters["max_az_err_deg"] = last.map.max_azimuth_error_deg;
}
BENCHMARK(BM_SearchArea)->Arg(1000)->Unit(benchmark::kMillisecond);

// The brute-force comparison: exact geodesic azimuths (GeographicLib Inverse) for every cell
// and bearing, no coarse pass, on a 40 x 40 block of the same 10 m grid at the fix. Time per
// cell times 1,000,000 cells is what the 10 km square would take (docs/performance.md).
void BM_ExactMapBlock(benchmark::State& state) {
  const std::vector<lobfix::Bearing> bearings =
      make_bearings(static_cast<std::size_t>(state.range(0)));
  const lobfix::Fix fix = lobfix::solve_fix(bearings, {});
  lobfix::PosteriorOptions o = area_options_10km().map;
  const lobfix::PosteriorMap full = lobfix::posterior_map(bearings, fix, o);
  lobfix::UtmGrid block = full.grid;
  block.columns = block.rows = 40;
  block.west_m += 480 * block.cell_m;
  block.north_m -= 480 * block.cell_m;
  for (auto _ : state) {
    lobfix::PosteriorMap m = lobfix::posterior_map_exact(bearings, fix, block, o.wild_fraction);
    benchmark::DoNotOptimize(m);
  }
  state.counters["cells"] = static_cast<double>(block.size());
  state.SetItemsProcessed(state.iterations() * static_cast<std::int64_t>(block.size()));
}
BENCHMARK(BM_ExactMapBlock)->Arg(1000)->Unit(benchmark::kMillisecond);

// One full solve_fix (start point, Ceres, covariance, per-bearing table) per iteration.
void BM_SolveFix(benchmark::State& state) {
  const std::vector<lobfix::Bearing> bearings =
      make_bearings(static_cast<std::size_t>(state.range(0)));
  const lobfix::SolveOptions options;
  lobfix::Fix last;
  for (auto _ : state) {
    lobfix::Fix fix = lobfix::solve_fix(bearings, options);
    benchmark::DoNotOptimize(fix);
    benchmark::ClobberMemory();
    last = std::move(fix);
  }
  if (!last.ok()) {
    state.SkipWithError(("no fix: " + last.message).c_str());
    return;
  }
  state.counters["bearings"] = static_cast<double>(bearings.size());
  state.counters["solver_iters"] = last.iterations;
  state.counters["miss_m"] = miss_distance_m(last);
  state.SetItemsProcessed(state.iterations() * state.range(0));
}
BENCHMARK(BM_SolveFix)->Arg(30)->Arg(1000)->Arg(10000)->Unit(benchmark::kMillisecond);

// The robust solve (Andrews' sine, consensus start) with 20% of the bearings replaced by
// uniform random directions, seeded.
void BM_RobustSolve20pcWild(benchmark::State& state) {
  std::vector<lobfix::Bearing> bearings = make_bearings(static_cast<std::size_t>(state.range(0)));
  std::mt19937_64 rng(2020);
  std::uniform_real_distribution<double> any(0.0, 360.0);
  for (std::size_t i = 0; i < bearings.size(); i += 5)
    bearings[i].azimuth_deg = any(rng);
  lobfix::SolveOptions options;
  options.loss = lobfix::RobustLoss::andrews;
  lobfix::Fix last;
  for (auto _ : state) {
    lobfix::Fix fix = lobfix::solve_fix(bearings, options);
    benchmark::DoNotOptimize(fix);
    last = std::move(fix);
  }
  if (!last.ok()) {
    state.SkipWithError(("no fix: " + last.message).c_str());
    return;
  }
  state.counters["outliers"] = last.outliers;
  state.counters["miss_m"] = miss_distance_m(last);
}
BENCHMARK(BM_RobustSolve20pcWild)->Arg(30)->Arg(1000)->Arg(10000)->Unit(benchmark::kMillisecond);

// The start point alone (pairwise ray crossings), to see its share of a solve.
void BM_StartPoint(benchmark::State& state) {
  const std::vector<lobfix::Bearing> bearings =
      make_bearings(static_cast<std::size_t>(state.range(0)));
  const lobfix::SolveOptions options;
  for (auto _ : state) {
    std::optional<lobfix::LatLon> start = lobfix::start_point(bearings, options);
    benchmark::DoNotOptimize(start);
  }
}
BENCHMARK(BM_StartPoint)->Arg(30)->Arg(1000)->Arg(10000)->Unit(benchmark::kMillisecond);

// One GeographicLib inverse geodesic station -> transmitter, the solver's unit of work, with
// the outputs it computes: 0 everything lobfix::geodesic_inverse asks for (distance,
// azimuths, reduced length, geodesic scales), 1 azimuths and reduced length, 2 azimuths.
void BM_GeodesicInverse(benchmark::State& state) {
  using GeographicLib::Geodesic;
  const std::vector<lobfix::Bearing> bearings = make_bearings(1000);
  const unsigned masks[] = {
      Geodesic::DISTANCE | Geodesic::AZIMUTH | Geodesic::REDUCEDLENGTH | Geodesic::GEODESICSCALE,
      Geodesic::AZIMUTH | Geodesic::REDUCEDLENGTH, Geodesic::AZIMUTH};
  const unsigned mask = masks[state.range(0)];
  const Geodesic& geod = Geodesic::WGS84();
  // A point near, not at, the transmitter, as during a solve.
  const double lat_deg = kTruthLatDeg + 0.001;
  const double lon_deg = kTruthLonDeg - 0.001;
  std::size_t i = 0;
  for (auto _ : state) {
    const lobfix::Bearing& b = bearings[i];
    i = (i + 1) % bearings.size();
    double s12_m = 0, azi1_deg = 0, azi2_deg = 0, m12_m = 0, M12 = 0, M21 = 0, S12_m2 = 0;
    geod.GenInverse(b.lat_deg, b.lon_deg, lat_deg, lon_deg, mask, s12_m, azi1_deg, azi2_deg, m12_m,
                    M12, M21, S12_m2);
    benchmark::DoNotOptimize(azi1_deg);
    benchmark::DoNotOptimize(m12_m);
  }
}
BENCHMARK(BM_GeodesicInverse)->DenseRange(0, 2)->Unit(benchmark::kMicrosecond);

// read_observations_csv on an in-memory stream; the stream is rewound, not rebuilt, per pass.
void BM_ReadCsv(benchmark::State& state) {
  const std::size_t n = static_cast<std::size_t>(state.range(0));
  const std::string text = make_csv(n);
  std::istringstream in(text);
  std::size_t read_count = 0;
  for (auto _ : state) {
    in.clear();
    in.seekg(0);
    lobfix::ReadResult result = lobfix::read_observations_csv(in, "synthetic.csv");
    benchmark::DoNotOptimize(result);
    read_count = result.observations.size();
  }
  if (read_count != n) {
    state.SkipWithError("the reader did not return every row");
    return;
  }
  state.SetBytesProcessed(state.iterations() * static_cast<std::int64_t>(text.size()));
  state.SetItemsProcessed(state.iterations() * state.range(0));
}
BENCHMARK(BM_ReadCsv)->Arg(10000)->Arg(100000)->Unit(benchmark::kMillisecond);

}  // namespace
