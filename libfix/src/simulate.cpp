// Scenario simulation: the scenario CSV reader and the seeded bearings (docs/planning.md).
//
// Notation (Karney 2013, J. Geodesy 87:43-55): a moving station or transmitter follows the
// geodesic leaving its start at course_deg; after t seconds it is s12 = speed * t along it,
// and its course there is azi2. A bearing's true azimuth is azi1 of the geodesic from the
// station to the transmitter.
#include "lobfix/simulate.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <map>
#include <string>
#include <string_view>
#include <utility>

#include "detail/csv_tokenizer.hpp"
#include "detail/plan_csv.hpp"
#include "lobfix/time.hpp"

namespace lobfix {

double SeededRandom::uniform() {
  return static_cast<double>(engine_() >> 11) * 0x1.0p-53;
}

double SeededRandom::normal() {
  if (has_spare_) {
    has_spare_ = false;
    return spare_;
  }
  constexpr double kTwoPi = 6.28318530717958647692;
  const double u1 = 1.0 - uniform();  // (0, 1]: the logarithm stays finite
  const double u2 = uniform();
  const double r = std::sqrt(-2.0 * std::log(u1));
  spare_ = r * std::sin(kTwoPi * u2);
  has_spare_ = true;
  return r * std::cos(kTwoPi * u2);
}

namespace {

enum class Column {
  role,
  name,
  lat,
  lon,
  sigma_deg,
  max_range_km,
  speed_m_s,
  course_deg,
  bearings,
  interval_s,
  start_s,
  count
};
constexpr std::array<const char*, static_cast<std::size_t>(Column::count)> kColumnNames{
    "role",      "name",       "lat",      "lon",        "sigma_deg", "max_range_km",
    "speed_m_s", "course_deg", "bearings", "interval_s", "start_s"};
// Cells that only a station may fill.
constexpr std::array<Column, 5> kStationOnly{Column::sigma_deg, Column::max_range_km,
                                             Column::bearings, Column::interval_s, Column::start_s};

}  // namespace

ScenarioReadResult read_scenario_csv(const std::string& path,
                                     std::optional<double> default_sigma_deg) {
  const std::string text = detail::read_whole_file(path);

  ScenarioReadResult result;
  detail::CsvTokenizer tokenizer(text);
  detail::CsvRecord record;
  if (!tokenizer.next(record))
    throw InputError({path, 0, 0, "", "the file is empty: a scenario needs a header line"});
  const int header_line = record.line;
  std::array<int, static_cast<std::size_t>(Column::count)> position{};
  position.fill(-1);
  for (std::size_t i = 0; i < record.fields.size(); ++i) {
    const std::string name = detail::lower_text(record.fields[i].text);
    const int column = static_cast<int>(i) + 1;
    const auto it = std::find(kColumnNames.begin(), kColumnNames.end(), name);
    if (it == kColumnNames.end()) {
      result.warnings.push_back(
          {path, header_line, column, name, "unknown column '" + name + "' ignored"});
      continue;
    }
    const std::size_t k = static_cast<std::size_t>(it - kColumnNames.begin());
    if (position[k] >= 0) {
      throw InputError(
          {path, header_line, column, name, "column '" + name + "' appears twice in the header"});
    }
    position[k] = static_cast<int>(i);
  }
  for (const Column c : {Column::role, Column::name, Column::lat, Column::lon}) {
    if (position[static_cast<std::size_t>(c)] < 0) {
      throw InputError({path, header_line, 0, kColumnNames[static_cast<std::size_t>(c)],
                        std::string("missing required column '") +
                            kColumnNames[static_cast<std::size_t>(c)] + "'"});
    }
  }
  const std::size_t columns = record.fields.size();
  std::map<std::string, int> names;  // station name -> line

  while (tokenizer.next(record)) {
    const int line = record.line;
    if (record.fields.size() != columns) {
      result.errors.push_back({path, line, 0, "",
                               "row has " + std::to_string(record.fields.size()) +
                                   " fields, the header has " + std::to_string(columns)});
      continue;
    }
    bool ok = true;
    const auto cell = [&](Column c) -> std::string_view {
      const int p = position[static_cast<std::size_t>(c)];
      return p < 0 ? std::string_view() : record.fields[static_cast<std::size_t>(p)].text;
    };
    const auto fail = [&](Column c, std::string reason) {
      result.errors.push_back({path, line, position[static_cast<std::size_t>(c)] + 1,
                               kColumnNames[static_cast<std::size_t>(c)], std::move(reason)});
      ok = false;
    };
    const auto number = [&](Column c, double lo, double hi, bool open_low, double& value) {
      std::string reason;
      if (!detail::parse_number_in(cell(c), lo, hi, open_low, value, reason,
                                   kColumnNames[static_cast<std::size_t>(c)])) {
        fail(c, reason);
        return false;
      }
      return true;
    };
    const std::string role = detail::lower_text(cell(Column::role));
    if (role != "station" && role != "transmitter") {
      fail(Column::role,
           "role '" + std::string(cell(Column::role)) + "' is not one of station, transmitter");
      continue;
    }
    LatLon start;
    if (cell(Column::lat).empty())
      fail(Column::lat, "lat is empty");
    else
      number(Column::lat, -90.0, 90.0, false, start.lat_deg);
    if (cell(Column::lon).empty())
      fail(Column::lon, "lon is empty");
    else
      number(Column::lon, -180.0, 180.0, false, start.lon_deg);
    double speed = 0.0, course = 0.0;
    if (!cell(Column::speed_m_s).empty())
      number(Column::speed_m_s, 0.0, 1000.0, false, speed);
    if (!cell(Column::course_deg).empty())
      number(Column::course_deg, 0.0, 360.0, false, course);

    if (role == "transmitter") {
      for (const Column c : kStationOnly) {
        if (!cell(c).empty())
          fail(c, std::string(kColumnNames[static_cast<std::size_t>(c)]) +
                      " is only used on station rows");
      }
      if (result.scenario.transmitter) {
        fail(Column::role, "a second transmitter (the first is on line " +
                               std::to_string(result.scenario.transmitter->source.line) + ")");
      }
      if (ok)
        result.scenario.transmitter = ScenarioTransmitter{start, speed, course, {path, line}};
      continue;
    }

    ScenarioStation s;
    s.name = std::string(cell(Column::name));
    s.start = start;
    s.speed_m_s = speed;
    s.course_deg = course;
    s.source = {path, line};
    if (s.name.empty()) {
      fail(Column::name, "name is empty: every station needs one");
    } else if (const auto it = names.find(s.name); it != names.end()) {
      fail(Column::name,
           "station '" + s.name + "' is already on line " + std::to_string(it->second));
    }
    if (!cell(Column::sigma_deg).empty()) {
      number(Column::sigma_deg, 0.0, 90.0, true, s.sigma_deg);
    } else if (default_sigma_deg) {
      s.sigma_deg = *default_sigma_deg;
    } else {
      fail(Column::sigma_deg, "sigma_deg is empty (give it, or --sigma-deg)");
    }
    double value = 0.0;
    if (!cell(Column::max_range_km).empty() &&
        number(Column::max_range_km, 0.0, 20000.0, true, value))
      s.max_range_m = value * 1000.0;
    if (!cell(Column::bearings).empty() && number(Column::bearings, 1.0, 100000.0, false, value)) {
      if (value != std::floor(value))
        fail(Column::bearings,
             "bearings " + std::string(cell(Column::bearings)) + " is not a whole number");
      s.bearings = static_cast<int>(value);
    }
    if (!cell(Column::interval_s).empty())
      number(Column::interval_s, 0.0, 1.0e7, true, s.interval_s);
    if (!cell(Column::start_s).empty())
      number(Column::start_s, 0.0, 1.0e8, false, s.start_s);
    if (ok) {
      names.emplace(s.name, line);
      result.scenario.stations.push_back(std::move(s));
    }
  }
  return result;
}

std::string SimulationOptions::validate() const {
  if (!(heading_sigma_deg >= 0.0 && heading_sigma_deg <= 90.0))
    return "the heading sigma must be in [0, 90] deg";
  if (!(wild_rate >= 0.0 && wild_rate <= 1.0))
    return "the wild-bearing rate must be in [0, 1]";
  return "";
}

GeodesicEnd position_at(const LatLon& start, double speed_m_s, double course_deg, double t_s) {
  if (speed_m_s == 0.0 || t_s == 0.0)
    return {start, course_deg};
  return geodesic_direct(start, course_deg, speed_m_s * t_s);
}

std::vector<SimulatedBearing> simulate_bearings(const Scenario& scenario,
                                                const SimulationOptions& options) {
  if (const std::string why = options.validate(); !why.empty())
    throw InputError({"", 0, 0, "simulation", why});
  if (!scenario.transmitter)
    throw InputError({"", 0, 0, "transmitter", "the scenario has no transmitter row"});
  if (scenario.stations.empty())
    throw InputError({"", 0, 0, "stations", "the scenario has no station"});

  struct Event {
    double t_s;
    std::size_t station;
  };
  std::vector<Event> events;
  for (std::size_t i = 0; i < scenario.stations.size(); ++i) {
    const ScenarioStation& s = scenario.stations[i];
    for (int k = 0; k < s.bearings; ++k)
      events.push_back({s.start_s + k * s.interval_s, i});
  }
  std::stable_sort(events.begin(), events.end(),
                   [](const Event& a, const Event& b) { return a.t_s < b.t_s; });

  const ScenarioTransmitter& tx = *scenario.transmitter;
  SeededRandom random(options.seed);
  std::vector<SimulatedBearing> out;
  out.reserve(events.size());
  for (const Event& e : events) {
    // Four deviates per event whatever is used, so that one option does not reshuffle the
    // others' draws.
    const double u_wild = random.uniform();
    const double wild_direction = random.uniform();
    const double n_bearing = random.normal();
    const double n_heading = random.normal();

    const ScenarioStation& s = scenario.stations[e.station];
    const GeodesicEnd at = position_at(s.start, s.speed_m_s, s.course_deg, e.t_s);
    const GeodesicEnd tx_at = position_at(tx.start, tx.speed_m_s, tx.course_deg, e.t_s);
    const GeodesicLine12 line = geodesic_inverse(at.point, tx_at.point);
    if (line.s12_m < 1.0 || (s.max_range_m && line.s12_m > *s.max_range_m))
      continue;  // on top of it, or out of range: no bearing

    SimulatedBearing b;
    b.station = s.name;
    b.time_unix_ns = options.start_unix_ns + std::llround(e.t_s * 1e9);
    b.position = at.point;
    b.sigma_deg = s.sigma_deg;
    b.transmitter = tx_at.point;
    b.true_azimuth_deg = wrap_deg360(line.azi1_deg);
    b.wild = u_wild < options.wild_rate;
    const double seen_deg =
        b.wild ? 360.0 * wild_direction : b.true_azimuth_deg + s.sigma_deg * n_bearing;
    b.relative = s.speed_m_s > 0.0 && options.heading_sigma_deg > 0.0;
    b.true_heading_deg = wrap_deg360(at.azi2_deg);
    if (b.relative) {
      b.heading_sigma_deg = options.heading_sigma_deg;
      b.heading_deg = wrap_deg360(b.true_heading_deg + options.heading_sigma_deg * n_heading);
      b.bearing_deg = wrap_deg360(seen_deg - b.true_heading_deg);
    } else {
      b.bearing_deg = wrap_deg360(seen_deg);
    }
    out.push_back(std::move(b));
  }
  return out;
}

std::vector<Bearing> to_bearings(const std::vector<SimulatedBearing>& simulated,
                                 const std::string& signal) {
  std::vector<Bearing> out;
  out.reserve(simulated.size());
  for (std::size_t i = 0; i < simulated.size(); ++i) {
    const SimulatedBearing& s = simulated[i];
    Bearing b;
    b.station = s.station;
    b.signal = signal;
    b.time_unix_ns = s.time_unix_ns;
    b.time_text = format_iso8601_utc(s.time_unix_ns);
    b.lat_deg = s.position.lat_deg;
    b.lon_deg = s.position.lon_deg;
    b.azimuth_deg = s.relative ? wrap_deg360(s.heading_deg + s.bearing_deg) : s.bearing_deg;
    b.sigma_deg = std::hypot(s.sigma_deg, s.relative ? s.heading_sigma_deg : 0.0);
    b.source = {"simulated", static_cast<int>(i) + 2};
    b.derivation.reference = s.relative ? BearingReference::relative : BearingReference::true_north;
    b.derivation.measured_deg = s.bearing_deg;
    b.derivation.receiver_sigma_deg = s.sigma_deg;
    if (s.relative) {
      b.derivation.heading_deg = s.heading_deg;
      b.derivation.heading_sigma_deg = s.heading_sigma_deg;
      b.derivation.heading_source = "heading_deg column";
    }
    out.push_back(std::move(b));
  }
  return out;
}

}  // namespace lobfix
