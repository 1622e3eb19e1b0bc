// The posterior map of the transmitter's position (docs/search-area.md).
//
// Notation: theta_i measured azimuth of bearing i (rad, station offset removed), alpha_i(x)
// the geodesic azimuth from its station to the point x, delta_i = wrap(theta_i - alpha_i)
// in (-pi, pi], s_i^2 = sigma_i^2 + (p_i^2 + q a^2) / d_i^2 the bearing's variance widened by
// its station position sigma p_i and by the cell (side a; q = 1/12 for a cell, 1/6 for a
// coarse block) at range d_i, epsilon the wild fraction. The likelihood of one bearing is
// L_i = (1 - epsilon) N(delta_i; 0, s_i) + epsilon / (2 pi) (a normal core on the wrapped
// residual and a uniform floor), the posterior p(x) is proportional to prod_i L_i(x) over
// the mapped square (uniform prior), and a cell's probability is p at its centre times its
// area, normalised to 1 over the map.
#include "lobfix/posterior.hpp"

#include <algorithm>
#include <atomic>
#include <cmath>
#include <limits>
#include <map>
#include <memory>
#include <numeric>
#include <thread>
#include <utility>

#include "detail/azimuth_field.hpp"
#include "lobfix/error.hpp"
#include "lobfix/geodesy.hpp"

