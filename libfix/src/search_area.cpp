#include "lobfix/search_area.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

#include "lobfix/error.hpp"

namespace lobfix {

SearchArea make_search_area(const std::vector<Bearing>& bearings, const FixResult& result,
                            const SearchAreaOptions& options) {
  SearchArea area;
  area.signal = result.fix.signal;
  std::vector<double> probabilities = options.region_probabilities;
  for (const double p : probabilities) {
    if (!(p > 0.0 && p < 1.0))
      throw InputError({"", 0, 0, "hpd", "a region's probability must be between 0 and 1"});
  }
  if (std::none_of(probabilities.begin(), probabilities.end(), [&](double p) {
        return std::fabs(p - options.segments.region_probability) < 1e-12;
      })) {
    probabilities.push_back(options.segments.region_probability);
  }
  std::sort(probabilities.begin(), probabilities.end());
  probabilities.erase(std::unique(probabilities.begin(), probabilities.end()), probabilities.end());

  area.map = posterior_map(bearings, result.fix, options.map);
  if (!area.map.ok) {
    area.plan.signal = area.signal;
    area.plan.rest_poa = area.plan.initial_rest_poa = 1.0;
    if (!options.searched.empty())
      apply_searches(area.plan, options.searched);  // names the unknown segment
    return area;
  }
  area.regions = hpd_regions(area.map, probabilities);
  for (const HpdRegion& r : area.regions) {
    for (const Ellipse& e : result.uncertainty.ellipses) {
      if (std::fabs(e.probability - r.probability) < 1e-12)
        area.comparisons.push_back(compare_with_ellipse(area.map, result.fix, e, r));
    }
  }
  area.plan = make_search_plan(area.map, options.map.align_m, options.segments);
  apply_searches(area.plan, options.searched);

  char buf[400];
  if (area.map.border_mass > 1e-3) {
    std::snprintf(buf, sizeof buf,
                  "%.1f%% of the probability lies at the edge of the mapped square: the bearings "
                  "do not bound the transmitter's distance well. Take bearings from other "
                  "places, or give the area to search.",
                  100.0 * area.map.border_mass);
    area.notes.emplace_back(buf);
  }
  if (area.map.max_azimuth_error_fraction > 0.01) {
    std::snprintf(buf, sizeof buf,
                  "The map's fast azimuths are off by up to %.1f%% of a bearing sigma here "
                  "(the map is very large).",
                  100.0 * area.map.max_azimuth_error_fraction);
    area.notes.emplace_back(buf);
  }
  return area;
}

}  // namespace lobfix
