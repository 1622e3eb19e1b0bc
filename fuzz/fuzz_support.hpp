// Helpers shared by the lobfix fuzz targets (fuzz/README.md): a property check that stops
// the run like a crash, and the per-process file through which the path-based readers are fed.
#pragma once

#include <sys/stat.h>
#include <unistd.h>

#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <string>

/// A property the reader documents and the input broke: reported on stderr, then abort(), so
/// that libFuzzer saves the input as a crash.
#define FUZZ_CHECK(condition, what)                                                                \
  do {                                                                                             \
    if (!(condition)) {                                                                            \
      std::fprintf(stderr, "lobfix fuzz: property failed: %s (%s) at %s:%d\n", (what), #condition, \
                   __FILE__, __LINE__);                                                            \
      std::abort();                                                                                \
    }                                                                                              \
  } while (0)

namespace lobfix_fuzz {

/// Where the input files go: $LOBFIX_FUZZ_TMPDIR, else /dev/shm when there is one (memory:
/// ext4 writes a file that is truncated and rewritten back to the disk when it is closed,
/// which would make every input wait for the disk), else /tmp.
inline std::string input_directory() {
  const char* chosen = std::getenv("LOBFIX_FUZZ_TMPDIR");
  if (chosen != nullptr && *chosen != '\0')
    return chosen;
  struct stat st {};
  if (::stat("/dev/shm", &st) == 0 && S_ISDIR(st.st_mode) && ::access("/dev/shm", W_OK) == 0)
    return "/dev/shm";
  return "/tmp";
}

/// <dir>/lobfix-fuzz-<pid><suffix>: one file per process, overwritten by every input, so
/// that parallel jobs (-jobs, -fork) never share one. Removed when the process ends normally;
/// a crash leaves it behind, holding the crashing input.
class InputFile {
 public:
  explicit InputFile(const char* suffix)
      : path_(input_directory() + "/lobfix-fuzz-" + std::to_string(static_cast<long>(::getpid())) +
              suffix) {}
  ~InputFile() { std::remove(path_.c_str()); }
  InputFile(const InputFile&) = delete;
  InputFile& operator=(const InputFile&) = delete;

  /// Writes the input, whole; a failure to write is not the reader's fault and stops the run.
  const std::string& write(const std::uint8_t* data, std::size_t size) const {
    std::FILE* f = std::fopen(path_.c_str(), "wb");
    if (f == nullptr) {
      std::perror(path_.c_str());
      std::abort();
    }
    const bool written = size == 0 || std::fwrite(data, 1, size, f) == size;
    if (std::fclose(f) != 0 || !written) {
      std::perror(path_.c_str());
      std::abort();
    }
    return path_;
  }

 private:
  std::string path_;
};

}  // namespace lobfix_fuzz
