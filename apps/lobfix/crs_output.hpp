// --crs for the commands that print a summary: the fixes, stations and segment centres in the
// user's projected CRS, in the text summary and in --json.
#pragma once

#include <memory>
#include <string>
#include <vector>

#include "lobfix/bearing.hpp"
#include "lobfix/crs.hpp"
#include "lobfix/search_area.hpp"
#include "lobfix/uncertainty.hpp"

namespace lobfix_app {

/// Open `code` (empty: none, `out` stays null). An unknown or unusable code is a bad command
/// line: its reason is printed and kExitUsage returned; else kExitOk.
int open_output_crs(const std::string& code, std::unique_ptr<lobfix::ProjectedCrs>& out);

/// `json` (a JSON summary) with "crs": {"code", "name", "points": [...]} added.
std::string with_crs_json(const std::string& json, const lobfix::ProjectedCrs& crs,
                          const std::vector<lobfix::Bearing>& bearings,
                          const std::vector<lobfix::FixResult>& results,
                          const std::vector<lobfix::SearchArea>& areas);

/// `summary` (a text summary) with the block of crs_text put before its closing cautions,
/// so that the cautions stay last.
std::string with_crs_text(const std::string& summary, const lobfix::ProjectedCrs& crs,
                          const std::vector<lobfix::Bearing>& bearings,
                          const std::vector<lobfix::FixResult>& results,
                          const std::vector<lobfix::SearchArea>& areas);

/// The text block: one line per fix, station position and segment centre.
std::string crs_text(const lobfix::ProjectedCrs& crs, const std::vector<lobfix::Bearing>& bearings,
                     const std::vector<lobfix::FixResult>& results,
                     const std::vector<lobfix::SearchArea>& areas);

}  // namespace lobfix_app
