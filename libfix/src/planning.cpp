// Planning: Fisher information of bearings, the Cramer-Rao bound, the coverage map and the
// next-bearing ranking (docs/planning.md).
//
// Notation (Karney 2013, J. Geodesy 87:43-55): station = point 1, transmitter = point 2; azi2
// the geodesic's azimuth at the transmitter; m12 its reduced length. g = (cos azi2,
// -sin azi2) / m12 is the gradient of the station's azimuth (rad) with respect to the
// transmitter's east/north position (m); J = sum g g^T / sigma^2 (Fisher information, 1/m^2);
// the Cramer-Rao bound is J^-1 (Torrieri 1984, IEEE Trans. AES 20(2):183-198, on the plane).
#include "lobfix/planning.hpp"

#include "detail/azimuth_field.hpp"

#include <algorithm>
#include <array>
#include <atomic>
#include <cmath>
#include <cstdio>
#include <limits>
#include <map>
#include <thread>
#include <utility>

#include "lobfix/error.hpp"

namespace lobfix {

namespace {

constexpr double kPi = 3.14159265358979323846;
constexpr double kDegToRad = kPi / 180.0;
// Closer than this (m) to a station, its azimuth is undefined: no information.
constexpr double kMinReducedLengthM = 1.0;
// The coverage map's interpolated geodesics: azi2 within 1e-5 rad (0.0006 deg) and m12, s12
// within 1e-5 of GeographicLib at the check points (an error of 1e-5 in the information
// gives about 1e-5 in the CEP).
constexpr double kFieldAzimuthToleranceRad = 1e-5;
constexpr double kFieldRelativeTolerance = 1e-5;

// Information matrix of one bearing, from azi2 (deg) and m12 (m), of 1-sigma sigma_rad.
Covariance2 information_of(double azi2_deg, double m12_m, double sigma_rad) {
  const double ge = std::cos(azi2_deg * kDegToRad) / m12_m;
  const double gn = -std::sin(azi2_deg * kDegToRad) / m12_m;
  const double w = 1.0 / (sigma_rad * sigma_rad);
  return {{{w * ge * ge, w * ge * gn}, {w * ge * gn, w * gn * gn}}};
}

void add_to(Covariance2& sum, const Covariance2& m, double weight = 1.0) {
  for (int r = 0; r < 2; ++r)
    for (int c = 0; c < 2; ++c)
      sum[r][c] += weight * m[r][c];
}

double det2(const Covariance2& m) {
  return m[0][0] * m[1][1] - m[0][1] * m[1][0];
}

// The angle between two lines of directions a and b (deg), folded into [0, 90].
double line_crossing_deg(double a_deg, double b_deg) {
  double d = std::fmod(std::fabs(angle_diff_deg(a_deg, b_deg)), 180.0);
  if (d > 90.0)
    d = 180.0 - d;
  return d;
}

void check_station(const PlannedStation& s, const std::string& field) {
  if (!(s.sigma_deg > 0.0 && s.sigma_deg <= 90.0))
    throw InputError({"", 0, 0, field, "station '" + s.name + "' needs a sigma in (0, 90] deg"});
  if (s.max_range_m && !(*s.max_range_m > 0.0 && std::isfinite(*s.max_range_m)))
    throw InputError(
        {"", 0, 0, field, "station '" + s.name + "' has a range that is not positive"});
  if (!(std::fabs(s.position.lat_deg) <= 90.0 && std::isfinite(s.position.lon_deg)))
    throw InputError({"", 0, 0, field, "station '" + s.name + "' has no valid position"});
}

// circular_radius(diag(1, r^2), 0.5) at r = i / kCepTableSteps for i = -1 .. steps + 1, in
// t[i + 1]. The function is even in r and smooth through r = 1, so the nodes at -1/steps and
// 1 + 1/steps only complete the stencil of the cubic at the ends. Built once, on first use
// (257 + 2 quadratures, about 0.2 s).
constexpr int kCepTableSteps = 256;
const std::vector<double>& cep_table() {
  static const std::vector<double> table = [] {
    std::vector<double> t(kCepTableSteps + 3);
    for (std::size_t k = 0; k < t.size(); ++k) {
      const double r = (static_cast<double>(k) - 1.0) / kCepTableSteps;  // node k - 1
      t[k] = circular_radius({{{1.0, 0.0}, {0.0, r * r}}}, 0.5);
    }
    return t;
  }();
  return table;
}

// Eigenvalues of a symmetric 2x2 matrix, larger first.
std::pair<double, double> eigenvalues2(const Covariance2& m) {
  const double a = m[0][0];
  const double d = m[1][1];
  const double b = 0.5 * (m[0][1] + m[1][0]);
  const double mean = 0.5 * (a + d);
  const double h = std::hypot(0.5 * (a - d), b);
  return {mean + h, mean - h};
}

}  // namespace

BearingInformation bearing_information(const LatLon& station, double sigma_deg,
                                       const LatLon& transmitter,
                                       std::optional<double> max_range_m) {
  BearingInformation out;
  GeodesicLine12 line;
  if (max_range_m) {
    line = geodesic_inverse(station, transmitter);
    out.range_m = line.s12_m;
    if (line.s12_m > *max_range_m)
      return out;
  } else {
    line = geodesic_inverse_azimuths(station, transmitter);
  }
  out.azimuth_at_transmitter_deg = line.azi2_deg;
  if (!(line.m12_m >= kMinReducedLengthM) || !(sigma_deg > 0.0))
    return out;
  out.information = information_of(line.azi2_deg, line.m12_m, sigma_deg * kDegToRad);
  out.usable = true;
  return out;
}

std::optional<Covariance2> invert2(const Covariance2& m) {
  const double scale =
      std::max({std::fabs(m[0][0]), std::fabs(m[0][1]), std::fabs(m[1][0]), std::fabs(m[1][1])});
  const double det = det2(m);
  if (!std::isfinite(det) || !(scale > 0.0) || !(std::fabs(det) > 1e-12 * scale * scale))
    return std::nullopt;
  return Covariance2{{{m[1][1] / det, -m[0][1] / det}, {-m[1][0] / det, m[0][0] / det}}};
}

std::string PlanningOptions::validate() const {
  if (!(min_crossing_deg >= 0.0 && min_crossing_deg < 90.0))
    return "the minimum crossing angle must be in [0, 90) deg";
  if (num_threads < 0)
    return "the thread count must be 0 or more";
  return "";
}

double fast_cep_m(const Covariance2& cov) {
  const auto [l1, l2] = eigenvalues2(cov);
  if (!std::isfinite(l1) || !std::isfinite(l2) || l2 < -1e-9 * std::fabs(l1))
    return std::numeric_limits<double>::quiet_NaN();
  if (!(l1 > 0.0))
    return 0.0;
  const double r = std::sqrt(std::max(l2, 0.0) / l1);
  // Cubic Lagrange interpolation through the four nodes around r.
  const std::vector<double>& t = cep_table();
  const double x = r * kCepTableSteps;
  const int i = std::min(static_cast<int>(x), kCepTableSteps - 1);
  const double f = x - i;
  const std::size_t k = static_cast<std::size_t>(i) + 1;  // node i is t[i + 1]
  const double ym = t[k - 1], y0 = t[k], y1 = t[k + 1], y2 = t[k + 2];
  const double value = -f * (f - 1.0) * (f - 2.0) / 6.0 * ym +
                       (f + 1.0) * (f - 1.0) * (f - 2.0) / 2.0 * y0 -
                       (f + 1.0) * f * (f - 2.0) / 2.0 * y1 + (f + 1.0) * f * (f - 1.0) / 6.0 * y2;
  return std::sqrt(l1) * value;
}

namespace {

// The bound at one point, from precomputed station data. `units` holds, per usable bearing,
// the unit vector of its line of sight (for the crossing test).
/// The bound from each station's (azi2_deg, m12_m) at the transmitter as `line_of(i)` gives
/// them (nullopt: out of range).
template <class LineOf>
CramerRao bound_from(const std::vector<PlannedStation>& stations, double min_sin_crossing,
                     std::vector<std::array<double, 2>>& units, const LineOf& line_of) {
  CramerRao out;
  units.clear();
  for (std::size_t i = 0; i < stations.size(); ++i) {
    const std::optional<std::pair<double, double>> line = line_of(i);
    if (!line || !(line->second >= kMinReducedLengthM) || !(stations[i].sigma_deg > 0.0))
      continue;
    add_to(out.information,
           information_of(line->first, line->second, stations[i].sigma_deg * kDegToRad));
    const double a = line->first * kDegToRad;
    units.push_back({std::sin(a), std::cos(a)});
  }
  out.stations_in_range = static_cast<int>(units.size());
  double max_sin = 0.0;
  for (std::size_t i = 0; i < units.size(); ++i) {
    for (std::size_t j = i + 1; j < units.size(); ++j) {
      max_sin = std::max(max_sin, std::fabs(units[i][0] * units[j][1] - units[i][1] * units[j][0]));
    }
  }
  out.max_crossing_deg = std::asin(std::min(max_sin, 1.0)) / kDegToRad;
  if (out.stations_in_range < 2 || max_sin < min_sin_crossing || max_sin == 0.0)
    return out;
  const std::optional<Covariance2> cov = invert2(out.information);
  if (!cov)
    return out;
  out.covariance = *cov;
  out.usable = true;
  out.rms_m = std::sqrt((*cov)[0][0] + (*cov)[1][1]);
  return out;
}

CramerRao bound_at(const std::vector<PlannedStation>& stations, const LatLon& transmitter,
                   double min_sin_crossing, std::vector<std::array<double, 2>>& units) {
  return bound_from(stations, min_sin_crossing, units,
                    [&](std::size_t i) -> std::optional<std::pair<double, double>> {
                      const PlannedStation& s = stations[i];
                      const GeodesicLine12 g =
                          s.max_range_m ? geodesic_inverse(s.position, transmitter)
                                        : geodesic_inverse_azimuths(s.position, transmitter);
                      if (s.max_range_m && g.s12_m > *s.max_range_m)
                        return std::nullopt;
                      return std::pair<double, double>{g.azi2_deg, g.m12_m};
                    });
}

}  // namespace

CramerRao cramer_rao(const std::vector<PlannedStation>& stations, const LatLon& transmitter,
                     const PlanningOptions& options) {
  if (const std::string why = options.validate(); !why.empty())
    throw InputError({"", 0, 0, "min-crossing", why});
  for (const PlannedStation& s : stations)
    check_station(s, "stations");
  std::vector<std::array<double, 2>> units;
  CramerRao out =
      bound_at(stations, transmitter, std::sin(options.min_crossing_deg * kDegToRad), units);
  if (out.usable)
    out.cep_m = circular_radius(out.covariance, 0.5);
  return out;
}

UtmGrid grid_around(const std::vector<PlannedStation>& stations, double margin_m, double cell_m,
                    std::size_t max_cells) {
  if (stations.empty())
    throw InputError({"", 0, 0, "grid", "a map needs at least one station"});
  if (!(margin_m >= 0.0 && std::isfinite(margin_m)) || !(cell_m > 0.0 && std::isfinite(cell_m)))
    throw InputError({"", 0, 0, "grid", "the margin must be 0 or more and the cell positive"});
  double lat_sum = 0.0, x_sum = 0.0, y_sum = 0.0;
  for (const PlannedStation& s : stations) {
    lat_sum += s.position.lat_deg;
    x_sum += std::cos(s.position.lon_deg * kDegToRad);
    y_sum += std::sin(s.position.lon_deg * kDegToRad);
  }
  const LatLon mean{lat_sum / static_cast<double>(stations.size()),
                    std::atan2(y_sum, x_sum) / kDegToRad};
  UtmGrid grid;
  grid.zone = utm_zone_of(mean);
  double west = std::numeric_limits<double>::infinity();
  double east = -west, south = west, north = -west;
  for (const PlannedStation& s : stations) {
    const UtmPoint p = utm_forward(grid.zone, s.position);
    west = std::min(west, p.easting_m);
    east = std::max(east, p.easting_m);
    south = std::min(south, p.northing_m);
    north = std::max(north, p.northing_m);
  }
  grid.cell_m = cell_m;
  grid.west_m = std::floor((west - margin_m) / cell_m) * cell_m;
  grid.north_m = std::ceil((north + margin_m) / cell_m) * cell_m;
  const double columns = std::max(1.0, std::ceil((east + margin_m - grid.west_m) / cell_m));
  const double rows = std::max(1.0, std::ceil((grid.north_m - (south - margin_m)) / cell_m));
  if (columns * rows > static_cast<double>(max_cells)) {
    char text[160];
    std::snprintf(text, sizeof text,
                  "the map would have %.0f x %.0f cells, more than %zu: use larger cells or a "
                  "smaller margin",
                  columns, rows, max_cells);
    throw InputError({"", 0, 0, "grid", text});
  }
  grid.columns = static_cast<int>(columns);
  grid.rows = static_cast<int>(rows);
  return grid;
}

CoverageMap coverage_map(const std::vector<PlannedStation>& stations, const UtmGrid& grid,
                         const PlanningOptions& options) {
  if (const std::string why = options.validate(); !why.empty())
    throw InputError({"", 0, 0, "min-crossing", why});
  if (stations.empty())
    throw InputError({"", 0, 0, "stations", "a coverage map needs at least one station"});
  for (const PlannedStation& s : stations)
    check_station(s, "stations");
  if (grid.columns <= 0 || grid.rows <= 0 || !(grid.cell_m > 0.0))
    throw InputError({"", 0, 0, "grid", "the grid has no cells"});
  (void)cep_table();  // built once, before the threads share it

  CoverageMap out;
  out.grid = grid;
  out.cep_m.assign(grid.size(), std::numeric_limits<float>::quiet_NaN());
  const double min_sin = std::sin(options.min_crossing_deg * kDegToRad);
  std::atomic<int> next_row{0};
  std::atomic<int> rows_done{0};
  std::atomic<std::size_t> usable{0};

  // Each station's geodesics to every cell come from an interpolated field
  // (detail/azimuth_field.hpp), checked against GeographicLib at its check points; a map
  // reaching beyond the zone falls back to exact geodesics cell by cell.
  std::vector<detail::FarEndField> fields;
  try {
    detail::LatticeNodes lattice(grid);
    for (const PlannedStation& s : stations) {
      fields.emplace_back(s.position, lattice, kFieldAzimuthToleranceRad, kFieldRelativeTolerance);
      out.max_azimuth_error_deg =
          std::max(out.max_azimuth_error_deg, fields.back().max_azimuth_error_rad() / kDegToRad);
      out.max_relative_error = std::max(out.max_relative_error, fields.back().max_relative_error());
    }
  } catch (const InputError&) {
    fields.clear();
    out.max_azimuth_error_deg = out.max_relative_error = 0.0;
  }
  const bool fast = !fields.empty();
  const auto work = [&](bool report) {
    std::vector<std::array<double, 2>> units;
    std::size_t my_usable = 0;
    for (int row = next_row++; row < grid.rows; row = next_row++) {
      const double northing = grid.centre_northing_m(row);
      for (int col = 0; col < grid.columns; ++col) {
        const double easting = grid.centre_easting_m(col);
        CramerRao b;
        if (fast) {
          b = bound_from(stations, min_sin, units,
                         [&](std::size_t i) -> std::optional<std::pair<double, double>> {
                           const detail::FarEndField::Value v = fields[i].at(easting, northing);
                           if (stations[i].max_range_m && v.s12_m > *stations[i].max_range_m)
                             return std::nullopt;
                           return std::pair<double, double>{v.azi2_rad / kDegToRad, v.m12_m};
                         });
        } else {
          LatLon cell;
          try {
            cell = utm_reverse(grid.zone, easting, northing);
          } catch (const InputError&) {
            continue;  // beyond the zone's reach: no data
          }
          b = bound_at(stations, cell, min_sin, units);
        }
        if (!b.usable)
          continue;
        const double cep = fast_cep_m(b.covariance);
        if (!std::isfinite(cep))
          continue;
        out.cep_m[static_cast<std::size_t>(row) * static_cast<std::size_t>(grid.columns) +
                  static_cast<std::size_t>(col)] = static_cast<float>(cep);
        ++my_usable;
      }
      const int done = ++rows_done;
      if (report && options.progress)
        options.progress(static_cast<std::size_t>(done), static_cast<std::size_t>(grid.rows));
    }
    usable += my_usable;
  };

  unsigned threads = options.num_threads > 0 ? static_cast<unsigned>(options.num_threads)
                                             : std::max(1u, std::thread::hardware_concurrency());
  threads = std::min<unsigned>(threads, static_cast<unsigned>(grid.rows));
  std::vector<std::thread> pool;
  for (unsigned t = 1; t < threads; ++t)
    pool.emplace_back(work, false);
  work(true);
  for (std::thread& t : pool)
    t.join();
  if (options.progress)
    options.progress(static_cast<std::size_t>(grid.rows), static_cast<std::size_t>(grid.rows));
  out.usable_cells = usable;
  return out;
}

std::vector<TeamPosition> last_positions(const std::vector<Bearing>& bearings) {
  std::vector<TeamPosition> out;
  std::map<std::string, std::pair<std::size_t, std::int64_t>> where;  // team -> (slot, time)
  for (const Bearing& b : bearings) {
    const LatLon p{b.lat_deg, b.lon_deg};
    const auto it = where.find(b.station);
    if (it == where.end()) {
      where.emplace(b.station, std::make_pair(out.size(), b.time_unix_ns));
      out.push_back({b.station, p});
    } else if (b.time_unix_ns >= it->second.second) {
      it->second.second = b.time_unix_ns;
      out[it->second.first].position = p;
    }
  }
  return out;
}

std::vector<CandidateSpot> ring_candidates(const std::vector<TeamPosition>& teams, double travel_m,
                                           int rings, int points_per_ring) {
  if (!(travel_m > 0.0 && std::isfinite(travel_m)) || rings < 1 || rings > 100 ||
      points_per_ring < 1 || points_per_ring > 3600) {
    throw InputError({"", 0, 0, "travel",
                      "rings need a travel distance above 0, 1 to 100 rings and 1 to 3600 "
                      "spots per ring"});
  }
  std::vector<CandidateSpot> out;
  for (const TeamPosition& t : teams) {
    out.push_back({t.team + "/here", t.position, t.team, 0.0, {}});
    for (int k = 1; k <= rings; ++k) {
      const double r_m = travel_m * k / rings;
      for (int j = 0; j < points_per_ring; ++j) {
        const double az = 360.0 * j / points_per_ring;
        char name[64];
        std::snprintf(name, sizeof name, "/%.2fkm/%05.1f", r_m / 1000.0, az);
        out.push_back({t.team + name, geodesic_direct(t.position, az, r_m).point, t.team, r_m, {}});
      }
    }
  }
  return out;
}

void assign_nearest_team(std::vector<CandidateSpot>& spots,
                         const std::vector<TeamPosition>& teams) {
  if (teams.empty())
    return;
  for (CandidateSpot& s : spots) {
    const auto named = std::find_if(teams.begin(), teams.end(),
                                    [&](const TeamPosition& t) { return t.team == s.team; });
    if (!s.team.empty() && named != teams.end()) {
      s.distance_m = geodesic_inverse(named->position, s.position).s12_m;
      continue;
    }
    double best = std::numeric_limits<double>::infinity();
    for (const TeamPosition& t : teams) {
      const double d = geodesic_inverse(t.position, s.position).s12_m;
      if (d < best) {
        best = d;
        s.team = t.team;
      }
    }
    s.distance_m = best;
  }
}

std::string NextBearingOptions::validate() const {
  if (!(sigma_deg > 0.0 && sigma_deg <= 90.0))
    return "the next bearing's sigma must be in (0, 90] deg";
  if (!(probability > 0.0 && probability < 1.0))
    return "the probability must be between 0 and 1";
  if (!(min_range_m >= 0.0 && std::isfinite(min_range_m)))
    return "the minimum range must be 0 or more";
  return "";
}

NextBearingPlan rank_next_bearings(const Fix& fix, const std::vector<Bearing>& bearings,
                                   const std::vector<CandidateSpot>& spots,
                                   const NextBearingOptions& options) {
  if (const std::string why = options.validate(); !why.empty())
    throw InputError({"", 0, 0, "next", why});
  if (!fix.ok())
    throw InputError({"", 0, 0, "fix", "there is no fix to improve: " + fix.message});
  const Covariance2& c = fix.covariance_en_m2;
  const std::optional<Covariance2> c_inv = invert2(c);
  if (!c_inv || !(c[0][0] > 0.0) || !(det2(c) > 0.0))
    throw InputError({"", 0, 0, "fix", "the fix has no usable covariance"});
  const double k2 = -2.0 * std::log(1.0 - options.probability);

  // Sigma points of N(fix, C): Cholesky factor L, points mean +- sqrt(n + kappa) L_j.
  const double l11 = std::sqrt(c[0][0]);
  const double l21 = c[1][0] / l11;
  const double l22 = std::sqrt(std::max(c[1][1] - l21 * l21, 0.0));
  const double s = std::sqrt(3.0);
  const std::array<std::array<double, 2>, 5> offsets{
      {{0.0, 0.0}, {s * l11, s * l21}, {-s * l11, -s * l21}, {0.0, s * l22}, {0.0, -s * l22}}};
  const std::array<double, 5> weights{1.0 / 3.0, 1.0 / 6.0, 1.0 / 6.0, 1.0 / 6.0, 1.0 / 6.0};
  std::array<LatLon, 5> points{};
  for (std::size_t k = 0; k < points.size(); ++k)
    points[k] = local_to_geo(fix.position, offsets[k][0], offsets[k][1]).point;

  // Directions of the existing lines at the fix.
  std::vector<double> existing_deg;
  for (const BearingFit& bf : fix.bearings) {
    if (bf.index >= bearings.size() || bf.weight <= 0.0)
      continue;
    const Bearing& b = bearings[bf.index];
    existing_deg.push_back(
        geodesic_inverse_azimuths({b.lat_deg, b.lon_deg}, fix.position).azi2_deg);
  }

  NextBearingPlan plan;
  plan.current_area_m2 = kPi * k2 * std::sqrt(det2(c));
  plan.current_cep_m = circular_radius(c, 0.5);
  for (const CandidateSpot& spot : spots) {
    const GeodesicLine12 to_fix = geodesic_inverse(spot.position, fix.position);
    if (to_fix.s12_m < options.min_range_m) {
      char text[160];
      std::snprintf(text, sizeof text, "%s: %.0f m from the fix, too near for a bearing",
                    spot.name.c_str(), to_fix.s12_m);
      plan.refused.emplace_back(text);
      continue;
    }
    Covariance2 j_new{};
    for (std::size_t k = 0; k < points.size(); ++k) {
      const BearingInformation bi =
          bearing_information(spot.position, options.sigma_deg, points[k]);
      if (bi.usable)
        add_to(j_new, bi.information, weights[k]);
    }
    Covariance2 j_post = *c_inv;
    add_to(j_post, j_new);
    const std::optional<Covariance2> c_post = invert2(j_post);
    RankedSpot r;
    r.spot = spot;
    r.range_m = to_fix.s12_m;
    r.azimuth_deg = wrap_deg360(to_fix.azi1_deg);
    const Covariance2 cp = c_post ? *c_post : c;
    r.predicted_area_m2 = kPi * k2 * std::sqrt(std::max(det2(cp), 0.0));
    r.predicted_cep_m = fast_cep_m(cp);
    for (const double e : existing_deg)
      r.crossing_deg = std::max(r.crossing_deg, line_crossing_deg(to_fix.azi2_deg, e));
    r.mgrs = mgrs_reference(spot.position, 4);
    plan.ranked.push_back(std::move(r));
  }
  std::stable_sort(plan.ranked.begin(), plan.ranked.end(),
                   [](const RankedSpot& a, const RankedSpot& b) {
                     if (a.predicted_area_m2 != b.predicted_area_m2)
                       return a.predicted_area_m2 < b.predicted_area_m2;
                     return a.spot.distance_m < b.spot.distance_m;
                   });
  for (std::size_t i = 0; i < plan.ranked.size(); ++i)
    plan.ranked[i].rank = static_cast<int>(i) + 1;
  return plan;
}

}  // namespace lobfix
