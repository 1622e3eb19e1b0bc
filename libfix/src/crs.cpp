// Projected CRSs through PROJ: coordinates in a user's grid and its meridian convergence.
//
// Notation: gamma meridian convergence (deg), the true azimuth of grid north, so that
// true = grid + gamma (GeographicLib's convention, docs/grid.md). "Base" is the geographic
// CRS the projection starts from (its datum may differ from WGS 84); alpha is the azimuth,
// measured on the base datum, of the direction that is north on WGS 84.
//
// Two PROJ operations are kept, both with a context of this object's own:
//   to_grid     WGS 84 (lon, lat deg)  -> the CRS (easting, northing), axis order normalised;
//   projection  base (lon, lat rad)    -> the CRS (easting, northing): the map projection,
//               whose proj_factors gives gamma on the base datum (gamma_base).
// A WGS 84 point reaches the base datum as projection^-1(to_grid(point)), so the datum shift
// is exactly the one forward() applies (PROJ may pick a different one for WGS 84 -> base
// alone). Then gamma = gamma_base - alpha: WGS 84 north has base azimuth alpha, hence grid
// azimuth alpha - gamma_base, and true = grid + gamma with true = 0 gives
// gamma = gamma_base - alpha. On a datum equal to WGS 84 alpha is 0.
#include "lobfix/crs.hpp"

#include <proj.h>
#include <proj_experimental.h>

#include <cmath>
#include <cstdio>
#include <string>
#include <utility>

#include "lobfix/error.hpp"

namespace lobfix {

namespace {

constexpr double kPi = 3.14159265358979323846;
constexpr double kDegPerRad = 180.0 / kPi;
/// Half the latitude step (deg) used to find the WGS 84 meridian on the base datum (11 m).
constexpr double kMeridianStepDeg = 1e-4;

// PROJ log messages go to the object's buffer, never to stderr.
void capture_log(void* app_data, int /*level*/, const char* message) {
  auto* log = static_cast<std::string*>(app_data);
  if (message == nullptr)
    return;
  if (!log->empty())
    *log += "; ";
  *log += message;
}

std::string point_text(const LatLon& p) {
  char buf[96];
  std::snprintf(buf, sizeof buf, "latitude %.7f, longitude %.7f", p.lat_deg, p.lon_deg);
  return buf;
}

[[noreturn]] void refuse(const char* field, std::string reason) {
  throw InputError({"", 0, 0, field, std::move(reason)});
}

void check_point(const LatLon& p) {
  if (!(p.lat_deg >= -90.0 && p.lat_deg <= 90.0))
    refuse("lat", "latitude outside [-90, 90]");
  if (!std::isfinite(p.lon_deg))
    refuse("lon", "longitude is not a finite number");
}

// What the object is, and what to give instead.
std::string kind_of(PJ_TYPE type) {
  const std::string advice =
      "; grid bearings need a projected CRS (a map grid), e.g. a UTM zone EPSG:326nn";
  switch (type) {
    case PJ_TYPE_GEOGRAPHIC_CRS:
    case PJ_TYPE_GEOGRAPHIC_2D_CRS:
    case PJ_TYPE_GEOGRAPHIC_3D_CRS:
      return "a geographic CRS (latitude and longitude, no map grid)" + advice;
    case PJ_TYPE_GEOCENTRIC_CRS:
      return "a geocentric CRS (earth-centred X, Y, Z, no map grid)" + advice;
    case PJ_TYPE_VERTICAL_CRS:
      return "a vertical CRS (heights only)" + advice;
    case PJ_TYPE_COMPOUND_CRS:
      return "a compound CRS (horizontal and vertical), which is not taken: give the code of "
             "its projected horizontal CRS";
    case PJ_TYPE_BOUND_CRS:
      return "a bound CRS (a CRS with a transformation attached), which is not taken: give "
             "the code of the projected CRS itself";
    default:
      return "not a projected CRS" + advice;
  }
}

}  // namespace

struct ProjectedCrs::Impl {
  std::string code;
  std::string log;  // PROJ's messages since the last clear
  PJ_CONTEXT* ctx = nullptr;
  PJ* crs = nullptr;
  PJ* to_grid = nullptr;
  PJ* projection = nullptr;
  double base_a_m = 0.0;  // base ellipsoid semi-major axis
  double base_e2 = 0.0;   // and its first eccentricity squared

