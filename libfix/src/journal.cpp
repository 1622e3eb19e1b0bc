// The live journal (journal.hpp). POSIX file calls: open, flock, write, fdatasync, ftruncate.
#include "lobfix/journal.hpp"

#include <fcntl.h>
#include <sys/file.h>
#include <sys/stat.h>
#include <unistd.h>

#include <array>
#include <cerrno>
#include <cstring>
#include <optional>
#include <stdexcept>
#include <utility>

#include "lobfix/error.hpp"

namespace lobfix {

namespace {

// Table of the reflected Castagnoli polynomial 0x82F63B78 (RFC 3720, appendix B.4).
std::array<std::uint32_t, 256> make_crc32c_table() {
  std::array<std::uint32_t, 256> table{};
  for (std::uint32_t n = 0; n < 256; ++n) {
    std::uint32_t c = n;
    for (int k = 0; k < 8; ++k)
      c = (c & 1U) != 0 ? 0x82F63B78U ^ (c >> 1) : c >> 1;
    table[n] = c;
  }
  return table;
}

std::string errno_text(int err) {
  return std::strerror(err);
}

[[noreturn]] void fail(const std::string& path, int line, const std::string& reason) {
  throw InputError(Diagnostic{path, line, 0, "", reason});
}

std::string hex8(std::uint32_t v) {
  static const char* const kDigits = "0123456789abcdef";
  std::string out(8, '0');
  for (int i = 7; i >= 0; --i) {
    out[static_cast<std::size_t>(i)] = kDigits[v & 0xFU];
    v >>= 4;
  }
  return out;
}

std::uint32_t record_crc(const std::string& seq_text, const char* payload, std::size_t size) {
  std::uint32_t crc = crc32c(seq_text.data(), seq_text.size());
  crc = crc32c("\t", 1, crc);
  return crc32c(payload, size, crc);
}

// A record line (without LF): its sequence number and payload, or the reason it is damaged.
struct ParsedRecord {
  std::uint64_t seq = 0;
  std::string payload;
  std::string problem;  // "" when intact
};

ParsedRecord parse_record(const std::string& line) {
  ParsedRecord r;
  const std::size_t tab1 = line.find('\t');
  if (tab1 == std::string::npos || tab1 == 0 || tab1 > 20) {
    r.problem = "record does not start with a sequence number and a tab";
    return r;
  }
  for (std::size_t i = 0; i < tab1; ++i) {
    const char c = line[i];
    if (c < '0' || c > '9' || (i == 0 && c == '0')) {
      r.problem = "record does not start with a sequence number and a tab";
      return r;
    }
    const auto digit = static_cast<std::uint64_t>(c - '0');
    if (r.seq > (UINT64_MAX - digit) / 10) {
      r.problem = "sequence number too large";
      return r;
    }
    r.seq = r.seq * 10 + digit;
  }
  if (line.size() < tab1 + 10 || line[tab1 + 9] != '\t') {
    r.problem = "record has no 8-digit checksum after its sequence number";
    return r;
  }
  std::uint32_t stored = 0;
  for (std::size_t i = tab1 + 1; i < tab1 + 9; ++i) {
    const char c = line[i];
    std::uint32_t v = 0;
    if (c >= '0' && c <= '9') {
      v = static_cast<std::uint32_t>(c - '0');
    } else if (c >= 'a' && c <= 'f') {
      v = static_cast<std::uint32_t>(c - 'a' + 10);
    } else {
      r.problem = "record has no 8-digit checksum after its sequence number";
      return r;
    }
    stored = (stored << 4) | v;
  }
  const std::size_t start = tab1 + 10;
  if (record_crc(line.substr(0, tab1), line.data() + start, line.size() - start) != stored) {
    r.problem = "checksum does not match the record";
    return r;
  }
  r.payload = line.substr(start);
  return r;
}

bool write_all(int fd, const std::string& bytes) {
  std::size_t done = 0;
  while (done < bytes.size()) {
    const ssize_t n = ::write(fd, bytes.data() + done, bytes.size() - done);
    if (n < 0) {
      if (errno == EINTR)
        continue;
      return false;
    }
    done += static_cast<std::size_t>(n);
  }
  return true;
}

void sync_directory_of(const std::string& path) {
  const std::size_t slash = path.rfind('/');
  const std::string dir =
      slash == std::string::npos ? "." : (slash == 0 ? "/" : path.substr(0, slash));
  const int dfd = ::open(dir.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC);
  if (dfd >= 0) {
    (void)::fsync(dfd);
    ::close(dfd);
  }
}

}  // namespace

std::uint32_t crc32c(const void* data, std::size_t size, std::uint32_t crc) {
  static const std::array<std::uint32_t, 256> table = make_crc32c_table();
  const auto* p = static_cast<const unsigned char*>(data);
  crc = ~crc;
  for (std::size_t i = 0; i < size; ++i)
    crc = table[(crc ^ p[i]) & 0xFFU] ^ (crc >> 8);
  return ~crc;
}

std::string journal_record_line(std::uint64_t seq, const std::string& payload) {
  const std::string seq_text = std::to_string(seq);
  return seq_text + '\t' + hex8(record_crc(seq_text, payload.data(), payload.size())) + '\t' +
         payload;
}

Journal::Journal(std::string path, int fd, std::uint64_t next_seq, std::uint64_t size)
    : path_(std::move(path)), fd_(fd), next_seq_(next_seq), size_(size) {}

Journal::Journal(Journal&& other) noexcept
    : path_(std::move(other.path_)),
      fd_(std::exchange(other.fd_, -1)),
      next_seq_(other.next_seq_),
      size_(other.size_) {}

Journal& Journal::operator=(Journal&& other) noexcept {
  if (this != &other) {
    if (fd_ >= 0)
      ::close(fd_);
    path_ = std::move(other.path_);
    fd_ = std::exchange(other.fd_, -1);
    next_seq_ = other.next_seq_;
    size_ = other.size_;
  }
  return *this;
}

Journal::~Journal() {
  if (fd_ >= 0)
    ::close(fd_);
}

Journal Journal::open(const std::string& path, JournalRecovery* recovery) {
  JournalRecovery found;
  struct stat st {};
  found.created = ::stat(path.c_str(), &st) != 0;
  const int fd = ::open(path.c_str(), O_RDWR | O_CREAT | O_APPEND | O_CLOEXEC, 0644);
  if (fd < 0)
    fail(path, 0, "cannot open the journal: " + errno_text(errno));
  // From here the descriptor is owned by `journal`, closed on every exception.
  Journal journal(path, fd, 1, 0);
  if (::flock(fd, LOCK_EX | LOCK_NB) != 0)
    fail(path, 0, "the journal is in use by another process (" + errno_text(errno) + ")");
  if (found.created)
    sync_directory_of(path);

  std::string text;
  {
    std::array<char, 65536> buffer{};
    for (;;) {
      const ssize_t n = ::pread(fd, buffer.data(), buffer.size(), static_cast<off_t>(text.size()));
      if (n < 0) {
        if (errno == EINTR)
          continue;
        fail(path, 0, "cannot read the journal: " + errno_text(errno));
      }
      if (n == 0)
        break;
      text.append(buffer.data(), static_cast<std::size_t>(n));
    }
  }

  // Every line is checked; the first damaged one starts a possible torn tail, which must run
  // to the end of the file.
  std::uint64_t expected = 1;
  std::optional<std::size_t> tail_offset;
  int tail_line = 0;
  std::string tail_reason;
  std::size_t offset = 0;
  int line_no = 0;
  while (offset < text.size()) {
    ++line_no;
    const std::size_t lf = text.find('\n', offset);
    std::string problem;
    ParsedRecord rec;
    if (lf == std::string::npos) {
      problem = "the last record has no end of line (" + std::to_string(text.size() - offset) +
                " bytes): an interrupted write";
    } else {
      rec = parse_record(text.substr(offset, lf - offset));
      problem = rec.problem;
      // An intact record out of order is never the end of an interrupted append.
      if (problem.empty() && !tail_offset && rec.seq != expected) {
        fail(path, line_no,
             "journal record has sequence number " + std::to_string(rec.seq) + ", expected " +
                 std::to_string(expected) + ": the journal is damaged, not torn; nothing was cut");
      }
    }
    if (!problem.empty()) {
      if (!tail_offset) {
        tail_offset = offset;
        tail_line = line_no;
        tail_reason = problem;
      }
    } else if (tail_offset) {
      fail(path, tail_line,
           "journal record is damaged (" + tail_reason + ") but good records follow (line " +
               std::to_string(line_no) +
               "): the journal is damaged, not torn; nothing was cut. Keep a copy and see "
               "docs/live.md");
    } else {
      found.records.push_back(JournalRecord{rec.seq, std::move(rec.payload)});
      ++expected;
    }
    offset = lf == std::string::npos ? text.size() : lf + 1;
  }

  std::uint64_t kept = text.size();
  if (tail_offset) {
    kept = *tail_offset;
    if (::ftruncate(fd, static_cast<off_t>(kept)) != 0 || ::fdatasync(fd) != 0)
      fail(path, tail_line, "cannot cut the torn last record: " + errno_text(errno));
    found.truncated_bytes = text.size() - kept;
    found.truncated_line = tail_line;
    found.truncation_reason = tail_reason;
  }
  found.bytes_kept = kept;
  journal.next_seq_ = expected;
  journal.size_ = kept;
  if (recovery != nullptr)
    *recovery = std::move(found);
  return journal;
}

std::uint64_t Journal::append(const std::vector<std::string>& payloads) {
  const std::uint64_t first = next_seq_;
  if (payloads.empty())
    return first;
  std::string bytes;
  std::uint64_t seq = first;
  for (const std::string& p : payloads) {
    if (p.find('\n') != std::string::npos)
      throw std::invalid_argument("journal payload holds a line feed");
    bytes += journal_record_line(seq++, p);
    bytes += '\n';
  }
  if (fd_ < 0)
    throw OutputError(path_ + ": the journal is not open");
  if (!write_all(fd_, bytes) || ::fdatasync(fd_) != 0) {
    const int err = errno;
    // Cut back what may have been written, so that no record of the batch remains.
    if (::ftruncate(fd_, static_cast<off_t>(size_)) != 0 || ::fdatasync(fd_) != 0) {
      ::close(fd_);
      fd_ = -1;  // the file's end is unknown: no further appends
    }
    throw OutputError(path_ + ": cannot write the journal: " + errno_text(err));
  }
  size_ += bytes.size();
  next_seq_ = seq;
  return first;
}

}  // namespace lobfix
