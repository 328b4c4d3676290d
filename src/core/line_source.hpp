// Reads a text file line by line while hashing every byte with SHA-256 and noticing NUL
// bytes, so the readers stream a file once: one buffer, no read-ahead thread, memchr. (It
// replaced fast-cpp-csv-parser's LineReader and keeps its line rules, and also reads files
// whose lines end in a lone CR.)
#pragma once

#include <memory>
#include <string>
#include <string_view>

namespace vzero::detail {

class LineSource {
 public:
  // Opens `path` read-only. Throws InputError "cannot open PATH: reason".
  explicit LineSource(const std::string& path);
  // Reads only the first `max_bytes` bytes of `path` (the last line may then be cut short;
  // cut() tells). For a quick look at the start of a file.
  LineSource(const std::string& path, long long max_bytes);
  // Reads from memory (tests, fuzzers); `name` is used in messages.
  LineSource(std::string name, std::string_view bytes);
  // The same without hashing (a quick look at bytes already read; sha256() is then empty).
  struct NoHash {};
  LineSource(std::string name, std::string_view bytes, NoHash);
  // A file's first `max_bytes` bytes (or, with a negative `max_bytes`, the whole file) without
  // hashing: profile detection's look at the start of a file, whose hash nothing uses.
  LineSource(const std::string& path, long long max_bytes, NoHash);
  ~LineSource();
  LineSource(const LineSource&) = delete;
  LineSource& operator=(const LineSource&) = delete;

  // Next line without its end (LF, CRLF; in a file whose first line ends in a lone CR, also
  // CR) and, for line 1, without a UTF-8 BOM; false at the end. Throws InputError on a NUL
  // byte, a line over 16 MiB or bytes that are not UTF-8.
  //
  // `line` views the source's buffer: it is valid until the next call to next() or sha256()
  // (or the end of the LineSource), and not a moment longer: the buffer is refilled, moved
  // and reallocated as the file is read (every 1 MiB, and at the end of a file whose last
  // line has no newline). Copy what must outlive the line (a std::string). In builds with
  // AddressSanitizer every line is handed out in its own heap copy, freed by the next call,
  // so that a view kept too long is a use-after-free report on the first input that does
  // it, not only on one that happens to cross a refill.
  bool next(std::string_view& line);
  int line_number() const { return line_; }
  const std::string& name() const { return name_; }
  // Hex SHA-256 of all bytes; reads the rest of the file first if needed.
  std::string sha256();
  // Bytes consumed so far.
  long long bytes_read() const;
  // True when a byte limit stopped the reading before the end of the file.
  bool cut() const;

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
  std::string name_;
  int line_ = 0;
};

// Hex SHA-256 of a whole file (for provenance of files read by other means).
std::string sha256_of_file(const std::string& path);

// True when `s` is valid UTF-8.
bool valid_utf8(std::string_view s);
// Byte offset of the first byte that does not start a valid UTF-8 sequence, or npos.
std::size_t first_invalid_utf8(std::string_view s);

}  // namespace vzero::detail
