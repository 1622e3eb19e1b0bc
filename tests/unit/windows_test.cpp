// Tests of lobfix/windows.hpp: time windows and durations.
#include "lobfix/windows.hpp"

#include <vector>

#include "lobfix/error.hpp"
#include "test_support.hpp"

using namespace lobfix;

namespace {
std::vector<Bearing> at_minutes(const std::vector<int>& minutes) {
  std::vector<Bearing> out;
  for (int m : minutes) {
    Bearing b;
    b.time_unix_ns = 1'780'000'000'000'000'000LL + m * 60'000'000'000LL;
    out.push_back(b);
  }
  return out;
}
}  // namespace

TEST_CASE("fixed windows cover the bearings one after the other, start included, end not") {
  const auto b = at_minutes({0, 1, 4, 5, 9, 10, 12});
  const auto w = make_windows(b, 300.0, 300.0, 1);
  REQUIRE(w.size() == 3);
  CHECK(w[0].indices == std::vector<std::size_t>{0, 1, 2});  // 0 <= t < 5 min
  CHECK(w[1].indices == std::vector<std::size_t>{3, 4});     // 5 <= t < 10
  CHECK(w[2].indices == std::vector<std::size_t>{5, 6});     // 10 <= t < 15
  CHECK(w[1].start_unix_ns - w[0].start_unix_ns == 300'000'000'000LL);
}

TEST_CASE("sliding windows overlap, and thin windows are left out") {
  const auto b = at_minutes({0, 1, 2, 3, 20, 21});
  const auto w = make_windows(b, 240.0, 120.0, 2);
  // Starts at 0, 2, ..., 20 min; windows at 4..18 min hold fewer than 2 bearings.
  REQUIRE(w.size() == 3);
  CHECK(w[0].indices == std::vector<std::size_t>{0, 1, 2, 3});
  CHECK(w[1].indices == std::vector<std::size_t>{2, 3});
  CHECK(w[2].indices == std::vector<std::size_t>{4, 5});
  CHECK_THROWS_AS(make_windows(b, 0.0, 60.0), InputError);
}

TEST_CASE("durations as people write them") {
  CHECK(parse_duration_s("90") == 90.0);
  CHECK(parse_duration_s("90s") == 90.0);
  CHECK(parse_duration_s("10m") == 600.0);
  CHECK(parse_duration_s("10min") == 600.0);
  CHECK(parse_duration_s("1.5h") == 5400.0);
  CHECK_FALSE(parse_duration_s("").has_value());
  CHECK_FALSE(parse_duration_s("ten minutes").has_value());
  CHECK_FALSE(parse_duration_s("-5m").has_value());
  CHECK_FALSE(parse_duration_s("5 m").has_value());
}
