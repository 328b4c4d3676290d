#include "core/line_source.hpp"

#include <openssl/evp.h>

#include <algorithm>
#include <cstdint>
#include <cerrno>
#include <cstdio>
#include <cstring>
#include <limits>
#include <vector>
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

// Lines of 16 MiB or more are refused. A fuzzing build may define a smaller limit (so that
// the limit and the buffer refills are reached by small inputs).
#ifndef VZERO_MAX_LINE_BYTES
#define VZERO_MAX_LINE_BYTES (1 << 24)
#endif
constexpr std::size_t k_max_line = VZERO_MAX_LINE_BYTES;
constexpr std::size_t k_chunk = std::min<std::size_t>(std::size_t{1} << 20, k_max_line);  // bytes read at a time

// Under AddressSanitizer, next() hands out each line in a heap copy of its own that the
// following call frees, so that a view kept past its line (line_source.hpp) is reported on
// every input that does it.
#if defined(__SANITIZE_ADDRESS__)
constexpr bool k_check_views = true;
#elif defined(__has_feature)
#if __has_feature(address_sanitizer)
constexpr bool k_check_views = true;
#else
constexpr bool k_check_views = false;
#endif
#else
constexpr bool k_check_views = false;
#endif

// True when no byte has its top bit set (8 bytes at a time).
bool all_ascii(std::string_view s) {
  std::size_t i = 0;
  std::uint64_t bits = 0;
  for (; i + 8 <= s.size(); i += 8) {
    std::uint64_t w = 0;
    std::memcpy(&w, s.data() + i, 8);
    bits |= w;
  }
  for (; i < s.size(); ++i) bits |= static_cast<unsigned char>(s[i]);
  return (bits & 0x8080808080808080ULL) == 0;
}

}  // namespace

// The bytes pass through one buffer: read a chunk at a time, hashed as they arrive, split
// at '\n' with memchr. The stream behaves as if it ended with '\n' (one is supplied, not
// hashed, when the file lacks it), a UTF-8 BOM at the start is skipped, and a '\r' before
// the '\n' is dropped. The first NUL byte's line is noted as it is read.
struct LineSource::Impl {
  std::FILE* file = nullptr;
  std::string_view memory;  // the bytes, when reading from memory
  long long left = -1;      // bytes still allowed from the file; −1 = no limit
  Sha256 hash;
  long long total = 0;      // bytes read and hashed
  long long newlines = 0;   // '\n' seen before the first NUL
  long long nul_line = 0;   // 1-based line of the first NUL byte, 0 if none seen yet
  bool cut = false;         // the byte limit stopped the reading before the end
  std::unique_ptr<char[]> buf;  // not a vector: growing it must not clear it
  std::size_t capacity = 0;
  std::size_t begin = 0, end = 0, scanned = 0;  // unread bytes [begin, end); no '\n' in [begin, scanned)
  bool eof = false, started = false, done = false;
  bool hashing = true;
  char last = 0;
  bool any = false;
  std::unique_ptr<char[]> handed;  // the last line handed out, when k_check_views

  ~Impl() {
    if (file) std::fclose(file);
  }

  // Reads the next chunk after the unread bytes; false at the end of the input.
  bool fill() {
    if (eof) return false;
    if (begin > 0) {
      std::memmove(buf.get(), buf.get() + begin, end - begin);
      end -= begin;
      scanned -= begin;
      begin = 0;
    }
    if (capacity < end + k_chunk + 1) {
      const std::size_t grown = std::max(end + k_chunk + 1, 2 * capacity);
      auto bigger = std::make_unique_for_overwrite<char[]>(grown);
      if (end > 0) std::memcpy(bigger.get(), buf.get(), end);
      buf = std::move(bigger);
      capacity = grown;
    }
    char* at = buf.get() + end;
    std::size_t n = 0;
    if (file && left >= 0) {
      // A prefix of the file only: stop after max_bytes, noting whether more follows.
      // (in small steps: a quick look reads only what it looks at)
      n = std::fread(at, 1, static_cast<std::size_t>(std::min<long long>(std::min<long long>(k_chunk, 1 << 16), left)), file);
      left -= static_cast<long long>(n);
      if (left == 0 && !cut) cut = std::fgetc(file) != EOF;
    } else if (file) {
      n = std::fread(at, 1, k_chunk, file);
    } else {
      n = std::min(memory.size(), k_chunk);
      std::memcpy(at, memory.data(), n);
      memory.remove_prefix(n);
    }
    if (hashing) hash.update(at, n);
    total += static_cast<long long>(n);
    if (nul_line == 0) {
      const char* nul = static_cast<const char*>(std::memchr(at, '\0', n));
      const char* stop = nul ? nul : at + n;
      newlines += std::count(static_cast<const char*>(at), stop, '\n');
      if (nul) nul_line = newlines + 1;
    }
    if (n > 0) {
      last = at[n - 1];
      any = true;
      end += n;
      return true;
    }
    eof = true;
    if (any && last != '\n') buf[end++] = '\n';  // the file lacks a final '\n'
    return end > begin;
  }

