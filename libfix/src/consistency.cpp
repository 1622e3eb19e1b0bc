// The trend test for a moving transmitter. Notation: z_i normalised residual of bearing i
// (unit variance under the stationary model), t_i its time (s); for station s,
// b_s = sum (t - tbar) z / sum (t - tbar)^2 and T = sum_s b_s^2 sum (t - tbar)^2.
// The residuals are taken at the fitted fix, which absorbs 2 degrees of freedom overall; with
// several stations the chi-square reference is then slightly conservative (docs/robust.md).
#include "lobfix/consistency.hpp"

#include <cmath>
#include <map>
#include <string>

#include "lobfix/uncertainty.hpp"

namespace lobfix {

MotionTest test_for_motion(const Fix& fix, const std::vector<Bearing>& bearings, double alpha) {
  MotionTest out;
  if (!fix.ok())
    return out;
  struct Sums {
    std::vector<double> t_s;
    std::vector<double> z;
    std::vector<double> residual_deg;
  };
  std::map<std::string, Sums> by_station;
  for (const BearingFit& bf : fix.bearings) {
    if (bf.outlier)
      continue;
    const Bearing& b = bearings[bf.index];
    Sums& s = by_station[b.station];
    s.t_s.push_back(static_cast<double>(b.time_unix_ns) * 1e-9);
    s.z.push_back(bf.normalized_residual);
    s.residual_deg.push_back(bf.residual_deg);
  }
  double strongest = -1.0;
  for (const auto& [station, s] : by_station) {
    const std::size_t n = s.t_s.size();
    if (n < 3)
      continue;
    double tbar = 0.0;
    for (double t : s.t_s)
      tbar += t / static_cast<double>(n);
    double stt = 0.0, stz = 0.0, str = 0.0;
    for (std::size_t k = 0; k < n; ++k) {
      const double dt = s.t_s[k] - tbar;
      stt += dt * dt;
      stz += dt * s.z[k];
      str += dt * s.residual_deg[k];
    }
    if (!(stt > 1.0))
      continue;  // all at (nearly) one time: no trend to see
    const double contribution = stz * stz / stt;
    out.statistic += contribution;
    ++out.stations_tested;
    if (contribution > strongest) {
      strongest = contribution;
      out.strongest_station = station;
      out.strongest_drift_deg_per_min = str / stt * 60.0;
    }
  }
  if (out.stations_tested > 0) {
    out.p_value = chi2_survival(out.statistic, out.stations_tested);
    out.moving_suspected = out.p_value < alpha;
  }
  return out;
}

}  // namespace lobfix
