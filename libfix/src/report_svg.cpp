// The report's map as SVG (docs/report.md, "The map"). Everything is drawn in the azimuthal
// equidistant frame of the first fix (geo_to_local), true north up; each layer is a group of
// its own, present only when there is something to draw in it.
#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <map>
#include <set>
#include <string>
#include <utility>
#include <vector>

#include "lobfix/error.hpp"
#include "lobfix/geodesy.hpp"
#include "lobfix/report.hpp"
#include "lobfix/shapes.hpp"

namespace lobfix {

namespace {

// Okabe-Ito colours, as export.cpp's kPalette (one per signal), and the fixed colours of the
// layers: black stations and fix, bluish green ellipses, orange regions.
const char* const kSignalColours[] = {"#0072B2", "#CC79A7", "#56B4E9", "#D55E00"};
constexpr std::size_t kSignalColourCount = sizeof kSignalColours / sizeof kSignalColours[0];
const char* const kEllipseColour = "#009E73";
const char* const kRegionColour = "#E69F00";

// A 1-2-5 step near `target` (> 0).
double nice_step(double target) {
  const double p = std::pow(10.0, std::floor(std::log10(target)));
  const double f = target / p;
  return (f < 1.5 ? 1.0 : f < 3.5 ? 2.0 : f < 7.5 ? 5.0 : 10.0) * p;
}

std::string length_text(double m) {
  return m >= 1000.0 ? fmt::format("{:g} km", m / 1000.0) : fmt::format("{:g} m", m);
}

double used_azimuth(const Bearing& b, const BearingFit* fit) {
  return fit != nullptr && fit->used_alt && b.alt_azimuth_deg ? *b.alt_azimuth_deg : b.azimuth_deg;
}

class MapFrame {
 public:
  explicit MapFrame(const LatLon& centre) : centre_(centre) {}

  std::pair<double, double> local(const LatLon& p) const {
    double x = 0.0;
    double y = 0.0;
    geo_to_local(centre_, p, x, y);
    return {x, y};
  }
  void include(const LatLon& p) {
    const auto [x, y] = local(p);
    xmin_ = std::min(xmin_, x);
    xmax_ = std::max(xmax_, x);
    ymin_ = std::min(ymin_, y);
    ymax_ = std::max(ymax_, y);
  }
  void include(const Path& path) {
    for (const LatLon& p : path)
      include(p);
  }
  // Fix the scale: the extent padded by 8% (at least 300 m across), within width x up to
  // 1.1 width px.
  void finish(int width_px) {
    if (xmin_ > xmax_) {
      xmin_ = ymin_ = -150.0;
      xmax_ = ymax_ = 150.0;
    }
    const double pad = 0.08 * std::max({xmax_ - xmin_, ymax_ - ymin_, 300.0});
    xmin_ -= pad;
    xmax_ += pad;
    ymin_ -= pad;
    ymax_ += pad;
    width_ = width_px;
    const double dx = xmax_ - xmin_;
    const double dy = ymax_ - ymin_;
    scale_ = std::min(width_ / dx, 1.1 * width_ / dy);
    height_ = std::max(dy * scale_, 0.55 * width_);
    x0_ = 0.5 * (xmin_ + xmax_);
    y0_ = 0.5 * (ymin_ + ymax_);
  }
  double px(double x) const { return 0.5 * width_ + (x - x0_) * scale_; }
  double py(double y) const { return 0.5 * height_ - (y - y0_) * scale_; }
  std::string point(const LatLon& p) const {
    const auto [x, y] = local(p);
    return fmt::format("{:.1f},{:.1f}", px(x), py(y));
  }
  std::string points(const Path& path) const {
    std::string out;
    for (const LatLon& p : path) {
      if (!out.empty())
        out += ' ';
      out += point(p);
    }
    return out;
  }
  // An SVG path of closed rings ("M ... Z" each).
  std::string rings(const Path& outer, const std::vector<Path>& holes) const {
    std::string out;
    auto ring = [&](const Path& r) {
      for (std::size_t i = 0; i < r.size(); ++i)
        out += (i == 0 ? "M" : "L") + point(r[i]) + " ";
      out += "Z ";
    };
    ring(outer);
    for (const Path& h : holes)
      ring(h);
    return out;
  }
  LatLon geo(double px_x, double px_y) const {
    const double x = x0_ + (px_x - 0.5 * width_) / scale_;
    const double y = y0_ - (px_y - 0.5 * height_) / scale_;
    return local_to_geo(centre_, x, y).point;
  }
  double width() const { return width_; }
  double height() const { return height_; }
  double scale() const { return scale_; }  // px per m
  const LatLon& centre() const { return centre_; }

