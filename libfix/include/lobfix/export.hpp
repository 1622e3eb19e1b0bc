// lobfix: map files of the bearings and fixes through GDAL/OGR drivers (stage "export").
// Formats and fields: docs/outputs.md.
#pragma once

#include <string>
#include <vector>

#include "lobfix/bearing.hpp"
#include "lobfix/uncertainty.hpp"

namespace lobfix {

struct ExportOptions {
  /// Length of every drawn ray (m); 0 means automatic: 1.2 x the distance to its signal's
  /// fix (at least 100 m), or default_ray_length_m when that signal has no fix.
  double ray_length_m = 0.0;
  double default_ray_length_m = 10000.0;
  int ellipse_vertices = 180;
};

/// Write a GeoJSON (RFC 7946) FeatureCollection: one Point per bearing's station
/// (kind "station"), one LineString per bearing (kind "ray"), one Point per fix (kind "fix")
/// and one Polygon per ellipse (kind "ellipse"; kind "ellipse_scaled" for residual-scaled
/// ones). Shapes crossing the antimeridian become Multi* geometries.
/// The file appears atomically (written under a temporary name, then renamed).
/// @throws OutputError when it cannot be written.
void write_geojson(const std::string& path, const std::vector<Bearing>& bearings,
                   const std::vector<FixResult>& results, const ExportOptions& options = {});

/// Write a KML 2.2 document with the same content, in folders (stations, rays, fixes,
/// ellipses), with shared styles. Atomic like write_geojson.
/// @throws OutputError when it cannot be written.
void write_kml(const std::string& path, const std::vector<Bearing>& bearings,
               const std::vector<FixResult>& results, const ExportOptions& options = {});

}  // namespace lobfix
