#include "lobfix/summary.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <nlohmann/json.hpp>
#include <set>
#include <string>

#include "lobfix/geodesy.hpp"
#include "lobfix/time.hpp"

namespace lobfix {

namespace {

std::string distance_text(double m) {
  if (!std::isfinite(m))
    return "-";
  if (m < 1000.0)
    return fmt::format("{:.0f} m", m);
  if (m < 100000.0)
    return fmt::format("{:.2f} km", m / 1000.0);
  return fmt::format("{:.0f} km", m / 1000.0);
}

// Greedy word wrap to `width` columns, for long notes in the terminal.
std::string wrap_words(const std::string& text, std::size_t width) {
  std::string out;
  std::size_t line = 0;
  std::size_t i = 0;
  while (i < text.size()) {
    const std::size_t j = std::min(text.find(' ', i), text.size());
    const std::size_t len = j - i;
    if (line > 0 && line + 1 + len > width) {
      out += '\n';
      line = 0;
    } else if (line > 0) {
      out += ' ';
      ++line;
    }
    out.append(text, i, len);
    line += len;
    i = j + 1;
  }
  return out;
}

// "13TEL1238724266" -> "13T EL 12387 24266", as grid references are read aloud and written
// on maps (common practice); the JSON keeps the compact form of the MGRS standard.
std::string spaced_mgrs(const std::string& mgrs) {
  std::size_t digits = mgrs.size();
  while (digits > 0 && std::isdigit(static_cast<unsigned char>(mgrs[digits - 1])))
    --digits;
  const std::size_t n = mgrs.size() - digits;
  if (digits < 2 || n % 2 != 0)
    return mgrs;
  return mgrs.substr(0, digits - 2) + " " + mgrs.substr(digits - 2, 2) + " " +
         mgrs.substr(digits, n / 2) + " " + mgrs.substr(digits + n / 2);
}

// One labelled block of the summary: "Label      text", the text wrapped at 78 columns and
// its continuation lines indented under the first.
std::string labelled(const char* label, const std::string& text) {
  std::string words = wrap_words(text, 78);
  for (std::size_t k = 0; (k = words.find('\n', k)) != std::string::npos; k += 12) {
    words.replace(k, 1, "\n           ");
  }
  return fmt::format("{:<11}", label) + words + "\n";
}

std::string signal_title(const std::string& signal) {
  return signal.empty() ? std::string("(no signal label)") : "signal '" + signal + "'";
}

// The fit in words, for the field user.
std::string fit_words(const Fix& fix, const Uncertainty& u) {
  if (fix.dof <= 0) {
    return "two bearings: no check of the stated sigmas is possible; a third bearing from "
           "another place would test them";
  }
  if (u.sigmas_too_small) {
    return fmt::format(
        "the bearings scatter about {:.1f} times more than their stated sigmas (p = {:.3g}); "
        "suspect reflections, a wrong bearing, a moving transmitter, or sigmas set too small. "
        "The residual-scaled ellipses below are the more honest ones",
        std::sqrt(u.variance_factor), u.p_value);
  }
  return fmt::format("consistent with the stated sigmas (p = {:.3g})", u.p_value);
}

std::string loss_name(RobustLoss loss) {
  switch (loss) {
    case RobustLoss::none:
      return "no robust";
    case RobustLoss::huber:
      return "Huber";
    case RobustLoss::cauchy:
      return "Cauchy";
    case RobustLoss::andrews:
      return "Andrews' sine";
  }
  return "";
}

// The true azimuth the solver used (the chosen one of two mirror candidates).
double used_azimuth_deg(const Bearing& b, const BearingFit& bf) {
  return bf.used_alt && b.alt_azimuth_deg ? *b.alt_azimuth_deg : b.azimuth_deg;
}

// How the bearing became true, in a few words for the table.
std::string derivation_words(const Bearing& b, const BearingFit& bf) {
  const BearingDerivation& d = b.derivation;
  std::string out;
  switch (d.reference) {
    case BearingReference::true_north:
      out = "true";
      break;
    case BearingReference::magnetic:
      out = fmt::format("mag {:.1f} {:+.2f} decl", d.measured_deg, d.declination_deg.value_or(0));
      break;
    case BearingReference::grid:
      out = fmt::format("grid {:.1f} {:+.2f} conv", d.measured_deg, d.convergence_deg.value_or(0));
      break;
    case BearingReference::relative:
      out = fmt::format("rel {:.1f} + hdg {:.1f}{}", d.measured_deg, d.heading_deg.value_or(0),
                        d.heading_source == "track course" ? " (track)" : "");
      break;
  }
  if (d.from_interferometer)
    out += ", phase";
  if (bf.ambiguous)
    out += fmt::format(", mirror {:.1f} rejected", bf.rejected_azimuth_deg);
  if (d.position_source != "file" && !d.position_source.empty())
    out += ", pos from track";
  if (bf.bias_deg != 0.0)
    out += fmt::format(", offset {:+.2f} removed", bf.bias_deg);
  return out;
}

std::string ellipse_line(const Ellipse& e) {
  return fmt::format("{:>4.0f}%  {} x {} (semi-axes), major axis {:05.1f} deg", e.probability * 100,
                     distance_text(e.semi_major_m), distance_text(e.semi_minor_m),
                     e.orientation_deg);
}

nlohmann::ordered_json ellipse_json(const Ellipse& e) {
  return {{"probability", e.probability},
          {"semi_major_m", e.semi_major_m},
          {"semi_minor_m", e.semi_minor_m},
          {"orientation_deg", e.orientation_deg}};
}

nlohmann::ordered_json diagnostic_json(const Diagnostic& d) {
  return {{"file", d.file},   {"line", d.line},     {"column", d.column},
          {"field", d.field}, {"reason", d.reason}, {"message", d.to_string()}};
}

std::string percent_text(double p) {
  return fmt::format("{:.1f}%", 100.0 * p);
}

nlohmann::ordered_json area_json(const SearchArea& a) {
  nlohmann::ordered_json j;
  j["signal"] = a.signal;
  j["ok"] = a.map.ok;
  if (!a.map.ok) {
    j["message"] = a.map.message;
    return j;
  }
  const UtmGrid& g = a.map.grid;
  j["map"] = {{"crs", "EPSG:" + std::to_string(g.zone.epsg())},
              {"west_m", g.west_m},
              {"north_m", g.north_m},
              {"cell_m", g.cell_m},
              {"columns", g.columns},
              {"rows", g.rows},
              {"bearings", a.map.bearings},
              {"wild_fraction", a.map.wild_fraction},
              {"max_azimuth_error_deg", a.map.max_azimuth_error_deg},
              {"border_mass", a.map.border_mass},
              {"unrefined_mass", a.map.unrefined_mass},
              {"cells_evaluated", a.map.cells_evaluated}};
  j["regions"] = nlohmann::ordered_json::array();
  for (const HpdRegion& r : a.regions) {
    j["regions"].push_back({{"probability", r.probability},
                            {"mass", r.mass},
                            {"area_m2", r.area_m2},
                            {"parts", r.parts.size()}});
  }
  j["comparisons"] = nlohmann::ordered_json::array();
  for (const RegionComparison& c : a.comparisons) {
    j["comparisons"].push_back({{"probability", c.probability},
                                {"ellipse_area_m2", c.ellipse_area_m2},
                                {"region_area_m2", c.region_area_m2},
                                {"map_mass_in_ellipse", c.map_mass_in_ellipse},
                                {"agree", c.agree},
                                {"advice", c.advice}});
  }
  j["segment_m"] = a.plan.side_m;
  j["segments"] = nlohmann::ordered_json::array();
  for (const SearchSegment& s : a.plan.segments) {
    nlohmann::ordered_json js = {{"id", s.id},
                                 {"rank", s.rank},
                                 {"poa", s.poa},
                                 {"cumulative_poa", s.cumulative_poa},
                                 {"initial_poa", s.initial_poa},
                                 {"area_m2", s.area_m2},
                                 {"squares", s.squares},
                                 {"mgrs", s.mgrs},
                                 {"lat", s.centre.lat_deg},
                                 {"lon", s.centre.lon_deg}};
    js["pods"] = s.pods;
    js["combined_pod"] = s.combined_pod;
    j["segments"].push_back(js);
  }
  j["rest_poa"] = a.plan.rest_poa;
  j["initial_rest_poa"] = a.plan.initial_rest_poa;
  j["notes"] = a.notes;
  return j;
}

}  // namespace

const char* safety_note() {
  return "A fix is an estimate, not a location: reflections from hills, buildings and "
         "vehicles mislead bearings, and the true position can lie outside every ellipse. "
         "Local regulations, licensing and the lead agency's procedures come first.";
}

namespace {

// One line per window and signal, for a run solved per time window.
std::string windows_table(const std::vector<Bearing>& bearings,
                          const std::vector<FixResult>& results) {
  std::string out = "\nFixes per time window (UTC):\n";
  out += fmt::format("{:<13} {:<12} {:>4} {:>11} {:>12} {:<18} {:>17} {:>4}\n", "window", "signal",
                     "n", "lat", "lon", "MGRS", "95% semi-axes", "out");
  for (const FixResult& r : results) {
    const Fix& f = r.fix;
    const std::string window = format_iso8601_utc(f.window_start_unix_ns).substr(11, 5) + "-" +
                               format_iso8601_utc(f.window_end_unix_ns).substr(11, 5);
    std::size_t n = 0;
    for (const Bearing& b : bearings) {
      n += b.signal == f.signal && b.time_unix_ns >= f.window_start_unix_ns &&
                   b.time_unix_ns < f.window_end_unix_ns
               ? 1
               : 0;
    }
    const std::string signal = f.signal.empty() ? std::string("-") : f.signal;
    if (!f.ok()) {
      out +=
          fmt::format("{:<13} {:<12} {:>4}  no fix: {}\n", window, signal, n, to_string(f.status));
      continue;
    }
    std::string axes = "-";
    for (const Ellipse& e : r.uncertainty.ellipses) {
      if (std::fabs(e.probability - 0.95) < 1e-9)
        axes = distance_text(e.semi_major_m) + " x " + distance_text(e.semi_minor_m);
    }
    out += fmt::format("{:<13} {:<12} {:>4} {:>11.6f} {:>12.6f} {:<18} {:>17} {:>4}\n", window,
                       signal, n, f.position.lat_deg, f.position.lon_deg,
                       spaced_mgrs(grid_reference(f.position).mgrs), axes, f.outliers);
  }
  return out;
}

}  // namespace

std::string text_summary(const RunInfo& run, const std::vector<Bearing>& bearings,
                         const std::vector<FixResult>& results) {
  return text_summary(run, bearings, results, {});
}

std::string text_summary(const RunInfo& run, const std::vector<Bearing>& bearings,
                         const std::vector<FixResult>& results,
                         const std::vector<SearchArea>& areas) {
  if (!results.empty() && results.front().fix.has_window()) {
    std::size_t used = 0;
    for (const FixResult& r : results)
      used += r.fix.bearings.size();
    std::string out = fmt::format(
        "lobfix {}: {} rows read from {}, {} converted to true bearings, solved in "
        "{} time windows\n",
        run.version, run.rows_read, run.input, bearings.size(), results.size());
    out += windows_table(bearings, results);
    out +=
        "\nA transmitter that moves gives one fix per window; each fix is an average over "
        "its window.\n\n";
    out += wrap_words(safety_note(), 90);
    out += "\n";
    return out;
  }
  std::string out;
  std::size_t used = 0;
  for (const FixResult& r : results)
    used += r.fix.bearings.size();
  out += fmt::format("lobfix {}: {} rows read from {}, {} converted to true bearings, {} used",
                     run.version, run.rows_read, run.input, bearings.size(), used);
  if (!run.skipped.empty()) {
    std::set<int> lines;
    for (const Diagnostic& d : run.skipped)
      lines.insert(d.line);
    out += fmt::format(", {} bad {} skipped (listed on stderr)", lines.size(),
                       lines.size() == 1 ? "row" : "rows");
  }
  out += "\n";
  for (const FixResult& r : results) {
    const Fix& f = r.fix;
    const Uncertainty& u = r.uncertainty;
    out += "\n";
    std::size_t count = 0;
    for (const Bearing& b : bearings)
      count += b.signal == f.signal ? 1 : 0;
    out += fmt::format("== {} ({} bearings) ==\n", signal_title(f.signal), count);
    if (!f.ok()) {
      out += fmt::format("NO FIX: {}\n", f.message);
      continue;
    }
    const GridReference g = grid_reference(f.position);
    out += fmt::format("Fix        {:.6f}, {:.6f}  (lat, lon; WGS 84)\n", f.position.lat_deg,
                       f.position.lon_deg);
    out += fmt::format("           {}  {}\n", format_dms(f.position.lat_deg, true),
                       format_dms(f.position.lon_deg, false));
    out += fmt::format("MGRS       {}\n", spaced_mgrs(g.mgrs));
    out += fmt::format("UTM        {}\n", g.utm);
    out += "Ellipses   (from the stated sigmas)\n";
    for (const Ellipse& e : u.ellipses)
      out += "           " + ellipse_line(e) + "\n";
    out += fmt::format("CEP        {} (radius holding 50%)\n", distance_text(u.cep_m));
    out += fmt::format("Fit        chi-square {:.2f} on {} degrees of freedom\n", f.chi2, f.dof);
    out += labelled("", fit_words(f, u));
    {
      const MotionTest& m = r.motion;
      std::string motion_words =
          m.stations_tested == 0
              ? std::string(
                    "no test possible (no station took three bearings at different "
                    "times)")
          : m.moving_suspected
              ? fmt::format(
                    "the bearings drift with time (trend test over {} stations, p = "
                    "{:.3g}; most at station '{}', {:+.2f} deg/min): the transmitter "
                    "may be moving, and one fix is then only an average position",
                    m.stations_tested, m.p_value, m.strongest_station,
                    m.strongest_drift_deg_per_min)
              : fmt::format(
                    "no sign of a moving transmitter (trend test over {} stations, p "
                    "= {:.3g})",
                    m.stations_tested, m.p_value);
      out += labelled("Motion", motion_words);
    }
    if (run.robust_loss != RobustLoss::none) {
      const std::size_t n_bearings = f.bearings.size();
      std::string robust_words = fmt::format(
          "{} loss (a = {:.4g} sigma): {} of {} bearings distrusted (residual over the outlier "
          "threshold){}",
          loss_name(run.robust_loss), run.robust_tuning, f.outliers, n_bearings,
          f.outliers == 0 ? ""
          : run.excluded_outliers
              ? "; they were left out and the rest solved again by least squares"
              : "; such bearings weigh little or nothing in the fix and are left out of the "
                "chi-square");
      out += labelled("Robust", robust_words);
    }
    for (const StationBias& sb : f.station_biases) {
      out +=
          fmt::format("Offset     {}: {:+.2f} +- {:.2f} deg (1 sigma), removed from its bearings\n",
                      sb.station, sb.bias_deg, sb.sigma_deg);
    }
    for (const std::string& why : f.bias_refusals) {
      out += labelled("Offset", "no offset for " + why);
    }
    if (u.sigmas_too_small) {
      out += "Ellipses   (scaled by the residuals, F distribution)\n";
      for (const Ellipse& e : u.scaled_ellipses)
        out += "           " + ellipse_line(e) + "\n";
      out += fmt::format("CEP        {} (scaled)\n", distance_text(u.scaled_cep_m));
    }
    out += "\n";
    out += fmt::format("{:>6}  {:<14} {:<24} {:>8} {:>6} {:>9} {:>7} {:>6} {:>10}  {}\n", "line",
                       "station", "time", "bearing", "sigma", "residual", "resid/s", "weight",
                       "range", "derived from");
    for (const BearingFit& bf : f.bearings) {
      const Bearing& b = bearings[bf.index];
      out += fmt::format(
          "{:>6}  {:<14} {:<24} {:>8.1f} {:>6.2f} {:>+9.2f} {:>+7.2f} {:>6} {:>10}  {}\n",
          b.source.line, b.station, b.time_text, used_azimuth_deg(b, bf), bf.effective_sigma_deg,
          bf.residual_deg, bf.normalized_residual,
          bf.outlier ? std::string("OUT") : fmt::format("{:.2f}", bf.weight),
          distance_text(bf.range_m), derivation_words(b, bf));
    }
  }
  for (const SearchArea& a : areas)
    out += "\n" + area_text(a);
  out += "\n";
  out += wrap_words(safety_note(), 90);
  out += "\n";
  return out;
}

std::string json_summary(const RunInfo& run, const std::vector<Bearing>& bearings,
                         const std::vector<FixResult>& results) {
  return json_summary(run, bearings, results, {});
}

std::string json_summary(const RunInfo& run, const std::vector<Bearing>& bearings,
                         const std::vector<FixResult>& results,
                         const std::vector<SearchArea>& areas) {
  nlohmann::ordered_json doc;
  doc["lobfix"] = run.version;
  std::size_t used = 0;
  for (const FixResult& r : results)
    used += r.fix.bearings.size();
  nlohmann::ordered_json input = {{"file", run.input},
                                  {"rows_read", run.rows_read},
                                  {"rows_converted", bearings.size()},
                                  {"bearings_used", used}};
  input["skipped"] = nlohmann::ordered_json::array();
  for (const Diagnostic& d : run.skipped)
    input["skipped"].push_back(diagnostic_json(d));
  input["warnings"] = nlohmann::ordered_json::array();
  for (const Diagnostic& d : run.warnings)
    input["warnings"].push_back(diagnostic_json(d));
  doc["input"] = input;
  doc["fixes"] = nlohmann::ordered_json::array();
  for (const FixResult& r : results) {
    const Fix& f = r.fix;
    const Uncertainty& u = r.uncertainty;
    nlohmann::ordered_json j;
    j["signal"] = f.signal;
    if (f.has_window()) {
      j["window_start"] = format_iso8601_utc(f.window_start_unix_ns);
      j["window_end"] = format_iso8601_utc(f.window_end_unix_ns);
    }
    j["status"] = to_string(f.status);
    j["message"] = f.message;
    if (f.ok()) {
      const GridReference g = grid_reference(f.position);
      j["lat"] = f.position.lat_deg;
      j["lon"] = f.position.lon_deg;
      j["mgrs"] = g.mgrs;
      j["utm"] = {{"zone", g.zone},
                  {"hemisphere", g.northp ? "N" : "S"},
                  {"easting_m", g.easting_m},
                  {"northing_m", g.northing_m},
                  {"text", g.utm}};
      j["covariance_en_m2"] = {{f.covariance_en_m2[0][0], f.covariance_en_m2[0][1]},
                               {f.covariance_en_m2[1][0], f.covariance_en_m2[1][1]}};
      j["ellipses"] = nlohmann::ordered_json::array();
      for (const Ellipse& e : u.ellipses)
        j["ellipses"].push_back(ellipse_json(e));
      j["cep_m"] = u.cep_m;
      j["chi2"] = f.chi2;
      j["dof"] = f.dof;
      j["p_value"] = u.p_value;
      j["sigmas_too_small"] = u.sigmas_too_small;
      j["variance_factor"] = u.variance_factor;
      j["scaled_ellipses"] = nlohmann::ordered_json::array();
      for (const Ellipse& e : u.scaled_ellipses)
        j["scaled_ellipses"].push_back(ellipse_json(e));
      if (u.sigmas_too_small)
        j["scaled_cep_m"] = u.scaled_cep_m;
      j["robust_loss"] = to_string(run.robust_loss);
      j["robust_tuning"] = run.robust_tuning;
      j["outliers"] = f.outliers;
      j["outliers_excluded"] = run.excluded_outliers && f.outliers > 0;
      j["motion"] = {{"stations_tested", r.motion.stations_tested},
                     {"statistic", r.motion.statistic},
                     {"p_value", r.motion.p_value},
                     {"moving_suspected", r.motion.moving_suspected},
                     {"strongest_station", r.motion.strongest_station},
                     {"strongest_drift_deg_per_min", r.motion.strongest_drift_deg_per_min}};
      j["station_biases"] = nlohmann::ordered_json::array();
      for (const StationBias& sb : f.station_biases) {
        j["station_biases"].push_back(
            {{"station", sb.station}, {"bias_deg", sb.bias_deg}, {"sigma_deg", sb.sigma_deg}});
      }
      j["bias_refusals"] = f.bias_refusals;
      j["iterations"] = f.iterations;
      j["bearings"] = nlohmann::ordered_json::array();
      for (const BearingFit& bf : f.bearings) {
        const Bearing& b = bearings[bf.index];
        const BearingDerivation& d = b.derivation;
        const double used_sigma = bf.used_alt && b.alt_sigma_deg ? *b.alt_sigma_deg : b.sigma_deg;
        nlohmann::ordered_json jb = {
            {"row", b.source.line},
            {"station", b.station},
            {"time", b.time_text},
            {"lat", b.lat_deg},
            {"lon", b.lon_deg},
            {"position_source",
             d.position_source.empty() ? std::string("file") : d.position_source},
            {"reference", to_string(d.reference)},
            {"measured_deg", d.measured_deg},
            {"true_bearing_deg", used_azimuth_deg(b, bf)}};
        if (d.declination_deg) {
          jb["declination_deg"] = *d.declination_deg;
          jb["declination_source"] = d.declination_source;
        }
        if (d.convergence_deg) {
          jb["convergence_deg"] = *d.convergence_deg;
          jb["convergence_source"] = d.convergence_source;
        }
        if (d.heading_deg) {
          jb["heading_deg"] = *d.heading_deg;
          jb["heading_source"] = d.heading_source;
        }
        if (bf.ambiguous) {
          jb["ambiguous"] = true;
          jb["rejected_bearing_deg"] = bf.rejected_azimuth_deg;
        }
        // The sigma budget: the terms whose squares add to effective_sigma_deg^2.
        const double position_term = std::sqrt(std::max(
            0.0, bf.effective_sigma_deg * bf.effective_sigma_deg - used_sigma * used_sigma));
        // Mirror candidates share the receiver sigma (the same |sin psi| for both).
        jb["sigma_budget_deg"] = {{"receiver", d.receiver_sigma_deg},
                                  {"heading", d.heading_sigma_deg},
                                  {"declination", d.declination_sigma_deg},
                                  {"station_position", position_term}};
        jb["sigma_deg"] = used_sigma;
        jb["effective_sigma_deg"] = bf.effective_sigma_deg;
        jb["predicted_deg"] = bf.predicted_azimuth_deg;
        jb["residual_deg"] = bf.residual_deg;
        jb["normalized_residual"] = bf.normalized_residual;
        jb["range_m"] = bf.range_m;
        jb["bias_deg"] = bf.bias_deg;
        jb["weight"] = bf.weight;
        jb["outlier"] = bf.outlier;
        j["bearings"].push_back(jb);
      }
    }
    doc["fixes"].push_back(j);
  }
  if (!areas.empty()) {
    doc["search_areas"] = nlohmann::ordered_json::array();
    for (const SearchArea& a : areas)
      doc["search_areas"].push_back(area_json(a));
  }
  doc["caution"] = safety_note();
  // Names come from the user's files; bytes that are not UTF-8 are written as U+FFFD rather
  // than failing the whole summary (the readers report such names too).
  return doc.dump(2, ' ', false, nlohmann::ordered_json::error_handler_t::replace) + "\n";
}

std::string segments_table(const SearchArea& a) {
  std::string out =
      fmt::format("{:>4}  {:<5} {:<18} {:>7} {:>8} {:>9} {:>8}  {}\n", "rank", "id",
                  "MGRS (centre)", "POA", "cum.", "area km2", "squares", "searched (POD)");
  for (const SearchSegment& s : a.plan.segments) {
    std::string searched;
    for (const double pod : s.pods)
      searched += (searched.empty() ? "" : ", ") + fmt::format("{:.0f}%", 100.0 * pod);
    out += fmt::format("{:>4}  {:<5} {:<18} {:>7} {:>8} {:>9.3f} {:>8}  {}\n", s.rank, s.id,
                       spaced_mgrs(s.mgrs), percent_text(s.poa), percent_text(s.cumulative_poa),
                       s.area_m2 / 1e6, s.squares, searched.empty() ? "-" : searched);
  }
  out += fmt::format("{:>4}  {:<5} {:<18} {:>7}\n", "", "rest", "outside the segments",
                     percent_text(a.plan.rest_poa));
  return out;
}

std::string area_text(const SearchArea& a) {
  std::string out =
      "Search area" + (a.signal.empty() ? std::string() : " of signal '" + a.signal + "'") + "\n";
  if (!a.map.ok) {
    out += labelled("Map", "none: " + a.map.message);
    return out;
  }
  const UtmGrid& g = a.map.grid;
  out += labelled("Map",
                  fmt::format("{} x {} cells of {} m (UTM {}{}, EPSG:{}), {:.1f} km a side; "
                              "{} bearings, {:.0f}% of each allowed to be wild",
                              g.columns, g.rows, g.cell_m, g.zone.zone, g.zone.northp ? 'N' : 'S',
                              g.zone.epsg(), g.columns * g.cell_m / 1000.0, a.map.bearings,
                              100.0 * a.map.wild_fraction));
  for (const HpdRegion& r : a.regions) {
    out += labelled("Region",
                    fmt::format("{:.0f}%: {:.3f} km2 in {} part{}", 100.0 * r.probability,
                                r.area_m2 / 1e6, r.parts.size(), r.parts.size() == 1 ? "" : "s"));
  }
  for (const RegionComparison& c : a.comparisons)
    out += labelled("Compare", c.advice);
  for (const std::string& n : a.notes)
    out += labelled("Note", n);
  out += fmt::format(
      "\nSearch segments ({} m squares on the UTM/MGRS grid) covering the {:.0f}% "
      "region, by POA:\n",
      a.plan.side_m, 100.0 * a.plan.region_probability);
  out += segments_table(a);
  return out;
}

std::string segments_csv(const std::vector<SearchArea>& areas) {
  std::string out =
      "signal,rank,id,mgrs,lat,lon,poa,cumulative_poa,initial_poa,area_m2,squares,pods\n";
  const auto quoted = [](const std::string& v) {
    if (v.find_first_of(",\"\n") == std::string::npos)
      return v;
    std::string q = "\"";
    for (const char c : v)
      q += c == '"' ? std::string("\"\"") : std::string(1, c);
    return q + "\"";
  };
  for (const SearchArea& a : areas) {
    for (const SearchSegment& s : a.plan.segments) {
      std::string pods;
      for (const double pod : s.pods)
        pods += (pods.empty() ? "" : ";") + fmt::format("{:.4g}", pod);
      out += fmt::format("{},{},{},{},{:.7f},{:.7f},{:.6f},{:.6f},{:.6f},{:.0f},{},{}\n",
                         quoted(a.signal), s.rank, s.id, s.mgrs, s.centre.lat_deg, s.centre.lon_deg,
                         s.poa, s.cumulative_poa, s.initial_poa, s.area_m2, s.squares, pods);
    }
    if (a.map.ok) {
      out += fmt::format("{},,rest,,,,{:.6f},,{:.6f},,,\n", quoted(a.signal), a.plan.rest_poa,
                         a.plan.initial_rest_poa);
    }
  }
  return out;
}

}  // namespace lobfix