 private:
  LatLon centre_;
  double xmin_ = 1e300, xmax_ = -1e300, ymin_ = 1e300, ymax_ = -1e300;
  double width_ = 1000.0, height_ = 700.0, scale_ = 1.0, x0_ = 0.0, y0_ = 0.0;
};

// UTM grid lines of the centre's zone, labelled along the bottom (eastings) and left edge
// (northings).
std::string grid_lines(const MapFrame& f);

std::string grid_layer(const MapFrame& f) {
  try {
    return grid_lines(f);
  } catch (const InputError&) {
    return "";  // beyond the zone's reach (a map wider than the zone allows): no grid
  }
}

std::string grid_lines(const MapFrame& f) {
  UtmZone zone;
  std::vector<UtmPoint> corners;
  try {
    zone = utm_zone_of(f.centre());
    if (zone.zone == 0)
      return "";
    for (const auto& [x, y] :
         {std::pair{0.0, 0.0}, {f.width(), 0.0}, {0.0, f.height()}, {f.width(), f.height()}})
      corners.push_back(utm_forward(zone, f.geo(x, y)));
  } catch (const InputError&) {
    return "";
  }
  double emin = 1e300, emax = -1e300, nmin = 1e300, nmax = -1e300;
  for (const UtmPoint& c : corners) {
    emin = std::min(emin, c.easting_m);
    emax = std::max(emax, c.easting_m);
    nmin = std::min(nmin, c.northing_m);
    nmax = std::max(nmax, c.northing_m);
  }
  const double step = nice_step(std::max(emax - emin, nmax - nmin) / 6.0);
  const UtmPoint bottom = utm_forward(zone, f.geo(0.5 * f.width(), f.height()));
  const UtmPoint left = utm_forward(zone, f.geo(0.0, 0.5 * f.height()));
  std::string lines;
  std::string labels;
  auto label_text = [step](double v) {
    return step >= 1000.0 ? fmt::format("{:.0f}k", v / 1000.0) : fmt::format("{:.0f}", v);
  };
  constexpr int kVertices = 12;
  const auto first_e = static_cast<long>(std::ceil(emin / step));
  const auto last_e = static_cast<long>(std::floor(emax / step));
  for (long k = first_e; k <= last_e; ++k) {
    const double e = static_cast<double>(k) * step;
    Path line;
    for (int i = 0; i <= kVertices; ++i)
      line.push_back(utm_reverse(zone, e, nmin + (nmax - nmin) * i / kVertices));
    lines += fmt::format("<polyline class=\"grid-line easting\" points=\"{}\"/>\n", f.points(line));
    const auto [x, y] = f.local(utm_reverse(zone, e, bottom.northing_m));
    (void)y;
    labels += fmt::format(
        "<text class=\"grid-label\" x=\"{:.1f}\" y=\"{:.1f}\" text-anchor=\"middle\">{}E</text>\n",
        f.px(x), f.height() - 4.0, label_text(e));
  }
  const auto first_n = static_cast<long>(std::ceil(nmin / step));
  const auto last_n = static_cast<long>(std::floor(nmax / step));
  for (long k = first_n; k <= last_n; ++k) {
    const double n = static_cast<double>(k) * step;
    Path line;
    for (int i = 0; i <= kVertices; ++i)
      line.push_back(utm_reverse(zone, emin + (emax - emin) * i / kVertices, n));
    lines +=
        fmt::format("<polyline class=\"grid-line northing\" points=\"{}\"/>\n", f.points(line));
    const auto [x, y] = f.local(utm_reverse(zone, left.easting_m, n));
    (void)x;
    labels += fmt::format("<text class=\"grid-label\" x=\"4\" y=\"{:.1f}\">{}N</text>\n",
                          f.py(y) - 3.0, label_text(n));
  }
  return fmt::format(
      "<g id=\"grid\" class=\"layer\" data-zone=\"{}{}\" data-step-m=\"{:g}\" fill=\"none\" "
      "stroke=\"#999999\" stroke-width=\"0.6\">\n{}<g fill=\"#333333\" stroke=\"none\" "
      "font-size=\"11\">\n{}</g>\n</g>\n",
      zone.zone, zone.northp ? 'N' : 'S', step, lines, labels);
}

std::string scale_bar_layer(const MapFrame& f) {
  const double length_m = nice_step(f.width() / f.scale() / 5.0);
  const double w = length_m * f.scale();
  const double x = 16.0;
  const double y = f.height() - 34.0;
  std::string out = fmt::format(
      "<g id=\"scale-bar\" class=\"layer\" data-length-m=\"{:g}\">\n<rect x=\"{:.1f}\" "
      "y=\"{:.1f}\" width=\"{:.1f}\" height=\"30\" fill=\"#ffffff\" fill-opacity=\"0.85\"/>\n",
      length_m, x - 6.0, y - 16.0, w + 60.0);
  for (int i = 0; i < 4; ++i) {
    out += fmt::format(
        "<rect x=\"{:.1f}\" y=\"{:.1f}\" width=\"{:.1f}\" height=\"6\" fill=\"{}\" "
        "stroke=\"#000000\" stroke-width=\"1\"/>\n",
        x + i * w / 4.0, y, w / 4.0, i % 2 == 0 ? "#000000" : "#ffffff");
  }
  out += fmt::format(
      "<text x=\"{:.1f}\" y=\"{:.1f}\" font-size=\"12\">0</text>\n<text x=\"{:.1f}\" "
      "y=\"{:.1f}\" font-size=\"12\">{}</text>\n</g>\n",
      x - 3.0, y - 3.0, x + w - 6.0, y - 3.0, length_text(length_m));
  return out;
}

std::string north_arrow_layer(const MapFrame& f) {
  const double x = f.width() - 34.0;
  const double y = 20.0;
  return fmt::format(
      "<g id=\"north-arrow\" class=\"layer\">\n<rect x=\"{:.1f}\" y=\"{:.1f}\" width=\"36\" "
      "height=\"62\" fill=\"#ffffff\" fill-opacity=\"0.85\"/>\n"
      "<polygon points=\"{:.1f},{:.1f} {:.1f},{:.1f} {:.1f},{:.1f}\" fill=\"#000000\"/>\n"
      "<polygon points=\"{:.1f},{:.1f} {:.1f},{:.1f} {:.1f},{:.1f}\" fill=\"#ffffff\" "
      "stroke=\"#000000\"/>\n<text x=\"{:.1f}\" y=\"{:.1f}\" font-size=\"14\" "
      "font-weight=\"bold\" text-anchor=\"middle\">N</text>\n<text x=\"{:.1f}\" y=\"{:.1f}\" "
      "font-size=\"8\" text-anchor=\"middle\">true</text>\n</g>\n",
      x - 18.0, y - 12.0, x, y + 2.0, x + 8.0, y + 34.0, x, y + 28.0, x, y + 2.0, x - 8.0, y + 34.0,
      x, y + 28.0, x, y + 48.0, x, y - 1.0);
}

struct LegendEntry {
  std::string symbol;  // SVG drawn in a 28 x 14 box at the origin
  std::string text;
};

std::string legend_layer(const MapFrame& f, const std::vector<LegendEntry>& entries) {
  if (entries.empty())
    return "";
  const double line_h = 18.0;
  const double w = 300.0;
  const double h = 10.0 + line_h * static_cast<double>(entries.size());
  const double x = f.width() - w - 8.0;
  const double y = f.height() - h - 22.0;
  std::string out = fmt::format(
      "<g id=\"legend\" class=\"layer\" font-size=\"12\">\n<rect x=\"{:.1f}\" y=\"{:.1f}\" "
      "width=\"{:.1f}\" height=\"{:.1f}\" fill=\"#ffffff\" fill-opacity=\"0.9\" "
      "stroke=\"#000000\" stroke-width=\"0.5\"/>\n",
      x, y, w, h);
  for (std::size_t i = 0; i < entries.size(); ++i) {
    const double ey = y + 6.0 + line_h * static_cast<double>(i);
    out += fmt::format(
        "<g transform=\"translate({:.1f},{:.1f})\">{}</g><text x=\"{:.1f}\" "
        "y=\"{:.1f}\">{}</text>\n",
        x + 8.0, ey, entries[i].symbol, x + 44.0, ey + 11.0, html_escape(entries[i].text));
  }
  return out + "</g>\n";
}

const char* signal_colour(std::size_t index) {
  return kSignalColours[index % kSignalColourCount];
}

}  // namespace

std::string report_map_svg(const std::vector<Bearing>& bearings,
                           const std::vector<FixResult>& results,
                           const std::vector<SearchArea>& areas, const ReportOptions& options) {
  // Signals in order of first appearance, for colours.
  std::map<std::string, std::size_t> colour_of;
  auto colour_index = [&](const std::string& s) {
    return colour_of.emplace(s, colour_of.size()).first->second;
  };
  for (const Bearing& b : bearings)
    colour_index(b.signal);

  const FixResult* first = nullptr;
  std::map<std::size_t, std::pair<const BearingFit*, const Fix*>> fit_of;
  for (const FixResult& r : results) {
    if (!r.fix.ok())
      continue;
    if (first == nullptr)
      first = &r;
    for (const BearingFit& bf : r.fix.bearings)
      fit_of.emplace(bf.index, std::pair{&bf, &r.fix});
  }
  LatLon centre;
  if (first != nullptr) {
    centre = first->fix.position;
  } else if (!bearings.empty()) {
    for (const Bearing& b : bearings) {
      centre.lat_deg += b.lat_deg / static_cast<double>(bearings.size());
      centre.lon_deg += b.lon_deg / static_cast<double>(bearings.size());
    }
  }
  MapFrame frame(centre);
  for (const Bearing& b : bearings)
    frame.include(LatLon{b.lat_deg, b.lon_deg});
  for (const FixResult& r : results) {
    if (!r.fix.ok())
      continue;
    frame.include(r.fix.position);
    for (const Ellipse& e : r.uncertainty.ellipses)
      if (std::isfinite(e.semi_major_m))
        frame.include(ellipse_ring(r.fix.position, e, 72));
    for (const Ellipse& e : r.uncertainty.scaled_ellipses)
      if (std::isfinite(e.semi_major_m))
        frame.include(ellipse_ring(r.fix.position, e, 72));
  }
  for (const SearchArea& a : areas) {
    for (const HpdRegion& reg : a.regions)
      for (const GeoPolygon& p : reg.parts)
        frame.include(p.outer);
    for (const SearchSegment& s : a.plan.segments)
      for (const GeoPolygon& p : s.outline)
        frame.include(p.outer);
  }
  frame.finish(std::clamp(options.map_width_px, 300, 4000));

  std::vector<LegendEntry> legend;
  std::string out = fmt::format(
      "<svg xmlns=\"http://www.w3.org/2000/svg\" id=\"map\" class=\"lobfix-map\" "
      "viewBox=\"0 0 {0:.0f} {1:.0f}\" width=\"{0:.0f}\" height=\"{1:.0f}\" "
      "font-family=\"sans-serif\" role=\"img\" aria-labelledby=\"map-title\">\n"
      "<title id=\"map-title\">Map of the stations, lines of bearing, fix and search area"
      "</title>\n<rect id=\"background\" x=\"0\" y=\"0\" width=\"{0:.0f}\" height=\"{1:.0f}\" "
      "fill=\"#ffffff\"/>\n",
      frame.width(), frame.height());
  out += grid_layer(frame);

  // Regions, largest first so that the smaller ones lie on top.
  std::string regions;
  std::set<double> region_probabilities;
  for (const SearchArea& a : areas) {
    for (auto it = a.regions.rbegin(); it != a.regions.rend(); ++it) {
      const double opacity = std::clamp(0.55 * (1.0 - it->probability) + 0.1, 0.1, 0.45);
      const bool inner = it->probability < 0.75;
      for (const GeoPolygon& p : it->parts) {
        regions += fmt::format(
            "<path class=\"region\" data-signal=\"{}\" data-probability=\"{:g}\" d=\"{}\" "
            "fill=\"{}\" fill-opacity=\"{:.2f}\" fill-rule=\"evenodd\" stroke=\"#000000\" "
            "stroke-width=\"{}\" stroke-dasharray=\"{}\"/>\n",
            html_escape(a.signal), it->probability, frame.rings(p.outer, p.holes), kRegionColour,
            opacity, inner ? "1.5" : "1", inner ? "none" : "2 3");
      }
      region_probabilities.insert(it->probability);
    }
  }
  if (!regions.empty()) {
    out += "<g id=\"regions\" class=\"layer\">\n" + regions + "</g>\n";
    for (const double p : region_probabilities) {
      const bool inner = p < 0.75;
      legend.push_back(
          {fmt::format("<rect x=\"2\" y=\"2\" width=\"24\" height=\"10\" fill=\"{}\" "
                       "fill-opacity=\"{:.2f}\" stroke=\"#000000\" stroke-dasharray=\"{}\"/>",
                       kRegionColour, std::clamp(0.55 * (1.0 - p) + 0.1, 0.1, 0.45),
                       inner ? "none" : "2 3"),
           fmt::format("{:g}% probability region", p * 100.0)});
    }
  }

  std::string segments;
  for (const SearchArea& a : areas) {
    const double side_px = a.plan.side_m * frame.scale();
    const double font = std::clamp(side_px * 0.45, 7.0, 14.0);
    for (const SearchSegment& s : a.plan.segments) {
      std::string d;
      for (const GeoPolygon& p : s.outline)
        d += frame.rings(p.outer, p.holes);
      segments += fmt::format(
          "<g class=\"segment\" data-id=\"{}\" data-rank=\"{}\" data-poa=\"{:.6f}\">"
          "<path d=\"{}\" fill=\"none\" stroke=\"#333333\" stroke-width=\"0.8\"/>",
          html_escape(s.id), s.rank, s.poa, d);
      if (side_px >= 12.0 || s.rank <= 5) {
        const auto [x, y] = frame.local(s.centre);
        segments += fmt::format(
            "<text class=\"segment-rank\" x=\"{:.1f}\" y=\"{:.1f}\" font-size=\"{:.1f}\" "
            "text-anchor=\"middle\" stroke=\"#ffffff\" stroke-width=\"2.5\" "
            "paint-order=\"stroke\">{}</text>",
            frame.px(x), frame.py(y) + 0.35 * font, font, s.rank);
      }
      segments += "</g>\n";
    }
  }
  if (!segments.empty()) {
    out += "<g id=\"segments\" class=\"layer\">\n" + segments + "</g>\n";
    legend.push_back(
        {"<rect x=\"2\" y=\"1\" width=\"24\" height=\"12\" fill=\"none\" "
         "stroke=\"#333333\"/><text x=\"14\" y=\"11\" font-size=\"9\" "
         "text-anchor=\"middle\">1</text>",
         "search segment and its rank"});
  }

  // Rays: to 1.2 times the range of their fix, else across the map.
  std::string rays;
  bool any_outlier = false;
  bool any_inlier = false;
  const double default_length_m = 1.5 * std::hypot(frame.width(), frame.height()) / frame.scale();
  for (std::size_t i = 0; i < bearings.size(); ++i) {
    const Bearing& b = bearings[i];
    const auto it = fit_of.find(i);
    const BearingFit* fit = it == fit_of.end() ? nullptr : it->second.first;
    const double length = fit != nullptr ? std::max(1.2 * fit->range_m, 100.0) : default_length_m;
    const Path path =
        ray_path(LatLon{b.lat_deg, b.lon_deg}, used_azimuth(b, fit), length, length / 32.0);
    const bool outlier = fit != nullptr && fit->outlier;
    (outlier ? any_outlier : any_inlier) = true;
    rays += fmt::format(
        "<polyline class=\"ray{}\" data-station=\"{}\" data-line=\"{}\" points=\"{}\" "
        "fill=\"none\" stroke=\"{}\" stroke-width=\"{}\"{}/>\n",
        outlier ? " outlier" : "", html_escape(b.station), b.source.line, frame.points(path),
        outlier ? "#000000" : signal_colour(colour_index(b.signal)), outlier ? "1.2" : "1.6",
        outlier ? " stroke-dasharray=\"7 4\"" : "");
  }
  if (!rays.empty()) {
    out += "<g id=\"rays\" class=\"layer\" stroke-linecap=\"round\">\n" + rays + "</g>\n";
    if (any_inlier)
      legend.push_back({fmt::format("<line x1=\"0\" y1=\"7\" x2=\"28\" y2=\"7\" stroke=\"{}\" "
                                    "stroke-width=\"1.6\"/>",
                                    signal_colour(0)),
                        "line of bearing"});
    if (any_outlier)
      legend.push_back(
          {"<line x1=\"0\" y1=\"7\" x2=\"28\" y2=\"7\" stroke=\"#000000\" "
           "stroke-width=\"1.2\" stroke-dasharray=\"7 4\"/>",
           "bearing distrusted (outlier)"});
  }

  // Stations: each distinct position once.
  std::string stations;
  std::set<std::pair<std::string, std::pair<double, double>>> seen;
  for (const Bearing& b : bearings) {
    if (!seen.insert({b.station, {b.lat_deg, b.lon_deg}}).second)
      continue;
    const auto [x, y] = frame.local(LatLon{b.lat_deg, b.lon_deg});
    stations += fmt::format(
        "<rect class=\"station\" data-station=\"{}\" x=\"{:.1f}\" y=\"{:.1f}\" width=\"8\" "
        "height=\"8\" fill=\"#ffffff\" stroke=\"#000000\" stroke-width=\"1.5\"><title>{}"
        "</title></rect>\n",
        html_escape(b.station), frame.px(x) - 4.0, frame.py(y) - 4.0, html_escape(b.station));
  }
  if (!stations.empty()) {
    out += "<g id=\"stations\" class=\"layer\">\n" + stations + "</g>\n";
    legend.push_back(
        {"<rect x=\"10\" y=\"3\" width=\"8\" height=\"8\" fill=\"#ffffff\" "
         "stroke=\"#000000\" stroke-width=\"1.5\"/>",
         "station (where a bearing was taken)"});
  }

  std::string ellipses;
  bool any_scaled = false;
  for (const FixResult& r : results) {
    if (!r.fix.ok())
      continue;
    auto draw = [&](const Ellipse& e, bool scaled) {
      if (!std::isfinite(e.semi_major_m))
        return;
      const bool inner = e.probability < 0.75;
      ellipses += fmt::format(
          "<polygon class=\"ellipse{}\" data-signal=\"{}\" data-probability=\"{:g}\" "
          "points=\"{}\" fill=\"none\" stroke=\"{}\" stroke-width=\"{}\"{}/>\n",
          scaled ? " scaled" : "", html_escape(r.fix.signal), e.probability,
          frame.points(ellipse_ring(r.fix.position, e, 120)), kEllipseColour, inner ? "3" : "1.6",
          scaled ? " stroke-dasharray=\"2 3\"" : "");
    };
    for (const Ellipse& e : r.uncertainty.ellipses)
      draw(e, false);
    for (const Ellipse& e : r.uncertainty.scaled_ellipses) {
      draw(e, true);
      any_scaled = true;
    }
  }
  if (!ellipses.empty()) {
    out += "<g id=\"ellipses\" class=\"layer\">\n" + ellipses + "</g>\n";
    legend.push_back({fmt::format("<ellipse cx=\"14\" cy=\"7\" rx=\"12\" ry=\"5\" fill=\"none\" "
                                  "stroke=\"{}\" stroke-width=\"3\"/>",
                                  kEllipseColour),
                      "error ellipses (thick: 50%, thin: 95%)"});
    if (any_scaled)
      legend.push_back({fmt::format("<ellipse cx=\"14\" cy=\"7\" rx=\"12\" ry=\"5\" fill=\"none\" "
                                    "stroke=\"{}\" stroke-dasharray=\"2 3\"/>",
                                    kEllipseColour),
                        "ellipses scaled by the residuals"});
  }

  std::string fixes;
  for (const FixResult& r : results) {
    if (!r.fix.ok())
      continue;
    const auto [x, y] = frame.local(r.fix.position);
    const double cx = frame.px(x);
    const double cy = frame.py(y);
    fixes += fmt::format(
        "<g class=\"fix\" data-signal=\"{0}\"><circle cx=\"{1:.1f}\" cy=\"{2:.1f}\" r=\"7\" "
        "fill=\"none\" stroke=\"#ffffff\" stroke-width=\"4\"/><circle cx=\"{1:.1f}\" "
        "cy=\"{2:.1f}\" r=\"7\" fill=\"none\" stroke=\"#000000\" stroke-width=\"2\"/>"
        "<path d=\"M{3:.1f},{2:.1f}H{4:.1f}M{1:.1f},{5:.1f}V{6:.1f}\" stroke=\"#000000\" "
        "stroke-width=\"2\"/><title>fix {0}</title></g>\n",
        html_escape(r.fix.signal), cx, cy, cx - 11.0, cx + 11.0, cy - 11.0, cy + 11.0);
  }
  if (!fixes.empty()) {
    out += "<g id=\"fix\" class=\"layer\">\n" + fixes + "</g>\n";
    legend.push_back(
        {"<circle cx=\"14\" cy=\"7\" r=\"5\" fill=\"none\" stroke=\"#000000\" "
         "stroke-width=\"2\"/><path d=\"M6,7H22M14,-1V15\" stroke=\"#000000\"/>",
         "fix (the estimate)"});
  }

  out += scale_bar_layer(frame);
  out += north_arrow_layer(frame);
  out += legend_layer(frame, legend);
  out += "</svg>\n";
  return out;
}

}  // namespace lobfix
