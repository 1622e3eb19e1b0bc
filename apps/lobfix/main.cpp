// The lobfix command-line tool: parses the command line and hands over to a subcommand.
#include <CLI/CLI.hpp>
#include <cstdio>
#include <iostream>

#include "area_command.hpp"
#include "coverage_command.hpp"
#include "evaluate_command.hpp"
#include "exit_codes.hpp"
#include "live_command.hpp"
#include "next_command.hpp"
#include "report_command.hpp"
#include "simulate_command.hpp"
#include "solve_command.hpp"
#include "verbose.hpp"

// Bad input and unwritable outputs are caught where they arise (the *_command.cpp files);
// any other exception is a lobfix bug (tier 3, docs/architecture.md) and should stop the
// program with std::terminate's message. NOLINTNEXTLINE(bugprone-exception-escape)
int main(int argc, char** argv) {
  CLI::App app{
      "lobfix: turns lines of bearing from several stations into a transmitter fix with a "
      "confidence ellipse, and into map files for field teams.\n"
      "A fix is an estimate: reflections mislead, and the lead agency's procedures come first."};
  app.set_version_flag("--version", std::string("lobfix ") + LOBFIX_VERSION);
  app.require_subcommand(1);
  bool verbose = false;
  app.add_flag("-v,--verbose", verbose,
               "say on stderr what each step did and how long it took (before or after the "
               "subcommand)");
  app.fallthrough();
  app.footer(
      "Run 'lobfix solve --help' for the bearing file format and options; 'lobfix area' maps "
      "the search area and cuts it into segments (docs/search-area.md); 'lobfix report' writes a "
      "printable HTML field report (docs/report.md); 'lobfix next', "
      "'coverage', 'simulate' and 'evaluate' plan the hunt (docs/planning.md); 'lobfix live' "
      "takes bearings as they stream in (docs/live.md).\n"
      "Exit codes: 0 fix found, 1 bad input, 2 bad command line, 3 no fix for some "
      "signal, 4 output not written.");

  lobfix_app::SolveArgs solve_args;
  CLI::App* solve = lobfix_app::add_solve_command(app, solve_args);
  lobfix_app::AreaArgs area_args;
  CLI::App* area = lobfix_app::add_area_command(app, area_args);
  lobfix_app::NextArgs next_args;
  CLI::App* next = lobfix_app::add_next_command(app, next_args);
  lobfix_app::CoverageArgs coverage_args;
  CLI::App* coverage = lobfix_app::add_coverage_command(app, coverage_args);
  lobfix_app::SimulateArgs simulate_args;
  CLI::App* simulate = lobfix_app::add_simulate_command(app, simulate_args);
  lobfix_app::EvaluateArgs evaluate_args;
  CLI::App* evaluate = lobfix_app::add_evaluate_command(app, evaluate_args);
  lobfix_app::ReportArgs report_args;
  CLI::App* report = lobfix_app::add_report_command(app, report_args);
  lobfix_app::LiveArgs live_args;
  CLI::App* live = lobfix_app::add_live_command(app, live_args);

  try {
    app.parse(argc, argv);
  } catch (const CLI::CallForHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForAllHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForVersion& e) {
    return app.exit(e);
  } catch (const CLI::ParseError& e) {
    app.exit(e);
    return lobfix_app::kExitUsage;
  }
  lobfix_app::set_verbose(verbose);
  if (solve->parsed())
    return lobfix_app::run_solve(solve_args);
  if (area->parsed())
    return lobfix_app::run_area(area_args);
  if (next->parsed())
    return lobfix_app::run_next(next_args);
  if (coverage->parsed())
    return lobfix_app::run_coverage(coverage_args);
  if (simulate->parsed())
    return lobfix_app::run_simulate(simulate_args);
  if (evaluate->parsed())
    return lobfix_app::run_evaluate(evaluate_args);
  if (report->parsed())
    return lobfix_app::run_report(report_args);
  if (live->parsed())
    return lobfix_app::run_live(live_args);
  return lobfix_app::kExitUsage;
}
