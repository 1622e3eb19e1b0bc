// lobfix: map files of the bearings and fixes through GDAL/OGR drivers (stage "export").
// Formats and fields: docs/outputs.md.
#pragma once

#include <string>
#include <vector>

#include "lobfix/bearing.hpp"
#include "lobfix/search_area.hpp"
#include "lobfix/uncertainty.hpp"

namespace lobfix {

struct ExportOptions {
  /// Length of every drawn ray (m), >= 0; 0 means automatic: 1.2 x the distance from its
  /// station to its signal's fix (at least 100 m), or default_ray_length_m when that signal
  /// has no fix. Rays are drawn as geodesics with vertices at most min(length / 64, 10 km)
  /// apart.
  double ray_length_m = 0.0;
  /// Length of the rays of signals without a fix (m), > 0.
  double default_ray_length_m = 10000.0;
  /// Vertices per ellipse ring, 8 to 100000.
  int ellipse_vertices = 180;
};

/// Write a GeoJSON (RFC 7946) FeatureCollection: one Point per distinct position of each
/// station (kind "station"), one LineString per bearing (kind "ray"), one Point per fix
/// that has a position (kind "fix", status ok) and one Polygon per ellipse (kind "ellipse";
/// kind "ellipse_scaled" for residual-scaled ones). Shapes crossing the antimeridian become
/// Multi* geometries; an ellipse around a pole is closed along the pole. A fix matches the
/// bearings whose signal equals its signal; BearingFit::index indexes `bearings`.
/// The file appears atomically (written under a temporary name beside it, flushed, then
/// renamed over `path`, replacing any file there); on failure nothing is left behind.
/// @throws InputError for invalid options (field names the option).
/// @throws OutputError when it cannot be written (the message names `path`).
void write_geojson(const std::string& path, const std::vector<Bearing>& bearings,
                   const std::vector<FixResult>& results, const ExportOptions& options = {});

/// Write a KML 2.2 document with the same content, in folders (stations, rays, fixes,
/// ellipses), with shared styles, a name and a description per placemark, rays tessellated
/// and clamped to the ground. A path ending in .kmz gets a KMZ archive (the document as
/// doc.kml), any other a plain KML file. Atomic like write_geojson.
/// @throws InputError for invalid options (field names the option).
/// @throws OutputError when it cannot be written (the message names `path`).
void write_kml(const std::string& path, const std::vector<Bearing>& bearings,
               const std::vector<FixResult>& results, const ExportOptions& options = {});

/// The same with the search areas: the highest-density regions (kind "region", one
/// MultiPolygon or Polygon per probability) and the search segments (kind "segment", with id,
/// rank, POA, cumulative POA, POA before the searches, POD, MGRS label, area and centre).
void write_geojson(const std::string& path, const std::vector<Bearing>& bearings,
                   const std::vector<FixResult>& results, const std::vector<SearchArea>& areas,
                   const ExportOptions& options = {});
/// KML with the search areas in folders "regions" and "segments".
void write_kml(const std::string& path, const std::vector<Bearing>& bearings,
               const std::vector<FixResult>& results, const std::vector<SearchArea>& areas,
               const ExportOptions& options = {});

/// A GeoPackage (OGC 12-128r18) with one layer per kind: stations and fixes (points), rays
/// and tracks (multi-line strings), ellipses, regions and segments (multi-polygons), WGS 84,
/// each feature with a name and description besides its fields. Atomic like write_geojson.
/// @throws InputError for invalid options. @throws OutputError when it cannot be written.
void write_geopackage(const std::string& path, const std::vector<Bearing>& bearings,
                      const std::vector<FixResult>& results, const std::vector<SearchArea>& areas,
                      const ExportOptions& options = {});

/// GPX 1.1 waypoints for teams that navigate by GPS: each fix ("FIX", or "FIX1", "FIX2"...
/// with several signals) and each segment's centre (its id, e.g. "S01", or "1S01"), names
/// of at most 10 characters, the POA and MGRS in the comment and description. Atomic.
/// @throws OutputError when it cannot be written.
void write_gpx_waypoints(const std::string& path, const std::vector<FixResult>& results,
                         const std::vector<SearchArea>& areas);

/// Write `text` to `path` atomically (temporary name beside it, flushed, renamed).
/// @throws OutputError when it cannot be written.
void write_text_file(const std::string& path, const std::string& text);

}  // namespace lobfix
