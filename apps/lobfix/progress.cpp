#include "progress.hpp"

#include <unistd.h>

#include <cstdio>
#include <utility>

namespace lobfix_app {

Progress::Progress(std::string label)
    : label_(std::move(label)), enabled_(::isatty(STDERR_FILENO) == 1) {}

Progress::~Progress() {
  if (shown_)
    std::fprintf(stderr, "\r%*s\r", static_cast<int>(label_.size()) + 24, "");
}

lobfix::ProgressFn Progress::callback() {
  if (!enabled_)
    return {};
  return [this](std::size_t done, std::size_t total) { show(done, total); };
}

void Progress::show(std::size_t done, std::size_t total) {
  if (total == 0)
    return;
  const int percent =
      static_cast<int>(100.0 * static_cast<double>(done) / static_cast<double>(total));
  if (percent == last_percent_)
    return;
  last_percent_ = percent;
  shown_ = true;
  std::fprintf(stderr, "\r%s: %3d%% (%zu of %zu)", label_.c_str(), percent, done, total);
  std::fflush(stderr);
}

}  // namespace lobfix_app
