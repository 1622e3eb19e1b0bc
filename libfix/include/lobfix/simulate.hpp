// lobfix: invented scenarios turned into bearings, for planning and testing before a hunt:
// stations fixed or moving along straight geodesic legs, a transmitter fixed or moving, and
// bearings with Gaussian noise, heading errors and wild bearings, all from one seed. Method,
// the scenario file and the outputs: docs/planning.md.
//
// Reproducibility: the generator is std::mt19937_64 (its output sequence is fixed by the C++
// standard); uniform and normal deviates are made here from its raw 64-bit output (53-bit
// uniforms, Box-Muller normals), not with the standard library's distributions, whose
// algorithms differ between implementations. Same scenario, options and seed: the same
// bearings, bit for bit, on any conforming platform with IEEE doubles and the same libm.
#pragma once

#include <cstdint>
#include <optional>
#include <random>
#include <string>
#include <vector>

#include "lobfix/bearing.hpp"
#include "lobfix/error.hpp"
#include "lobfix/geodesy.hpp"

namespace lobfix {

/// Uniform and normal deviates from std::mt19937_64, the same on every platform.
class SeededRandom {
 public:
  explicit SeededRandom(std::uint64_t seed) : engine_(seed) {}
  /// Uniform in [0, 1), 53 random bits.
  double uniform();
  /// Standard normal by the Box-Muller transform (Box and Muller 1958, Ann. Math. Stat.
  /// 29:610-611), both deviates of each pair used.
  double normal();

 private:
  std::mt19937_64 engine_;
  double spare_ = 0.0;
  bool has_spare_ = false;
};

/// A station of a scenario: fixed (speed 0) or walking/driving a straight geodesic leg at a
/// constant speed, taking `bearings` bearings `interval_s` apart from `start_s`.
struct ScenarioStation {
  std::string name;
  LatLon start;
  double sigma_deg = 2.0;             ///< 1-sigma of its receiver's bearings (deg), > 0
  std::optional<double> max_range_m;  ///< hears no transmitter farther than this (m)
  double speed_m_s = 0.0;             ///< >= 0; > 0: a moving station (bearings relative)
  double course_deg = 0.0;            ///< initial azimuth of its leg (deg)
  int bearings = 1;                   ///< how many bearings, >= 1
  double interval_s = 60.0;           ///< between bearings (s), > 0
  double start_s = 0.0;               ///< time of its first bearing after the start (s), >= 0
  SourceRef source;
};

/// The transmitter: where it is at the start and how it moves (speed 0: it stays).
struct ScenarioTransmitter {
  LatLon start;
  double speed_m_s = 0.0;
  double course_deg = 0.0;
  SourceRef source;
};

struct Scenario {
  std::vector<ScenarioStation> stations;
  std::optional<ScenarioTransmitter> transmitter;
};

/// What reading a scenario file found: the scenario, and every bad cell.
struct ScenarioReadResult {
  Scenario scenario;
  std::vector<Diagnostic> errors;    ///< file:line:column: reason, all of them
  std::vector<Diagnostic> warnings;  ///< e.g. unknown columns, ignored
};

/// Read a scenario CSV (docs/planning.md, "Scenario file"): a header naming the columns
/// role, name, lat, lon (required) and sigma_deg, max_range_km, speed_m_s, course_deg,
/// bearings, interval_s, start_s (optional; empty cells take the defaults of
/// ScenarioStation, sigma_deg the given default_sigma_deg). role is "station" or
/// "transmitter" (at most one). Every bad cell is reported; a problem with the whole file
/// (cannot open, no header, a missing required column, a duplicate column) throws.
/// @throws InputError for whole-file problems.
ScenarioReadResult read_scenario_csv(const std::string& path,
                                     std::optional<double> default_sigma_deg = std::nullopt);

struct SimulationOptions {
  std::uint64_t seed = 1;
  std::int64_t start_unix_ns = 0;  ///< the scenario's start time
  /// 1-sigma of the heading of a moving station (deg), >= 0: its bearings are written
  /// relative to the heading, which is off by this much, drawn per bearing.
  double heading_sigma_deg = 0.0;
  /// Probability that a bearing is wild (a reflection): its direction is then uniform on
  /// [0, 360). In [0, 1].
  double wild_rate = 0.0;
  std::string signal;  ///< signal label written on every row ("" for none)
  std::string validate() const;
};

/// One simulated bearing: what the file says, and the truth behind it.
struct SimulatedBearing {
  std::string station;
  std::int64_t time_unix_ns = 0;
  LatLon position;                ///< the station's position (exact)
  bool relative = false;          ///< written relative to the heading (moving station)
  double bearing_deg = 0.0;       ///< as written: true azimuth, or relative to heading_deg
  double sigma_deg = 0.0;         ///< the receiver's 1-sigma, as written
  double heading_deg = 0.0;       ///< measured heading (relative bearings), [0, 360)
  double true_heading_deg = 0.0;  ///< course of the leg at that point
  double heading_sigma_deg = 0.0;
  LatLon transmitter;             ///< where the transmitter was
  double true_azimuth_deg = 0.0;  ///< exact geodesic azimuth to it, [0, 360)
  bool wild = false;
};

/// The bearings of a scenario, in time order (ties in station order).
/// @throws InputError if the scenario has no transmitter or no station, or the options are
/// invalid (field names the option).
std::vector<SimulatedBearing> simulate_bearings(const Scenario& scenario,
                                                const SimulationOptions& options);

/// The simulated bearings as normalise would make them: true azimuths, sigma the receiver's
/// and heading's in quadrature, source "simulated" with the row number of the CSV.
std::vector<Bearing> to_bearings(const std::vector<SimulatedBearing>& simulated,
                                 const std::string& signal = "");

/// Where a moving station or transmitter is `t_s` seconds after the start, and its course.
GeodesicEnd position_at(const LatLon& start, double speed_m_s, double course_deg, double t_s);

/// The texts of the three files below (for standard output).
std::string format_simulated_csv(const std::vector<SimulatedBearing>& bearings,
                                 const std::string& signal);
std::string format_truth_csv(const std::vector<SimulatedBearing>& bearings);
std::string format_tracks_gpx(const std::vector<SimulatedBearing>& bearings);

/// Write the bearings in lobfix's CSV format (docs/input-format.md): time, station, signal,
/// lat, lon, bearing_deg, reference, heading_deg, heading_sigma_deg, sigma_deg. Atomic
/// (temporary name, renamed). @throws OutputError.
void write_simulated_csv(const std::string& path, const std::vector<SimulatedBearing>& bearings,
                         const std::string& signal);
/// Write the truth: one row per bearing with the transmitter's position, the exact azimuth,
/// the error drawn and whether it was wild. Atomic. @throws OutputError.
void write_truth_csv(const std::string& path, const std::vector<SimulatedBearing>& bearings);
/// Write one GPX 1.1 track per moving station (named after it, a point per bearing with its
/// time) and the transmitter's track when it moves. Atomic. @throws OutputError.
void write_tracks_gpx(const std::string& path, const std::vector<SimulatedBearing>& bearings);

}  // namespace lobfix
