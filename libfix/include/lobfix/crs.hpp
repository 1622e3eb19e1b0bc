// lobfix: projected coordinate reference systems through PROJ (grid north, coordinates in a
// user's CRS). The only place that calls PROJ. Conventions: docs/grid.md.
//
// Sign convention of the meridian convergence gamma (GeographicLib's, e.g. UTMUPS::Forward):
// gamma is the true azimuth of grid north, clockwise from true north, so that
//   true azimuth = grid azimuth + gamma.
// In a Transverse Mercator grid gamma is positive east of the central meridian in the northern
// hemisphere. "True" here means WGS 84: a bearing's true azimuth is a WGS 84 geodesic azimuth.
#pragma once

#include <memory>
#include <string>

#include "lobfix/geodesy.hpp"

namespace lobfix {

/// A projected CRS named by the user ("EPSG:nnnn", or any other definition PROJ accepts for a
/// projected CRS), with a PROJ context of its own. Not thread-safe: use one object per thread.
/// PROJ's messages are captured into the errors thrown, never printed. A moved-from object may
/// only be destroyed or assigned to.
class ProjectedCrs {
 public:
  /// @throws InputError (field "crs") when PROJ does not know the code ("unknown CRS 'code':
  ///         PROJ's message"), when it is not a projected CRS (a geographic, geocentric,
  ///         vertical or compound CRS: give the projected CRS's own code), or when PROJ has
  ///         no transformation to it from WGS 84.
  explicit ProjectedCrs(const std::string& code);
  ~ProjectedCrs();
  ProjectedCrs(ProjectedCrs&&) noexcept;
  ProjectedCrs& operator=(ProjectedCrs&&) noexcept;
  ProjectedCrs(const ProjectedCrs&) = delete;
  ProjectedCrs& operator=(const ProjectedCrs&) = delete;

  /// The code as the user gave it.
  const std::string& code() const;
  /// PROJ's name of the CRS, e.g. "WGS 84 / UTM zone 33N".
  std::string name() const;

  /// Easting/northing (m, or the CRS's unit) of a WGS 84 point, axis order east, north
  /// whatever the CRS's own order (some CRSs list northing first: PROJ's output is put in
  /// east, north order by proj_normalize_for_visualization). The datum shift from WGS 84 is
  /// PROJ's choice for the CRS (as its cs2cs tool makes it).
  /// @throws InputError (field "lat" or "lon") for a latitude outside [-90, 90] or a value
  ///         that is not finite; (field "crs") when PROJ cannot transform the point.
  void forward(const LatLon& point, double& easting, double& northing) const;

  /// Meridian convergence at a WGS 84 point (deg): the true azimuth of grid north (clockwise
  /// from true north), so that true azimuth = grid azimuth + convergence_deg. This is
  /// GeographicLib's gamma convention. PROJ's proj_factors gives the convergence of the map
  /// projection against the meridian of the CRS's own datum (the same sign as gamma, checked
  /// against GeographicLib); when that datum is not WGS 84 the small turn between the two
  /// datums' meridians (about 1e-3 deg for classical datums) is added, so the result refers
  /// to WGS 84 north.
  /// @throws InputError (field "lat" or "lon") for a bad point as forward() does; (field
  ///         "crs") when PROJ cannot compute the convergence there.
  double convergence_deg(const LatLon& point) const;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

/// Convergence of the UTM/UPS zone at the point (GeographicLib UTMUPS, the standard zone), in
/// the same sign convention: true azimuth = grid azimuth + convergence_deg.
/// @throws InputError (field "lat") if the latitude is outside [-90, 90].
double utm_convergence_deg(const LatLon& point);

}  // namespace lobfix
