// Exit codes of the lobfix command (docs/cli.md).
#pragma once

namespace lobfix_app {

enum ExitCode : int {
  kExitOk = 0,           ///< every signal has a fix; outputs written
  kExitInputError = 1,   ///< bad input file or bad rows (without --skip-bad); nothing written
  kExitUsage = 2,        ///< bad command line
  kExitNoFix = 3,        ///< at least one signal has no fix (degenerate geometry)
  kExitOutputError = 4,  ///< an output file could not be written
};

}  // namespace lobfix_app
