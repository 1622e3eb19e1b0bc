// libFuzzer target: times as bearing files write them (lobfix/time.hpp, and the readers'
// ISO 8601 or Unix seconds rule of detail/field_rules.hpp).
//
// Properties (time.hpp):
// - parse_iso8601_ns never crashes; a refusal comes with a reason that quotes the text.
// - When it accepts a text, format_iso8601_utc of the result parses back to the same value,
//   and formatting that again gives the same text (the formatted form is canonical).
// - Every 64-bit nanosecond count (the first 8 bytes of the input) formats to a text that
//   parses back to it: the parser spans exactly what the formatter writes.
// - parse_time_text agrees with parse_iso8601_ns on every ISO 8601 text; what it accepts
//   beyond that is Unix seconds, at or after the epoch, and writing those seconds back as
//   "s.nnnnnnnnn" gives the same time.
#include <cinttypes>
#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstring>
#include <string>
#include <string_view>

#include "detail/field_rules.hpp"
#include "fuzz_support.hpp"
#include "lobfix/time.hpp"

namespace {

void check_formatted(std::int64_t t) {
  const std::string text = lobfix::format_iso8601_utc(t);
  // "YYYY-MM-DDThh:mm:ssZ", with 3, 6 or 9 fractional digits before the Z when not whole.
  FUZZ_CHECK(text.size() == 20 || text.size() == 24 || text.size() == 27 || text.size() == 30,
             "formatted length");
  FUZZ_CHECK(text.back() == 'Z', "formatted times are UTC");
  std::string why;
  const auto back = lobfix::parse_iso8601_ns(text, &why);
  if (!back || *back != t) {
    std::fprintf(stderr, "lobfix fuzz: %" PRId64 " -> '%s' -> %s\n", t, text.c_str(),
                 back ? std::to_string(*back).c_str() : why.c_str());
  }
  FUZZ_CHECK(back && *back == t, "format_iso8601_utc parses back to the same time");
  FUZZ_CHECK(lobfix::format_iso8601_utc(*back) == text, "the formatted form is canonical");
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string_view text(reinterpret_cast<const char*>(data), size);

  std::string reason;
  const auto t = lobfix::parse_iso8601_ns(text, &reason);
  FUZZ_CHECK(lobfix::parse_iso8601_ns(text) == t, "the reason pointer does not change the result");
  if (t) {
    check_formatted(*t);
  } else {
    FUZZ_CHECK(reason.size() >= 2 && reason.front() == '\'', "a refusal quotes the text");
  }

  if (size >= sizeof(std::int64_t)) {
    std::int64_t any = 0;
    std::memcpy(&any, data, sizeof any);
    check_formatted(any);
  }

  std::string why;
  const auto read = lobfix::detail::parse_time_text(text, &why);
  if (t) {
    FUZZ_CHECK(read && *read == *t, "the readers' time rule agrees on ISO 8601 times");
  } else if (read) {
    FUZZ_CHECK(*read >= 0, "Unix seconds are at or after the epoch");
    char seconds[40];
    std::snprintf(seconds, sizeof seconds, "%" PRId64 ".%09" PRId64, *read / 1'000'000'000,
                  *read % 1'000'000'000);
    const auto again = lobfix::detail::parse_time_text(seconds, nullptr);
    FUZZ_CHECK(again && *again == *read, "Unix seconds written back give the same time");
  } else {
    FUZZ_CHECK(!why.empty(), "a refused time has a reason");
  }
  return 0;
}
