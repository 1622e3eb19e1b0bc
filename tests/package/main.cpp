// A consumer of the installed lobfix package (tests/package/CMakeLists.txt): reads, normalises
// and solves three bearings through the public API, and evaluates the compiled-in magnetic
// model. Exit code 0 only when every check holds.
//
// Invented scenario: a transmitter in open country and three stations 8-12 km from it; the
// bearings are the exact geodesic azimuths from each station to the transmitter, computed here
// with GeographicLib (Geodesic::WGS84(), Karney 2013, J. Geodesy 87:43-55), so the fix must
// come back to the transmitter.
#include <GeographicLib/Geodesic.hpp>
#include <cmath>
#include <cstdio>
#include <exception>
#include <fstream>
#include <iomanip>
#include <sstream>
#include <string>
#include <vector>

#include "lobfix/magnetic.hpp"
#include "lobfix/normalise.hpp"
#include "lobfix/reader.hpp"
#include "lobfix/solver.hpp"

namespace {

int failures = 0;

void check(bool ok, const std::string& what) {
  std::printf("%s: %s\n", ok ? "ok  " : "FAIL", what.c_str());
  if (!ok) {
    ++failures;
  }
}

struct Station {
  const char* name;
  double from_transmitter_azimuth_deg;  // where the station lies, seen from the transmitter
  double distance_m;
};

// The three-row CSV (docs/input-format.md), bearings from the known geometry.
std::string bearing_csv(double tx_lat_deg, double tx_lon_deg) {
  const GeographicLib::Geodesic& geod = GeographicLib::Geodesic::WGS84();
  const std::vector<Station> stations = {
      {"walker-1", 200.0, 8000.0}, {"vehicle-2", 310.0, 12000.0}, {"mast-3", 75.0, 10000.0}};
  std::ostringstream csv;
  csv << "time,station,lat,lon,bearing_deg,sigma_deg,pos_sigma_m,signal\n";
  csv << std::fixed << std::setprecision(9);
  int minute = 0;
  for (const Station& s : stations) {
    double lat_deg = 0.0, lon_deg = 0.0;
    geod.Direct(tx_lat_deg, tx_lon_deg, s.from_transmitter_azimuth_deg, s.distance_m, lat_deg,
                lon_deg);
    double distance_m = 0.0, azi1_deg = 0.0, azi2_deg = 0.0;
    geod.Inverse(lat_deg, lon_deg, tx_lat_deg, tx_lon_deg, distance_m, azi1_deg, azi2_deg);
    const double bearing_deg = azi1_deg < 0.0 ? azi1_deg + 360.0 : azi1_deg;
    csv << "2026-05-04T08:" << std::setw(2) << std::setfill('0') << minute << ":00Z," << s.name
        << ',' << lat_deg << ',' << lon_deg << ',' << bearing_deg << ",2.0,0,beacon\n";
    minute += 5;
  }
  return csv.str();
}

void check_fix() {
  const double tx_lat_deg = 47.318256, tx_lon_deg = -101.927431;  // invented
  std::istringstream in(bearing_csv(tx_lat_deg, tx_lon_deg));
  const lobfix::ReadResult read = lobfix::read_observations_csv(in, "consumer.csv");
  check(read.rows_read == 3 && read.observations.size() == 3 && read.row_errors.empty(),
        "read_observations_csv: 3 rows read, 3 good");

  const lobfix::NormaliseResult normalised =
      lobfix::normalise(read.observations, {}, lobfix::NormaliseOptions{});
  check(normalised.bearings.size() == 3 && normalised.errors.empty(), "normalise: 3 true bearings");

  const lobfix::Fix fix = lobfix::solve_fix(normalised.bearings);
  check(fix.ok(), std::string("solve_fix: status ") + lobfix::to_string(fix.status));
  if (!fix.ok()) {
    return;
  }
  double miss_m = 0.0;
  GeographicLib::Geodesic::WGS84().Inverse(tx_lat_deg, tx_lon_deg, fix.position.lat_deg,
                                           fix.position.lon_deg, miss_m);
  // Exact bearings (written to 1e-9 deg, i.e. under a micrometre at 12 km): the fix is the
  // transmitter to within the solver's convergence (SolveOptions::convergence_m, 0.1 mm);
  // 1 cm leaves room for the rounding of the CSV.
  std::ostringstream what;
  what << std::setprecision(3) << "fix within 0.01 m of the transmitter (off by " << miss_m
       << " m)";
  check(miss_m < 0.01, what.str());
}

// Every WMM2025 row of the official test values: the declination to the table's 0.01 deg
// (rounding half a unit, plus 0.001 deg).
void check_magnetic_model() {
  std::ifstream table(LOBFIX_WMM_TEST_VALUES);
  check(static_cast<bool>(table), std::string("open ") + LOBFIX_WMM_TEST_VALUES);
  std::string line;
  std::getline(table, line);  // header: date,alt,lat,lon,x,y,z,h,f,incl,decl,gv
  int rows = 0;
  double worst_deg = 0.0;
  while (std::getline(table, line)) {
    std::vector<double> v;
    std::istringstream cells(line);
    std::string cell;
    while (std::getline(cells, cell, ',')) {
      v.push_back(std::stod(cell));
    }
    if (v.size() != 12 || v[0] < 2025.0 || v[0] >= 2030.0) {
      continue;  // other models' rows
    }
    const lobfix::MagneticDeclination d =
        lobfix::wmm_declination_at_year(v[2], v[3], v[1] * 1000.0, v[0]);
    worst_deg = std::fmax(worst_deg, std::fabs(d.declination_deg - v[10]));
    ++rows;
  }
  std::ostringstream what;
  what << rows << " WMM2025 test values: declination within 0.006 deg (worst " << worst_deg
       << " deg)";
  check(rows > 0 && worst_deg <= 0.006, what.str());
}

}  // namespace

int main() {
  try {
    check_fix();
    check_magnetic_model();
  } catch (const std::exception& e) {
    check(false, std::string("exception: ") + e.what());
  }
  return failures == 0 ? 0 : 1;
}
