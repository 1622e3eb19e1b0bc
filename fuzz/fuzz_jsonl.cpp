// libFuzzer target: bearing JSON Lines (read_observations_jsonl, lobfix/reader.hpp).
//
// Each input is read twice, without a default sigma and with one. Neither read may crash or
// hang, and each result must have the properties of read_checks.hpp. The JSON Lines reader
// throws InputError only for a default sigma outside (0, 90] (reader.hpp): with the valid
// options used here, every problem must be a row error, so an InputError is a finding too.
// A default sigma only fills rows that give none, so every row that is good without it must
// be good, and the same, with it.
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <map>
#include <optional>
#include <sstream>
#include <string>

#include "fuzz_support.hpp"
#include "lobfix/error.hpp"
#include "lobfix/reader.hpp"
#include "read_checks.hpp"

namespace {

const std::string kFileName = "fuzz.jsonl";

std::optional<lobfix::ReadResult> read(const std::string& text,
                                       const lobfix::ReadOptions& options) {
  std::istringstream in(text);
  try {
    lobfix::ReadResult r = lobfix::read_observations_jsonl(in, kFileName, options);
    lobfix_fuzz::check_read_result(r, kFileName, options, /*jsonl=*/true);
    return r;
  } catch (const lobfix::InputError& e) {
    std::fprintf(stderr, "lobfix fuzz: InputError: %s\n", e.what());
    FUZZ_CHECK(false, "JSON Lines problems are row errors, not an InputError");
    return std::nullopt;
  }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string text(reinterpret_cast<const char*>(data), size);
  const auto plain = read(text, lobfix::ReadOptions{});
  lobfix::ReadOptions with_default;
  with_default.default_sigma_deg = 3.0;
  const auto defaulted = read(text, with_default);
  if (plain) {
    FUZZ_CHECK(defaulted.has_value(), "a file read without a default sigma reads with one");
    std::map<int, const lobfix::Observation*> by_line;
    for (const lobfix::Observation& o : defaulted->observations)
      by_line[o.source.line] = &o;
    for (const lobfix::Observation& o : plain->observations) {
      const auto it = by_line.find(o.source.line);
      FUZZ_CHECK(it != by_line.end(), "a good row stays good with a default sigma");
      FUZZ_CHECK(it->second->sigma_deg == o.sigma_deg && it->second->bearing_deg == o.bearing_deg &&
                     it->second->time_unix_ns == o.time_unix_ns,
                 "a default sigma changes no row that gives its own");
    }
  }
  return 0;
}
