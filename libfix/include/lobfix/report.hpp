// lobfix: the printable field report (stage "export"): one self-contained HTML file with an
// SVG map in the fix's local frame, the fix in every notation, how far to trust it, the
// bearing and segment tables and the cautions; and the map alone as SVG. The library builds
// the text; the caller writes it (write_text_file). docs/report.md.
#pragma once

#include <string>
#include <string_view>
#include <vector>

#include "lobfix/bearing.hpp"
#include "lobfix/crs.hpp"
#include "lobfix/search_area.hpp"
#include "lobfix/summary.hpp"
#include "lobfix/uncertainty.hpp"

namespace lobfix {

struct ReportOptions {
  std::string title = "Transmitter fix: field report";
  /// The user's projected CRS, when the report should give coordinates in it too (not owned;
  /// must outlive the call). nullptr: decimal degrees, DMS, MGRS and UTM only.
  const ProjectedCrs* crs = nullptr;
  int mgrs_digits = 5;  ///< digits per axis of the fix's MGRS reference, 1..5
  /// Width of the map (SVG user units, px at 100%); its height follows the drawn extent.
  int map_width_px = 1000;
};

/// `text` with & < > " ' replaced by character references, for HTML and SVG text and
/// attribute values.
std::string html_escape(std::string_view text);

/// The map alone as a standalone SVG document: in the azimuthal equidistant frame of the
/// first fix (of the stations' mean position when no signal has a fix), x east and y north,
/// true north up. Each layer is a group drawn only when its data are present: "regions",
/// "segments", "rays" (outliers dashed), "stations", "ellipses", "fix", "grid" (UTM lines and
/// labels), "scale-bar", "north-arrow", "legend". No outside resource is referred to.
std::string report_map_svg(const std::vector<Bearing>& bearings,
                           const std::vector<FixResult>& results,
                           const std::vector<SearchArea>& areas, const ReportOptions& options = {});

/// One point given in the user's CRS.
struct CrsCoordinate {
  std::string kind;   ///< "fix", "station", "segment"
  std::string label;  ///< signal, station name or segment id
  LatLon point;
  bool ok = false;       ///< PROJ transformed it
  double easting = 0.0;  ///< CRS units, east first whatever the CRS's axis order
  double northing = 0.0;
  std::string error;  ///< PROJ's reason when !ok
};

/// The fixes, the stations (each distinct position once) and the segment centres in `crs`.
/// A point PROJ cannot transform gets ok = false and the reason, not an exception.
std::vector<CrsCoordinate> crs_coordinates(const std::vector<Bearing>& bearings,
                                           const std::vector<FixResult>& results,
                                           const std::vector<SearchArea>& areas,
                                           const ProjectedCrs& crs);

/// The whole report as one HTML5 document: inline CSS (screen and print: A4 and US Letter,
/// the map never cut across pages) and the inline SVG map; every string from the input
/// escaped; no script, no font, no image or link outside the file.
/// @throws InputError (field "mgrs_digits") unless 1 <= mgrs_digits <= 5.
std::string report_html(const RunInfo& run, const std::vector<Bearing>& bearings,
                        const std::vector<FixResult>& results, const std::vector<SearchArea>& areas,
                        const ReportOptions& options = {});

}  // namespace lobfix
