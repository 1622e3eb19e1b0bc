// Search segments (docs/search-area.md). POA, POD and the update after an unsuccessful search
// follow the search-theory texts quoted in METHODS.md: POA' = POA (1 - POD) / (1 - POA POD)
// for the searched segment, POA / (1 - POA POD) for the others.
#include "lobfix/segments.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <map>
#include <numeric>

#include "lobfix/error.hpp"
#include "lobfix/geodesy.hpp"

namespace lobfix {

namespace {

[[noreturn]] void bad(const char* field, const std::string& reason) {
  throw InputError({"", 0, 0, field, reason});
}

/// Union-find over squares.
std::size_t root(std::vector<std::size_t>& parent, std::size_t i) {
  while (parent[i] != i) {
    parent[i] = parent[parent[i]];
    i = parent[i];
  }
  return i;
}

void rank_segments(SearchPlan& plan) {
  std::stable_sort(plan.segments.begin(), plan.segments.end(),
                   [](const SearchSegment& a, const SearchSegment& b) { return a.poa > b.poa; });
  double cumulative = 0.0;
  for (std::size_t i = 0; i < plan.segments.size(); ++i) {
    cumulative += plan.segments[i].poa;
    plan.segments[i].rank = static_cast<int>(i) + 1;
    plan.segments[i].cumulative_poa = cumulative;
  }
}

}  // namespace

SearchPlan make_search_plan(const PosteriorMap& map, double side_m, const SegmentOptions& options) {
  if (!(options.region_probability > 0.0 && options.region_probability < 1.0))
    bad("region_probability", "the segments' region must have a probability between 0 and 1");
  if (!(options.merge_below_poa >= 0.0 && options.merge_below_poa < 1.0))
    bad("merge_below_poa", "the merge threshold must be in [0, 1)");
  if (options.mgrs_digits < 1 || options.mgrs_digits > 5)
    bad("mgrs_digits", "MGRS labels take 1 to 5 digits per axis");
  SearchPlan plan;
  plan.signal = map.signal;
  plan.side_m = side_m;
  plan.region_probability = options.region_probability;
  plan.rest_poa = plan.initial_rest_poa = 1.0;
  if (!map.ok)
    return plan;
  const UtmGrid& g = map.grid;
  const double ratio = side_m / g.cell_m;
  const int per = static_cast<int>(std::lround(ratio));
  const double south = g.north_m - g.rows * g.cell_m;
  const auto on_lattice = [&](double v) {
    return std::fabs(v / side_m - std::round(v / side_m)) < 1e-9;
  };
  if (!(side_m > 0.0) || per < 1 || std::fabs(ratio - per) > 1e-9 * ratio || g.columns % per != 0 ||
      g.rows % per != 0 || !on_lattice(g.west_m) || !on_lattice(south)) {
    bad("segment_m",
        "the segment size must be a multiple of the map's cell, with the map's "
        "edges on its multiples");
  }

  // The squares: their POA, and whether the region touches them.
  UtmGrid squares_grid = g;
  squares_grid.cell_m = side_m;
  squares_grid.columns = g.columns / per;
  squares_grid.rows = g.rows / per;
  const std::size_t n = squares_grid.size();
  std::vector<double> poa(n, 0.0);
  std::vector<char> in_region(n, 0);
  double region_mass = 0.0;
  long region_cells = 0;
  const std::vector<char> region =
      hpd_cells(map, options.region_probability, region_mass, region_cells);
  for (int row = 0; row < g.rows; ++row) {
    for (int col = 0; col < g.columns; ++col) {
      const std::size_t k = static_cast<std::size_t>(row) * g.columns + col;
      const std::size_t s = static_cast<std::size_t>(row / per) * squares_grid.columns + col / per;
      poa[s] += map.mass[k];
      if (region[k])
        in_region[s] = 1;
    }
  }

  // Merge tiny squares into their best neighbour, smallest first.
  std::vector<std::size_t> parent(n);
  std::iota(parent.begin(), parent.end(), std::size_t{0});
  std::vector<double> segment_poa = poa;  // valid at roots
  std::vector<std::size_t> order;
  for (std::size_t s = 0; s < n; ++s) {
    if (in_region[s])
      order.push_back(s);
  }
  std::stable_sort(order.begin(), order.end(),
                   [&](std::size_t a, std::size_t b) { return poa[a] < poa[b]; });
  const int sc = squares_grid.columns;
  const int sr = squares_grid.rows;
  for (const std::size_t s : order) {
    const std::size_t rs = root(parent, s);
    if (segment_poa[rs] >= options.merge_below_poa)
      continue;
    const int row = static_cast<int>(s / static_cast<std::size_t>(sc));
    const int col = static_cast<int>(s % static_cast<std::size_t>(sc));
    std::size_t best = n;
    const int neighbours[4][2] = {{0, -1}, {0, 1}, {-1, 0}, {1, 0}};
    for (const auto& d : neighbours) {
      const int r = row + d[0];
      const int c = col + d[1];
      if (r < 0 || c < 0 || r >= sr || c >= sc)
        continue;
      const std::size_t t = static_cast<std::size_t>(r) * sc + c;
      if (!in_region[t])
        continue;
      const std::size_t rt = root(parent, t);
      if (rt != rs && (best == n || segment_poa[rt] > segment_poa[best]))
        best = rt;
    }
    if (best == n)
      continue;
    parent[rs] = best;
    segment_poa[best] += segment_poa[rs];
  }

  // One segment per root, its squares listed.
  std::map<std::size_t, std::vector<std::size_t>> members;
  for (const std::size_t s : order)
    members[root(parent, s)].push_back(s);
  for (const auto& [r, list] : members) {
    SearchSegment seg;
    std::vector<char> mask(n, 0);
    std::size_t main = list.front();
    for (const std::size_t s : list) {
      mask[s] = 1;
      seg.poa += poa[s];
      if (poa[s] > poa[main])
        main = s;
    }
    seg.initial_poa = seg.poa;
    seg.squares = static_cast<int>(list.size());
    seg.area_m2 = static_cast<double>(list.size()) * map.cell_area_m2 * per * per;
    const int row = static_cast<int>(main / static_cast<std::size_t>(sc));
    const int col = static_cast<int>(main % static_cast<std::size_t>(sc));
    seg.centre = utm_reverse(g.zone, squares_grid.centre_easting_m(col),
                             squares_grid.centre_northing_m(row));
    seg.mgrs = mgrs_reference(seg.centre, options.mgrs_digits);
    seg.outline = outline_cells(squares_grid, mask);
    plan.segments.push_back(std::move(seg));
  }
  // The rest: every square outside the segments, summed (not 1 - sum, so that the two add
  // up to the map's total only if the squares partition the map).
  double rest = 0.0;
  for (std::size_t s = 0; s < n; ++s) {
    if (!in_region[s])
      rest += poa[s];
  }
  plan.rest_poa = plan.initial_rest_poa = rest;
  rank_segments(plan);
  const int width = plan.segments.size() < 100 ? 2 : (plan.segments.size() < 1000 ? 3 : 4);
  for (SearchSegment& seg : plan.segments) {
    char id[16];
    std::snprintf(id, sizeof id, "S%0*d", width, seg.rank);
    seg.id = id;
  }
  return plan;
}

std::optional<SearchReport> parse_search_report(std::string_view text) {
  const std::size_t colon = text.rfind(':');
  if (colon == std::string_view::npos || colon == 0 || colon + 1 >= text.size())
    return std::nullopt;
  SearchReport r;
  r.segment = std::string(text.substr(0, colon));
  std::string value(text.substr(colon + 1));
  bool percent = false;
  if (!value.empty() && value.back() == '%') {
    percent = true;
    value.pop_back();
  }
  char* end = nullptr;
  const double v = std::strtod(value.c_str(), &end);
  if (value.empty() || end != value.c_str() + value.size() || !std::isfinite(v))
    return std::nullopt;
  r.pod = percent ? v / 100.0 : v;
  return r;
}

void apply_searches(SearchPlan& plan, const std::vector<SearchReport>& searches) {
  for (const SearchReport& s : searches) {
    if (!(s.pod >= 0.0 && s.pod <= 1.0))
      bad("searched", s.segment + ": the probability of detection must be between 0 and 1");
    const auto it = std::find_if(
        plan.segments.begin(), plan.segments.end(),
        [&](const SearchSegment& seg) { return seg.id == s.segment || seg.mgrs == s.segment; });
    if (it == plan.segments.end())
      bad("searched", s.segment + ": no such segment (give its id, e.g. S01, or its MGRS label)");
    const double denominator = 1.0 - it->poa * s.pod;
    if (!(denominator > 0.0))
      bad("searched", s.segment +
                          ": a search that certainly finds the transmitter where all "
                          "the probability lies leaves nothing to update");
    for (SearchSegment& seg : plan.segments)
      seg.poa /= denominator;
    it->poa *= 1.0 - s.pod;
    plan.rest_poa /= denominator;
    it->pods.push_back(s.pod);
    it->combined_pod = 1.0 - (1.0 - it->combined_pod) * (1.0 - s.pod);
  }
  rank_segments(plan);
}

}  // namespace lobfix