  // The next line without its '\n' (and a '\r' before it); false at the end. Throws for a
  // line of 16 MiB or more, every time it is asked (the reading cannot step over it).
  bool raw_next(std::string_view& line, const std::string& name, int line_no) {
    if (!started) {
      started = true;
      while (end - begin < 3 && fill()) {
      }
      if (end - begin >= 3 && buf[begin] == '\xEF' && buf[begin + 1] == '\xBB' && buf[begin + 2] == '\xBF') begin += 3;
      scanned = begin;
    }
    while (true) {
      const char* nl = static_cast<const char*>(std::memchr(buf.get() + scanned, '\n', end - scanned));
      const std::size_t length = nl ? static_cast<std::size_t>(nl - (buf.get() + begin)) : end - begin;
      if (length + 1 > k_max_line) {
        throw InputError(Where{name, line_no + 1}, "line is longer than 16 MiB (the longest line vzero reads)",
                         {"check that this is a text export and not a binary file"});
      }
      if (nl) {
        line = std::string_view(buf.get() + begin, length);
        if (!line.empty() && line.back() == '\r') line.remove_suffix(1);
        begin += length + 1;
        scanned = begin;
        return true;
      }
      scanned = end;
      if (!fill()) return false;
    }
  }
};

LineSource::LineSource(const std::string& path) : impl_(std::make_unique<Impl>()), name_(path) {
  impl_->file = std::fopen(path.c_str(), "rb");
  if (!impl_->file) {
    throw InputError(Where{path}, fmt::format("cannot open {}: {}", path, std::strerror(errno)),
                     {"check the path and that the file is readable"});
  }
}

LineSource::LineSource(const std::string& path, long long max_bytes) : LineSource(path) {
  impl_->left = std::max(0LL, max_bytes);
}

bool LineSource::cut() const { return impl_->cut; }

LineSource::LineSource(std::string name, std::string_view bytes, NoHash) : LineSource(std::move(name), bytes) {
  impl_->hashing = false;
}

LineSource::LineSource(std::string name, std::string_view bytes)
    : impl_(std::make_unique<Impl>()), name_(std::move(name)) {
  impl_->memory = bytes;
}

LineSource::~LineSource() = default;

bool LineSource::next(std::string_view& line) {
  if constexpr (k_check_views) impl_->handed.reset();
  if (impl_->done) return false;
  if (!impl_->raw_next(line, name_, line_)) {
    impl_->done = true;
    return false;
  }
  if (line_ == std::numeric_limits<int>::max()) {
    throw InputError(Where{name_, line_}, fmt::format("the file has more than {} lines, the most vzero reads", line_),
                     {"split the export into smaller files"});
  }
  ++line_;
  if (impl_->nul_line != 0 && line_ >= impl_->nul_line) {
    // The line's text is taken to stop at the NUL.
    const auto nul = line.find('\0');
    int column = line_ == impl_->nul_line ? static_cast<int>(nul == std::string_view::npos ? line.size() : nul) + 1 : 0;
    throw InputError(Where{name_, line_, column}, "found a NUL byte; this is not a text export",
                     {"export the data as text (CSV or tab-separated); UTF-16 files must be saved as UTF-8"});
  }
  if (!line.empty() && line.back() == '\r') line.remove_suffix(1);
  // Fast path: pure ASCII lines need no UTF-8 check.
  if (!all_ascii(line)) {
    std::size_t bad = first_invalid_utf8(line);
    if (bad != std::string_view::npos) {
      throw InputError(Where{name_, line_, static_cast<int>(bad) + 1, std::string(line)},
                       "found bytes that are not UTF-8 text",
                       {"save the export as UTF-8 (for example with iconv -f latin1 -t utf-8)"});
    }
  }
  if constexpr (k_check_views) {
    impl_->handed = std::make_unique_for_overwrite<char[]>(line.size() + 1);
    std::memcpy(impl_->handed.get(), line.data(), line.size());
    line = std::string_view(impl_->handed.get(), line.size());
  }
  return true;
}

std::string LineSource::sha256() {
  if constexpr (k_check_views) impl_->handed.reset();
  // Drain the rest without validating it: the digest covers every byte.
  std::string_view ignored;
  while (!impl_->done) {
    if (!impl_->raw_next(ignored, name_, line_)) impl_->done = true;
    else ++line_;
  }
  return impl_->hashing ? impl_->hash.hex() : std::string();
}

long long LineSource::bytes_read() const { return impl_->total; }

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
