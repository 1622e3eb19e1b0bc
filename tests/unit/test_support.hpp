// Helpers shared by the unit tests.
#pragma once

#include <doctest/doctest.h>

#include <cmath>
#include <string>

// Absolute-tolerance check that prints both values and the tolerance on failure.
#define CHECK_ABS(actual, expected, tolerance)                                             \
  do {                                                                                     \
    const double lobfix_a_ = (actual);                                                     \
    const double lobfix_e_ = (expected);                                                   \
    const double lobfix_t_ = (tolerance);                                                  \
    INFO(#actual " = " << lobfix_a_ << ", expected " << lobfix_e_ << " +- " << lobfix_t_); \
    CHECK(std::fabs(lobfix_a_ - lobfix_e_) <= lobfix_t_);                                  \
  } while (0)

namespace lobfix_test {

/// Directory for files a test writes (created by CMake).
inline std::string tmp_path(const std::string& name) {
  return std::string(LOBFIX_TEST_TMP_DIR) + "/" + name;
}
inline std::string data_path(const std::string& name) {
  return std::string(LOBFIX_TEST_DATA_DIR) + "/" + name;
}

}  // namespace lobfix_test
