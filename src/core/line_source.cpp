#include "core/line_source.hpp"
#include "core/files.hpp"

#include <openssl/evp.h>

#include <fmt/format.h>
#include <algorithm>
#include <cerrno>
#include <cstdint>
#include <cstdio>
#include <cstring>
#include <limits>
#include <vector>

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
// the '\n' is dropped. A file whose first line ends in a lone '\r' (old Mac line ends) is
// split at '\r', '\n' and "\r\n" alike, byte by byte; every other file as above, so its
// lines are the same as before this was read. The first NUL byte's place is noted as it is
// read.
struct LineSource::Impl {
  // How lines end: not known before the first line end is seen; '\n' (after an optional
  // '\r'); or any of '\n', '\r' and "\r\n".
  enum class Ends { unknown, lf, any };
  std::FILE* file = nullptr;
  std::string_view memory;  // the bytes, when reading from memory
  long long left = -1;      // bytes still allowed from the file; −1 = no limit
  Sha256 hash;
  long long total = 0;     // bytes read and hashed
  long long base = 0;      // offset in the stream of buf[0]
  long long nul_at = -1;   // offset in the stream of the first NUL byte, −1 if none seen yet
  long long line_end = 0;  // offset in the stream of the end of the last line given
  Ends ends = Ends::unknown;
  bool cut = false;             // the byte limit stopped the reading before the end
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
      base += static_cast<long long>(begin);
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
      n = std::fread(at, 1, static_cast<std::size_t>(std::min<long long>(std::min<long long>(k_chunk, 1 << 16), left)),
                     file);
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
    if (nul_at < 0) {
      if (const void* nul = std::memchr(at, '\0', n)) nul_at = total + (static_cast<const char*>(nul) - at);
    }
    total += static_cast<long long>(n);
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

  // Decides how lines end from the first line end: a '\r' that no '\n' follows makes every
  // '\r' a line end, unless the bytes before it hold a NUL or are not UTF-8 (a binary file,
  // refused at its first NUL or bad byte as before, on line 1).
  void decide_ends() {
    std::size_t from = begin;
    while (true) {
      const char* p = buf.get() + from;
      const auto n = static_cast<std::size_t>(end - from);
      const char* nl = static_cast<const char*>(std::memchr(p, '\n', n));
      const char* cr = static_cast<const char*>(std::memchr(p, '\r', nl ? static_cast<std::size_t>(nl - p) : n));
      if (cr && cr + 1 < buf.get() + end) {
        const std::string_view first(buf.get() + begin, static_cast<std::size_t>(cr - (buf.get() + begin)));
        const bool text = first.find('\0') == std::string_view::npos && valid_utf8(first);
        ends = cr[1] != '\n' && text ? Ends::any : Ends::lf;
        return;
      }
      if (!cr && nl) {
        ends = Ends::lf;
        return;
      }
      // Neither yet, or a '\r' that ends the bytes read so far: read on (the line-length
      // limit stops a first line that never ends).
      const std::size_t seen = (cr ? static_cast<std::size_t>(cr - buf.get()) : end) - begin;
      if (seen + 1 > k_max_line || !fill()) {
        ends = Ends::lf;
        return;
      }
      from = begin + seen;
    }
  }

  [[noreturn]] static void too_long(const std::string& name, int line_no) {
    throw InputError(Where{name, line_no + 1}, "line is longer than 16 MiB (the longest line vzero reads)",
                     {"check that this is a text export and not a binary file"});
  }

  // The next line without its '\n' (and a '\r' before it); false at the end. Throws for a
  // line of 16 MiB or more, every time it is asked (the reading cannot step over it).
  bool raw_next(std::string_view& line, const std::string& name, int line_no) {
    if (!started) {
      started = true;
      while (end - begin < 3 && fill()) {}
      if (end - begin >= 3 && buf[begin] == '\xEF' && buf[begin + 1] == '\xBB' && buf[begin + 2] == '\xBF') begin += 3;
      scanned = begin;
    }
    if (ends == Ends::unknown) decide_ends();
    if (ends == Ends::any) return any_next(line, name, line_no);
    while (true) {
      const char* nl = static_cast<const char*>(std::memchr(buf.get() + scanned, '\n', end - scanned));
      const std::size_t length = nl ? static_cast<std::size_t>(nl - (buf.get() + begin)) : end - begin;
      if (length + 1 > k_max_line) too_long(name, line_no);
      if (nl) {
        line = std::string_view(buf.get() + begin, length);
        line_end = base + static_cast<long long>(begin + length);
        if (!line.empty() && line.back() == '\r') line.remove_suffix(1);
        begin += length + 1;
        scanned = begin;
        return true;
      }
      scanned = end;
      if (!fill()) return false;
    }
  }

  // raw_next for files whose lines may end in a lone '\r'.
  bool any_next(std::string_view& line, const std::string& name, int line_no) {
    while (true) {
      std::size_t i = scanned;
      while (i < end && buf[i] != '\n' && buf[i] != '\r') ++i;
      const std::size_t length = i - begin;
      if (length + 1 > k_max_line) too_long(name, line_no);
      if (i < end) {
        if (buf[i] == '\r' && i + 1 == end) {
          // Is it "\r\n"? Read on to see (the stream ends in '\n', so there is a next byte).
          scanned = i;
          if (fill()) continue;
        }
        const std::size_t ending = buf[i] == '\r' && i + 1 < end && buf[i + 1] == '\n' ? 2 : 1;
        line = std::string_view(buf.get() + begin, length);
        line_end = base + static_cast<long long>(i);
        begin = i + ending;
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

LineSource::LineSource(const std::string& path, long long max_bytes, NoHash) : LineSource(path) {
  if (max_bytes >= 0) impl_->left = max_bytes;
  impl_->hashing = false;
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
  if (impl_->nul_at >= 0 && impl_->nul_at < impl_->line_end) {
    // The line's text is taken to stop at the NUL (a line after it, asked for after the
    // error, gets no column).
    const auto nul = line.find('\0');
    int column = nul == std::string_view::npos ? 0 : static_cast<int>(nul) + 1;
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
    if (!impl_->raw_next(ignored, name_, line_))
      impl_->done = true;
    else
      ++line_;
  }
  return impl_->hashing ? impl_->hash.hex() : std::string();
}

long long LineSource::bytes_read() const { return impl_->total; }

std::string sha256_hex(std::string_view bytes) {
  Sha256 h;
  h.update(bytes.data(), bytes.size());
  return h.hex();
}

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
