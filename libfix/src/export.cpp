// Map files of the bearings, fixes and search areas through GDAL/OGR (stage "export"):
// GeoJSON (RFC 7946) through the GeoJSON driver, KML 2.2 (OGC 07-147r2) through the LIBKML
// driver, GeoPackage (OGC 12-128r18) through GPKG, and GPX 1.1 waypoints through GPX.
//
// The content is built once as a list of MapFeature values (geometry in lon/lat, WGS 84,
// already cut at the antimeridian by shapes.cpp; attributes; KML name, description and
// style) and then written by each driver. Files appear atomically (detail/gdal_output.hpp):
// the driver writes into GDAL's in-memory file system (so that every I/O error is ours to
// see: the GeoJSON driver does not report failed writes), the bytes go to a temporary name in
// the target's directory, are flushed to disk, and the temporary is renamed over the target.
// Fields, styles and their meaning: docs/outputs.md.
#include "lobfix/export.hpp"
#include "lobfix/time.hpp"

#include <cpl_conv.h>
#include <cpl_error.h>
#include <ogr_featurestyle.h>
#include <ogr_geometry.h>
#include <ogr_spatialref.h>
#include <ogrsf_frmts.h>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdarg>
#include <cstddef>
#include <cstdio>
#include <cstring>
#include <filesystem>
#include <functional>
#include <map>
#include <memory>
#include <mutex>
#include <set>
#include <string>
#include <tuple>
#include <utility>
#include <variant>
#include <vector>

#include "detail/export_geometry.hpp"
#include "detail/gdal_output.hpp"
#include "lobfix/error.hpp"
#include "lobfix/geodesy.hpp"
#include "lobfix/segments.hpp"
#include "lobfix/shapes.hpp"

