// lobfix: the human and machine summaries of a solve (stage "export"). The library builds
// the text; the command-line tool prints it. Fields: docs/outputs.md.
#pragma once

#include <string>
#include <vector>

#include "lobfix/bearing.hpp"
#include "lobfix/error.hpp"
#include "lobfix/robust.hpp"
#include "lobfix/search_area.hpp"
#include "lobfix/uncertainty.hpp"

namespace lobfix {

/// What the run read, for the summaries.
struct RunInfo {
  std::string input;                          ///< input file name as given
  int rows_read = 0;                          ///< data rows seen
  int rows_converted = 0;                     ///< rows that became true bearings (normalise)
  std::vector<Diagnostic> skipped;            ///< rows left out (with --skip-bad)
  std::vector<Diagnostic> warnings;           ///< e.g. unknown columns
  std::string version;                        ///< lobfix version
  RobustLoss robust_loss = RobustLoss::none;  ///< the loss the solve used
  double robust_tuning = 1.0;                 ///< its tuning constant (sigmas)
  bool excluded_outliers = false;             ///< outliers left out and the rest refitted
};

/// A plain-text summary for a field user: each fix in decimal degrees, DMS, MGRS and UTM,
/// the ellipses, CEP, the goodness of fit in words, and a per-bearing residual table; a
/// signal without a fix gets its reason instead.
std::string text_summary(const RunInfo& run, const std::vector<Bearing>& bearings,
                         const std::vector<FixResult>& results);

/// The same as one JSON document: {"lobfix": version, "input": ..., "fixes": [...]}
/// (schema in docs/outputs.md). Numbers are plain JSON numbers; NaN never appears.
std::string json_summary(const RunInfo& run, const std::vector<Bearing>& bearings,
                         const std::vector<FixResult>& results);

/// The same with a search-area section per signal (map, regions, their comparison with the
/// ellipses, the segment table) before the cautions.
std::string text_summary(const RunInfo& run, const std::vector<Bearing>& bearings,
                         const std::vector<FixResult>& results,
                         const std::vector<SearchArea>& areas);
/// The same with "search_areas": [...] (docs/outputs.md).
std::string json_summary(const RunInfo& run, const std::vector<Bearing>& bearings,
                         const std::vector<FixResult>& results,
                         const std::vector<SearchArea>& areas);

/// The search-area section of the text summary.
std::string area_text(const SearchArea& area);
/// The team list: one line per segment (rank, id, MGRS of the centre, POA, cumulative POA,
/// area, squares, searches), then the rest.
std::string segments_table(const SearchArea& area);
/// The team list as CSV (RFC 4180), one row per segment and a "rest" row per signal.
std::string segments_csv(const std::vector<SearchArea>& areas);

/// The cautions printed with every result and carried by the report.
const char* safety_note();

}  // namespace lobfix
