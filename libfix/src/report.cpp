// The printable field report as one HTML document (docs/report.md). The map comes from
// report_svg.cpp; this file lays out the tables, the verdict and the cautions, with the CSS
// for screen and print inline.
#include "lobfix/report.hpp"

#include <fmt/format.h>

#include <cmath>
#include <set>
#include <string>
#include <utility>
#include <vector>

#include "lobfix/error.hpp"
#include "lobfix/geodesy.hpp"

namespace lobfix {

namespace {

// Print: A4 (210 mm) and US Letter (216 mm) both take a 186 mm column with 12 mm margins;
// the map is at most 150 mm high and is never split across pages.
const char* const kCss = R"css(
:root { color-scheme: light; }
body { font-family: sans-serif; font-size: 11pt; line-height: 1.35; color: #000; background: #fff;
  max-width: 60em; margin: 1em auto; padding: 0 1em; }
h1 { font-size: 1.5em; margin: 0.2em 0; }
h2 { font-size: 1.2em; margin: 1.2em 0 0.4em; border-bottom: 2px solid #000; }
h3 { font-size: 1.05em; margin: 0.9em 0 0.3em; }
.caution { border: 2px solid #000; padding: 0.4em 0.7em; margin: 0.6em 0; background: #fff4d6; }
.verdict { border-left: 6px solid #000; padding: 0.2em 0.7em; margin: 0.4em 0; }
.verdict.good { border-left-color: #009E73; }
.verdict.doubt { border-left-color: #D55E00; border-left-style: double; }
figure.map { margin: 0.5em 0; break-inside: avoid; page-break-inside: avoid; }
figure.map svg { width: 100%; height: auto; display: block; border: 1px solid #000; }
figcaption { font-size: 0.85em; margin-top: 0.3em; }
table { border-collapse: collapse; margin: 0.3em 0 0.8em; font-size: 0.9em; }
th, td { border: 1px solid #666; padding: 0.15em 0.45em; text-align: left; vertical-align: top; }
th { background: #eee; }
td.num { text-align: right; font-variant-numeric: tabular-nums; }
tr.outlier td { font-weight: bold; }
tr.outlier td.verdict-cell::before { content: "\2716  "; }
.mono { font-family: monospace; }
.small { font-size: 0.85em; }
footer { margin-top: 2em; font-size: 0.8em; border-top: 1px solid #000; }
@page { margin: 12mm; }
@media print {
  body { max-width: none; margin: 0; padding: 0; font-size: 9.5pt; }
  figure.map svg { max-height: 150mm; width: 100%; }
  h2 { break-after: avoid; page-break-after: avoid; }
  tr, .verdict, .caution { break-inside: avoid; page-break-inside: avoid; }
  thead { display: table-header-group; }
  .caution { background: none; }
}
)css";

std::string esc(const std::string& s) {
  return html_escape(s);
}

std::string distance_text(double m) {
  if (!std::isfinite(m))
    return "-";
  if (m < 1000.0)
    return fmt::format("{:.0f} m", m);
  if (m < 100000.0)
    return fmt::format("{:.2f} km", m / 1000.0);
  return fmt::format("{:.0f} km", m / 1000.0);
}

std::string area_text(double m2) {
  return m2 < 1e6 ? fmt::format("{:.0f} m&sup2;", m2) : fmt::format("{:.2f} km&sup2;", m2 / 1e6);
}

std::string signal_title(const std::string& signal) {
  return signal.empty() ? std::string("the bearings (no signal label)")
                        : "signal &lsquo;" + esc(signal) + "&rsquo;";
}

std::string row(std::initializer_list<std::string> cells, const char* cls = nullptr) {
  std::string out = cls != nullptr ? fmt::format("<tr class=\"{}\">", cls) : std::string("<tr>");
  for (const std::string& c : cells)
    out += c.rfind("<td", 0) == 0 ? c : "<td>" + c + "</td>";
  return out + "</tr>\n";
}

std::string num(const std::string& text) {
  return "<td class=\"num\">" + text + "</td>";
}

// The verdict in plain words, and whether it is a good one.
std::pair<std::string, bool> verdict(const FixResult& r) {
  const Fix& f = r.fix;
  const Uncertainty& u = r.uncertainty;
  std::string words;
  bool good = false;
  if (f.dof <= 0) {
    words =
        "Two bearings only: nothing checks their stated sigmas, so the ellipses rest on them "
        "alone. Treat the fix as a first guess and take a third bearing from another place.";
  } else if (u.sigmas_too_small) {
    words = fmt::format(
        "Doubtful: the bearings scatter about {:.1f} times more than their stated sigmas (p = "
        "{:.3g}). Suspect reflections, a wrong bearing, a moving transmitter or sigmas set too "
        "small. Use the dashed (residual-scaled) ellipses and the search area, and take more "
        "bearings from new places.",
        std::sqrt(u.variance_factor), u.p_value);
  } else {
    good = true;
    words = fmt::format(
        "The bearings agree with each other within their stated sigmas (p = {:.3g}). The 95% "
        "ellipse is a fair first search area; it holds the transmitter only if the bearings "
        "are free of reflections.",
        u.p_value);
  }
  if (f.outliers > 0) {
    good = false;
    words += fmt::format(
        " {} bearing{} disagreed with the rest and {} distrusted (marked in the table and "
        "dashed on the map): check them for reflections.",
        f.outliers, f.outliers == 1 ? "" : "s", f.outliers == 1 ? "was" : "were");
  }
  return {words, good};
}

std::string derivation_words(const Bearing& b, const BearingFit* bf) {
  const BearingDerivation& d = b.derivation;
  std::string out;
  switch (d.reference) {
    case BearingReference::true_north:
      out = "true north";
      break;
    case BearingReference::magnetic:
      out = fmt::format("magnetic {:.1f}&deg; {:+.2f}&deg; declination ({})", d.measured_deg,
                        d.declination_deg.value_or(0.0), esc(d.declination_source));
      break;
    case BearingReference::grid:
      out = fmt::format("grid {:.1f}&deg; {:+.2f}&deg; convergence ({})", d.measured_deg,
                        d.convergence_deg.value_or(0.0), esc(d.convergence_source));
      break;
    case BearingReference::relative:
      out = fmt::format("relative {:.1f}&deg; + heading {:.1f}&deg; ({})", d.measured_deg,
                        d.heading_deg.value_or(0.0), esc(d.heading_source));
      break;
  }
  if (d.from_interferometer)
    out += ", from phase";
  if (bf != nullptr && bf->ambiguous)
    out += fmt::format(", mirror {:.1f}&deg; rejected", bf->rejected_azimuth_deg);
  if (bf != nullptr && bf->bias_deg != 0.0)
    out += fmt::format(", station offset {:+.2f}&deg; removed", bf->bias_deg);
  return out;
}

std::string crs_cells(const ProjectedCrs* crs, const LatLon& p) {
  if (crs == nullptr)
    return "";
  try {
    double e = 0.0;
    double n = 0.0;
    crs->forward(p, e, n);
    return num(fmt::format("{:.3f}", e)) + num(fmt::format("{:.3f}", n));
  } catch (const InputError& err) {
    return "<td colspan=\"2\">not in this CRS: " + esc(err.diagnostic().reason) + "</td>";
  }
}

std::string fix_section(const FixResult& r, const std::vector<Bearing>& bearings,
                        const ReportOptions& options) {
  const Fix& f = r.fix;
  std::string out =
      "<section class=\"fix-section\">\n<h2>Fix of " + signal_title(f.signal) + "</h2>\n";
  if (!f.ok()) {
    out += fmt::format("<p class=\"verdict doubt\"><strong>No fix</strong> ({}): {}</p>\n",
                       to_string(f.status), esc(f.message));
    return out + "</section>\n";
  }
  const GridReference g = grid_reference(f.position);
  const std::string mgrs = mgrs_reference(f.position, options.mgrs_digits);
  out += "<table class=\"position\">\n<tbody>\n";
  out += row({"Decimal degrees",
              fmt::format("<span class=\"mono\">{:.6f}, {:.6f}</span> (lat, lon; WGS 84)",
                          f.position.lat_deg, f.position.lon_deg)});
  out += row({"Degrees, minutes, seconds",
              "<span class=\"mono dms\">" + esc(format_dms(f.position.lat_deg, true)) + " " +
                  esc(format_dms(f.position.lon_deg, false)) + "</span>"});
  out += row({"MGRS", "<span class=\"mono mgrs\">" + esc(mgrs_spaced(mgrs)) + "</span>"});
  out += row({"UTM", "<span class=\"mono utm\">" + esc(g.utm) + "</span>"});
  if (options.crs != nullptr) {
    std::string cell;
    try {
      double e = 0.0;
      double n = 0.0;
      options.crs->forward(f.position, e, n);
      cell = fmt::format("<span class=\"mono crs\">E {:.3f} N {:.3f}</span>", e, n);
    } catch (const InputError& err) {
      cell = "not in this CRS: " + esc(err.diagnostic().reason);
    }
    out += row({esc(options.crs->code()) + " (" + esc(options.crs->name()) + ")", cell});
  }
  out += "</tbody>\n</table>\n";

  const auto [words, good] = verdict(r);
  out += fmt::format("<h3>How far to trust it</h3>\n<p class=\"verdict {}\">{}</p>\n",
                     good ? "good" : "doubt", words);
  const Uncertainty& u = r.uncertainty;
  out +=
      "<table class=\"ellipses\">\n<thead><tr><th>region</th><th>semi-major</th>"
      "<th>semi-minor</th><th>major axis (true)</th></tr></thead>\n<tbody>\n";
  auto ellipse_row = [&](const Ellipse& e, const char* what) {
    out += row({fmt::format("{:g}% ellipse{}", e.probability * 100.0, what),
                num(distance_text(e.semi_major_m)), num(distance_text(e.semi_minor_m)),
                num(fmt::format("{:05.1f}&deg;", e.orientation_deg))});
  };
  for (const Ellipse& e : u.ellipses)
    ellipse_row(e, "");
  for (const Ellipse& e : u.scaled_ellipses)
    ellipse_row(e, ", scaled by the residuals");
  out += row({"CEP (50% circle)", num(distance_text(u.cep_m)), "<td></td>", "<td></td>"});
  if (u.scaled_cep_m > 0.0)
    out += row({"CEP, scaled", num(distance_text(u.scaled_cep_m)), "<td></td>", "<td></td>"});
  out += "</tbody>\n</table>\n";
  out += fmt::format(
      "<p class=\"small\">Goodness of fit: chi-square {:.2f} on {} degree{} of freedom, p = "
      "{:.3g}; {} bearing{} used, {} distrusted.</p>\n",
      f.chi2, f.dof, f.dof == 1 ? "" : "s", u.p_value, f.bearings.size(),
      f.bearings.size() == 1 ? "" : "s", f.outliers);
  (void)bearings;
  return out + "</section>\n";
}

std::string area_section(const SearchArea& a, const ReportOptions& options) {
  std::string out =
      "<section class=\"area-section\">\n<h2>Search area of " + signal_title(a.signal) + "</h2>\n";
  if (!a.map.ok)
    return out + "<p>No search area: " + esc(a.map.message) + "</p>\n</section>\n";
  out +=
      "<table class=\"regions\">\n<thead><tr><th>region</th><th>area</th><th>holds</th>"
      "</tr></thead>\n<tbody>\n";
  for (const HpdRegion& reg : a.regions)
    out += row({fmt::format("{:g}% highest-probability region", reg.probability * 100.0),
                num(area_text(reg.area_m2)), num(fmt::format("{:.1f}%", reg.mass * 100.0))});
  out += "</tbody>\n</table>\n";
  for (const RegionComparison& c : a.comparisons)
    out += "<p class=\"small\">" + esc(c.advice) + "</p>\n";
  for (const std::string& n : a.notes)
    out += "<p class=\"small\"><strong>Note:</strong> " + esc(n) + "</p>\n";

  out += fmt::format(
      "<h3>Search segments ({} m squares on the MGRS grid, covering the {:g}% region)</h3>\n",
      a.plan.side_m, a.plan.region_probability * 100.0);
  out +=
      "<table class=\"segments\">\n<thead><tr><th>rank</th><th>id</th><th>MGRS of centre</th>"
      "<th>POA</th><th>cumulative POA</th><th>area</th>";
  if (options.crs != nullptr)
    out += "<th>centre E</th><th>centre N</th>";
  out += "<th>searched (POD)</th></tr></thead>\n<tbody>\n";
  for (const SearchSegment& s : a.plan.segments) {
    std::string pods;
    for (const double p : s.pods)
      pods += (pods.empty() ? "" : ", ") + fmt::format("{:.0f}%", p * 100.0);
    out += "<tr>" + num(std::to_string(s.rank)) + "<td>" + esc(s.id) +
           "</td><td class=\"mono mgrs\">" + esc(mgrs_spaced(s.mgrs)) + "</td>" +
           num(fmt::format("{:.1f}%", s.poa * 100.0)) +
           num(fmt::format("{:.1f}%", s.cumulative_poa * 100.0)) + num(area_text(s.area_m2)) +
           crs_cells(options.crs, s.centre) + "<td>" + pods + "</td></tr>\n";
  }
  out += fmt::format(
      "<tr class=\"rest\"><td></td><td>rest</td><td>outside the segments</td>{}<td></td><td>"
      "</td>{}<td></td></tr>\n",
      num(fmt::format("{:.1f}%", a.plan.rest_poa * 100.0)),
      options.crs != nullptr ? "<td></td><td></td>" : "");
  out += "</tbody>\n</table>\n";
  return out + "</section>\n";
}

std::string bearings_section(const std::vector<Bearing>& bearings,
                             const std::vector<FixResult>& results, const ReportOptions& options) {
  std::vector<const BearingFit*> fit(bearings.size(), nullptr);
  for (const FixResult& r : results)
    for (const BearingFit& bf : r.fix.bearings)
      if (r.fix.ok() && bf.index < bearings.size() && fit[bf.index] == nullptr)
        fit[bf.index] = &bf;
  std::string out =
      "<section class=\"bearings-section\">\n<h2>Bearings</h2>\n<table class=\"bearings\">\n"
      "<thead><tr><th>line</th><th>station</th><th>signal</th><th>time</th><th>true bearing"
      "</th><th>converted from</th><th>residual</th><th>residual / sigma</th><th>range</th>"
      "<th>verdict</th></tr></thead>\n<tbody>\n";
  for (std::size_t i = 0; i < bearings.size(); ++i) {
    const Bearing& b = bearings[i];
    const BearingFit* bf = fit[i];
    const double az =
        bf != nullptr && bf->used_alt && b.alt_azimuth_deg ? *b.alt_azimuth_deg : b.azimuth_deg;
    std::string v = "no fix";
    if (bf != nullptr) {
      const double z = std::fabs(bf->normalized_residual);
      v = bf->outlier ? "outlier: distrusted" : z > 2.0 ? "loose (over 2 sigma)" : "fits";
    }
    out += row({num(std::to_string(b.source.line)), esc(b.station), esc(b.signal),
                "<span class=\"mono\">" + esc(b.time_text) + "</span>",
                num(fmt::format("{:.1f}&deg;", az)), derivation_words(b, bf),
                bf != nullptr ? num(fmt::format("{:+.2f}&deg;", bf->residual_deg)) : "<td></td>",
                bf != nullptr ? num(fmt::format("{:+.2f}", bf->normalized_residual)) : "<td></td>",
                bf != nullptr ? num(distance_text(bf->range_m)) : "<td></td>",
                "<td class=\"verdict-cell\">" + v + "</td>"},
               bf != nullptr && bf->outlier ? "outlier" : nullptr);
  }
  out += "</tbody>\n</table>\n";
  (void)options;
  return out + "</section>\n";
}

std::string crs_section(const std::vector<Bearing>& bearings, const std::vector<FixResult>& results,
                        const std::vector<SearchArea>& areas, const ProjectedCrs& crs) {
  std::string out = "<section class=\"crs-section\">\n<h2>Coordinates in " + esc(crs.code()) +
                    " (" + esc(crs.name()) +
                    ")</h2>\n<table class=\"crs\">\n<thead><tr><th>what</th><th>name</th>"
                    "<th>easting</th><th>northing</th></tr></thead>\n<tbody>\n";
  for (const CrsCoordinate& c : crs_coordinates(bearings, results, areas, crs)) {
    out += "<tr><td>" + esc(c.kind) + "</td><td>" + esc(c.label) + "</td>";
    if (c.ok)
      out += num(fmt::format("{:.3f}", c.easting)) + num(fmt::format("{:.3f}", c.northing));
    else
      out += "<td colspan=\"2\">not in this CRS: " + esc(c.error) + "</td>";
    out += "</tr>\n";
  }
  out +=
      "</tbody>\n</table>\n<p class=\"small\">Easting first, northing second, whatever the "
      "CRS's own axis order; the transformation from WGS 84 is PROJ's choice for the CRS.</p>\n";
  return out + "</section>\n";
}

}  // namespace

std::string html_escape(std::string_view text) {
  std::string out;
  out.reserve(text.size());
  for (const char c : text) {
    switch (c) {
      case '&':
        out += "&amp;";
        break;
      case '<':
        out += "&lt;";
        break;
      case '>':
        out += "&gt;";
        break;
      case '"':
        out += "&quot;";
        break;
      case '\'':
        out += "&#39;";
        break;
      default:
        out += c;
    }
  }
  return out;
}

std::vector<CrsCoordinate> crs_coordinates(const std::vector<Bearing>& bearings,
                                           const std::vector<FixResult>& results,
                                           const std::vector<SearchArea>& areas,
                                           const ProjectedCrs& crs) {
  std::vector<CrsCoordinate> out;
  auto add = [&](const char* kind, const std::string& label, const LatLon& p) {
    CrsCoordinate c;
    c.kind = kind;
    c.label = label;
    c.point = p;
    try {
      crs.forward(p, c.easting, c.northing);
      c.ok = true;
    } catch (const InputError& e) {
      c.error = e.diagnostic().reason;
    }
    out.push_back(std::move(c));
  };
  for (const FixResult& r : results)
    if (r.fix.ok())
      add("fix", r.fix.signal, r.fix.position);
  std::set<std::pair<std::string, std::pair<double, double>>> seen;
  for (const Bearing& b : bearings)
    if (seen.insert({b.station, {b.lat_deg, b.lon_deg}}).second)
      add("station", b.station, LatLon{b.lat_deg, b.lon_deg});
  for (const SearchArea& a : areas)
    for (const SearchSegment& s : a.plan.segments)
      add("segment", a.signal.empty() ? s.id : a.signal + " " + s.id, s.centre);
  return out;
}

std::string report_html(const RunInfo& run, const std::vector<Bearing>& bearings,
                        const std::vector<FixResult>& results, const std::vector<SearchArea>& areas,
                        const ReportOptions& options) {
  if (options.mgrs_digits < 1 || options.mgrs_digits > 5)
    throw InputError({"", 0, 0, "mgrs_digits", "the MGRS digits must be 1 to 5"});
  std::string out = "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n";
  out += "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n";
  out +=
      "<title>" + esc(options.title) + "</title>\n<style>" + kCss + "</style>\n</head>\n<body>\n";
  out += "<header>\n<h1>" + esc(options.title) + "</h1>\n";
  std::size_t fixed = 0;
  for (const FixResult& r : results)
    fixed += r.fix.ok() ? 1 : 0;
  out += fmt::format(
      "<p class=\"small\">Input <span class=\"mono\">{}</span>: {} rows read, {} bearings; {} "
      "of {} signal{} fixed. Made by lobfix {}.</p>\n",
      esc(run.input), run.rows_read, bearings.size(), fixed, results.size(),
      results.size() == 1 ? "" : "s", esc(run.version));
  out += "<p class=\"caution\"><strong>Caution:</strong> " + esc(safety_note()) + "</p>\n";
  out += "</header>\n";

  out += "<figure class=\"map\">\n" + report_map_svg(bearings, results, areas, options);
  out +=
      "<figcaption>Map in the azimuthal equidistant frame of the fix (distances and directions "
      "from the fix are true), true north up; grid lines are UTM, labelled in km of easting "
      "(E) and northing (N). Rays run from each station a little past the fix; dashed black "
      "rays are bearings the fit distrusted. Numbers in the squares are the search "
      "segments' ranks.</figcaption>\n</figure>\n";

  for (const FixResult& r : results) {
    out += fix_section(r, bearings, options);
    for (const SearchArea& a : areas)
      if (a.signal == r.fix.signal)
        out += area_section(a, options);
  }
  out += bearings_section(bearings, results, options);
  if (options.crs != nullptr)
    out += crs_section(bearings, results, areas, *options.crs);

  out +=
      "<section class=\"cautions\">\n<h2>Cautions</h2>\n<ul>\n"
      "<li>A fix is an estimate, not a location. The ellipses and regions say where the "
      "transmitter probably is if every bearing is honest; the true position can lie outside "
      "all of them.</li>\n"
      "<li>Reflections from hills, buildings, water and vehicles mislead bearings without "
      "warning. A bearing that fits well can still be a reflection; confirm with new bearings "
      "from other places as you close in.</li>\n"
      "<li>Follow the lead agency's procedures, local regulations and licensing; they come "
      "before anything in this report. Do not enter private land or dangerous ground on the "
      "strength of a map.</li>\n"
      "<li>Coordinates are WGS 84; check the datum of any paper map you plot them on.</li>\n"
      "</ul>\n</section>\n";
  out += fmt::format(
      "<footer><p>lobfix {} &middot; input {} &middot; all coordinates WGS 84 unless a CRS is "
      "named.</p></footer>\n</body>\n</html>\n",
      esc(run.version), esc(run.input));
  return out;
}

}  // namespace lobfix
