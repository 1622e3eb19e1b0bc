#include "verbose.hpp"

#include <iostream>

namespace lobfix_app {

namespace {
bool g_verbose = false;  // set once by main, before any command runs
}  // namespace

void set_verbose(bool on) {
  g_verbose = on;
}

bool verbose() {
  return g_verbose;
}

void say(const std::string& line) {
  if (g_verbose)
    std::cerr << "lobfix: " << line << "\n";
}

double ms_since(std::chrono::steady_clock::time_point start) {
  return std::chrono::duration<double, std::milli>(std::chrono::steady_clock::now() - start)
      .count();
}

}  // namespace lobfix_app
