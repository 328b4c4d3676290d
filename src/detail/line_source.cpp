#include "detail/line_source.hpp"

#include <libfccp/csv.h>
#include <openssl/evp.h>

#include <algorithm>
#include <atomic>
#include <cerrno>
#include <cstdio>
#include <cstring>
#include <limits>
#include <fmt/format.h>

#include "vzero/error.hpp"

namespace vzero::detail {

namespace {

class Sha256 {
 public:
  Sha256() : ctx_(EVP_MD_CTX_new()) { EVP_DigestInit_ex(ctx_, EVP_sha256(), nullptr); }
  ~Sha256() { EVP_MD_CTX_free(ctx_); }
  Sha256(const Sha256&) = delete;
  Sha256& operator=(const Sha256&) = delete;
  void update(const char* p, std::size_t n) { EVP_DigestUpdate(ctx_, p, n); }
  std::string hex() {
    unsigned char md[EVP_MAX_MD_SIZE];
    unsigned int len = 0;
    EVP_DigestFinal_ex(ctx_, md, &len);
    std::string out;
    out.reserve(2 * len);
    for (unsigned i = 0; i < len; ++i) out += fmt::format("{:02x}", md[i]);
    return out;
  }

 private:
  EVP_MD_CTX* ctx_;
};

// Written by read() on LineReader's read-ahead thread; `total` and `nul_line` are also read
// by the caller's thread while a read-ahead may run, hence atomic.
struct Counters {
  Sha256 hash;
  std::atomic<long long> total = 0;
  long long newlines = 0;               // '\n' seen before the first NUL
  std::atomic<long long> nul_line = 0;  // 1-based line of the first NUL byte, 0 if none seen yet
  std::atomic<bool> cut = false;        // a byte limit stopped the reading before the end
};

// A byte source for LineReader that hashes what passes through, counts bytes and finds
// the first NUL byte (LineReader hands out C strings, so a NUL would silently cut a line).
// LineReader may call read() from its read-ahead thread; calls never overlap, and the
// reading thread is joined before next_line() returns the data.
class HashingSource : public io::ByteSourceBase {
 public:
  HashingSource(std::FILE* file, std::string_view memory, Counters* c, long long max_bytes = -1)
      : file_(file), memory_(memory), c_(c), left_(max_bytes) {}
  ~HashingSource() override {
    if (file_) std::fclose(file_);
  }
  int read(char* buffer, int size) override {
    std::size_t n = 0;
    if (file_ && left_ >= 0) {
      // A prefix of the file only: stop after max_bytes, noting whether more follows.
      n = std::fread(buffer, 1, static_cast<std::size_t>(std::min<long long>(size, left_)), file_);
      left_ -= static_cast<long long>(n);
      if (left_ == 0 && !c_->cut) c_->cut = std::fgetc(file_) != EOF;
    } else if (file_) {
      n = std::fread(buffer, 1, static_cast<std::size_t>(size), file_);
    } else {
      n = std::min(memory_.size(), static_cast<std::size_t>(size));
      std::memcpy(buffer, memory_.data(), n);
      memory_.remove_prefix(n);
    }
    c_->hash.update(buffer, n);
    c_->total += static_cast<long long>(n);
    if (c_->nul_line == 0) {
      const char* nul = static_cast<const char*>(std::memchr(buffer, '\0', n));
      const char* end = nul ? nul : buffer + n;
      c_->newlines += std::count(static_cast<const char*>(buffer), end, '\n');
      if (nul) c_->nul_line = c_->newlines + 1;
    }
    if (n > 0) {
      last_ = buffer[n - 1];
      any_ = true;
    }
    // LineReader reads one byte past the data when the last line has no '\n': if that
    // stale byte is a '\n' left from an earlier block, it returns lines that are not in the
    // file and then waits forever for its read-ahead thread. So the data always ends with
    // a '\n': one is added (not hashed, not counted) when the file lacks it.
    if (n < static_cast<std::size_t>(size) && !newline_added_ && any_ && last_ != '\n') {
      buffer[n++] = '\n';
      newline_added_ = true;
    }
    return static_cast<int>(n);
  }

