// Tests of the field report (lobfix/report.hpp): the HTML's structure and map layers, the
// escaping of names from files, no outside resource, and the coordinates it gives checked
// against outside tools: PROJ's cs2cs (values pasted below with the command that made them)
// and GeographicLib's GeoConvert (run at test time, as crs_test.cpp runs cs2cs). Scenario
// invented: three stations and a transmitter in open country.
#include <GeographicLib/Geodesic.hpp>
#include <cctype>

#include <array>
#include <cctype>
#include <cstdio>
#include <string>
#include <vector>

#include "lobfix/report.hpp"
#include "lobfix/search_area.hpp"
#include "lobfix/solver.hpp"
#include "test_support.hpp"

using namespace lobfix;

namespace {

struct Scenario {
  std::vector<Bearing> bearings;
  std::vector<FixResult> results;
  std::vector<SearchArea> areas;
  RunInfo run;
};

// Stations at chosen positions (those the cs2cs values below are for), bearings toward an
// invented transmitter with small invented errors; the last station's name carries HTML.
Scenario make_scenario(bool with_outlier = false) {
  const GeographicLib::Geodesic& g = GeographicLib::Geodesic::WGS84();
  const LatLon t{46.80, 8.06};
  const std::array<LatLon, 3> stations{{{46.7700, 8.0100}, {46.7850, 8.0950}, {46.8300, 8.0300}}};
  const std::array<const char*, 3> names{{"north-1", "east & co", "<b>ridge</b> \"3\""}};
  const double noise[] = {0.8, -0.5, 0.6, -0.3, 0.4, 25.0};
  Scenario s;
  for (int i = 0; i < (with_outlier ? 6 : 3); ++i) {
    const LatLon p = stations[static_cast<std::size_t>(i % 3)];
    double s12 = 0, a1 = 0, a2 = 0;
    g.Inverse(p.lat_deg, p.lon_deg, t.lat_deg, t.lon_deg, s12, a1, a2);
    Bearing b;
    b.station = names[static_cast<std::size_t>(i % 3)];
    b.signal = "tag<1>";
    b.time_text = "2026-05-04T10:0" + std::to_string(i) + ":00Z";
    b.lat_deg = p.lat_deg;
    b.lon_deg = p.lon_deg;
    b.azimuth_deg = wrap_deg360(a1 + noise[i]);
    b.sigma_deg = 2.0;
    b.source = {"invented.csv", i + 2};
    s.bearings.push_back(b);
  }
  SolveOptions o;
  if (with_outlier)
    o.loss = RobustLoss::andrews;
  FixResult r;
  r.fix = solve_fix(s.bearings, o);
  r.fix.signal = "tag<1>";
  r.uncertainty = describe_uncertainty(r.fix, {});
  s.results.push_back(r);
  SearchAreaOptions ao;
  ao.map.cell_m = 25;
  s.areas.push_back(make_search_area(s.bearings, r, ao));
  s.run.input = "invented<&>.csv";
  s.run.version = "test";
  s.run.rows_read = static_cast<int>(s.bearings.size());
  return s;
}

std::string run_tool(const std::string& command) {
  std::string out;
  FILE* pipe = popen(command.c_str(), "r");
  REQUIRE(pipe != nullptr);
  char buf[512];
  while (std::fgets(buf, sizeof buf, pipe) != nullptr)
    out += buf;
  pclose(pipe);
  while (!out.empty() && (out.back() == '\n' || out.back() == ' '))
    out.pop_back();
  return out;
}

int count(const std::string& text, const std::string& what) {
  int n = 0;
  for (std::size_t at = text.find(what); at != std::string::npos; at = text.find(what, at + 1))
    ++n;
  return n;
}

}  // namespace

TEST_CASE("html_escape replaces the five HTML special characters") {
  CHECK(html_escape("a<b>&\"c'") == "a&lt;b&gt;&amp;&quot;c&#39;");
  CHECK(html_escape("plain") == "plain");
}

