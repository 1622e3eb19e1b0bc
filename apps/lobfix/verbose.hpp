// -v/--verbose: what each step did and how long it took, on stderr (stdout keeps the summary
// alone). Off by default.
#pragma once

#include <chrono>
#include <string>

namespace lobfix_app {

void set_verbose(bool on);
bool verbose();

/// Print "lobfix: <line>" on stderr when verbose.
void say(const std::string& line);

/// Milliseconds since `start`.
double ms_since(std::chrono::steady_clock::time_point start);

}  // namespace lobfix_app