 private:
  std::FILE* file_;
  std::string_view memory_;
  Counters* c_;
  long long left_;  // bytes still allowed from the file; −1 = no limit
  char last_ = 0;  // last byte read
  bool any_ = false;
  bool newline_added_ = false;
};

}  // namespace

struct LineSource::Impl {
  Counters counters;
  std::unique_ptr<io::LineReader> reader;
  bool done = false;
};

LineSource::LineSource(const std::string& path) : impl_(std::make_unique<Impl>()), name_(path) {
  std::FILE* f = std::fopen(path.c_str(), "rb");
  if (!f) {
    throw InputError(Where{path}, fmt::format("cannot open {}: {}", path, std::strerror(errno)),
                     {"check the path and that the file is readable"});
  }
  impl_->reader = std::make_unique<io::LineReader>(
      path, std::make_unique<HashingSource>(f, std::string_view{}, &impl_->counters));
}

LineSource::LineSource(const std::string& path, long long max_bytes) : impl_(std::make_unique<Impl>()), name_(path) {
  std::FILE* f = std::fopen(path.c_str(), "rb");
  if (!f) {
    throw InputError(Where{path}, fmt::format("cannot open {}: {}", path, std::strerror(errno)),
                     {"check the path and that the file is readable"});
  }
  impl_->reader = std::make_unique<io::LineReader>(
      path, std::make_unique<HashingSource>(f, std::string_view{}, &impl_->counters, std::max(0LL, max_bytes)));
}

bool LineSource::cut() const { return impl_->counters.cut; }

LineSource::LineSource(std::string name, std::string_view bytes)
    : impl_(std::make_unique<Impl>()), name_(std::move(name)) {
  impl_->reader =
      std::make_unique<io::LineReader>(name_, std::make_unique<HashingSource>(nullptr, bytes, &impl_->counters));
}

LineSource::~LineSource() = default;

// LineReader's next line; its line-limit exception becomes an InputError. LineReader cannot
// step over such a line, so every later call must fail the same way, never loop.
static char* next_raw(io::LineReader& reader, const std::string& name, int line) {
  try {
    return reader.next_line();
  } catch (const io::error::line_length_limit_exceeded&) {
    throw InputError(Where{name, line + 1}, "line is longer than 16 MiB (the longest line vzero reads)",
                     {"check that this is a text export and not a binary file"});
  }
}

bool LineSource::next(std::string_view& line) {
  if (impl_->done) return false;
  char* p = next_raw(*impl_->reader, name_, line_);
  if (!p) {
    impl_->done = true;
    return false;
  }
  if (line_ == std::numeric_limits<int>::max()) {
    throw InputError(Where{name_, line_}, fmt::format("the file has more than {} lines, the most vzero reads", line_),
                     {"split the export into smaller files"});
  }
  ++line_;
  if (impl_->counters.nul_line != 0 && line_ >= impl_->counters.nul_line) {
    // LineReader hands out C strings, so this line's text stops at the NUL.
    int column = line_ == impl_->counters.nul_line ? static_cast<int>(std::strlen(p)) + 1 : 0;
    throw InputError(Where{name_, line_, column}, "found a NUL byte; this is not a text export",
                     {"export the data as text (CSV or tab-separated); UTF-16 files must be saved as UTF-8"});
  }
  line = std::string_view(p, std::strlen(p));
  if (!line.empty() && line.back() == '\r') line.remove_suffix(1);
  // Fast path: pure ASCII lines need no UTF-8 check.
  bool ascii = std::all_of(line.begin(), line.end(), [](char c) { return static_cast<unsigned char>(c) < 0x80; });
  if (!ascii) {
    std::size_t bad = first_invalid_utf8(line);
    if (bad != std::string_view::npos) {
      throw InputError(Where{name_, line_, static_cast<int>(bad) + 1, std::string(line)},
                       "found bytes that are not UTF-8 text",
                       {"save the export as UTF-8 (for example with iconv -f latin1 -t utf-8)"});
    }
  }
  return true;
}

std::string LineSource::sha256() {
  // Drain the rest without validating it: the digest covers every byte.
  while (!impl_->done) {
    if (!next_raw(*impl_->reader, name_, line_)) impl_->done = true;
    else ++line_;
  }
  return impl_->counters.hash.hex();
}

long long LineSource::bytes_read() const { return impl_->counters.total; }

std::string sha256_of_file(const std::string& path) {
  LineSource src(path);
  return src.sha256();
}

std::size_t first_invalid_utf8(std::string_view s) {
  std::size_t i = 0;
  const std::size_t n = s.size();
  while (i < n) {
    auto c = static_cast<unsigned char>(s[i]);
    std::size_t extra = 0;
    if (c < 0x80) {
      ++i;
      continue;
    }
    if (c >= 0xC2 && c <= 0xDF) {
      extra = 1;
    } else if (c >= 0xE0 && c <= 0xEF) {
      extra = 2;
    } else if (c >= 0xF0 && c <= 0xF4) {
      extra = 3;
    } else {
      return i;
    }
    if (i + extra >= n) return i;
    for (std::size_t k = 1; k <= extra; ++k)
      if ((static_cast<unsigned char>(s[i + k]) & 0xC0) != 0x80) return i;
    i += extra + 1;
  }
  return std::string_view::npos;
}

bool valid_utf8(std::string_view s) { return first_invalid_utf8(s) == std::string_view::npos; }

}  // namespace vzero::detail