namespace lobfix {

namespace {

constexpr double kPi = 3.14159265358979323846;
constexpr double kDeg = kPi / 180.0;
constexpr double kK99 = 3.0348542587702925;        // sqrt(-2 ln 0.01): 99% ellipse scale
constexpr double kKeptMass = 1.0 - 1e-6;           // coarse blocks refined: all but this much
constexpr double kKeptMassWithFloor = 1.0 - 1e-3;  // ... of the map with the wild floor
constexpr double kAutoCellsPerSide = 1000.0;
constexpr int kMaxDoublings = 2;
constexpr double kMaxVariance = 4.0;  // rad^2: beyond, a bearing says nothing here

double wrap_pi(double a) {
  a -= 2.0 * kPi * std::nearbyint(a / (2.0 * kPi));
  return a <= -kPi ? a + 2.0 * kPi : (a > kPi ? a - 2.0 * kPi : a);
}

/// One bearing's part of the likelihood.
struct Term {
  double theta_rad[2] = {0.0, 0.0};
  double sigma2_rad2[2] = {0.0, 0.0};
  int candidates = 1;
  double pos_sigma2_m2 = 0.0;
  const detail::AzimuthField* field = nullptr;
};

/// log prod_i L_i at one point, given each term's azimuth and range there by `geometry`
/// (term index -> {alpha_rad, d_m}). With a floor, the product is formed 16 terms at a time
/// (each L_i lies within [floor, 1 / (s sqrt(2 pi))], so 16 of them stay within double
/// range) and its logarithm taken once per chunk.
template <class Geometry>
double log_likelihood(const std::vector<Term>& terms, double smear_m2, double epsilon,
                      const Geometry& geometry) {
  const double floor = epsilon / (2.0 * kPi);
  const double inv_sqrt_2pi = 1.0 / std::sqrt(2.0 * kPi);
  double log_sum = 0.0;
  double product = 1.0;
  for (std::size_t i = 0; i < terms.size(); ++i) {
    const Term& t = terms[i];
    const auto [alpha, range] = geometry(i);
    const double d = std::max(range, 0.5);
    const double widen = (t.pos_sigma2_m2 + smear_m2) / (d * d);
    double core = 0.0;
    double log_core = -std::numeric_limits<double>::infinity();
    for (int c = 0; c < t.candidates; ++c) {
      const double s2 = std::min(t.sigma2_rad2[c] + widen, kMaxVariance);
      const double delta = wrap_pi(t.theta_rad[c] - alpha);
      const double z = -0.5 * delta * delta / s2 - 0.5 * std::log(s2);
      if (epsilon > 0.0) {
        core += std::exp(z) * inv_sqrt_2pi;
      } else {
        const double hi = std::max(log_core, z);
        log_core = hi + std::log(std::exp(log_core - hi) + std::exp(z - hi));
      }
    }
    if (epsilon > 0.0) {
      product *= (1.0 - epsilon) * core / t.candidates + floor;
      if ((i & 15U) == 15U) {
        log_sum += std::log(product);
        product = 1.0;
      }
    } else {
      log_sum += log_core - std::log(static_cast<double>(t.candidates)) + std::log(inv_sqrt_2pi);
    }
  }
  return log_sum + std::log(product);
}

/// Largest eigenvalue and smallest of a 2 x 2 symmetric covariance.
std::pair<double, double> eigenvalues(const std::array<std::array<double, 2>, 2>& c) {
  const double a = c[0][0];
  const double b = 0.5 * (c[0][1] + c[1][0]);
  const double d = c[1][1];
  const double mean = 0.5 * (a + d);
  const double r = std::sqrt(0.25 * (a - d) * (a - d) + b * b);
  return {mean + r, std::max(0.0, mean - r)};
}

/// The largest "round" cell size (m) that divides align_m and is <= target_m; the smallest
/// that divides it when none is that small.
double pick_cell(double target_m, double align_m) {
  static const double kSizes[] = {0.5,  1,    2,     2.5,   5,     10,    20,    25,
                                  50,   100,  125,   200,   250,   500,   1000,  2000,
                                  2500, 5000, 10000, 20000, 25000, 50000, 100000};
  double best = 0.0;
  double smallest = 0.0;
  for (const double s : kSizes) {
    const double ratio = align_m / s;
    if (std::fabs(ratio - std::round(ratio)) > 1e-9 * ratio || ratio < 1.0 - 1e-9)
      continue;
    if (smallest == 0.0)
      smallest = s;
    if (s <= target_m)
      best = s;
  }
  if (best > 0.0)
    return best;
  return smallest > 0.0 ? smallest : align_m;
}

void check_options(const PosteriorOptions& o) {
  const auto bad = [](const char* field, const char* reason) {
    throw InputError({"", 0, 0, field, reason});
  };
  if (!(o.cell_m >= 0.0) || !std::isfinite(o.cell_m))
    bad("cell_m", "the cell size must be a positive number of metres (or 0: automatic)");
  if (!(o.half_side_m >= 0.0) || !std::isfinite(o.half_side_m))
    bad("half_side_m", "the map's size must be a positive number of metres (or 0: automatic)");
  if (!(o.align_m > 0.0) || !std::isfinite(o.align_m))
    bad("align_m", "the segment size must be a positive number of metres");
  if (o.cell_m > 0.0) {
    const double ratio = o.align_m / o.cell_m;
    if (ratio < 1.0 - 1e-9 || std::fabs(ratio - std::round(ratio)) > 1e-9 * ratio)
      bad("cell_m", "the cell size must divide the segment size");
  }
  if (!(o.wild_fraction >= 0.0 && o.wild_fraction < 0.5))
    bad("wild_fraction", "the wild fraction must be in [0, 0.5)");
  if (!(o.azimuth_tolerance > 0.0 && o.azimuth_tolerance <= 0.01))
    bad("azimuth_tolerance", "the azimuth tolerance must be in (0, 0.01]");
  if (o.max_cells < 1)
    bad("max_cells", "the map needs at least one cell");
}

/// The likelihood terms of the fix's bearings (fields filled in later).
std::vector<Term> make_terms(const std::vector<Bearing>& bearings, const Fix& fix) {
  std::vector<Term> terms;
  terms.reserve(fix.bearings.size());
  for (const BearingFit& bf : fix.bearings) {
    const Bearing& b = bearings.at(bf.index);
    Term t;
    t.theta_rad[0] = (b.azimuth_deg - bf.bias_deg) * kDeg;
    t.sigma2_rad2[0] = std::pow(b.sigma_deg * kDeg, 2);
    if (b.alt_azimuth_deg) {
      t.candidates = 2;
      t.theta_rad[1] = (*b.alt_azimuth_deg - bf.bias_deg) * kDeg;
      t.sigma2_rad2[1] = std::pow(b.alt_sigma_deg.value_or(b.sigma_deg) * kDeg, 2);
    }
    t.pos_sigma2_m2 = b.pos_sigma_m * b.pos_sigma_m;
    terms.push_back(t);
  }
  return terms;
}

/// Run body(k) for k in [0, count) on `threads` threads.
template <class Body>
void parallel_for(std::size_t count, int threads, const Body& body) {
  std::atomic<std::size_t> next{0};
  const auto worker = [&] {
    for (std::size_t k = next.fetch_add(1); k < count; k = next.fetch_add(1))
      body(k);
  };
  std::vector<std::thread> pool;
  for (int t = 1; t < threads; ++t)
    pool.emplace_back(worker);
  worker();
  for (std::thread& th : pool)
    th.join();
}

/// Turn log masses into probabilities summing to 1 (cells at -inf get 0).
void normalise_log_mass(std::vector<double>& m) {
  double top = -std::numeric_limits<double>::infinity();
  for (const double v : m)
    top = std::max(top, v);
  double sum = 0.0;
  for (double& v : m) {
    v = std::isfinite(v) ? std::exp(v - top) : 0.0;
    sum += v;
  }
  for (double& v : m)
    v /= sum;
}

/// One attempt at the map for half side `half_side_m`.
PosteriorMap compute(const std::vector<Bearing>& bearings, const Fix& fix,
                     const PosteriorOptions& options, double half_side_m, double minor99_m) {
  PosteriorMap out;
  out.signal = fix.signal;
  out.wild_fraction = options.wild_fraction;
  const UtmZone zone = utm_zone_of(fix.position);
  const UtmPoint centre = utm_forward(zone, fix.position);
  const double align = options.align_m;
  const double west = std::floor((centre.easting_m - half_side_m) / align) * align;
  const double east = std::ceil((centre.easting_m + half_side_m) / align) * align;
  const double south = std::floor((centre.northing_m - half_side_m) / align) * align;
  const double north = std::ceil((centre.northing_m + half_side_m) / align) * align;
  double cell = options.cell_m;
  if (cell <= 0.0) {
    // At most kAutoCellsPerSide cells a side (a million cells) unless the user asks for more.
    const double by_count =
        std::max(east - west, north - south) /
        std::min(kAutoCellsPerSide, std::sqrt(static_cast<double>(options.max_cells)));
    cell = pick_cell(std::max(2.0 * minor99_m / 16.0, by_count), align);
  }
  UtmGrid& grid = out.grid;
  grid.zone = zone;
  grid.west_m = west;
  grid.north_m = north;
  grid.cell_m = cell;
  grid.columns = static_cast<int>(std::lround((east - west) / cell));
  grid.rows = static_cast<int>(std::lround((north - south) / cell));
  if (static_cast<double>(grid.columns) * grid.rows > static_cast<double>(options.max_cells)) {
    out.message = "the map would have " + std::to_string(grid.columns) + " x " +
                  std::to_string(grid.rows) +
                  " cells, more than allowed: choose a larger cell or a smaller area";
    return out;
  }
  out.cell_area_m2 = cell * cell / (centre.scale * centre.scale);

  std::vector<Term> terms = make_terms(bearings, fix);
  out.bearings = static_cast<int>(terms.size());
  std::vector<std::unique_ptr<detail::AzimuthField>> fields;
  try {
    detail::LatticeNodes lattice(grid);
    // Bearings taken at the same spot share one field, built to the tightest tolerance.
    std::map<std::pair<double, double>, std::vector<std::size_t>> by_spot;
    for (std::size_t i = 0; i < terms.size(); ++i) {
      const Bearing& b = bearings[fix.bearings[i].index];
      by_spot[{b.lat_deg, b.lon_deg}].push_back(i);
    }
    for (const auto& [spot, members] : by_spot) {
      double sigma = std::numeric_limits<double>::infinity();
      for (const std::size_t i : members)
        sigma = std::min({sigma, std::sqrt(terms[i].sigma2_rad2[0]),
                          std::sqrt(terms[i].sigma2_rad2[terms[i].candidates - 1])});
      fields.push_back(std::make_unique<detail::AzimuthField>(
          LatLon{spot.first, spot.second}, lattice, options.azimuth_tolerance * sigma));
      const double error = fields.back()->max_error_rad();
      out.max_azimuth_error_deg = std::max(out.max_azimuth_error_deg, error / kDeg);
      out.max_azimuth_error_fraction = std::max(out.max_azimuth_error_fraction, error / sigma);
      for (const std::size_t i : members)
        terms[i].field = fields.back().get();
    }
  } catch (const InputError& e) {
    out.message = "the map reaches beyond the UTM zone of the fix (" + e.diagnostic().reason +
                  "): choose a smaller area";
    return out;
  }

  const int threads = options.num_threads > 0
                          ? options.num_threads
                          : static_cast<int>(std::max(1U, std::thread::hardware_concurrency()));
  const auto log_at = [&](double e, double n, double smear_m2, double epsilon) {
    return log_likelihood(terms, smear_m2, epsilon, [&](std::size_t i) {
      const detail::AzimuthField& f = *terms[i].field;
      return std::pair<double, double>{f.azimuth_rad(e, n), f.distance_m(e, n)};
    });
  };

  // Coarse pass: blocks of f x f cells, at most 128 a side.
  const int f = std::max(1, static_cast<int>(std::ceil(std::max(grid.columns, grid.rows) / 128.0)));
  out.coarse_factor = f;
  const int bc = (grid.columns + f - 1) / f;
  const int br = (grid.rows + f - 1) / f;
  std::vector<double> block(static_cast<std::size_t>(bc) * static_cast<std::size_t>(br));
  const double block_side = f * cell;
  const double block_smear = f == 1 ? cell * cell / 12.0 : block_side * block_side / 6.0;
  const auto block_range = [&](int b, int count) {
    return std::pair<int, int>{b * f, std::min(count, (b + 1) * f)};
  };
  const auto coarse_pass = [&](std::vector<double>& mass, double epsilon) {
    parallel_for(mass.size(), threads, [&](std::size_t k) {
      const int bj = static_cast<int>(k / static_cast<std::size_t>(bc));
      const int bi = static_cast<int>(k % static_cast<std::size_t>(bc));
      const auto [c0, c1] = block_range(bi, grid.columns);
      const auto [r0, r1] = block_range(bj, grid.rows);
      const double e = west + 0.5 * (c0 + c1) * cell;
      const double n = north - 0.5 * (r0 + r1) * cell;
      mass[k] =
          log_at(e, n, block_smear, epsilon) + std::log(static_cast<double>((c1 - c0) * (r1 - r0)));
    });
    normalise_log_mass(mass);
  };
  coarse_pass(block, options.wild_fraction);
  const auto is_border = [&](std::size_t k) {
    const int bj = static_cast<int>(k / static_cast<std::size_t>(bc));
    const int bi = static_cast<int>(k % static_cast<std::size_t>(bc));
    return bi == 0 || bj == 0 || bi == bc - 1 || bj == br - 1;
  };
  // Does the square hold the region where the bearings agree? Judged without the wild
  // floor: with it, the hypotheses "all but one bearing wild" spread probability along
  // every ray out to any distance, and no square would be large enough.
  std::vector<double> agreeing(block.size());
  if (options.wild_fraction > 0.0)
    coarse_pass(agreeing, 0.0);
  else
    agreeing = block;
  for (std::size_t k = 0; k < agreeing.size(); ++k) {
    if (is_border(k))
      out.border_mass += agreeing[k];
  }
  // Blocks to refine: those holding all but 1e-3 of the probability, and those holding all
  // but 1e-6 of it where the bearings agree (no wild floor); the others keep their coarse
  // probability, spread evenly over their cells (there the map is nearly flat: the floor).
  std::vector<char> kept(block.size(), 0);
  const auto keep_top = [&](const std::vector<double>& mass, double share) {
    std::vector<std::size_t> order(mass.size());
    std::iota(order.begin(), order.end(), std::size_t{0});
    std::sort(order.begin(), order.end(),
              [&](std::size_t a, std::size_t b) { return mass[a] > mass[b]; });
    double cumulative = 0.0;
    for (const std::size_t k : order) {
      if (cumulative >= share)
        break;
      kept[k] = 1;
      cumulative += mass[k];
    }
  };
  keep_top(block, options.wild_fraction > 0.0 ? kKeptMassWithFloor : kKeptMass);
  keep_top(agreeing, kKeptMass);
  std::vector<char> refine = kept;  // the kept blocks and their eight neighbours
  for (int bj = 0; bj < br; ++bj) {
    for (int bi = 0; bi < bc; ++bi) {
      if (!kept[static_cast<std::size_t>(bj) * bc + bi])
        continue;
      for (int dj = -1; dj <= 1; ++dj) {
        for (int di = -1; di <= 1; ++di) {
          const int i = bi + di;
          const int j = bj + dj;
          if (i >= 0 && j >= 0 && i < bc && j < br)
            refine[static_cast<std::size_t>(j) * bc + i] = 1;
        }
      }
    }
  }
  std::vector<std::size_t> refined;
  std::vector<std::size_t> unrefined;
  for (std::size_t k = 0; k < block.size(); ++k) {
    if (refine[k]) {
      refined.push_back(k);
    } else {
      unrefined.push_back(k);
      out.unrefined_mass += block[k];
    }
  }

  // Fine pass, cell by cell inside the refined blocks.
  out.mass.assign(grid.size(), -std::numeric_limits<double>::infinity());
  std::atomic<std::size_t> evaluated{0};
  const double cell_smear = cell * cell / 12.0;
  parallel_for(refined.size(), threads, [&](std::size_t r) {
    const std::size_t k = refined[r];
    const int bj = static_cast<int>(k / static_cast<std::size_t>(bc));
    const int bi = static_cast<int>(k % static_cast<std::size_t>(bc));
    const auto [c0, c1] = block_range(bi, grid.columns);
    const auto [r0, r1] = block_range(bj, grid.rows);
    for (int row = r0; row < r1; ++row) {
      const double n = grid.centre_northing_m(row);
      for (int col = c0; col < c1; ++col) {
        out.mass[static_cast<std::size_t>(row) * grid.columns + col] =
            log_at(grid.centre_easting_m(col), n, cell_smear, options.wild_fraction);
      }
    }
    evaluated += static_cast<std::size_t>(c1 - c0) * static_cast<std::size_t>(r1 - r0);
  });
  out.cells_evaluated = evaluated.load();
  normalise_log_mass(out.mass);
  // The refined cells now hold 1 - unrefined_mass; the unrefined blocks' coarse share is
  // spread over their cells.
  for (double& m : out.mass)
    m *= 1.0 - out.unrefined_mass;
  for (const std::size_t k : unrefined) {
    const int bj = static_cast<int>(k / static_cast<std::size_t>(bc));
    const int bi = static_cast<int>(k % static_cast<std::size_t>(bc));
    const auto [c0, c1] = block_range(bi, grid.columns);
    const auto [r0, r1] = block_range(bj, grid.rows);
    const double each = block[k] / static_cast<double>((c1 - c0) * (r1 - r0));
    for (int row = r0; row < r1; ++row) {
      for (int col = c0; col < c1; ++col)
        out.mass[static_cast<std::size_t>(row) * grid.columns + col] = each;
    }
  }
  out.ok = true;
  return out;
}

}  // namespace

PosteriorMap posterior_map(const std::vector<Bearing>& bearings, const Fix& fix,
                           const PosteriorOptions& options) {
  check_options(options);
  if (!fix.ok()) {
    PosteriorMap out;
    out.signal = fix.signal;
    out.message = "no fix: " + fix.message;
    return out;
  }
  // The ellipse sets the scale: from the stated sigmas, widened when the residuals say the
  // sigmas are too small.
  const double variance_factor = fix.dof > 0 ? std::max(1.0, fix.chi2 / fix.dof) : 1.0;
  const auto [major, minor] = eigenvalues(fix.covariance_en_m2);
  const double major99 = kK99 * std::sqrt(major * variance_factor);
  const double minor99 = kK99 * std::sqrt(minor * variance_factor);
  const bool automatic = options.half_side_m <= 0.0;
  // An automatic square is at most 1,000 segment squares a side: beyond, the bearings do
  // not bound the distance well enough for a search area, and the map says so by its border
  // mass.
  const double largest = 0.5 * kAutoCellsPerSide * options.align_m;
  double half_side = automatic ? std::min(largest, std::max(2.0 * major99, 2.0 * options.align_m))
                               : options.half_side_m;
  PosteriorMap out;
  for (int attempt = 0;; ++attempt) {
    out = compute(bearings, fix, options, half_side, minor99);
    if (!automatic || !out.ok || out.border_mass <= 1e-3 || attempt == kMaxDoublings ||
        half_side >= largest)
      break;
    half_side = std::min(largest, 2.0 * half_side);
  }
  return out;
}

PosteriorMap posterior_map_exact(const std::vector<Bearing>& bearings, const Fix& fix,
                                 const UtmGrid& grid, double wild_fraction) {
  PosteriorMap out;
  out.signal = fix.signal;
  out.grid = grid;
  out.wild_fraction = wild_fraction;
  if (!fix.ok()) {
    out.message = "no fix: " + fix.message;
    return out;
  }
  const std::vector<Term> terms = make_terms(bearings, fix);
  out.bearings = static_cast<int>(terms.size());
  const UtmPoint centre =
      utm_forward(grid.zone, utm_reverse(grid.zone, grid.west_m + 0.5 * grid.columns * grid.cell_m,
                                         grid.north_m - 0.5 * grid.rows * grid.cell_m));
  out.cell_area_m2 = grid.cell_m * grid.cell_m / (centre.scale * centre.scale);
  out.mass.assign(grid.size(), 0.0);
  const double smear = grid.cell_m * grid.cell_m / 12.0;
  const int threads = static_cast<int>(std::max(1U, std::thread::hardware_concurrency()));
  parallel_for(static_cast<std::size_t>(grid.rows), threads, [&](std::size_t row) {
    const double n = grid.centre_northing_m(static_cast<int>(row));
    for (int col = 0; col < grid.columns; ++col) {
      LatLon p;
      try {
        p = utm_reverse(grid.zone, grid.centre_easting_m(col), n);
      } catch (const InputError&) {  // beyond the zone's reach: no probability there
        out.mass[row * static_cast<std::size_t>(grid.columns) + col] =
            -std::numeric_limits<double>::infinity();
        continue;
      }
      out.mass[row * static_cast<std::size_t>(grid.columns) + col] =
          log_likelihood(terms, smear, wild_fraction, [&](std::size_t i) {
            const Bearing& b = bearings[fix.bearings[i].index];
            const GeodesicLine12 g = geodesic_inverse({b.lat_deg, b.lon_deg}, p);
            return std::pair<double, double>{g.azi1_deg * kDeg, g.s12_m};
          });
    }
  });
  out.cells_evaluated = grid.size();
  normalise_log_mass(out.mass);
  out.ok = true;
  return out;
}

long grid_cell_of(const UtmGrid& grid, double easting_m, double northing_m) {
  const double x = (easting_m - grid.west_m) / grid.cell_m;
  const double y = (grid.north_m - northing_m) / grid.cell_m;
  if (!(x >= 0.0 && y >= 0.0 && x < grid.columns && y < grid.rows))
    return -1;
  return static_cast<long>(y) * grid.columns + static_cast<long>(x);
}

}  // namespace lobfix