namespace lobfix {

namespace {

namespace fs = std::filesystem;
using detail::check_ogr;
using detail::fail_output;
using detail::lower_extension;
using detail::wgs84_lon_lat;
using detail::write_atomically;

// ---------------------------------------------------------------------------------------
// Text helpers

#if defined(__GNUC__)
__attribute__((format(printf, 1, 2)))
#endif
std::string
strf(const char* format, ...) {
  char buf[512];
  va_list args;
  va_start(args, format);
  const int n = std::vsnprintf(buf, sizeof buf, format, args);
  va_end(args);
  if (n < 0)
    return {};
  if (static_cast<std::size_t>(n) < sizeof buf)
    return std::string(buf, static_cast<std::size_t>(n));
  std::string out(static_cast<std::size_t>(n) + 1, '\0');
  va_start(args, format);
  std::vsnprintf(out.data(), out.size(), format, args);
  va_end(args);
  out.resize(static_cast<std::size_t>(n));
  return out;
}

/// "95%", "50%", "99.9%".
std::string percent(double probability) {
  return strf("%.4g%%", 100.0 * probability);
}

/// A distance for people: "850 m", "12.3 km".
std::string distance_text(double m) {
  if (m < 10000.0)
    return strf("%.0f m", m);
  return strf("%.1f km", m / 1000.0);
}

/// Bearing in the field's three-digit form: "057.3°" (common practice).
std::string bearing_text(double azimuth_deg) {
  return strf("%05.1f\xC2\xB0", wrap_deg360(std::round(azimuth_deg * 10.0) / 10.0));
}

std::string position_text(const LatLon& p) {
  std::string out = format_dms(p.lat_deg, true, 1) + " " + format_dms(p.lon_deg, false, 1);
  out += strf(" (%.6f, %.6f)", p.lat_deg, p.lon_deg);
  try {
    const GridReference g = grid_reference(p);
    out += ", MGRS " + g.mgrs;
  } catch (const std::exception&) {
    // No grid reference for an invalid latitude: the degrees above still say where.
  }
  return out;
}

std::string signal_label(const std::string& signal) {
  return signal.empty() ? std::string("(no signal label)") : signal;
}

// ---------------------------------------------------------------------------------------
// Content, independent of the driver

using Value = std::variant<std::monostate, int, double, std::string>;

Value real_or_null(double v) {
  return std::isfinite(v) ? Value(v) : Value();
}

struct FieldDef {
  const char* name;
  OGRFieldType type;
};

// Every attribute field, in the order they appear in the GeoJSON layer.
const FieldDef kFields[] = {
    {"kind", OFTString},
    {"signal", OFTString},
    {"station", OFTString},
    {"row", OFTInteger},
    {"time", OFTString},
    {"bearing_deg", OFTReal},
    {"sigma_deg", OFTReal},
    {"residual_deg", OFTReal},
    {"normalized_residual", OFTReal},
    {"probability", OFTReal},
    {"semi_major_m", OFTReal},
    {"semi_minor_m", OFTReal},
    {"orientation_deg", OFTReal},
    {"lat", OFTReal},
    {"lon", OFTReal},
    {"cep_m", OFTReal},
    {"chi2", OFTReal},
    {"dof", OFTInteger},
    {"p_value", OFTReal},
    {"weight", OFTReal},
    {"outlier", OFTInteger},
    {"outliers", OFTInteger},
    {"segment", OFTString},
    {"rank", OFTInteger},
    {"poa", OFTReal},
    {"cumulative_poa", OFTReal},
    {"initial_poa", OFTReal},
    {"pod", OFTReal},
    {"mgrs", OFTString},
    {"area_m2", OFTReal},
    {"mass", OFTReal},
};

enum class Group { stations, rays, fixes, ellipses, tracks, regions, segments };
constexpr Group kGroups[] = {Group::stations, Group::rays,    Group::fixes,   Group::ellipses,
                             Group::tracks,   Group::regions, Group::segments};

const char* group_name(Group g) {
  switch (g) {
    case Group::stations:
      return "stations";
    case Group::rays:
      return "rays";
    case Group::fixes:
      return "fixes";
    case Group::ellipses:
      return "ellipses";
    case Group::tracks:
      return "tracks";
    case Group::regions:
      return "regions";
    case Group::segments:
      return "segments";
  }
  return "";
}

/// The attribute fields each group carries (a KML folder's schema; in GeoJSON the
/// properties of its features).
std::vector<const char*> group_fields(Group g) {
  switch (g) {
    case Group::stations:
      return {"kind", "station", "row", "time"};
    case Group::rays:
      return {"kind",      "signal",       "station",
              "row",       "time",         "bearing_deg",
              "sigma_deg", "residual_deg", "normalized_residual",
              "weight",    "outlier"};
    case Group::fixes:
      return {"kind", "signal", "lat", "lon", "cep_m", "chi2", "dof", "p_value", "outliers"};
    case Group::ellipses:
      return {"kind", "signal", "probability", "semi_major_m", "semi_minor_m", "orientation_deg"};
    case Group::tracks:
      return {"kind", "signal"};
    case Group::regions:
      return {"kind", "signal", "probability", "mass", "area_m2"};
    case Group::segments:
      return {"kind",        "signal", "segment", "rank",    "poa", "cumulative_poa",
              "initial_poa", "pod",    "mgrs",    "area_m2", "lat", "lon"};
  }
  return {};
}

OGRFieldType field_type(const std::string& name) {
  for (const FieldDef& f : kFields) {
    if (name == f.name)
      return f.type;
  }
  return OFTString;
}

struct MapFeature {
  Group group = Group::stations;
  std::map<std::string, Value> fields;
  std::unique_ptr<OGRGeometry> geometry;
  std::string name;         ///< KML placemark name
  std::string description;  ///< KML placemark description
  std::string style;        ///< name of a shared KML style
};

struct StyleDef {
  std::string name;
  std::string ogr_style;  ///< OGR feature style string
};

struct MapContent {
  std::vector<MapFeature> features;
  std::vector<StyleDef> styles;
};

// Okabe and Ito's colour-universal-design palette ("Color Universal Design", 2008; hex
// values [memory]), safe for the common forms of colour blindness; its yellow is left out
// (too pale on a map).
// One colour per signal, in order of first appearance; cycled beyond six signals.
const char* const kPalette[] = {"0072B2", "D55E00", "009E73", "CC79A7", "E69F00", "56B4E9"};
constexpr std::size_t kPaletteSize = sizeof kPalette / sizeof kPalette[0];
const char* const kStationColour = "000000";

/// Outline width and fill opacity of an ellipse by its probability: the inner (smaller
/// probability) ellipse is drawn with a thicker line and a denser fill, so 50% and 95% are
/// told apart in grey print too: 50% -> 3 px, 35% fill; 95% -> 1.2 px, 8% fill.
double ellipse_width_px(double probability) {
  return std::clamp(1.0 + 4.0 * (1.0 - probability), 1.0, 4.0);
}
int ellipse_fill_alpha(double probability) {
  const double opacity = std::clamp(0.05 + 0.6 * (1.0 - probability), 0.05, 0.65);
  return static_cast<int>(std::lround(255.0 * opacity));
}

std::unique_ptr<OGRLineString> line_string(const Path& path) {
  auto line = std::make_unique<OGRLineString>();
  line->setNumPoints(static_cast<int>(path.size()), FALSE);
  for (std::size_t i = 0; i < path.size(); ++i) {
    line->setPoint(static_cast<int>(i), path[i].lon_deg, path[i].lat_deg);
  }
  return line;
}

std::unique_ptr<OGRPolygon> polygon(const Path& ring) {
  auto linear = std::make_unique<OGRLinearRing>();
  linear->setNumPoints(static_cast<int>(ring.size()), FALSE);
  for (std::size_t i = 0; i < ring.size(); ++i) {
    linear->setPoint(static_cast<int>(i), ring[i].lon_deg, ring[i].lat_deg);
  }
  linear->closeRings();
  auto poly = std::make_unique<OGRPolygon>();
  poly->addRingDirectly(linear.release());
  return poly;
}

/// A ray: LineString, or MultiLineString when it crosses the antimeridian.
std::unique_ptr<OGRGeometry> line_geometry(const Path& unrolled) {
  const std::vector<Path> pieces = split_line_antimeridian(unrolled);
  if (pieces.size() == 1)
    return line_string(pieces[0]);
  auto multi = std::make_unique<OGRMultiLineString>();
  for (const Path& piece : pieces)
    multi->addGeometryDirectly(line_string(piece).release());
  return multi;
}

/// An ellipse: Polygon, or MultiPolygon when it crosses the antimeridian. A ring around a
/// pole becomes the one polygon closed over the pole.
std::unique_ptr<OGRGeometry> polygon_geometry(const Path& unrolled) {
  const std::vector<Path> rings = ring_encloses_pole(unrolled)
                                      ? std::vector<Path>{detail::pole_closed_ring(unrolled)}
                                      : split_ring_antimeridian(unrolled);
  if (rings.size() == 1)
    return polygon(rings[0]);
  auto multi = std::make_unique<OGRMultiPolygon>();
  for (const Path& ring : rings)
    multi->addGeometryDirectly(polygon(ring).release());
  return multi;
}

/// Polygons with holes (regions, segments): small against the Earth, so each ring is cut
/// at the antimeridian on its own and a ring crossing it is drawn as its pieces without
/// holes (a rare case: a search area astride the antimeridian).
std::unique_ptr<OGRGeometry> area_geometry(const std::vector<GeoPolygon>& parts) {
  auto multi = std::make_unique<OGRMultiPolygon>();
  for (const GeoPolygon& part : parts) {
    const std::vector<Path> outer = split_ring_antimeridian(part.outer);
    if (outer.size() != 1) {
      for (const Path& ring : outer)
        multi->addGeometryDirectly(polygon(ring).release());
      continue;
    }
    std::unique_ptr<OGRPolygon> poly = polygon(outer[0]);
    for (const Path& hole : part.holes) {
      const std::vector<Path> pieces = split_ring_antimeridian(hole);
      if (pieces.size() != 1)
        continue;
      auto ring = std::make_unique<OGRLinearRing>();
      ring->setNumPoints(static_cast<int>(pieces[0].size()), FALSE);
      for (std::size_t i = 0; i < pieces[0].size(); ++i)
        ring->setPoint(static_cast<int>(i), pieces[0][i].lon_deg, pieces[0][i].lat_deg);
      ring->closeRings();
      poly->addRingDirectly(ring.release());
    }
    multi->addGeometryDirectly(poly.release());
  }
  if (multi->getNumGeometries() == 1)
    return std::unique_ptr<OGRGeometry>(multi->getGeometryRef(0)->clone());
  return multi;
}

std::unique_ptr<OGRGeometry> point_geometry(const LatLon& p) {
  return std::make_unique<OGRPoint>(wrap_deg180(p.lon_deg), p.lat_deg);
}

/// A fix drawn on the map: status ok and a finite position.
bool has_position(const Fix& fix) {
  return fix.ok() && std::isfinite(fix.position.lat_deg) && std::isfinite(fix.position.lon_deg) &&
         std::fabs(fix.position.lat_deg) <= 90.0;
}

void check_options(const std::string& path, const ExportOptions& options) {
  const auto bad = [&](const char* field, const std::string& reason) {
    throw InputError({path, 0, 0, field, reason});
  };
  if (!(std::isfinite(options.ray_length_m) && options.ray_length_m >= 0.0)) {
    bad("ray_length_m", strf("ray length must be 0 (automatic) or a positive number of metres, "
                             "got %g",
                             options.ray_length_m));
  }
  if (!(std::isfinite(options.default_ray_length_m) && options.default_ray_length_m > 0.0)) {
    bad("default_ray_length_m",
        strf("default ray length must be a positive number of metres, got %g",
             options.default_ray_length_m));
  }
  if (options.ellipse_vertices < 8 || options.ellipse_vertices > 100000) {
    bad("ellipse_vertices",
        strf("an ellipse needs 8 to 100000 vertices, got %d", options.ellipse_vertices));
  }
}

MapContent build_content(const std::vector<Bearing>& bearings,
                         const std::vector<FixResult>& results, const ExportOptions& options,
                         const std::vector<SearchArea>& areas) {
  MapContent content;

  // Colours by signal, in order of first appearance (bearings, then fixes).
  std::map<std::string, std::size_t> colour_of;
  const auto colour_index = [&](const std::string& signal) {
    auto it = colour_of.find(signal);
    if (it == colour_of.end())
      it = colour_of.emplace(signal, colour_of.size()).first;
    return it->second % kPaletteSize;
  };
  for (const Bearing& b : bearings)
    colour_index(b.signal);
  for (const FixResult& r : results)
    colour_index(r.fix.signal);

  // The first successful fix of each signal, and the fit of each bearing it used.
  std::map<std::string, const FixResult*> fix_of;
  std::map<std::size_t, const BearingFit*> fit_of;
  for (const FixResult& r : results) {
    if (!has_position(r.fix) || fix_of.count(r.fix.signal) != 0)
      continue;
    fix_of.emplace(r.fix.signal, &r);
    for (const BearingFit& f : r.fix.bearings) {
      if (f.index < bearings.size() && bearings[f.index].signal == r.fix.signal) {
        fit_of.emplace(f.index, &f);
      }
    }
  }

  std::set<std::string> styles_made;
  const auto add_style = [&](const std::string& name, const std::string& ogr_style) {
    if (styles_made.insert(name).second)
      content.styles.push_back({name, ogr_style});
    return name;
  };

  // Stations: one point per distinct position of each station (a walker moving between
  // bearings gets one point per place; repeated bearings from one place share a point).
  std::map<std::tuple<std::string, double, double>, std::size_t> station_at;
  std::vector<int> station_count;
  for (const Bearing& b : bearings) {
    const auto key = std::make_tuple(b.station, b.lat_deg, b.lon_deg);
    const auto found = station_at.find(key);
    if (found != station_at.end()) {
      ++station_count[found->second];
      continue;
    }
    station_at.emplace(key, content.features.size());
    station_count.push_back(1);
    MapFeature f;
    f.group = Group::stations;
    f.fields = {{"kind", std::string("station")},
                {"station", b.station},
                {"row", b.source.line},
                {"time", b.time_text.empty() ? Value() : Value(b.time_text)}};
    f.geometry = point_geometry({b.lat_deg, b.lon_deg});
    f.name = b.station;
    f.description = "Station " + b.station + " at " + position_text({b.lat_deg, b.lon_deg});
    f.style = add_style("station", strf("SYMBOL(c:#%sFF,s:1.0);LABEL(c:#%sFF,s:0.8)",
                                        kStationColour, kStationColour));
    content.features.push_back(std::move(f));
  }
  // Station descriptions end with how many bearings were taken there and the first one.
  {
    std::size_t s = 0;
    for (MapFeature& f : content.features) {
      const int count = station_count[s++];
      const auto& row = std::get<int>(f.fields["row"]);
      const Value& time = f.fields["time"];
      const std::string when =
          std::holds_alternative<std::string>(time) ? " at " + std::get<std::string>(time) : "";
      if (count == 1) {
        f.description += strf(". One bearing taken here%s (row %d).", when.c_str(), row);
      } else {
        f.description +=
            strf(". %d bearings taken here, the first%s (row %d).", count, when.c_str(), row);
      }
    }
  }

  // Rays.
  for (std::size_t i = 0; i < bearings.size(); ++i) {
    const Bearing& b = bearings[i];
    const LatLon station{b.lat_deg, b.lon_deg};
    const auto fix = fix_of.find(b.signal);
    const FixResult* result = fix == fix_of.end() ? nullptr : fix->second;
    double length_m = options.ray_length_m;
    if (length_m <= 0.0) {
      length_m = result == nullptr
                     ? options.default_ray_length_m
                     : std::max(100.0, 1.2 * geodesic_inverse(station, result->fix.position).s12_m);
    }
    const double max_step_m = std::min(length_m / 64.0, 10000.0);
    const auto fit = fit_of.find(i);
    const BearingFit* bf = fit == fit_of.end() ? nullptr : fit->second;

    // With mirror candidates, the ray drawn is the one the solver chose.
    const bool use_alt = bf != nullptr && bf->used_alt && b.alt_azimuth_deg.has_value();
    const double azimuth_deg = use_alt ? *b.alt_azimuth_deg : b.azimuth_deg;
    const double sigma_deg = use_alt && b.alt_sigma_deg ? *b.alt_sigma_deg : b.sigma_deg;

    MapFeature f;
    f.group = Group::rays;
    f.fields = {{"kind", std::string("ray")},
                {"signal", b.signal},
                {"station", b.station},
                {"row", b.source.line},
                {"time", b.time_text.empty() ? Value() : Value(b.time_text)},
                {"bearing_deg", real_or_null(azimuth_deg)},
                {"sigma_deg", real_or_null(sigma_deg)},
                {"residual_deg", bf ? real_or_null(bf->residual_deg) : Value()},
                {"normalized_residual", bf ? real_or_null(bf->normalized_residual) : Value()},
                {"weight", bf ? real_or_null(bf->weight) : Value()},
                {"outlier", bf ? Value(bf->outlier ? 1 : 0) : Value()}};
    f.geometry = line_geometry(ray_path(station, azimuth_deg, length_m, max_step_m));
    f.name = b.station + " " + bearing_text(azimuth_deg);
    f.description = strf("Line of bearing %s true, %.1f\xC2\xB0 (1 sigma), from station %s",
                         bearing_text(azimuth_deg).c_str(), sigma_deg, b.station.c_str());
    if (!b.time_text.empty())
      f.description += " at " + b.time_text;
    f.description += strf(" (row %d), signal %s. ", b.source.line, signal_label(b.signal).c_str());
    if (bf != nullptr) {
      // Residual = measured - predicted: positive when the ray points clockwise of the fix.
      f.description +=
          strf("It points %.2f\xC2\xB0 %s of the fix (%.2f sigma). ", std::fabs(bf->residual_deg),
               bf->residual_deg >= 0.0 ? "clockwise" : "anticlockwise",
               std::fabs(bf->normalized_residual));
    } else if (result != nullptr) {
      f.description += "Not used in the fix. ";
    } else {
      f.description += "No fix for this signal. ";
    }
    f.description += "Drawn " + distance_text(length_m) + " long.";
    const std::size_t colour = colour_index(b.signal);
    if (bf != nullptr && bf->outlier) {
      // Distrusted bearings: thin, grey and half transparent, whatever the signal, so they
      // read as set aside in colour and in grey print alike.
      f.description += " The robust fit distrusts this bearing (an outlier).";
      f.style = add_style("ray-outlier", "PEN(c:#7F7F7F80,w:1px)");
    } else {
      f.style = add_style(strf("ray-%zu", colour), strf("PEN(c:#%sFF,w:2px)", kPalette[colour]));
    }
    content.features.push_back(std::move(f));
  }

  // Fixes and their ellipses (only signals with a position).
  for (const FixResult& r : results) {
    if (!has_position(r.fix))
      continue;
    const Fix& fx = r.fix;
    const Uncertainty& u = r.uncertainty;
    const std::size_t colour = colour_index(fx.signal);
    const std::string label = signal_label(fx.signal);
    MapFeature f;
    f.group = Group::fixes;
    f.fields = {{"kind", std::string("fix")},
                {"signal", fx.signal},
                {"lat", real_or_null(fx.position.lat_deg)},
                {"lon", real_or_null(wrap_deg180(fx.position.lon_deg))},
                {"cep_m", real_or_null(u.cep_m)},
                {"chi2", real_or_null(fx.chi2)},
                {"dof", fx.dof},
                {"p_value", real_or_null(u.p_value)},
                {"outliers", fx.outliers}};
    f.geometry = point_geometry(fx.position);
    f.name = fx.signal.empty() ? std::string("fix") : "fix " + fx.signal;
    if (fx.has_window()) {
      f.name += " " + format_iso8601_utc(fx.window_start_unix_ns).substr(11, 5) + "-" +
                format_iso8601_utc(fx.window_end_unix_ns).substr(11, 5);
    }
    f.description = "Fix of signal " + label + " at " + position_text(fx.position) + ". ";
    f.description += "The transmitter is within " + distance_text(u.cep_m) +
                     " of it with 50% probability (CEP), if the stated bearing sigmas hold. ";
    f.description += strf("%zu bearings, chi-square %.2f with %d degrees of freedom",
                          fx.bearings.size(), fx.chi2, fx.dof);
    if (fx.dof > 0)
      f.description += strf(", p-value %.3f", u.p_value);
    f.description += ".";
    if (u.sigmas_too_small) {
      f.description +=
          " The bearings scatter more than their stated sigmas: trust the scaled ellipses.";
    }
    if (!fx.message.empty())
      f.description += " " + fx.message;
    f.style = add_style(strf("fix-%zu", colour), strf("SYMBOL(c:#%sFF,s:1.3);LABEL(c:#%sFF,s:1.0)",
                                                      kPalette[colour], kPalette[colour]));
    content.features.push_back(std::move(f));

    const auto add_ellipses = [&](const std::vector<Ellipse>& ellipses, bool scaled) {
      for (const Ellipse& e : ellipses) {
        // Nothing to draw for an ellipse that is not one (NaN or negative axes).
        if (!(std::isfinite(e.probability) && std::isfinite(e.semi_major_m) &&
              std::isfinite(e.semi_minor_m) && std::isfinite(e.orientation_deg) &&
              e.semi_major_m > 0.0 && e.semi_minor_m >= 0.0)) {
          continue;
        }
        MapFeature g;
        g.group = Group::ellipses;
        g.fields = {{"kind", std::string(scaled ? "ellipse_scaled" : "ellipse")},
                    {"signal", fx.signal},
                    {"probability", real_or_null(e.probability)},
                    {"semi_major_m", real_or_null(e.semi_major_m)},
                    {"semi_minor_m", real_or_null(e.semi_minor_m)},
                    {"orientation_deg", real_or_null(e.orientation_deg)}};
        g.geometry = polygon_geometry(ellipse_ring(fx.position, e, options.ellipse_vertices));
        g.name = percent(e.probability) + " ellipse";
        if (!fx.signal.empty())
          g.name += " " + fx.signal;
        if (scaled)
          g.name += " (scaled)";
        g.description = percent(e.probability) + " confidence ellipse of the fix of signal " +
                        label + ": semi-major " + distance_text(e.semi_major_m) + ", semi-minor " +
                        distance_text(e.semi_minor_m) + ", major axis " +
                        bearing_text(e.orientation_deg) + " true.";
        if (scaled) {
          g.description +=
              " Widened by the residuals, because the bearings scattered more than stated.";
        } else {
          g.description += " From the stated bearing sigmas.";
        }
        const long per_mille = std::lround(e.probability * 1000.0);
        const double width_px = ellipse_width_px(e.probability);
        const int alpha = scaled ? 0 : ellipse_fill_alpha(e.probability);
        g.style = add_style(strf("ellipse%s-%zu-%03ld", scaled ? "-scaled" : "", colour, per_mille),
                            strf("PEN(c:#%sFF,w:%.1fpx);BRUSH(fc:#%s%02X)", kPalette[colour],
                                 width_px, kPalette[colour], alpha));
        content.features.push_back(std::move(g));
      }
    };
    add_ellipses(u.ellipses, false);
    add_ellipses(u.scaled_ellipses, true);
  }
  // Tracks: the fixes of one signal solved per time window, joined in time order.
  std::map<std::string, std::vector<const Fix*>> windowed;
  for (const FixResult& r : results) {
    if (has_position(r.fix) && r.fix.has_window())
      windowed[r.fix.signal].push_back(&r.fix);
  }
  for (auto& [signal, fixes] : windowed) {
    if (fixes.size() < 2)
      continue;
    std::stable_sort(fixes.begin(), fixes.end(), [](const Fix* a, const Fix* b) {
      return a->window_start_unix_ns < b->window_start_unix_ns;
    });
    Path path;
    for (const Fix* fx : fixes)
      path.push_back(fx->position);
    MapFeature f;
    f.group = Group::tracks;
    f.fields = {{"kind", std::string("track")}, {"signal", signal}};
    f.geometry = line_geometry(detail::unroll_short_way(path));
    f.name = "track " + signal_label(signal);
    f.description = strf("Fixes of signal %s in %zu time windows, in time order, from %s to %s.",
                         signal_label(signal).c_str(), fixes.size(),
                         format_iso8601_utc(fixes.front()->window_start_unix_ns).c_str(),
                         format_iso8601_utc(fixes.back()->window_end_unix_ns).c_str());
    const std::size_t colour = colour_index(signal);
    f.style = add_style(strf("track-%zu", colour), strf("PEN(c:#%sFF,w:3px)", kPalette[colour]));
    content.features.push_back(std::move(f));
  }
  // Search areas: the highest-density regions and the ranked segments.
  for (const SearchArea& area : areas) {
    if (!area.map.ok)
      continue;
    const std::size_t colour = colour_index(area.signal);
    const std::string label = signal_label(area.signal);
    for (const HpdRegion& r : area.regions) {
      if (r.parts.empty())
        continue;
      MapFeature f;
      f.group = Group::regions;
      f.fields = {{"kind", std::string("region")},
                  {"signal", area.signal},
                  {"probability", real_or_null(r.probability)},
                  {"mass", real_or_null(r.mass)},
                  {"area_m2", real_or_null(r.area_m2)}};
      f.geometry = area_geometry(r.parts);
      f.name = percent(r.probability) + " region";
      if (!area.signal.empty())
        f.name += " " + area.signal;
      f.description = "Highest-probability region of signal " + label +
                      ": the smallest area "
                      "holding " +
                      percent(r.probability) + " of the probability map (" +
                      strf("%.2f km2", r.area_m2 / 1e6) + "). An estimate: reflections mislead.";
      const long per_mille = std::lround(r.probability * 1000.0);
      // Dashed outline, light fill: told apart from the ellipses (solid) in grey print too.
      f.style = add_style(strf("region-%zu-%03ld", colour, per_mille),
                          strf("PEN(c:#%sFF,w:%.1fpx,p:\"6px 3px\");BRUSH(fc:#%s%02X)",
                               kPalette[colour], ellipse_width_px(r.probability), kPalette[colour],
                               ellipse_fill_alpha(r.probability) / 2));
      content.features.push_back(std::move(f));
    }
    for (const SearchSegment& seg : area.plan.segments) {
      MapFeature f;
      f.group = Group::segments;
      f.fields = {{"kind", std::string("segment")},
                  {"signal", area.signal},
                  {"segment", seg.id},
                  {"rank", seg.rank},
                  {"poa", real_or_null(seg.poa)},
                  {"cumulative_poa", real_or_null(seg.cumulative_poa)},
                  {"initial_poa", real_or_null(seg.initial_poa)},
                  {"pod", seg.pods.empty() ? Value() : Value(seg.combined_pod)},
                  {"mgrs", seg.mgrs},
                  {"area_m2", real_or_null(seg.area_m2)},
                  {"lat", real_or_null(seg.centre.lat_deg)},
                  {"lon", real_or_null(seg.centre.lon_deg)}};
      f.geometry = area_geometry(seg.outline);
      f.name = seg.id + " #" + std::to_string(seg.rank);
      f.description = strf(
          "Search segment %s, rank %d: POA %.1f%% (cumulative %.1f%%), %.3f km2, "
          "centre MGRS %s.",
          seg.id.c_str(), seg.rank, 100.0 * seg.poa, 100.0 * seg.cumulative_poa, seg.area_m2 / 1e6,
          mgrs_spaced(seg.mgrs).c_str());
      if (!seg.pods.empty())
        f.description += strf(" Searched without success (combined POD %.0f%%); POA before %.1f%%.",
                              100.0 * seg.combined_pod, 100.0 * seg.initial_poa);
      f.style = add_style("segment", strf("PEN(c:#%sFF,w:1.5px);BRUSH(fc:#00000000);"
                                          "LABEL(c:#%sFF,s:0.9)",
                                          kStationColour, kStationColour));
      content.features.push_back(std::move(f));
    }
  }
  return content;
}

OGRLayer* create_layer(GDALDataset& ds, const std::string& path, const char* name,
                       OGRwkbGeometryType type, char** layer_options) {
  OGRSpatialReference srs = wgs84_lon_lat();
  OGRLayer* layer = ds.CreateLayer(name, &srs, type, layer_options);
  if (layer == nullptr)
    fail_output(path, std::string("cannot create layer ") + name);
  return layer;
}

void create_field(OGRLayer& layer, const std::string& path, const char* name, OGRFieldType type) {
  OGRFieldDefn defn(name, type);
  check_ogr(layer.CreateField(&defn), path, std::string("cannot create field ") + name);
}

void set_value(OGRFeature& feature, const std::string& name, const Value& value) {
  const int i = feature.GetFieldIndex(name.c_str());
  if (i < 0)
    return;
  if (std::holds_alternative<int>(value)) {
    feature.SetField(i, std::get<int>(value));
  } else if (std::holds_alternative<double>(value)) {
    feature.SetField(i, std::get<double>(value));
  } else if (std::holds_alternative<std::string>(value)) {
    feature.SetField(i, std::get<std::string>(value).c_str());
  } else {
    feature.SetFieldNull(i);
  }
}

void write_feature(OGRLayer& layer, const std::string& path, const MapFeature& mf, bool kml) {
  OGRFeatureUniquePtr feature(OGRFeature::CreateFeature(layer.GetLayerDefn()));
  if (!feature)
    fail_output(path, "out of memory");
  for (const auto& [name, value] : mf.fields)
    set_value(*feature, name, value);
  if (kml) {
    set_value(*feature, "Name", mf.name);
    set_value(*feature, "description", mf.description);
    if (mf.group == Group::rays) {
      set_value(*feature, "tessellate", 1);
      set_value(*feature, "altitudeMode", std::string("clampToGround"));
    }
    feature->SetStyleString(("@" + mf.style).c_str());
  }
  check_ogr(feature->SetGeometry(mf.geometry.get()), path, "cannot set a geometry");
  check_ogr(layer.CreateFeature(feature.get()), path,
            "cannot write the " + std::string(group_name(mf.group)) + " feature " + mf.name);
}

}  // namespace

void write_geojson(const std::string& path, const std::vector<Bearing>& bearings,
                   const std::vector<FixResult>& results, const ExportOptions& options) {
  write_geojson(path, bearings, results, {}, options);
}

void write_geojson(const std::string& path, const std::vector<Bearing>& bearings,
                   const std::vector<FixResult>& results, const std::vector<SearchArea>& areas,
                   const ExportOptions& options) {
  check_options(path, options);
  const MapContent content = build_content(bearings, results, options, areas);
  std::string extension = fs::path(path).extension().string();
  if (extension.empty())
    extension = ".geojson";
  write_atomically(path, "GeoJSON", extension, nullptr, [&](GDALDataset& ds) {
    // RFC7946=YES: rings rewound counter-clockwise, WGS 84, no "crs" member. The shapes are
    // already cut at the antimeridian here, so GDAL's own heuristic cutting stays off.
    // COORDINATE_PRECISION=7: 1e-7 deg, about 1 cm.
    CPLStringList layer_options;
    layer_options.SetNameValue("RFC7946", "YES");
    layer_options.SetNameValue("COORDINATE_PRECISION", "7");
    layer_options.SetNameValue("WRAPDATELINE", "NO");
    layer_options.SetNameValue("WRITE_NAME", "YES");
    OGRLayer* layer = create_layer(ds, path, "lobfix", wkbUnknown, layer_options.List());
    for (const FieldDef& f : kFields)
      create_field(*layer, path, f.name, f.type);
    for (const MapFeature& mf : content.features)
      write_feature(*layer, path, mf, false);
  });
}

void write_kml(const std::string& path, const std::vector<Bearing>& bearings,
               const std::vector<FixResult>& results, const ExportOptions& options) {
  write_kml(path, bearings, results, {}, options);
}

void write_kml(const std::string& path, const std::vector<Bearing>& bearings,
               const std::vector<FixResult>& results, const std::vector<SearchArea>& areas,
               const ExportOptions& options) {
  check_options(path, options);
  const MapContent content = build_content(bearings, results, options, areas);
  // LIBKML chooses by the extension: .kml one file, .kmz an archive of one file per layer
  // (with relative links between them that not every viewer resolves), anything else a
  // directory. So LIBKML always writes one .kml file, and a .kmz target gets that file as
  // doc.kml in a zip archive.
  const bool as_kmz = lower_extension(path) == ".kmz";
  const std::string extension = as_kmz ? ".kmz" : ".kml";
  const auto fill = [&](GDALDataset& ds) {
    // Shared styles in the Document; each placemark points at one by styleUrl.
    OGRStyleTable table;
    for (const StyleDef& s : content.styles) {
      if (!table.AddStyle(s.name.c_str(), s.ogr_style.c_str())) {
        fail_output(path, "cannot add style " + s.name);
      }
    }
    ds.SetStyleTable(&table);
    for (Group g : kGroups) {
      // The tracks, regions and segments folders appear only when there is something in them.
      if ((g == Group::tracks || g == Group::regions || g == Group::segments) &&
          std::none_of(content.features.begin(), content.features.end(),
                       [g](const MapFeature& mf) { return mf.group == g; })) {
        continue;
      }
      const bool points = g == Group::stations || g == Group::fixes;
      CPLStringList layer_options;
      layer_options.SetNameValue("FOLDER", "YES");  // a <Folder>, not a nested <Document>
      OGRLayer* layer = create_layer(ds, path, group_name(g), points ? wkbPoint : wkbUnknown,
                                     layer_options.List());
      // LIBKML maps these to <name>, <description>, <tessellate> and <altitudeMode>.
      create_field(*layer, path, "Name", OFTString);
      create_field(*layer, path, "description", OFTString);
      if (g == Group::rays) {
        create_field(*layer, path, "tessellate", OFTInteger);
        create_field(*layer, path, "altitudeMode", OFTString);
      }
      for (const char* name : group_fields(g))
        create_field(*layer, path, name, field_type(name));
      for (const MapFeature& mf : content.features) {
        if (mf.group == g)
          write_feature(*layer, path, mf, true);
      }
    }
  };
  CPLStringList dataset_options;
  dataset_options.SetNameValue("NAME", "lobfix");
  write_atomically(path, "LIBKML", extension, dataset_options.List(), fill, as_kmz);
}

void write_geopackage(const std::string& path, const std::vector<Bearing>& bearings,
                      const std::vector<FixResult>& results, const std::vector<SearchArea>& areas,
                      const ExportOptions& options) {
  check_options(path, options);
  const MapContent content = build_content(bearings, results, options, areas);
  write_atomically(path, "GPKG", ".gpkg", nullptr, [&](GDALDataset& ds) {
    for (Group g : kGroups) {
      const bool any = std::any_of(content.features.begin(), content.features.end(),
                                   [g](const MapFeature& mf) { return mf.group == g; });
      // Every layer of the first four always (a reader finds them empty when nothing was
      // solved); tracks, regions and segments when there are any.
      if (!any && (g == Group::tracks || g == Group::regions || g == Group::segments))
        continue;
      const bool points = g == Group::stations || g == Group::fixes;
      const bool areas_layer = g == Group::ellipses || g == Group::regions || g == Group::segments;
      OGRLayer* layer = create_layer(
          ds, path, group_name(g),
          points ? wkbPoint : (areas_layer ? wkbMultiPolygon : wkbMultiLineString), nullptr);
      create_field(*layer, path, "name", OFTString);
      create_field(*layer, path, "description", OFTString);
      for (const char* name : group_fields(g))
        create_field(*layer, path, name, field_type(name));
      check_ogr(layer->StartTransaction(), path, "cannot start a transaction");
      for (const MapFeature& mf : content.features) {
        if (mf.group != g)
          continue;
        OGRFeatureUniquePtr feature(OGRFeature::CreateFeature(layer->GetLayerDefn()));
        if (!feature)
          fail_output(path, "out of memory");
        for (const auto& [name, value] : mf.fields)
          set_value(*feature, name, value);
        set_value(*feature, "name", mf.name);
        set_value(*feature, "description", mf.description);
        std::unique_ptr<OGRGeometry> geometry(mf.geometry->clone());
        if (!points) {
          geometry.reset(OGRGeometryFactory::forceTo(
              geometry.release(), areas_layer ? wkbMultiPolygon : wkbMultiLineString));
        }
        check_ogr(feature->SetGeometry(geometry.get()), path, "cannot set a geometry");
        check_ogr(layer->CreateFeature(feature.get()), path,
                  "cannot write the " + std::string(group_name(g)) + " feature " + mf.name);
      }
      check_ogr(layer->CommitTransaction(), path, "cannot commit a layer");
    }
  });
}

void write_gpx_waypoints(const std::string& path, const std::vector<FixResult>& results,
                         const std::vector<SearchArea>& areas) {
  // Names of at most 10 ASCII characters, which hand-held GPS units show whole (common
  // practice; many show more): FIX and S01... for one signal, FIX1 and 1S01... for several.
  std::vector<std::string> signals;
  for (const FixResult& r : results) {
    if (has_position(r.fix) &&
        std::find(signals.begin(), signals.end(), r.fix.signal) == signals.end())
      signals.push_back(r.fix.signal);
  }
  const bool several = signals.size() > 1;
  const auto prefix_of = [&](const std::string& signal) {
    const auto it = std::find(signals.begin(), signals.end(), signal);
    return several ? std::to_string(it - signals.begin() + 1) : std::string();
  };
  write_atomically(path, "GPX", ".gpx", nullptr, [&](GDALDataset& ds) {
    OGRLayer* layer = create_layer(ds, path, "waypoints", wkbPoint, nullptr);
    const auto add = [&](const LatLon& p, const std::string& name, const std::string& cmt,
                         const std::string& desc, const char* sym) {
      OGRFeatureUniquePtr feature(OGRFeature::CreateFeature(layer->GetLayerDefn()));
      if (!feature)
        fail_output(path, "out of memory");
      set_value(*feature, "name", name.substr(0, 10));
      set_value(*feature, "cmt", cmt);
      set_value(*feature, "desc", desc);
      set_value(*feature, "sym", std::string(sym));
      OGRPoint point(wrap_deg180(p.lon_deg), p.lat_deg);
      check_ogr(feature->SetGeometry(&point), path, "cannot set a waypoint");
      check_ogr(layer->CreateFeature(feature.get()), path, "cannot write waypoint " + name);
    };
    std::set<std::string> done;
    for (const FixResult& r : results) {
      if (!has_position(r.fix) || !done.insert(r.fix.signal).second)
        continue;
      const std::string pre = prefix_of(r.fix.signal);
      add(r.fix.position, "FIX" + pre,
          "fix of signal " + signal_label(r.fix.signal) + ", CEP " +
              distance_text(r.uncertainty.cep_m),
          "lobfix estimate: a fix is an estimate; reflections mislead.", "Flag");
      for (const SearchArea& a : areas) {
        if (a.signal != r.fix.signal)
          continue;
        for (const SearchSegment& seg : a.plan.segments) {
          add(seg.centre, pre + seg.id,
              strf("segment %s rank %d POA %.1f%%", seg.id.c_str(), seg.rank, 100.0 * seg.poa),
              "centre of search segment " + seg.id + ", MGRS " + mgrs_spaced(seg.mgrs), "Waypoint");
        }
      }
    }
  });
}

void write_text_file(const std::string& path, const std::string& text) {
  detail::write_file_atomically(path, text);
}

}  // namespace lobfix
