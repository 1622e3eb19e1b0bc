// lobfix planning benchmarks (Google Benchmark): the coverage map of a planned network and the
// next-bearing ranking.
//
// Scenario (invented): ten fixed stations on a 30 km circle in open country, sigma 2 deg, a
// 500 x 500 map of 100 m cells around the circle's centre; and a fix from four exact bearings
// with 1,000 candidate spots on rings around it. Everything is built outside the timed loops.
//
// Run: bench/run_benchmarks.sh (Release build); figures in docs/performance.md.
#include <benchmark/benchmark.h>

#include <cmath>
#include <string>
#include <vector>

#include "lobfix/geodesy.hpp"
#include "lobfix/planning.hpp"
#include "lobfix/solver.hpp"

namespace {

const lobfix::LatLon kCentre{46.10250, -103.52010};  // invented

std::vector<lobfix::PlannedStation> ten_stations() {
  std::vector<lobfix::PlannedStation> out;
  for (int i = 0; i < 10; ++i) {
    const lobfix::LatLon p = lobfix::geodesic_direct(kCentre, 36.0 * i + 5.0, 30000.0).point;
    out.push_back({"site-" + std::to_string(i), p, 2.0, std::nullopt});
  }
  return out;
}

lobfix::UtmGrid map_grid(int cells) {
  lobfix::UtmGrid g;
  g.zone = lobfix::utm_zone_of(kCentre);
  const lobfix::UtmPoint c = lobfix::utm_forward(g.zone, kCentre);
  g.cell_m = 100.0;
  g.columns = cells;
  g.rows = cells;
  g.west_m = c.easting_m - 0.5 * cells * g.cell_m;
  g.north_m = c.northing_m + 0.5 * cells * g.cell_m;
  return g;
}

// coverage_map, 500 x 500 cells, 10 stations; the argument is the thread count (0: one per
// hardware thread).
void BM_CoverageMap500x500x10(benchmark::State& state) {
  const std::vector<lobfix::PlannedStation> stations = ten_stations();
  const lobfix::UtmGrid grid = map_grid(500);
  lobfix::PlanningOptions options;
  options.num_threads = static_cast<int>(state.range(0));
  std::size_t usable = 0;
  for (auto _ : state) {
    lobfix::CoverageMap map = lobfix::coverage_map(stations, grid, options);
    benchmark::DoNotOptimize(map.cep_m.data());
    usable = map.usable_cells;
  }
  state.counters["usable_cells"] = static_cast<double>(usable);
  state.SetItemsProcessed(state.iterations() * static_cast<std::int64_t>(grid.size()));
}
BENCHMARK(BM_CoverageMap500x500x10)->Arg(1)->Arg(0)->Unit(benchmark::kMillisecond)->UseRealTime();

// rank_next_bearings on 1,000 spots (rings around the fix, 1-10 km), the fix solved once.
void BM_RankNext1000(benchmark::State& state) {
  const lobfix::LatLon tx = kCentre;
  std::vector<lobfix::Bearing> bearings;
  const double az[] = {180.0, 205.0, 230.0, 250.0};
  for (int i = 0; i < 4; ++i) {
    lobfix::Bearing b;
    b.station = "s" + std::to_string(i);
    const lobfix::LatLon at = lobfix::geodesic_direct(tx, az[i], 8000.0).point;
    b.lat_deg = at.lat_deg;
    b.lon_deg = at.lon_deg;
    b.azimuth_deg = lobfix::wrap_deg360(lobfix::geodesic_inverse(at, tx).azi1_deg);
    b.sigma_deg = 3.0;
    bearings.push_back(b);
  }
  lobfix::SolveOptions solve;
  solve.loss = lobfix::RobustLoss::none;
  const lobfix::Fix fix = lobfix::solve_fix(bearings, solve);
  if (!fix.ok()) {
    state.SkipWithError("no fix");
    return;
  }
  std::vector<lobfix::CandidateSpot> spots;
  for (int r = 1; r <= 10; ++r)
    for (int j = 0; j < 100; ++j)
      spots.push_back({"c", lobfix::geodesic_direct(tx, 3.6 * j, 1000.0 * r).point, "", 0.0, {}});
  lobfix::NextBearingOptions options;
  options.sigma_deg = 3.0;
  for (auto _ : state) {
    lobfix::NextBearingPlan plan = lobfix::rank_next_bearings(fix, bearings, spots, options);
    benchmark::DoNotOptimize(plan.ranked.data());
  }
  state.SetItemsProcessed(state.iterations() * static_cast<std::int64_t>(spots.size()));
}
BENCHMARK(BM_RankNext1000)->Unit(benchmark::kMillisecond);

}  // namespace
