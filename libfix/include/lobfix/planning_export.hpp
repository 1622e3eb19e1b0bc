// lobfix: map layers of the planning products (stage "export"): the ranked spots for the
// next bearing and the contours of a coverage map, as GeoJSON (RFC 7946). Fields:
// docs/planning.md.
#pragma once

#include <cstddef>
#include <string>
#include <vector>

#include "lobfix/fix.hpp"
#include "lobfix/planning.hpp"

namespace lobfix {

/// One Point per ranked spot (kind "candidate": name, rank, team, distance_m,
/// predicted_area_m2, predicted_cep_m, crossing_deg, mgrs), the best `top` of them (0: all),
/// and the current fix (kind "fix": cep_m, area_m2). Atomic (temporary name, renamed).
/// @throws OutputError when it cannot be written.
void write_next_geojson(const std::string& path, const Fix& fix, const NextBearingPlan& plan,
                        std::size_t top = 0);

/// Lines of equal CEP through the map (GDALContourGenerate on the cells; no-data cells break
/// the lines), one LineString per piece with its cep_m, in WGS 84. Atomic.
/// @throws InputError (field "contours") when a level is not positive.
/// @throws OutputError when it cannot be written.
void write_cep_contours_geojson(const std::string& path, const CoverageMap& map,
                                const std::vector<double>& levels_m);

}  // namespace lobfix