TEST_CASE("the report holds every map layer, the tables and the cautions") {
  const Scenario s = make_scenario();
  REQUIRE(s.results[0].fix.ok());
  REQUIRE(s.areas[0].map.ok);
  const std::string html = report_html(s.run, s.bearings, s.results, s.areas);
  CHECK(html.rfind("<!DOCTYPE html>", 0) == 0);
  for (const char* id : {"id=\"map\"", "id=\"grid\"", "id=\"regions\"", "id=\"segments\"",
                         "id=\"rays\"", "id=\"stations\"", "id=\"ellipses\"", "id=\"fix\"",
                         "id=\"scale-bar\"", "id=\"north-arrow\"", "id=\"legend\""}) {
    INFO(id);
    CHECK(count(html, id) == 1);
  }
  CHECK(count(html, "class=\"ray\"") == 3);
  CHECK(count(html, "class=\"station\"") == 3);
  CHECK(count(html, "class=\"region\"") >= 2);
  CHECK(count(html, "class=\"segment\"") == static_cast<int>(s.areas[0].plan.segments.size()));
  CHECK(count(html, "class=\"segments\"") == 1);
  CHECK(count(html, "class=\"bearings\"") == 1);
  CHECK(html.find("A fix is an estimate") != std::string::npos);
  CHECK(html.find("Reflections") != std::string::npos);
  CHECK(html.find("lead agency") != std::string::npos);
  CHECK(html.find("@media print") != std::string::npos);
  CHECK(html.find("How far to trust it") != std::string::npos);
}

TEST_CASE("names from the input are escaped and no outside resource is referred to") {
  const Scenario s = make_scenario();
  const std::string html = report_html(s.run, s.bearings, s.results, s.areas);
  CHECK(html.find("<b>ridge</b>") == std::string::npos);
  CHECK(html.find("&lt;b&gt;ridge&lt;/b&gt; &quot;3&quot;") != std::string::npos);
  CHECK(html.find("east &amp; co") != std::string::npos);
  CHECK(html.find("tag<1>") == std::string::npos);
  CHECK(html.find("invented&lt;&amp;&gt;.csv") != std::string::npos);
  // No attribute or rule that loads anything: src=, href=, url(, @import, and no script,
  // link or img element (case-insensitive; std::regex is avoided: GCC 12's libstdc++ regex
  // trips -Wmaybe-uninitialized under the sanitizer build).
  std::string lower = html;
  for (char& c : lower)
    c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  for (const char* word : {"url(", "@import", "<script", "<link", "<img"})
    CHECK_MESSAGE(lower.find(word) == std::string::npos, word);
  for (const std::string attribute : {"src", "href"}) {
    for (std::size_t at = lower.find(attribute); at != std::string::npos;
         at = lower.find(attribute, at + 1)) {
      const bool word_start = at == 0 || !std::isalnum(static_cast<unsigned char>(lower[at - 1]));
      std::size_t k = at + attribute.size();
      while (k < lower.size() && std::isspace(static_cast<unsigned char>(lower[k])))
        ++k;
      const bool assigned = word_start && k < lower.size() && lower[k] == '=';
      CHECK_FALSE_MESSAGE(assigned, attribute << "= at " << at);
    }
  }
  // The only address is the SVG namespace name, which is never fetched.
  for (const std::string scheme : {"http://", "https://"}) {
    for (std::size_t at = lower.find(scheme); at != std::string::npos;
         at = lower.find(scheme, at + 1)) {
      const std::string svg_namespace = "www.w3.org/2000/svg\"";
      CHECK(lower.compare(at + scheme.size(), svg_namespace.size(), svg_namespace) == 0);
    }
  }
}

TEST_CASE("a layer without data is left out and an outlier is drawn dashed") {
  const Scenario s = make_scenario(/*with_outlier=*/true);
  REQUIRE(s.results[0].fix.ok());
  REQUIRE(s.results[0].fix.outliers == 1);
  const std::string with_area = report_map_svg(s.bearings, s.results, s.areas);
  CHECK(count(with_area, "class=\"ray outlier\"") == 1);
  CHECK(with_area.find("stroke-dasharray=\"7 4\"") != std::string::npos);
  const std::string no_area = report_map_svg(s.bearings, s.results, {});
  CHECK(no_area.find("id=\"regions\"") == std::string::npos);
  CHECK(no_area.find("id=\"segments\"") == std::string::npos);
  CHECK(no_area.find("id=\"fix\"") != std::string::npos);
  std::vector<FixResult> unsolved = s.results;
  unsolved[0].fix.status = FixStatus::no_crossing;
  unsolved[0].fix.message = "parallel";
  const std::string no_fix = report_map_svg(s.bearings, unsolved, {});
  CHECK(no_fix.find("id=\"fix\"") == std::string::npos);
  CHECK(no_fix.find("id=\"ellipses\"") == std::string::npos);
  CHECK(no_fix.find("id=\"rays\"") != std::string::npos);
  const std::string html = report_html(s.run, s.bearings, unsolved, {});
  CHECK(html.find("No fix") != std::string::npos);
  CHECK(html.find("tr class=\"outlier\"") == std::string::npos);
}

