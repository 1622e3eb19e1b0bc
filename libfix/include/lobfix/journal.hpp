// lobfix: the live journal, an append-only file holding one checksummed record per accepted
// bearing, so that a live session survives a crash (docs/live.md, "Journal").
//
// Record format, one line per record, UTF-8, ending in LF:
//
//     SEQ <TAB> CRC <TAB> PAYLOAD <LF>
//
// SEQ is the record's sequence number in decimal (1, 2, 3, ... with no gaps), CRC the
// CRC-32C (Castagnoli, RFC 3720) of the bytes "SEQ<TAB>PAYLOAD" as 8 lowercase hex digits,
// and PAYLOAD one line of text without LF (for bearings, the JSON object as received).
#pragma once

#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

namespace lobfix {

/// CRC-32C (Castagnoli polynomial 0x1EDC6F41, reflected, initial and final XOR 0xFFFFFFFF)
/// of `size` bytes, continuing from `crc` (0 to start). crc32c("123456789") is 0xE3069283.
std::uint32_t crc32c(const void* data, std::size_t size, std::uint32_t crc = 0);

struct JournalRecord {
  std::uint64_t seq = 0;  ///< 1-based, consecutive
  std::string payload;    ///< one line, no LF
};

/// What opening a journal found.
struct JournalRecovery {
  std::vector<JournalRecord> records;  ///< every complete record, in order
  bool created = false;                ///< the file did not exist and was created
  std::uint64_t bytes_kept = 0;        ///< size of the file after recovery
  /// Bytes cut from the end: a torn last record (the process or the machine stopped in the
  /// middle of a write). 0 when the file ended cleanly.
  std::uint64_t truncated_bytes = 0;
  int truncated_line = 0;         ///< 1-based line where the torn tail began, 0 if none
  std::string truncation_reason;  ///< why that tail was torn, "" if none
};

/// An open journal. Not thread-safe: one writer at a time (the caller serialises), and one
/// process per file (an exclusive lock, released by the kernel when the process ends, even
/// by SIGKILL).
class Journal {
 public:
  /// Open `path`, creating it if needed, read every record and cut a torn tail: when the
  /// records from some line to the end of the file are all damaged (no LF at the end, wrong
  /// checksum, bad layout, a sequence number out of order), they are the remains of an
  /// interrupted append and are truncated away (the file is then flushed to disk).
  /// @throws InputError (file = path, line = the record) when a damaged record is followed
  ///         by a good one (that is not a torn write but a damaged file: nothing is cut),
  ///         when the file cannot be opened, read or truncated, or another process holds it.
  static Journal open(const std::string& path, JournalRecovery* recovery);

  Journal(Journal&& other) noexcept;
  Journal& operator=(Journal&& other) noexcept;
  Journal(const Journal&) = delete;
  Journal& operator=(const Journal&) = delete;
  ~Journal();

  /// Append one record per payload, then flush them to disk (fdatasync) before returning:
  /// once it returns, the records survive a crash. Returns the sequence number of the first
  /// (the others follow one by one). On a failure the file is cut back to where it was and
  /// OutputError is thrown; no record of the batch is then in the journal.
  /// @throws std::invalid_argument when a payload holds LF (a caller's mistake).
  /// @throws OutputError when the records cannot be written or flushed.
  std::uint64_t append(const std::vector<std::string>& payloads);

  std::uint64_t next_seq() const { return next_seq_; }
  std::uint64_t size_bytes() const { return size_; }
  const std::string& path() const { return path_; }

 private:
  Journal(std::string path, int fd, std::uint64_t next_seq, std::uint64_t size);
  std::string path_;
  int fd_ = -1;
  std::uint64_t next_seq_ = 1;
  std::uint64_t size_ = 0;
};

/// The line (without LF) of record `seq` holding `payload`.
std::string journal_record_line(std::uint64_t seq, const std::string& payload);

}  // namespace lobfix
