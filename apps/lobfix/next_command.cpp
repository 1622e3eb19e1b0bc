#include "next_command.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <iostream>
#include <nlohmann/json.hpp>

#include "exit_codes.hpp"
#include "lobfix/error.hpp"
#include "lobfix/geodesy.hpp"
#include "lobfix/planning.hpp"
#include "lobfix/planning_export.hpp"

namespace lobfix_app {

CLI::App* add_next_command(CLI::App& app, NextArgs& args) {
  CLI::App* cmd = app.add_subcommand(
      "next",
      "Recommend where to take the next bearing: solve the current bearings, then rank "
      "candidate spots by the predicted area of the 95% ellipse after one more bearing from "
      "each (the information a bearing would add, averaged over where the fix says the "
      "transmitter may be). Spots come from --spots (CSV: name,lat,lon,team) and/or from "
      "rings around each team's last position (--travel-km). A prediction, not a guarantee: "
      "reach every spot safely and by the lead agency's procedures; terrain and reflections "
      "are not in it. See docs/planning.md.");
  add_input_options(cmd, args.input);
  add_fix_options(cmd, args.fix, false);
  cmd->add_option("--spots", args.spots, "candidate spots, CSV with lat,lon (name, team)");
  cmd->add_option("--travel-km", args.travel_km,
                  "also offer spots on rings around each team's last position, out to this")
      ->check(CLI::Range(0.001, 1000.0));
  cmd->add_option("--rings", args.rings, "rings within the travel distance")
      ->capture_default_str()
      ->check(CLI::Range(1, 100));
  cmd->add_option("--ring-points", args.ring_points, "spots per ring")
      ->capture_default_str()
      ->check(CLI::Range(1, 3600));
  cmd->add_option("--team", args.teams,
                  "a station that can move (repeat; default: every station of the input)");
  cmd->add_option("--next-sigma-deg", args.next_sigma_deg,
                  "sigma of the next bearing (default: the median sigma of the input)")
      ->check(CLI::Range(0.01, 90.0));
  cmd->add_option("--signal", args.signal, "the signal to improve when the input has several");
  cmd->add_option("--top", args.top, "spots to list (0: all)")
      ->capture_default_str()
      ->check(CLI::Range(0, 1000000));
  cmd->add_flag("--json", args.json, "print a machine-readable ranking instead of the table");
  cmd->add_option("--geojson", args.geojson, "write the ranked spots and the fix as GeoJSON");
  return cmd;
}

int run_next(const NextArgs& args) {
  using namespace lobfix;
  if (args.spots.empty() && !(args.travel_km > 0.0)) {
    std::cerr << "lobfix: give candidate spots with --spots FILE and/or --travel-km\n";
    return kExitUsage;
  }
  LoadedInput loaded;
  if (const int rc = load_bearings(args.input, loaded); rc != kExitOk)
    return rc;
  SolvedRun solved;
  if (const int rc = solve_bearings(args.fix, loaded.bearings, solved); rc != kExitOk)
    return rc;

  // The one signal to improve.
  const FixResult* chosen = nullptr;
  for (const FixResult& r : solved.results) {
    if (args.signal.empty() ? solved.results.size() == 1 : r.fix.signal == args.signal)
      chosen = &r;
  }
  if (chosen == nullptr) {
    std::cerr << "lobfix: "
              << (args.signal.empty() ? "the input has several signals: choose one with --signal"
                                      : "no signal '" + args.signal + "' in the input")
              << "\n";
    return kExitUsage;
  }
  if (!chosen->fix.ok())
    return kExitNoFix;  // solve_bearings printed why
  std::vector<Bearing> signal_bearings;
  for (const Bearing& b : loaded.bearings)
    if (b.signal == chosen->fix.signal)
      signal_bearings.push_back(b);

  // Teams and their last positions.
  std::vector<TeamPosition> teams = last_positions(signal_bearings);
  if (!args.teams.empty()) {
    std::vector<TeamPosition> picked;
    for (const std::string& name : args.teams) {
      const auto it = std::find_if(teams.begin(), teams.end(),
                                   [&](const TeamPosition& t) { return t.team == name; });
      if (it == teams.end()) {
        std::cerr << "lobfix: --team " << name << ": no bearing of that station in the input\n";
        return kExitUsage;
      }
      picked.push_back(*it);
    }
    teams = picked;
  }

  std::vector<CandidateSpot> spots;
  if (!args.spots.empty()) {
    SpotReadResult read;
    try {
      read = read_spots_csv(args.spots);
    } catch (const InputError& e) {
      std::cerr << e.what() << "\n";
      return kExitInputError;
    }
    for (const Diagnostic& w : read.warnings)
      std::cerr << "warning: " << w.to_string() << "\n";
    if (!read.errors.empty()) {
      for (const Diagnostic& d : read.errors)
        std::cerr << d.to_string() << "\n";
      std::cerr << "lobfix: " << read.errors.size()
                << (read.errors.size() == 1 ? " problem" : " problems") << " in " << args.spots
                << "; nothing was written.\n";
      return kExitInputError;
    }
    assign_nearest_team(read.spots, teams);
    spots = std::move(read.spots);
  }
  if (args.travel_km > 0.0) {
    const std::vector<CandidateSpot> rings =
        ring_candidates(teams, args.travel_km * 1000.0, args.rings, args.ring_points);
    spots.insert(spots.end(), rings.begin(), rings.end());
  }
  if (spots.empty()) {
    std::cerr << "lobfix: no candidate spot to rank\n";
    return kExitInputError;
  }

  NextBearingOptions options;
  if (args.next_sigma_deg) {
    options.sigma_deg = *args.next_sigma_deg;
  } else {
    std::vector<double> sigmas;
    sigmas.reserve(signal_bearings.size());
    for (const Bearing& b : signal_bearings)
      sigmas.push_back(b.sigma_deg);
    std::sort(sigmas.begin(), sigmas.end());
    options.sigma_deg = sigmas[sigmas.size() / 2];
  }
  NextBearingPlan plan;
  try {
    plan = rank_next_bearings(chosen->fix, loaded.bearings, spots, options);
  } catch (const InputError& e) {
    std::cerr << "lobfix: " << e.diagnostic().reason << "\n";
    return kExitNoFix;
  }
  for (const std::string& why : plan.refused)
    std::cerr << "not ranked: " << why << "\n";
  if (plan.ranked.empty()) {
    std::cerr << "lobfix: no spot could be ranked\n";
    return kExitInputError;
  }
  const std::size_t n =
      args.top == 0 ? plan.ranked.size()
                    : std::min<std::size_t>(static_cast<std::size_t>(args.top), plan.ranked.size());
  if (!args.geojson.empty()) {
    try {
      write_next_geojson(args.geojson, chosen->fix, plan, n);
    } catch (const OutputError& e) {
      std::cerr << "lobfix: " << e.what() << "\n";
      return kExitOutputError;
    }
  }

  const Fix& fix = chosen->fix;
  if (args.json) {
    nlohmann::ordered_json j;
    j["signal"] = fix.signal;
    j["fix"] = {{"lat", fix.position.lat_deg},
                {"lon", fix.position.lon_deg},
                {"mgrs", mgrs_reference(fix.position, 4)},
                {"cep_m", plan.current_cep_m},
                {"area95_m2", plan.current_area_m2}};
    j["next_sigma_deg"] = options.sigma_deg;
    j["spots_offered"] = spots.size();
    j["spots_refused"] = plan.refused;
    nlohmann::ordered_json list = nlohmann::ordered_json::array();
    for (std::size_t i = 0; i < n; ++i) {
      const RankedSpot& r = plan.ranked[i];
      list.push_back({{"rank", r.rank},
                      {"name", r.spot.name},
                      {"team", r.spot.team},
                      {"lat", r.spot.position.lat_deg},
                      {"lon", r.spot.position.lon_deg},
                      {"mgrs", r.mgrs},
                      {"distance_m", r.spot.distance_m},
                      {"range_to_fix_m", r.range_m},
                      {"bearing_to_fix_deg", r.azimuth_deg},
                      {"crossing_deg", r.crossing_deg},
                      {"predicted_area95_m2", r.predicted_area_m2},
                      {"predicted_cep_m", r.predicted_cep_m}});
    }
    j["ranked"] = list;
    std::cout << j.dump(2) << "\n";
    return kExitOk;
  }
  std::printf("Next bearing for %s: fix at %s, 95%% area %.3f km2, CEP %.0f m\n",
              fix.signal.empty() ? "the bearings" : ("signal '" + fix.signal + "'").c_str(),
              mgrs_spaced(mgrs_reference(fix.position, 4)).c_str(), plan.current_area_m2 / 1e6,
              plan.current_cep_m);
  std::printf(
      "%zu spots offered, next bearing sigma %.1f deg; best %zu (dist: from the team, to fix: "
      "range to the fix, both km; brg: bearing to the fix; cross: its crossing with the "
      "bearings so far):\n",
      spots.size(), options.sigma_deg, n);
  std::printf("%4s  %-24s %-16s %-10s %8s %8s %8s %6s %11s %7s\n", "rank", "spot", "MGRS", "team",
              "dist km", "to fix", "brg deg", "cross", "area95 km2", "CEP m");
  for (std::size_t i = 0; i < n; ++i) {
    const RankedSpot& r = plan.ranked[i];
    std::printf("%4d  %-24s %-16s %-10s %8.2f %8.2f %8.1f %6.0f %11.4f %7.0f\n", r.rank,
                r.spot.name.c_str(), mgrs_spaced(r.mgrs).c_str(), r.spot.team.c_str(),
                r.spot.distance_m / 1000.0, r.range_m / 1000.0, r.azimuth_deg, r.crossing_deg,
                r.predicted_area_m2 / 1e6, r.predicted_cep_m);
  }
  std::printf(
      "A prediction, not a guarantee: reach a spot only if it is safe and allowed, and expect "
      "terrain and reflections to mislead.\n");
  return kExitOk;
}

}  // namespace lobfix_app
