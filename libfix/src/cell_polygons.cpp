// Outlines of cell sets: see detail/cell_polygons.hpp. Boundary edges are directed with the
// inside on their left, chained into rings, classified by the sign of their area (shoelace
// formula) and each hole given to the smallest outer ring that contains it.
#include "detail/cell_polygons.hpp"

#include <algorithm>
#include <cstdint>
#include <unordered_map>

namespace lobfix::detail {

namespace {

struct Edge {
  Corner from;
  Corner to;
  bool used = false;
};

std::int64_t key(const Corner& c) {
  return (static_cast<std::int64_t>(c.x) << 32) ^ static_cast<std::uint32_t>(c.y);
}

/// Twice the signed area of a closed ring (positive counter-clockwise).
long long twice_area(const std::vector<Corner>& ring) {
  long long a = 0;
  for (std::size_t i = 0; i + 1 < ring.size(); ++i)
    a += static_cast<long long>(ring[i].x) * ring[i + 1].y -
         static_cast<long long>(ring[i + 1].x) * ring[i].y;
  return a;
}

/// Drop vertices in the middle of straight runs; keeps the ring closed.
std::vector<Corner> without_collinear(const std::vector<Corner>& ring) {
  std::vector<Corner> open(ring.begin(), ring.end() - 1);
  std::vector<Corner> out;
  const std::size_t n = open.size();
  for (std::size_t i = 0; i < n; ++i) {
    const Corner& prev = open[(i + n - 1) % n];
    const Corner& cur = open[i];
    const Corner& next = open[(i + 1) % n];
    const long long cross = static_cast<long long>(cur.x - prev.x) * (next.y - cur.y) -
                            static_cast<long long>(cur.y - prev.y) * (next.x - cur.x);
    if (cross != 0)
      out.push_back(cur);
  }
  out.push_back(out.front());
  return out;
}

/// Even-odd test of point (px, py) (in half units, never on an edge) against a closed ring.
bool contains(const std::vector<Corner>& ring, double px, double py) {
  bool in = false;
  for (std::size_t i = 0; i + 1 < ring.size(); ++i) {
    const Corner& a = ring[i];
    const Corner& b = ring[i + 1];
    if ((a.y > py) != (b.y > py)) {
      const double x = a.x + (py - a.y) * (b.x - a.x) / static_cast<double>(b.y - a.y);
      if (px < x)
        in = !in;
    }
  }
  return in;
}

}  // namespace

std::vector<CellPolygon> trace_cells(const std::vector<char>& inside, int columns, int rows) {
  const auto at = [&](int c, int r) {
    return c >= 0 && r >= 0 && c < columns && r < rows &&
           inside[static_cast<std::size_t>(r) * static_cast<std::size_t>(columns) +
                  static_cast<std::size_t>(c)] != 0;
  };
  std::vector<Edge> edges;
  for (int r = 0; r < rows; ++r) {
    for (int c = 0; c < columns; ++c) {
      if (!at(c, r))
        continue;
      const int yb = rows - r - 1;  // bottom edge of the cell, counted upward
      const int yt = rows - r;
      if (!at(c, r + 1))
        edges.push_back({{c, yb}, {c + 1, yb}});
      if (!at(c + 1, r))
        edges.push_back({{c + 1, yb}, {c + 1, yt}});
      if (!at(c, r - 1))
        edges.push_back({{c + 1, yt}, {c, yt}});
      if (!at(c - 1, r))
        edges.push_back({{c, yt}, {c, yb}});
    }
  }
  std::unordered_map<std::int64_t, std::vector<std::size_t>> outgoing;
  for (std::size_t i = 0; i < edges.size(); ++i)
    outgoing[key(edges[i].from)].push_back(i);

  std::vector<std::vector<Corner>> rings;
  for (std::size_t start = 0; start < edges.size(); ++start) {
    if (edges[start].used)
      continue;
    std::vector<Corner> ring{edges[start].from};
    std::size_t e = start;
    while (true) {
      edges[e].used = true;
      const Corner end = edges[e].to;
      ring.push_back(end);
      if (end.x == ring.front().x && end.y == ring.front().y && ring.size() > 2) {
        // Closed, unless this corner is a saddle with another way out still unused that
        // belongs to this ring: rings here never pass a corner twice (left turns), so done.
        break;
      }
      const int dx = end.x - edges[e].from.x;
      const int dy = end.y - edges[e].from.y;
      std::size_t chosen = edges.size();
      for (const std::size_t candidate : outgoing[key(end)]) {
        if (edges[candidate].used)
          continue;
        const int nx = edges[candidate].to.x - end.x;
        const int ny = edges[candidate].to.y - end.y;
        // At a saddle corner take the left turn, toward the inside, which keeps the two
        // parts apart: (dx, dy) turned counter-clockwise is (-dy, dx).
        if (chosen == edges.size() || (nx == -dy && ny == dx))
          chosen = candidate;
      }
      if (chosen == edges.size())
        break;  // cannot happen for a consistent edge set; the ring is closed by its end
      e = chosen;
    }
    rings.push_back(without_collinear(ring));
  }

  std::vector<CellPolygon> polygons;
  std::vector<std::vector<Corner>> holes;
  for (std::vector<Corner>& ring : rings) {
    const long long a2 = twice_area(ring);
    if (a2 > 0) {
      CellPolygon p;
      p.cells = a2 / 2;
      p.outer = std::move(ring);
      polygons.push_back(std::move(p));
    } else {
      holes.push_back(std::move(ring));
    }
  }
  for (std::vector<Corner>& hole : holes) {
    // A point just left of the hole's first edge lies in the region's cells around it.
    const Corner& a = hole[0];
    const Corner& b = hole[1];
    const double mx = 0.5 * (a.x + b.x) -
                      0.25 * (b.y - a.y) / std::max(1, std::abs(b.y - a.y) + std::abs(b.x - a.x));
    const double my = 0.5 * (a.y + b.y) +
                      0.25 * (b.x - a.x) / std::max(1, std::abs(b.y - a.y) + std::abs(b.x - a.x));
    CellPolygon* best = nullptr;
    for (CellPolygon& p : polygons) {
      if (contains(p.outer, mx, my) && (best == nullptr || p.cells < best->cells))
        best = &p;
    }
    if (best != nullptr) {
      best->cells += twice_area(hole) / 2;  // negative: the hole's cells are not inside
      best->holes.push_back(std::move(hole));
    }
  }
  return polygons;
}

}  // namespace lobfix::detail
