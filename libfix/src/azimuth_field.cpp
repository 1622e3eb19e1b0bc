// Fast geodesic azimuths over a map: see detail/azimuth_field.hpp for the notation.
#include "detail/azimuth_field.hpp"

#include <algorithm>
#include <cmath>

#include "lobfix/error.hpp"

namespace lobfix::detail {

namespace {

constexpr double kPi = 3.14159265358979323846;
constexpr double kDeg = kPi / 180.0;

double wrap_pi(double a) {
  a = std::remainder(a, 2.0 * kPi);
  return a <= -kPi ? a + 2.0 * kPi : a;
}

/// Bilinear interpolation in an n x n lattice of values (row-major from the south-west) at
/// lattice coordinates (x, y), clamped to the lattice.
double bilinear(const std::vector<double>& v, int n, double x, double y) {
  x = std::clamp(x, 0.0, n - 1.0);
  y = std::clamp(y, 0.0, n - 1.0);
  const int i = std::min(static_cast<int>(x), n - 2);
  const int j = std::min(static_cast<int>(y), n - 2);
  const double fx = x - i;
  const double fy = y - j;
  const std::size_t k =
      static_cast<std::size_t>(j) * static_cast<std::size_t>(n) + static_cast<std::size_t>(i);
  const std::size_t up = static_cast<std::size_t>(n);
  return (1 - fy) * ((1 - fx) * v[k] + fx * v[k + 1]) +
         fy * ((1 - fx) * v[k + up] + fx * v[k + up + 1]);
}

}  // namespace

LatticeNodes::LatticeNodes(const UtmGrid& grid)
    : zone_(grid.zone),
      west_(grid.west_m),
      south_(grid.north_m - grid.rows * grid.cell_m),
      width_(grid.columns * grid.cell_m),
      height_(grid.rows * grid.cell_m) {}

const std::vector<LatLon>& LatticeNodes::nodes(int n) {
  if (static_cast<int>(by_n_.size()) <= n)
    by_n_.resize(static_cast<std::size_t>(n) + 1);
  std::vector<LatLon>& v = by_n_[static_cast<std::size_t>(n)];
  if (v.empty()) {
    v.reserve(static_cast<std::size_t>(n) * static_cast<std::size_t>(n));
    for (int j = 0; j < n; ++j) {
      for (int i = 0; i < n; ++i) {
        v.push_back(geographic(west_ + i * width_ / (n - 1), south_ + j * height_ / (n - 1)));
      }
    }
  }
  return v;
}

LatLon LatticeNodes::geographic(double easting_m, double northing_m) const {
  return utm_reverse(zone_, easting_m, northing_m);
}

AzimuthField::AzimuthField(const LatLon& station, LatticeNodes& lattice, double tolerance_rad)
    : west_(lattice.west()), south_(lattice.south()) {
  double convergence_rad = 0.0;
  try {
    const UtmPoint u = utm_forward(lattice.zone(), station);
    planar_ = true;
    station_e_ = u.easting_m;
    station_n_ = u.northing_m;
    convergence_rad = u.convergence_deg * kDeg;
  } catch (const InputError&) {
    planar_ = false;  // beyond the zone's reach: interpolate the azimuth itself
  }
  const LatLon centre =
      lattice.geographic(west_ + 0.5 * lattice.width(), south_ + 0.5 * lattice.height());
  far_distance_m_ = geodesic_inverse(station, centre).s12_m;

  // The exact correction at one point: alpha - t (planar) or alpha unwrapped near `ref`.
  const auto exact_c = [&](const LatLon& p, double e, double n, double ref) {
    const double alpha = geodesic_inverse_azimuths(station, p).azi1_deg * kDeg;
    if (planar_) {
      const double de = e - station_e_;
      const double dn = n - station_n_;
      if (std::hypot(de, dn) < 1e-3)
        return convergence_rad;  // the limit at the station: grid north is gamma east of true
      return wrap_pi(alpha - std::atan2(de, dn));
    }
    return ref + wrap_pi(alpha - ref);
  };

  for (n_ = 5;; n_ = 2 * n_ - 1) {
    const std::vector<LatLon>& nodes = lattice.nodes(n_);
    step_e_ = lattice.width() / (n_ - 1);
    step_n_ = lattice.height() / (n_ - 1);
    c_.assign(nodes.size(), 0.0);
    double ref = 0.0;
    for (int j = 0; j < n_; ++j) {
      for (int i = 0; i < n_; ++i) {
        const std::size_t k = static_cast<std::size_t>(j) * static_cast<std::size_t>(n_) +
                              static_cast<std::size_t>(i);
        c_[k] = exact_c(nodes[k], west_ + i * step_e_, south_ + j * step_n_, ref);
        ref = c_[k];  // unwrap along the lattice (far stations: a smooth, small range)
      }
    }
    // Check at the centres of the lattice's cells (all of them up to 8 x 8, else an even
    // sample of 64), where bilinear interpolation is worst.
    const int cells = n_ - 1;
    const int stride = std::max(1, cells / 8);
    max_error_rad_ = 0.0;
    for (int j = stride / 2; j < cells; j += stride) {
      for (int i = stride / 2; i < cells; i += stride) {
        const double e = west_ + (i + 0.5) * step_e_;
        const double n = south_ + (j + 0.5) * step_n_;
        const LatLon p = lattice.geographic(e, n);
        const double exact = geodesic_inverse_azimuths(station, p).azi1_deg * kDeg;
        const double error = std::fabs(wrap_pi(azimuth_rad(e, n) - exact));
        max_error_rad_ = std::max(max_error_rad_, error);
      }
    }
    if (max_error_rad_ <= tolerance_rad || n_ >= 129)
      break;
  }
}

double AzimuthField::correction(double easting_m, double northing_m) const {
  return bilinear(c_, n_, (easting_m - west_) / step_e_, (northing_m - south_) / step_n_);
}

double AzimuthField::azimuth_rad(double easting_m, double northing_m) const {
  const double c = correction(easting_m, northing_m);
  if (!planar_)
    return c;
  return std::atan2(easting_m - station_e_, northing_m - station_n_) + c;
}

double AzimuthField::distance_m(double easting_m, double northing_m) const {
  if (!planar_)
    return far_distance_m_;
  return std::hypot(easting_m - station_e_, northing_m - station_n_);
}

FarEndField::FarEndField(const LatLon& station, LatticeNodes& lattice, double azimuth_tolerance_rad,
                         double relative_tolerance)
    : west_(lattice.west()), south_(lattice.south()) {
  double convergence_rad = 0.0;
  double scale = 1.0;
  try {
    const UtmPoint u = utm_forward(lattice.zone(), station);
    planar_ = true;
    station_e_ = u.easting_m;
    station_n_ = u.northing_m;
    convergence_rad = u.convergence_deg * kDeg;
    scale = u.scale;
  } catch (const InputError&) {
    planar_ = false;
  }
  struct Exact {
    double c2, rm, rs;
  };
  // The tabulated quantities at one point, from GeographicLib (through geodesy.hpp).
  const auto exact_at = [&](const LatLon& p, double e, double n, double ref) {
    const GeodesicLine12 g = geodesic_inverse(station, p);
    const double azi2 = g.azi2_deg * kDeg;
    if (!planar_)
      return Exact{ref + wrap_pi(azi2 - ref), g.m12_m, g.s12_m};
    const double de = e - station_e_;
    const double dn = n - station_n_;
    const double d = std::hypot(de, dn);
    if (d < 1e-3)  // the limits at the station: direction gamma, ratios 1 / k
      return Exact{convergence_rad, 1.0 / scale, 1.0 / scale};
    return Exact{wrap_pi(azi2 - std::atan2(de, dn)), g.m12_m / d, g.s12_m / d};
  };
  for (n_ = 5;; n_ = 2 * n_ - 1) {
    const std::vector<LatLon>& nodes = lattice.nodes(n_);
    step_e_ = lattice.width() / (n_ - 1);
    step_n_ = lattice.height() / (n_ - 1);
    c2_.assign(nodes.size(), 0.0);
    rm_.assign(nodes.size(), 0.0);
    rs_.assign(nodes.size(), 0.0);
    double ref = 0.0;
    for (int j = 0; j < n_; ++j) {
      for (int i = 0; i < n_; ++i) {
        const std::size_t k = static_cast<std::size_t>(j) * static_cast<std::size_t>(n_) +
                              static_cast<std::size_t>(i);
        const Exact x = exact_at(nodes[k], west_ + i * step_e_, south_ + j * step_n_, ref);
        c2_[k] = x.c2;
        rm_[k] = x.rm;
        rs_[k] = x.rs;
        ref = x.c2;
      }
    }
    const int cells = n_ - 1;
    const int stride = std::max(1, cells / 8);
    max_azimuth_error_rad_ = 0.0;
    max_relative_error_ = 0.0;
    for (int j = stride / 2; j < cells; j += stride) {
      for (int i = stride / 2; i < cells; i += stride) {
        const double e = west_ + (i + 0.5) * step_e_;
        const double n = south_ + (j + 0.5) * step_n_;
        const GeodesicLine12 g = geodesic_inverse(station, lattice.geographic(e, n));
        if (!(g.s12_m > 1.0))
          continue;
        const Value v = at(e, n);
        max_azimuth_error_rad_ =
            std::max(max_azimuth_error_rad_, std::fabs(wrap_pi(v.azi2_rad - g.azi2_deg * kDeg)));
        max_relative_error_ =
            std::max({max_relative_error_, std::fabs(v.m12_m - g.m12_m) / std::fabs(g.m12_m),
                      std::fabs(v.s12_m - g.s12_m) / g.s12_m});
      }
    }
    if ((max_azimuth_error_rad_ <= azimuth_tolerance_rad &&
         max_relative_error_ <= relative_tolerance) ||
        n_ >= 129)
      break;
  }
}

double FarEndField::interpolate(const std::vector<double>& v, double easting_m,
                                double northing_m) const {
  return bilinear(v, n_, (easting_m - west_) / step_e_, (northing_m - south_) / step_n_);
}

FarEndField::Value FarEndField::at(double easting_m, double northing_m) const {
  Value out;
  const double c2 = interpolate(c2_, easting_m, northing_m);
  const double rm = interpolate(rm_, easting_m, northing_m);
  const double rs = interpolate(rs_, easting_m, northing_m);
  if (!planar_) {
    out.azi2_rad = c2;
    out.m12_m = rm;
    out.s12_m = rs;
    return out;
  }
  const double de = easting_m - station_e_;
  const double dn = northing_m - station_n_;
  const double d = std::hypot(de, dn);
  out.azi2_rad = std::atan2(de, dn) + c2;
  out.m12_m = d * rm;
  out.s12_m = d * rs;
  return out;
}

}  // namespace lobfix::detail
