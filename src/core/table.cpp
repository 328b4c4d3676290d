#include "vzero/table.hpp"

#include <fcntl.h>
#include <signal.h>
#include <sys/stat.h>
#include <unistd.h>

#include <fmt/format.h>
#include <openssl/evp.h>
#include <atomic>
#include <cerrno>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <random>

#include "core/csv_write.hpp"
#include "core/line_source.hpp"
#include "core/text.hpp"
#include "vzero/error.hpp"

namespace vzero {

int Table::column(std::string_view name) const {
  for (std::size_t i = 0; i < header.size(); ++i)
    if (detail::iequals(header[i], name)) return static_cast<int>(i);
  return -1;
}

int Table::require_column(std::string_view name, std::string_view fix_hint) const {
  int c = column(name);
  if (c >= 0) return c;
  std::string found;
  for (const auto& h : header) found += (found.empty() ? "" : ", ") + h;
  std::vector<std::string> fixes;
  // A column that is the name with a unit or a word after it ("Substrate [mM]" for
  // "substrate"), or one typing slip away: the likely one meant.
  const std::string want = detail::lower(detail::trim(name));
  for (const auto& h : header) {
    const std::string l = detail::lower(detail::trim(h));
    const bool extended = l.size() > want.size() && l.compare(0, want.size(), want) == 0 &&
                          std::string_view(" [(_").find(l[want.size()]) != std::string_view::npos;
    if (extended || (want.size() >= 4 && detail::edit_distance(l, want) == 1)) {
      fixes.push_back(fmt::format("did you mean \"{}\"? Give that name (in quotes) where you gave \"{}\"", h, name));
      break;
    }
  }
  if (!fix_hint.empty()) fixes.emplace_back(fix_hint);
  throw InputError(Where{source, 1}, fmt::format("expected a column named \"{}\"; found: {}", name, found),
                   std::move(fixes));
}

std::optional<double> Table::number(std::size_t row, int col) const {
  const std::string& cell = rows[row][static_cast<std::size_t>(col)];
  if (detail::trim(cell).empty()) return std::nullopt;
  auto v = detail::parse_number(cell, '.');
  if (!v) {
    throw InputError(Where{source, line_of_row[row], column_of_cell[row][static_cast<std::size_t>(col)]},
                     fmt::format("expected a number in column \"{}\", found {}", header[static_cast<std::size_t>(col)],
                                 detail::describe_found(cell)),
                     {"write numbers with '.' as the decimal mark and no units or thousands separators"});
  }
  return v;
}

std::optional<double> TableRow::number(int col) const {
  const std::string_view cell = cells[static_cast<std::size_t>(col)];
  if (cell.empty()) return std::nullopt;
  auto v = detail::parse_number(cell, '.');
  if (!v) {
    throw InputError(Where{head.source, line, columns[static_cast<std::size_t>(col)]},
                     fmt::format("expected a number in column \"{}\", found {}", head.header[static_cast<std::size_t>(col)],
                                 detail::describe_found(cell)),
                     {"write numbers with '.' as the decimal mark and no units or thousands separators"});
  }
  return v;
}

TableLines::TableLines(std::string source, TableRowFn row) : row_(std::move(row)) { head_.source = std::move(source); }

void TableLines::line(std::string_view line, int line_number) {
  next_line_ = line_number + 1;
  auto trimmed = detail::trim(line);
  if (trimmed.empty() || trimmed.front() == '#') return;
  if (!have_header_) {
    head_.delimiter = detail::guess_delimiter(line);
    if (head_.delimiter == 0) head_.delimiter = ',';
  }
  thread_local std::vector<detail::Field> fields;
  bool unclosed = false;
  detail::split_fields_into(line, head_.delimiter, fields, &unclosed);
  if (unclosed) {
    throw InputError(Where{head_.source, line_number, fields.back().column, std::string(line)},
                     "a quoted field does not end on this line",
                     {"close the quote; vzero does not read line breaks inside quoted fields"});
  }
  if (!have_header_) {
    for (const auto& f : fields) {
      std::string name(detail::trim(f.text));
      if (name.empty()) {
        throw InputError(Where{head_.source, line_number, f.column, std::string(line)},
                         "expected a column name in the header, found an empty field", {"give every column a name"});
      }
      if (head_.column(name) >= 0) {
        throw InputError(Where{head_.source, line_number, f.column, std::string(line)},
                         fmt::format("column name \"{}\" appears twice in the header", name),
                         {"rename one of the two columns"});
      }
      head_.header.push_back(std::move(name));
    }
    have_header_ = true;
    return;
  }
  if (fields.size() != head_.header.size()) {
    int col = fields.size() > head_.header.size() ? fields[head_.header.size()].column
                                                  : static_cast<int>(line.size()) + 1;
    throw InputError(Where{head_.source, line_number, col, std::string(line)},
                     fmt::format("expected {} fields as in the header, found {}", head_.header.size(), fields.size()),
                     {fmt::format("make every row hold {} fields separated by '{}'", head_.header.size(),
                                  detail::describe_delimiter(head_.delimiter))});
  }
  cells_.clear();
  columns_.clear();
  for (const auto& f : fields) {
    cells_.push_back(detail::trim(f.text));
    columns_.push_back(f.column);
  }
  row_(TableRow{head_, cells_, columns_, line_number});
}

void TableLines::text(std::string_view lines) {
  while (!lines.empty()) {
    const std::size_t end = std::min(lines.find('\n'), lines.size());
    std::string_view one = lines.substr(0, end);
    if (!one.empty() && one.back() == '\r') one.remove_suffix(1);
    line(one, next_line_);
    lines.remove_prefix(std::min(end + 1, lines.size()));
  }
}

const Table& TableLines::finish() const {
  if (!have_header_) {
    throw InputError(Where{head_.source}, "the file is empty (expected a header line and rows)",
                     {"check that the right file was given"});
  }
  return head_;
}

namespace {
Table parse_lines(detail::LineSource& src) {
  Table t;
  TableLines lines(src.name(), [&t](const TableRow& r) {
    t.rows.emplace_back(r.cells.begin(), r.cells.end());
    t.column_of_cell.push_back(r.columns);
    t.line_of_row.push_back(r.line);
  });
  std::string_view line;
  while (src.next(line)) lines.line(line, src.line_number());
  Table head = lines.finish();
  t.source = std::move(head.source);
  t.delimiter = head.delimiter;
  t.header = std::move(head.header);
  return t;
}
}  // namespace

Table read_table(const std::string& path) {
  detail::LineSource src(path);
  return parse_lines(src);
}

Table parse_table(std::string name, std::string_view text) {
  detail::LineSource src(std::move(name), text);
  return parse_lines(src);
}

Table stream_table(const std::string& path, const TableRowFn& row) {
  detail::LineSource src(path);
  TableLines lines(src.name(), row);
  std::string_view line;
  while (src.next(line)) lines.line(line, src.line_number());
  return lines.finish();
}

std::string csv_field(std::string_view text) {
  detail::CsvOut out;
  out.field(text);
  return out.str();
}

std::string format_number(double v) {
  detail::CsvOut out;
  out.number(v);
  return out.str();
}

// Devices and pipes (/dev/stdout, /dev/full, a FIFO) cannot be replaced by a rename: they
// are written directly and report the error they give.
namespace {

// Temporary files of live AtomicFiles, for remove_temporary_outputs(): fixed slots of
// atomic pointers, so a signal handler can read them without locks or allocation.
constexpr int k_temp_slots = 256;
std::atomic<const char*> g_temp_files[k_temp_slots];

int list_temp(const char* path) {
  for (int i = 0; i < k_temp_slots; ++i) {
    const char* none = nullptr;
    if (g_temp_files[i].compare_exchange_strong(none, path)) return i;
  }
  return -1;  // more than 256 at once: not listed (never in vzero's use)
}

void unlist_temp(int slot) {
  if (slot >= 0) g_temp_files[slot].store(nullptr);
}

// Removes `.NAME.vzero-PID-*.tmp` files in `dir` whose process no longer runs.
void sweep_stale(const std::filesystem::path& dir, const std::string& name) {
  namespace fs = std::filesystem;
  const std::string prefix = "." + name + ".vzero-";
  std::error_code ec;
  for (fs::directory_iterator it(dir, ec), end; !ec && it != end; it.increment(ec)) {
    const std::string f = it->path().filename().string();
    if (f.size() <= prefix.size() + 4 || f.compare(0, prefix.size(), prefix) != 0 || !f.ends_with(".tmp")) continue;
    const long pid = std::strtol(f.c_str() + prefix.size(), nullptr, 10);
    if (pid > 0 && ::kill(static_cast<pid_t>(pid), 0) != 0 && errno == ESRCH) fs::remove(it->path(), ec);
  }
}

}  // namespace

void remove_temporary_outputs() noexcept {
  for (auto& slot : g_temp_files)
    if (const char* p = slot.load()) ::unlink(p);
}

AtomicFile::AtomicFile(const std::string& path) : path_(path) {
  auto* ctx = EVP_MD_CTX_new();
  if (!ctx || EVP_DigestInit_ex(ctx, EVP_sha256(), nullptr) != 1) {
    EVP_MD_CTX_free(ctx);
    throw std::bad_alloc();
  }
  hash_ = ctx;
  namespace fs = std::filesystem;
  fs::path target(path);
  std::error_code ec;
  if (fs::exists(target, ec) && !fs::is_regular_file(target, ec) && !fs::is_directory(target, ec)) {
    device_ = true;
    fd_ = ::open(path.c_str(), O_WRONLY | O_CLOEXEC);
    if (fd_ < 0) fail(errno);
    return;
  }
  fs::path dir = target.parent_path();
  if (dir.empty()) dir = ".";
  if (!fs::is_directory(dir, ec)) {
    throw InputError(Where{path}, fmt::format("cannot write {}: the folder {} does not exist", path, dir.string()),
                     {fmt::format("create it first (mkdir -p {}) or choose another output path", dir.string())});
  }
  sweep_stale(dir, target.filename().string());
  // A name no other writer uses (process id, random part), created with O_EXCL.
  std::random_device rd;
  for (int attempt = 0; attempt < 8 && fd_ < 0; ++attempt) {
    tmp_ = (dir / fmt::format(".{}.vzero-{}-{:08x}.tmp", target.filename().string(), ::getpid(), rd())).string();
    fd_ = ::open(tmp_.c_str(), O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC, 0666);
    if (fd_ < 0 && errno != EEXIST) break;
  }
  if (fd_ < 0) {
    int err = errno;
    tmp_.clear();
    fail(err);
  }
  slot_ = list_temp(tmp_.c_str());
}

AtomicFile::~AtomicFile() {
  EVP_MD_CTX_free(static_cast<EVP_MD_CTX*>(hash_));
  unlist_temp(slot_);
  if (fd_ >= 0) ::close(fd_);
  if (!done_ && !tmp_.empty()) ::unlink(tmp_.c_str());
}

void AtomicFile::fail(int err) {
  unlist_temp(slot_);
  slot_ = -1;
  if (fd_ >= 0) ::close(fd_);
  fd_ = -1;
  if (!tmp_.empty()) ::unlink(tmp_.c_str());
  tmp_.clear();
  if (device_) {
    throw InputError(Where{path_}, fmt::format("cannot write {}: {}", path_, std::strerror(err)),
                     {"check that the output device has free space"});
  }
  throw InputError(Where{path_}, fmt::format("cannot write {}: {}", path_, std::strerror(err)),
                   {"check that the output folder exists, is writable and has free space"});
}

std::string AtomicFile::sha256() const {
  EVP_MD_CTX* copy = EVP_MD_CTX_new();
  unsigned char md[EVP_MAX_MD_SIZE];
  unsigned int len = 0;
  const bool ok = copy && EVP_MD_CTX_copy_ex(copy, static_cast<EVP_MD_CTX*>(hash_)) == 1 &&
                  EVP_DigestFinal_ex(copy, md, &len) == 1;
  EVP_MD_CTX_free(copy);
  if (!ok) throw std::bad_alloc();
  std::string hex;
  for (unsigned int i = 0; i < len; ++i) hex += fmt::format("{:02x}", md[i]);
  return hex;
}

void AtomicFile::append(std::string_view text) {
  EVP_DigestUpdate(static_cast<EVP_MD_CTX*>(hash_), text.data(), text.size());
  const char* p = text.data();
  std::size_t left = text.size();
  while (left > 0) {
    ssize_t n = ::write(fd_, p, left);
    if (n < 0) {
      if (errno == EINTR) continue;
      fail(errno);
    }
    p += n;
    left -= static_cast<std::size_t>(n);
  }
#ifdef __linux__
  // Let the disk start on what is written while the rest is computed, so the final fsync
  // has little left to wait for.
  written_ += text.size();
  if (!device_ && written_ - started_ >= (std::size_t{8} << 20)) {
    ::sync_file_range(fd_, static_cast<off_t>(started_), static_cast<off_t>(written_ - started_),
                      SYNC_FILE_RANGE_WRITE);
    started_ = written_;
  }
#endif
}

void AtomicFile::commit() {
  if (device_) {
    const int fd = fd_;
    fd_ = -1;
    done_ = true;
    if (::close(fd) != 0) fail(errno);
    return;
  }
  // The replaced file's permissions are kept (0600 stays 0600).
  struct stat old {};
  if (::stat(path_.c_str(), &old) == 0 && S_ISREG(old.st_mode) && ::fchmod(fd_, old.st_mode & 07777) != 0) fail(errno);
  if (::fsync(fd_) != 0 && errno != EINVAL) fail(errno);
  const int fd = fd_;
  fd_ = -1;
  if (::close(fd) != 0) fail(errno);
  if (std::rename(tmp_.c_str(), path_.c_str()) != 0) fail(errno);
  done_ = true;
  unlist_temp(slot_);
  slot_ = -1;
  // The rename itself reaches the disk with the folder.
  std::string dir = std::filesystem::path(path_).parent_path().string();
  if (dir.empty()) dir = ".";
  if (const int dfd = ::open(dir.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC); dfd >= 0) {
    ::fsync(dfd);
    ::close(dfd);
  }
}

void write_file_atomic(const std::string& path, std::string_view content) {
  write_file_atomic(path, std::vector<std::string_view>{content});
}

void write_file_atomic(const std::string& path, const std::vector<std::string_view>& parts) {
  AtomicFile file(path);
  for (std::string_view p : parts) file.append(p);
  file.commit();
}

}  // namespace vzero
