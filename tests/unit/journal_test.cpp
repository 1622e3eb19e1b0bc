// Tests of lobfix/journal.hpp: CRC-32C against published check values, appends that survive
// reopening, and recovery from a torn last record.
#include "lobfix/journal.hpp"

#include <unistd.h>

#include <cstdio>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include "lobfix/error.hpp"
#include "test_support.hpp"

namespace {

std::string fresh_path(const std::string& name) {
  const std::string p = lobfix_test::tmp_path(name);
  std::remove(p.c_str());
  return p;
}

std::string file_text(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

void write_text(const std::string& path, const std::string& text) {
  std::ofstream out(path, std::ios::binary | std::ios::trunc);
  out << text;
}

}  // namespace

TEST_CASE("crc32c matches the published check values") {
  // "123456789" -> 0xE3069283: the CRC-32C (CRC-32/ISCSI) check value of the CRC catalogue
  // (Williams' "Painless guide" parameter model; value recalled from memory).
  const std::string digits = "123456789";
  CHECK(lobfix::crc32c(digits.data(), digits.size()) == 0xE3069283U);
  // RFC 3720 (iSCSI), appendix B.4: 32 bytes of zeros -> 0x8A9136AA, 32 bytes of 0xFF ->
  // 0x62A8AB43, bytes 0x00..0x1F ascending -> 0x46DD794E.
  const std::vector<unsigned char> zeros(32, 0x00);
  const std::vector<unsigned char> ones(32, 0xFF);
  std::vector<unsigned char> ascending(32);
  for (std::size_t i = 0; i < 32; ++i)
    ascending[i] = static_cast<unsigned char>(i);
  CHECK(lobfix::crc32c(zeros.data(), zeros.size()) == 0x8A9136AAU);
  CHECK(lobfix::crc32c(ones.data(), ones.size()) == 0x62A8AB43U);
  CHECK(lobfix::crc32c(ascending.data(), ascending.size()) == 0x46DD794EU);
  // Continuing from a partial CRC gives the CRC of the whole.
  const std::uint32_t part = lobfix::crc32c(digits.data(), 4);
  CHECK(lobfix::crc32c(digits.data() + 4, 5, part) == 0xE3069283U);
}

TEST_CASE("journal appends records that a reopen replays in order") {
  const std::string path = fresh_path("journal_roundtrip.jsonl");
  {
    lobfix::JournalRecovery rec;
    lobfix::Journal j = lobfix::Journal::open(path, &rec);
    CHECK(rec.created);
    CHECK(rec.records.empty());
    CHECK(j.next_seq() == 1);
    CHECK(j.append({"{\"a\":1}"}) == 1);
    CHECK(j.append({"{\"b\":2}", "{\"c\":\t3}"}) == 2);
    CHECK(j.next_seq() == 4);
    CHECK_THROWS_AS(j.append({"two\nlines"}), std::invalid_argument);
    CHECK(j.next_seq() == 4);
  }
  const std::string text = file_text(path);
  CHECK(text.substr(0, 2) == "1\t");
  CHECK(text.back() == '\n');
  lobfix::JournalRecovery rec;
  lobfix::Journal j = lobfix::Journal::open(path, &rec);
  CHECK_FALSE(rec.created);
  REQUIRE(rec.records.size() == 3);
  CHECK(rec.records[0].seq == 1);
  CHECK(rec.records[0].payload == "{\"a\":1}");
  CHECK(rec.records[2].seq == 3);
  CHECK(rec.records[2].payload == "{\"c\":\t3}");
  CHECK(rec.truncated_bytes == 0);
  CHECK(j.next_seq() == 4);
  CHECK(j.append({"{\"d\":4}"}) == 4);
}

TEST_CASE("journal record lines carry the checksum of sequence and payload") {
  const std::string line = lobfix::journal_record_line(7, "xyz");
  const std::string covered = "7\txyz";
  char hex[9];
  std::snprintf(hex, sizeof hex, "%08x", lobfix::crc32c(covered.data(), covered.size()));
  CHECK(line == std::string("7\t") + hex + "\txyz");
}

TEST_CASE("journal with a half-written last line recovers every complete record") {
  const std::string path = fresh_path("journal_torn.jsonl");
  std::string text;
  for (int i = 1; i <= 5; ++i)
    text += lobfix::journal_record_line(static_cast<std::uint64_t>(i),
                                        "{\"n\":" + std::to_string(i) + "}") +
            "\n";
  const std::string sixth = lobfix::journal_record_line(6, "{\"n\":6, \"station\":\"walker-2\"}");
  const std::string torn = sixth.substr(0, sixth.size() / 2);  // no LF, half the record
  write_text(path, text + torn);

  lobfix::JournalRecovery rec;
  lobfix::Journal j = lobfix::Journal::open(path, &rec);
  REQUIRE(rec.records.size() == 5);
  CHECK(rec.records[4].payload == "{\"n\":5}");
  CHECK(rec.truncated_bytes == torn.size());
  CHECK(rec.truncated_line == 6);
  CHECK(rec.truncation_reason.find("no end of line") != std::string::npos);
  CHECK(file_text(path) == text);  // cut on disk too
  CHECK(j.next_seq() == 6);
  CHECK(j.append({"{\"n\":6}"}) == 6);
}

TEST_CASE("journal cuts a damaged tail of several lines and zero bytes") {
  const std::string path = fresh_path("journal_tail.jsonl");
  const std::string good = lobfix::journal_record_line(1, "{}") + "\n";
  std::string bad2 = lobfix::journal_record_line(2, "{\"x\":1}") + "\n";
  bad2[bad2.size() - 3] = 'y';         // payload changed: checksum no longer matches
  const std::string zeros(600, '\0');  // a block the file system extended but never wrote
  write_text(path, good + bad2 + zeros);
  lobfix::JournalRecovery rec;
  lobfix::Journal j = lobfix::Journal::open(path, &rec);
  CHECK(rec.records.size() == 1);
  CHECK(rec.truncated_line == 2);
  CHECK(rec.truncation_reason.find("checksum") != std::string::npos);
  CHECK(rec.truncated_bytes == bad2.size() + zeros.size());
  CHECK(file_text(path) == good);
}

TEST_CASE("journal refuses a damaged record followed by good ones") {
  const std::string path = fresh_path("journal_damaged.jsonl");
  std::string r2 = lobfix::journal_record_line(2, "{\"x\":1}") + "\n";
  r2[r2.size() - 3] = 'y';
  const std::string text = lobfix::journal_record_line(1, "{}") + "\n" + r2 +
                           lobfix::journal_record_line(3, "{}") + "\n";
  write_text(path, text);
  lobfix::JournalRecovery rec;
  try {
    (void)lobfix::Journal::open(path, &rec);
    FAIL("a damaged journal was opened");
  } catch (const lobfix::InputError& e) {
    CHECK(e.diagnostic().line == 2);
    CHECK(e.diagnostic().reason.find("damaged, not torn") != std::string::npos);
  }
  CHECK(file_text(path) == text);  // nothing cut
}

TEST_CASE("journal refuses records out of sequence") {
  const std::string path = fresh_path("journal_order.jsonl");
  write_text(path, lobfix::journal_record_line(1, "{}") + "\n" +
                       lobfix::journal_record_line(3, "{}") + "\n");
  CHECK_THROWS_AS((void)lobfix::Journal::open(path, nullptr), lobfix::InputError);
}

TEST_CASE("journal is held by one process at a time") {
  const std::string path = fresh_path("journal_lock.jsonl");
  lobfix::Journal first = lobfix::Journal::open(path, nullptr);
  // flock locks belong to the open file description: a second open in this process conflicts
  // just as another process would.
  CHECK_THROWS_WITH_AS((void)lobfix::Journal::open(path, nullptr),
                       doctest::Contains("in use by another process"), lobfix::InputError);
}
