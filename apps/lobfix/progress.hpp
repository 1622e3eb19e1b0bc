// Progress of long runs (many trials, big maps) on stderr, only when stderr is a terminal:
// one line rewritten in place, at most once per percent.
#pragma once

#include <cstddef>
#include <string>

#include "lobfix/planning.hpp"

namespace lobfix_app {

class Progress {
 public:
  explicit Progress(std::string label);
  ~Progress();
  Progress(const Progress&) = delete;
  Progress& operator=(const Progress&) = delete;
  /// The callback for the library (empty when stderr is not a terminal).
  lobfix::ProgressFn callback();

 private:
  void show(std::size_t done, std::size_t total);
  std::string label_;
  bool enabled_ = false;
  bool shown_ = false;
  int last_percent_ = -1;
};

}  // namespace lobfix_app
