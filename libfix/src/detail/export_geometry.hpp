// lobfix (private): map geometry helpers shared by shapes.cpp and export.cpp.
#pragma once

#include "lobfix/shapes.hpp"

namespace lobfix::detail {

/// For a closed ring that winds once around a pole (ring_encloses_pole() is true): the
/// polygon, in plain longitudes [-180, 180], of the cap the ring bounds. It runs along the
/// ring eastward from its crossing of the antimeridian at -180 to the same crossing at +180,
/// then up (or down) the antimeridian to the pole, along the pole "edge" (lat +-90) from
/// +180 to -180, and back down to the start; closed (first vertex repeated last).
///
/// The pole is the north pole when the ring's mean latitude is >= 0, else the south pole:
/// the cap on the ring's own side, which is the one holding the centre of any ellipse small
/// enough to matter. Consecutive ring vertices are joined the short way round; the ring is
/// assumed to cross the antimeridian once (true for a convex shape around the pole), a
/// stray wiggle past +-180 is clamped to it.
Path pole_closed_ring(const Path& ring);

/// Unrolled path -> the same vertices with each longitude shifted by a multiple of 360 so
/// that consecutive vertices are less than 180 deg apart (the short way round). The first
/// vertex is kept as given.
Path unroll_short_way(const Path& path);

}  // namespace lobfix::detail
