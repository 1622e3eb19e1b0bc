#include "crs_output.hpp"

#include <fmt/format.h>

#include <iostream>
#include <nlohmann/json.hpp>

#include "exit_codes.hpp"
#include "lobfix/error.hpp"
#include "lobfix/report.hpp"
#include "lobfix/summary.hpp"

namespace lobfix_app {

int open_output_crs(const std::string& code, std::unique_ptr<lobfix::ProjectedCrs>& out) {
  if (code.empty())
    return kExitOk;
  try {
    out = std::make_unique<lobfix::ProjectedCrs>(code);
  } catch (const lobfix::InputError& e) {
    std::cerr << "lobfix: --crs: " << e.diagnostic().reason << "\n";
    return kExitUsage;
  }
  return kExitOk;
}

std::string with_crs_json(const std::string& json, const lobfix::ProjectedCrs& crs,
                          const std::vector<lobfix::Bearing>& bearings,
                          const std::vector<lobfix::FixResult>& results,
                          const std::vector<lobfix::SearchArea>& areas) {
  auto doc = nlohmann::ordered_json::parse(json);
  nlohmann::ordered_json points = nlohmann::ordered_json::array();
  for (const lobfix::CrsCoordinate& c : lobfix::crs_coordinates(bearings, results, areas, crs)) {
    nlohmann::ordered_json p{
        {"kind", c.kind}, {"name", c.label}, {"lat", c.point.lat_deg}, {"lon", c.point.lon_deg}};
    if (c.ok) {
      p["easting"] = c.easting;
      p["northing"] = c.northing;
    } else {
      p["error"] = c.error;
    }
    points.push_back(std::move(p));
  }
  doc["crs"] = {{"code", crs.code()}, {"name", crs.name()}, {"points", std::move(points)}};
  return doc.dump(2, ' ', false, nlohmann::ordered_json::error_handler_t::replace) + "\n";
}

std::string crs_text(const lobfix::ProjectedCrs& crs, const std::vector<lobfix::Bearing>& bearings,
                     const std::vector<lobfix::FixResult>& results,
                     const std::vector<lobfix::SearchArea>& areas) {
  std::string out = "\nIn " + crs.code() + " (" + crs.name() + "), easting northing:\n";
  for (const lobfix::CrsCoordinate& c : lobfix::crs_coordinates(bearings, results, areas, crs)) {
    out += fmt::format("  {:<8} {:<16} ", c.kind, c.label);
    out +=
        c.ok ? fmt::format("{:.3f} {:.3f}", c.easting, c.northing) : "not in this CRS: " + c.error;
    out += "\n";
  }
  return out;
}

std::string with_crs_text(const std::string& summary, const lobfix::ProjectedCrs& crs,
                          const std::vector<lobfix::Bearing>& bearings,
                          const std::vector<lobfix::FixResult>& results,
                          const std::vector<lobfix::SearchArea>& areas) {
  // The cautions are the summary's last paragraph and begin with the safety note's words.
  const std::string first_words = std::string(lobfix::safety_note()).substr(0, 20);
  const std::size_t at = summary.rfind("\n\n" + first_words);
  const std::string block = crs_text(crs, bearings, results, areas);
  if (at == std::string::npos)
    return summary + block;
  return summary.substr(0, at + 1) + block + summary.substr(at + 1);
}

}  // namespace lobfix_app
