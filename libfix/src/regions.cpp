// Highest-posterior-density regions (docs/search-area.md): cells sorted by probability,
// taken in until the target is reached (Box and Tiao 1973, "Bayesian Inference in
// Statistical Analysis", section 2.8: the HPD region is the set where the density exceeds a
// level chosen for the probability [memory]); outlines traced along cell edges.
#include "lobfix/regions.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>

#include "detail/cell_polygons.hpp"
#include "lobfix/error.hpp"
#include "lobfix/geodesy.hpp"

namespace lobfix {

namespace {

constexpr double kPi = 3.14159265358979323846;

void check_probability(double p) {
  if (!(p > 0.0 && p < 1.0))
    throw InputError({"", 0, 0, "hpd", "a region's probability must be between 0 and 1"});
}

Path ring_to_geo(const UtmGrid& grid, const std::vector<detail::Corner>& ring) {
  Path out;
  out.reserve(ring.size());
  const double south = grid.north_m - grid.rows * grid.cell_m;
  double previous_lon = 0.0;
  for (std::size_t i = 0; i < ring.size(); ++i) {
    LatLon p = utm_reverse(grid.zone, grid.west_m + ring[i].x * grid.cell_m,
                           south + ring[i].y * grid.cell_m);
    if (i > 0)
      p.lon_deg = previous_lon + wrap_deg180(p.lon_deg - previous_lon);  // continuous
    previous_lon = p.lon_deg;
    out.push_back(p);
  }
  return out;
}

}  // namespace

std::vector<char> hpd_cells(const PosteriorMap& map, double probability, double& mass,
                            long& cells) {
  check_probability(probability);
  // The cells of highest probability taken in until the target: in effect a sort by
  // probability, done as a histogram of log-probability (one pass) and a sort of the one
  // bin where the target is reached; ties go by cell index.
  std::vector<char> inside(map.mass.size(), 0);
  mass = 0.0;
  cells = 0;
  double top = 0.0;
  for (const double m : map.mass)
    top = std::max(top, m);
  if (!(top > 0.0))
    return inside;
  constexpr int kBins = 8192;
  constexpr double kDecades = 40.0;  // below top * 1e-40 a cell never matters
  const double log_top = std::log10(top);
  const auto bin_of = [&](double m) {
    if (!(m > 0.0))
      return kBins;  // never taken
    const double b = (log_top - std::log10(m)) / kDecades * kBins;
    return b >= kBins ? kBins : static_cast<int>(b);
  };
  std::vector<double> bin_mass(kBins + 1, 0.0);
  for (const double m : map.mass)
    bin_mass[static_cast<std::size_t>(bin_of(m))] += m;
  int last = 0;
  double above = 0.0;  // mass of the bins before `last`
  while (last < kBins && above + bin_mass[static_cast<std::size_t>(last)] < probability) {
    above += bin_mass[static_cast<std::size_t>(last)];
    ++last;
  }
  std::vector<std::size_t> edge;  // cells of the bin that reaches the target
  for (std::size_t k = 0; k < map.mass.size(); ++k) {
    const int b = bin_of(map.mass[k]);
    if (b < last) {
      inside[k] = 1;
      mass += map.mass[k];
      ++cells;
    } else if (b == last && b < kBins) {
      edge.push_back(k);
    }
  }
  std::sort(edge.begin(), edge.end(), [&](std::size_t a, std::size_t b) {
    const double ma = map.mass[a];
    const double mb = map.mass[b];
    if (ma != mb)
      return ma > mb;
    return a < b;  // ties by cell index
  });
  for (const std::size_t k : edge) {
    if (mass >= probability)
      break;
    inside[k] = 1;
    mass += map.mass[k];
    ++cells;
  }
  return inside;
}

std::vector<GeoPolygon> outline_cells(const UtmGrid& grid, const std::vector<char>& inside) {
  std::vector<GeoPolygon> out;
  for (const detail::CellPolygon& p : detail::trace_cells(inside, grid.columns, grid.rows)) {
    GeoPolygon g;
    g.outer = ring_to_geo(grid, p.outer);
    for (const std::vector<detail::Corner>& h : p.holes)
      g.holes.push_back(ring_to_geo(grid, h));
    out.push_back(std::move(g));
  }
  return out;
}

std::vector<HpdRegion> hpd_regions(const PosteriorMap& map,
                                   const std::vector<double>& probabilities) {
  for (const double p : probabilities)
    check_probability(p);
  std::vector<HpdRegion> out;
  if (!map.ok)
    return out;
  for (const double p : probabilities) {
    HpdRegion r;
    r.probability = p;
    const std::vector<char> inside = hpd_cells(map, p, r.mass, r.cells);
    r.area_m2 = static_cast<double>(r.cells) * map.cell_area_m2;
    for (std::size_t k = 0; k < inside.size(); ++k) {
      if (inside[k] && (r.threshold == 0.0 || map.mass[k] < r.threshold))
        r.threshold = map.mass[k];
    }
    r.parts = outline_cells(map.grid, inside);
    out.push_back(std::move(r));
  }
  return out;
}

double map_mass_in_ellipse(const PosteriorMap& map, const Fix& fix, const Ellipse& ellipse) {
  if (!map.ok || !(ellipse.semi_major_m > 0.0) || !(ellipse.semi_minor_m > 0.0))
    return 0.0;
  // Cells near the fix: the map is small against the Earth, so the ground offsets of a cell
  // from the fix are its grid offsets rotated by the convergence and divided by the scale.
  const UtmPoint c = utm_forward(map.grid.zone, fix.position);
  const double gamma = c.convergence_deg * kPi / 180.0;
  const double theta = ellipse.orientation_deg * kPi / 180.0;
  const double ue = std::sin(theta);  // unit vector of the major axis (east, north)
  const double un = std::cos(theta);
  double mass = 0.0;
  for (int row = 0; row < map.grid.rows; ++row) {
    const double dn_grid = map.grid.centre_northing_m(row) - c.northing_m;
    for (int col = 0; col < map.grid.columns; ++col) {
      const double m = map.mass[static_cast<std::size_t>(row) * map.grid.columns + col];
      if (m <= 0.0)
        continue;
      const double de_grid = map.grid.centre_easting_m(col) - c.easting_m;
      // Grid north lies gamma east of true north: rotate grid offsets by +gamma.
      const double de = (de_grid * std::cos(gamma) + dn_grid * std::sin(gamma)) / c.scale;
      const double dn = (-de_grid * std::sin(gamma) + dn_grid * std::cos(gamma)) / c.scale;
      const double along = de * ue + dn * un;
      const double across = -de * un + dn * ue;
      const double a = along / ellipse.semi_major_m;
      const double b = across / ellipse.semi_minor_m;
      if (a * a + b * b <= 1.0)
        mass += m;
    }
  }
  return mass;
}

RegionComparison compare_with_ellipse(const PosteriorMap& map, const Fix& fix,
                                      const Ellipse& ellipse, const HpdRegion& region) {
  RegionComparison r;
  r.probability = ellipse.probability;
  r.ellipse_area_m2 = kPi * ellipse.semi_major_m * ellipse.semi_minor_m;
  r.region_area_m2 = region.area_m2;
  r.map_mass_in_ellipse = map_mass_in_ellipse(map, fix, ellipse);
  const double ratio = r.ellipse_area_m2 > 0.0 ? r.region_area_m2 / r.ellipse_area_m2 : 0.0;
  r.agree = std::fabs(r.map_mass_in_ellipse - ellipse.probability) <= 0.03 && ratio >= 0.8 &&
            ratio <= 1.25;
  const int pct = static_cast<int>(std::lround(ellipse.probability * 100.0));
  char buf[320];
  if (r.agree) {
    std::snprintf(buf, sizeof buf,
                  "The %d%% ellipse and the %d%% region of the probability map agree (the map "
                  "puts %.1f%% inside the ellipse): either may be used.",
                  pct, pct, 100.0 * r.map_mass_in_ellipse);
  } else {
    std::snprintf(buf, sizeof buf,
                  "The %d%% ellipse is a poor summary here (the probability map puts "
                  "%.1f%% inside it, and its region is %.2f times the ellipse's area): trust "
                  "the probability map's region and the search segments, not the ellipse.",
                  pct, 100.0 * r.map_mass_in_ellipse, ratio);
  }
  r.advice = buf;
  return r;
}

}  // namespace lobfix