  Impl() = default;
  Impl(const Impl&) = delete;
  Impl& operator=(const Impl&) = delete;
  ~Impl() {
    proj_destroy(projection);
    proj_destroy(to_grid);
    proj_destroy(crs);
    if (ctx != nullptr)
      proj_context_destroy(ctx);
  }

  // PROJ's own words for the last failure: its log, else its error code's text.
  std::string message(int err) {
    std::string m = log;
    log.clear();
    if (m.empty() && err != 0) {
      const char* s = proj_context_errno_string(ctx, err);
      m = s != nullptr ? s : "";
    }
    if (m.empty())
      m = "no reason given by PROJ";
    // Drop the name of PROJ's function from "proj_create: crs not found".
    const std::string prefix = "proj_create: ";
    if (m.compare(0, prefix.size(), prefix) == 0)
      m.erase(0, prefix.size());
    return m;
  }

  std::string describe() const {
    const char* n = proj_get_name(crs);
    return "'" + code + "'" + (n != nullptr ? " (" + std::string(n) + ")" : std::string());
  }

  // A normalised (lon, lat in; east, north out) operation from one CRS to another.
  PJ* normalised_operation(const PJ* from, const PJ* to) {
    PJ* op = proj_create_crs_to_crs_from_pj(ctx, from, to, nullptr, nullptr);
    if (op == nullptr)
      return nullptr;
    PJ* norm = proj_normalize_for_visualization(ctx, op);
    proj_destroy(op);
    return norm;
  }
};

ProjectedCrs::ProjectedCrs(const std::string& code) : impl_(std::make_unique<Impl>()) {
  Impl& m = *impl_;
  m.code = code;
  m.ctx = proj_context_create();
  if (m.ctx == nullptr)
    refuse("crs", "cannot set up PROJ for CRS '" + code + "'");
  proj_log_func(m.ctx, &m.log, capture_log);
  proj_log_level(m.ctx, PJ_LOG_ERROR);

  m.crs = proj_create(m.ctx, code.c_str());
  if (m.crs == nullptr)
    refuse("crs", "unknown CRS '" + code + "': " + m.message(proj_context_errno(m.ctx)));
  const PJ_TYPE type = proj_get_type(m.crs);
  if (type != PJ_TYPE_PROJECTED_CRS) {
    refuse("crs", "CRS " + m.describe() + " is " + kind_of(type));
  }

  PJ* wgs84 = proj_create(m.ctx, "EPSG:4326");
  PJ* geodetic = proj_crs_get_geodetic_crs(m.ctx, m.crs);
  PJ* datum = geodetic != nullptr ? proj_crs_get_datum(m.ctx, geodetic) : nullptr;
  PJ* ensemble = geodetic != nullptr ? proj_crs_get_datum_ensemble(m.ctx, geodetic) : nullptr;
  PJ* ellipsoid = proj_get_ellipsoid(m.ctx, m.crs);
  PJ* cs = proj_create_ellipsoidal_2D_cs(m.ctx, PJ_ELLPS2D_LONGITUDE_LATITUDE, "Radian", 1.0);
  // The base datum with longitude, latitude in radians: proj_factors' input.
  PJ* base = (datum != nullptr || ensemble != nullptr) && cs != nullptr
                 ? proj_create_geographic_crs_from_datum(m.ctx, "base of the grid",
                                                         datum != nullptr ? datum : ensemble, cs)
                 : nullptr;
  double b_m = 0.0;
  double inv_f = 0.0;
  int inv_f_computed = 0;
  bool ellipsoid_ok =
      ellipsoid != nullptr && proj_ellipsoid_get_parameters(m.ctx, ellipsoid, &m.base_a_m, &b_m,
                                                            &inv_f_computed, &inv_f) != 0;
  if (ellipsoid_ok && m.base_a_m > 0.0)
    m.base_e2 = 1.0 - (b_m / m.base_a_m) * (b_m / m.base_a_m);
  if (wgs84 != nullptr)
    m.to_grid = m.normalised_operation(wgs84, m.crs);
  if (base != nullptr)
    m.projection = m.normalised_operation(base, m.crs);
  proj_destroy(base);
  proj_destroy(cs);
  proj_destroy(ellipsoid);
  proj_destroy(ensemble);
  proj_destroy(datum);
  proj_destroy(geodetic);
  proj_destroy(wgs84);
  if (m.to_grid == nullptr || m.projection == nullptr || !ellipsoid_ok || !(m.base_a_m > 0.0)) {
    refuse("crs", "no transformation from WGS 84 to CRS " + m.describe() + ": " +
                      m.message(proj_context_errno(m.ctx)));
  }
  m.log.clear();
}

ProjectedCrs::~ProjectedCrs() = default;
ProjectedCrs::ProjectedCrs(ProjectedCrs&&) noexcept = default;
ProjectedCrs& ProjectedCrs::operator=(ProjectedCrs&&) noexcept = default;

const std::string& ProjectedCrs::code() const {
  return impl_->code;
}

std::string ProjectedCrs::name() const {
  const char* n = proj_get_name(impl_->crs);
  return n != nullptr ? n : "";
}

void ProjectedCrs::forward(const LatLon& point, double& easting, double& northing) const {
  check_point(point);
  Impl& m = *impl_;
  m.log.clear();
  proj_errno_reset(m.to_grid);
  const PJ_COORD r =
      proj_trans(m.to_grid, PJ_FWD, proj_coord(point.lon_deg, point.lat_deg, 0.0, 0.0));
  if (!std::isfinite(r.xy.x) || !std::isfinite(r.xy.y)) {
    const int err = proj_errno(m.to_grid);
    proj_errno_reset(m.to_grid);
    refuse("crs", "the point at " + point_text(point) + " cannot be put in CRS " + m.describe() +
                      ": " + m.message(err));
  }
  easting = r.xy.x;
  northing = r.xy.y;
}

double ProjectedCrs::convergence_deg(const LatLon& point) const {
  check_point(point);
  Impl& m = *impl_;
  m.log.clear();
  auto fail = [&](int err) {
    refuse("crs", "the meridian convergence of CRS " + m.describe() + " cannot be computed at " +
                      point_text(point) + ": " + m.message(err));
  };
  // WGS 84 (lon, lat deg) to the base datum (lon, lat rad), through the grid.
  auto to_base = [&](double lat_deg) {
    proj_errno_reset(m.to_grid);
    const PJ_COORD g = proj_trans(m.to_grid, PJ_FWD, proj_coord(point.lon_deg, lat_deg, 0, 0));
    if (!std::isfinite(g.xy.x) || !std::isfinite(g.xy.y))
      fail(proj_errno(m.to_grid));
    proj_errno_reset(m.projection);
    const PJ_COORD b = proj_trans(m.projection, PJ_INV, g);
    if (!std::isfinite(b.lp.lam) || !std::isfinite(b.lp.phi))
      fail(proj_errno(m.projection));
    return b;
  };

  // gamma_base: PROJ's convergence of the projection, on the base datum. proj_factors wants
  // (lon, lat) in radians on that datum; its sign is GeographicLib's (checked in crs_test).
  const PJ_COORD b = to_base(point.lat_deg);
  proj_errno_reset(m.projection);
  const PJ_FACTORS f = proj_factors(m.projection, b);
  const int err = proj_errno(m.projection);
  if (err != 0 || !(f.meridional_scale > 0.0) || !std::isfinite(f.meridian_convergence)) {
    proj_errno_reset(m.projection);
    fail(err);
  }
  const double gamma_base_deg = f.meridian_convergence * kDegPerRad;

  // alpha: the base-datum azimuth of the WGS 84 meridian through the point, from two points
  // kMeridianStepDeg either side of it (one-sided within a step of a pole), with the base
  // ellipsoid's meridian and normal radii of curvature.
  const double lat1 = std::fmax(-90.0, point.lat_deg - kMeridianStepDeg);
  const double lat2 = std::fmin(90.0, point.lat_deg + kMeridianStepDeg);
  const PJ_COORD b1 = to_base(lat1);
  const PJ_COORD b2 = to_base(lat2);
  const double phi = b.lp.phi;
  const double w = std::sqrt(1.0 - m.base_e2 * std::sin(phi) * std::sin(phi));
  const double radius_meridian_m = m.base_a_m * (1.0 - m.base_e2) / (w * w * w);
  const double radius_normal_m = m.base_a_m / w;
  const double dlam = std::remainder(b2.lp.lam - b1.lp.lam, 2.0 * kPi);
  const double alpha_deg = std::atan2(radius_normal_m * std::cos(phi) * dlam,
                                      radius_meridian_m * (b2.lp.phi - b1.lp.phi)) *
                           kDegPerRad;
  return gamma_base_deg - alpha_deg;
}

double utm_convergence_deg(const LatLon& point) {
  return grid_reference(point).convergence_deg;
}

}  // namespace lobfix