TEST_CASE("the fix's DMS and MGRS in the report are GeoConvert's") {
  const Scenario s = make_scenario();
  const LatLon p = s.results[0].fix.position;
  const std::string html = report_html(s.run, s.bearings, s.results, s.areas);
  char cmd[160];
  // GeoConvert (GeographicLib 2.x): -d degrees-minutes-seconds, -p 1 gives 0.01" (seconds to
  // two decimals, as format_dms's default); -m MGRS, -p 0 gives 1 m (5 digits per axis).
  std::snprintf(cmd, sizeof cmd, "echo '%.12f %.12f' | GeoConvert -d -p 1", p.lat_deg, p.lon_deg);
  const std::string dms = run_tool(cmd);
  std::snprintf(cmd, sizeof cmd, "echo '%.12f %.12f' | GeoConvert -m -p 0", p.lat_deg, p.lon_deg);
  const std::string mgrs = run_tool(cmd);
  INFO("GeoConvert: " << dms << " / " << mgrs);
  // GeoConvert writes 46d48'01.23"N 008d03'36.00"E; lobfix 46°48'01.23"N 8°03'36.00"E.
  int lat_d = 0, lat_m = 0, lon_d = 0, lon_m = 0;
  char lat_s[8] = {}, lon_s[8] = {};
  char lat_h = 0, lon_h = 0;
  REQUIRE(std::sscanf(dms.c_str(), "%dd%2d'%5[0-9.]\"%c %dd%2d'%5[0-9.]\"%c", &lat_d, &lat_m, lat_s,
                      &lat_h, &lon_d, &lon_m, lon_s, &lon_h) == 8);
  char buf[160];
  std::snprintf(buf, sizeof buf, "%d\xC2\xB0%02d&#39;%s&quot;%c %d\xC2\xB0%02d&#39;%s&quot;%c",
                lat_d, lat_m, lat_s, lat_h, lon_d, lon_m, lon_s, lon_h);
  const std::string expected = buf;
  CHECK(html.find(expected) != std::string::npos);
  REQUIRE(mgrs.size() == 15);
  CHECK(mgrs_reference(p, 5) == mgrs);
  CHECK(html.find(mgrs_spaced(mgrs)) != std::string::npos);
}

TEST_CASE("CRS coordinates of the stations agree with cs2cs to 1 mm, UTM 32N and LV95") {
  const Scenario s = make_scenario();
  // printf '46.7700 8.0100\n46.7850 8.0950\n46.8300 8.0300\n' |
  //   cs2cs -f %.4f EPSG:4326 EPSG:32632      (PROJ 9.1)
  const double utm[3][2] = {
      {424412.5316, 5180081.3866}, {430921.5173, 5181670.0016}, {426021.8326, 5186729.6444}};
  // The same with EPSG:2056 (CH1903+ / LV95; PROJ's transformation from WGS 84 for it).
  const double lv95[3][2] = {
      {2643641.9903, 1180027.6752}, {2650120.3836, 1181745.8899}, {2645119.3740, 1186708.8863}};
  for (const auto& [code_binding, values] :
       {std::pair{"EPSG:32632", utm}, std::pair{"EPSG:2056", lv95}}) {
    const std::string code = code_binding;  // INFO's lambda cannot capture a structured binding
    INFO(code);
    const ProjectedCrs crs(code);
    const std::vector<CrsCoordinate> c = crs_coordinates(s.bearings, s.results, s.areas, crs);
    REQUIRE(c.size() == 1 + 3 + s.areas[0].plan.segments.size());
    CHECK(c[0].kind == "fix");
    for (std::size_t i = 0; i < 3; ++i) {
      CHECK(c[1 + i].kind == "station");
      REQUIRE(c[1 + i].ok);
      CHECK_ABS(c[1 + i].easting, values[i][0], 1e-3);
      CHECK_ABS(c[1 + i].northing, values[i][1], 1e-3);
    }
    ReportOptions o;
    o.crs = &crs;
    const std::string html = report_html(s.run, s.bearings, s.results, s.areas, o);
    char cell[64];
    std::snprintf(cell, sizeof cell, "<td class=\"num\">%.3f</td>", c[1].easting);
    CHECK(html.find(cell) != std::string::npos);
    CHECK(html.find("Coordinates in " + std::string(code)) != std::string::npos);
  }
  CHECK_THROWS_AS(ProjectedCrs("EPSG:999999"), InputError);
}
