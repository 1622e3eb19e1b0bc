// The spot file of `lobfix next` (docs/planning.md, "Spot file").
#include <algorithm>
#include <array>
#include <string>

#include "detail/csv_tokenizer.hpp"
#include "detail/plan_csv.hpp"
#include "lobfix/planning.hpp"

namespace lobfix {

SpotReadResult read_spots_csv(const std::string& path) {
  const std::string text = detail::read_whole_file(path);
  constexpr std::array<const char*, 4> kNames{"name", "lat", "lon", "team"};
  SpotReadResult result;
  detail::CsvTokenizer tokenizer(text);
  detail::CsvRecord record;
  if (!tokenizer.next(record))
    throw InputError({path, 0, 0, "", "the file is empty: a spot file needs a header line"});
  const int header_line = record.line;
  std::array<int, 4> position{-1, -1, -1, -1};
  for (std::size_t i = 0; i < record.fields.size(); ++i) {
    const std::string name = detail::lower_text(record.fields[i].text);
    const int column = static_cast<int>(i) + 1;
    const auto it = std::find(kNames.begin(), kNames.end(), name);
    if (it == kNames.end()) {
      result.warnings.push_back(
          {path, header_line, column, name, "unknown column '" + name + "' ignored"});
      continue;
    }
    const std::size_t k = static_cast<std::size_t>(it - kNames.begin());
    if (position[k] >= 0)
      throw InputError(
          {path, header_line, column, name, "column '" + name + "' appears twice in the header"});
    position[k] = static_cast<int>(i);
  }
  for (const std::size_t k : {std::size_t{1}, std::size_t{2}}) {
    if (position[k] < 0)
      throw InputError({path, header_line, 0, kNames[k],
                        std::string("missing required column '") + kNames[k] + "'"});
  }
  const std::size_t columns = record.fields.size();
  while (tokenizer.next(record)) {
    const int line = record.line;
    if (record.fields.size() != columns) {
      result.errors.push_back({path, line, 0, "",
                               "row has " + std::to_string(record.fields.size()) +
                                   " fields, the header has " + std::to_string(columns)});
      continue;
    }
    const auto cell = [&](std::size_t k) -> std::string {
      return position[k] < 0
                 ? std::string()
                 : std::string(record.fields[static_cast<std::size_t>(position[k])].text);
    };
    bool ok = true;
    CandidateSpot spot;
    double* targets[2] = {&spot.position.lat_deg, &spot.position.lon_deg};
    const double limits[2] = {90.0, 180.0};
    for (std::size_t k = 1; k <= 2; ++k) {
      std::string reason;
      const std::string value = cell(k);
      if (value.empty()) {
        reason = std::string(kNames[k]) + " is empty";
      } else if (detail::parse_number_in(value, -limits[k - 1], limits[k - 1], false,
                                         *targets[k - 1], reason, kNames[k])) {
        continue;
      }
      result.errors.push_back({path, line, position[k] + 1, kNames[k], reason});
      ok = false;
    }
    spot.name = cell(0).empty() ? "line " + std::to_string(line) : cell(0);
    spot.team = cell(3);
    spot.source = {path, line};
    if (ok)
      result.spots.push_back(std::move(spot));
  }
  return result;
}

}  // namespace lobfix
