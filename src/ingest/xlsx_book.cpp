// The parts of a workbook around its sheets: the zip container (libzip), the workbook's
// sheet list and relationships, shared strings and number formats (pugixml).
#include <zip.h>

#include <fmt/format.h>
#include <algorithm>
#include <cctype>
#include <map>
#include <pugixml.hpp>

#include "ingest/xlsx.hpp"

namespace vzero::detail::xlsx {

namespace {

// The largest part vzero unpacks (a sheet of 1536 wells × 10,000 reads is ~300 MiB of XML).
constexpr zip_uint64_t k_max_part_bytes = zip_uint64_t{1} << 30;

}  // namespace

std::string_view local_name(const char* name) {
  std::string_view s(name);
  const auto colon = s.rfind(':');
  return colon == std::string_view::npos ? s : s.substr(colon + 1);
}

pugi::xml_node child(pugi::xml_node n, std::string_view name) {
  for (pugi::xml_node c : n.children())
    if (local_name(c.name()) == name) return c;
  return {};
}

namespace {

pugi::xml_attribute attribute(pugi::xml_node n, std::string_view name) {
  for (pugi::xml_attribute a : n.attributes())
    if (local_name(a.name()) == name) return a;
  return {};
}

}  // namespace

void parse_part(const Archive& zip, const std::string& file, const std::string& part, pugi::xml_document& doc) {
  const std::string bytes = zip.read(part);
  const auto parsed = doc.load_buffer(bytes.data(), bytes.size(), pugi::parse_default | pugi::parse_ws_pcdata);
  if (!parsed)
    bad_workbook(file,
                 fmt::format("a part {} that is not XML ({} at byte {})", part, parsed.description(), parsed.offset));
}

namespace {

// "xl/worksheets/../sharedStrings.xml" → "xl/sharedStrings.xml"
std::string normalised(const std::string& path) {
  std::vector<std::string> parts;
  for (std::size_t at = 0; at <= path.size();) {
    auto end = path.find('/', at);
    if (end == std::string::npos) end = path.size();
    const std::string part = path.substr(at, end - at);
    if (part == "..") {
      if (!parts.empty()) parts.pop_back();
    } else if (!part.empty() && part != ".") {
      parts.push_back(part);
    }
    at = end + 1;
  }
  std::string out;
  for (const auto& p : parts) out += (out.empty() ? "" : "/") + p;
  return out;
}

// Relationship targets by id, resolved against the folder of the part that owns them.
struct Relation {
  std::string type, target;
};
std::map<std::string, Relation> relations(const Archive& zip, const std::string& file, const std::string& owner) {
  const auto slash = owner.rfind('/');
  const std::string folder = slash == std::string::npos ? "" : owner.substr(0, slash + 1);
  const std::string rels = folder + "_rels/" + owner.substr(folder.size()) + ".rels";
  std::map<std::string, Relation> out;
  if (!zip.has(rels)) return out;
  pugi::xml_document doc;
  parse_part(zip, file, rels, doc);
  for (pugi::xml_node r : child(doc, "Relationships").children()) {
    if (local_name(r.name()) != "Relationship") continue;
    std::string target = r.attribute("Target").value();
    if (!target.empty() && target.front() == '/')
      target.erase(0, 1);
    else
      target = folder + target;
    target = normalised(target);
    out[r.attribute("Id").value()] = {r.attribute("Type").value(), target};
  }
  return out;
}

bool ends_with(std::string_view s, std::string_view end) {
  return s.size() >= end.size() && s.substr(s.size() - end.size()) == end;
}

std::string target_of_type(const std::map<std::string, Relation>& rels, std::string_view type) {
  for (const auto& [id, r] : rels)
    if (ends_with(r.type, type)) return r.target;
  return {};
}

}  // namespace

std::string string_item(pugi::xml_node si) {
  std::string text;
  for (pugi::xml_node c : si.children()) {
    const auto name = local_name(c.name());
    if (name == "t") text += c.child_value();
    if (name == "r") text += child(c, "t").child_value();
  }
  return text;
}

namespace {

std::vector<std::string> shared_strings(const Archive& zip, const std::string& file, const std::string& part) {
  std::vector<std::string> out;
  if (part.empty() || !zip.has(part)) return out;
  pugi::xml_document doc;
  parse_part(zip, file, part, doc);
  for (pugi::xml_node si : child(doc, "sst").children())
    if (local_name(si.name()) == "si") out.push_back(string_item(si));
  return out;
}

std::vector<NumberKind> style_kinds(const Archive& zip, const std::string& file, const std::string& part) {
  std::vector<NumberKind> out;
  if (part.empty() || !zip.has(part)) return out;
  pugi::xml_document doc;
  parse_part(zip, file, part, doc);
  const pugi::xml_node sheet = child(doc, "styleSheet");
  std::map<int, std::string> codes;
  for (pugi::xml_node f : child(sheet, "numFmts").children())
    if (local_name(f.name()) == "numFmt") codes[f.attribute("numFmtId").as_int(-1)] = f.attribute("formatCode").value();
  for (pugi::xml_node xf : child(sheet, "cellXfs").children()) {
    if (local_name(xf.name()) != "xf") continue;
    const int id = xf.attribute("numFmtId").as_int(0);
    const auto code = codes.find(id);
    out.push_back(kind_of_format(id, code == codes.end() ? std::string_view() : std::string_view(code->second)));
  }
  return out;
}

}  // namespace

void bad_workbook(const std::string& file, const std::string& what) {
  throw InputError(Where{file}, "expected a spreadsheet workbook (.xlsx, Office Open XML), found " + what,
                   {"open the file in its spreadsheet program and save it again as .xlsx, or export the sheet "
                    "as CSV and pass that"});
}

struct Archive::Impl {
  zip_t* zip = nullptr;
};

Archive::Archive(const std::string& file, std::string_view bytes) : impl_(new Impl), file_(file) {
  zip_error_t error;
  zip_error_init(&error);
  zip_source_t* source = zip_source_buffer_create(bytes.data(), bytes.size(), 0, &error);
  if (source) impl_->zip = zip_open_from_source(source, ZIP_RDONLY, &error);
  if (!impl_->zip) {
    if (source) zip_source_free(source);
    const std::string why = zip_error_strerror(&error);
    zip_error_fini(&error);
    delete impl_;
    bad_workbook(file, "a file that is not a readable zip archive (" + why + ")");
  }
  zip_error_fini(&error);
}

Archive::~Archive() {
  zip_discard(impl_->zip);
  delete impl_;
}

bool Archive::has(const std::string& part) const {
  return zip_name_locate(impl_->zip, part.c_str(), ZIP_FL_NOCASE) >= 0;
}

std::string Archive::read(const std::string& part) const {
  const zip_int64_t index = zip_name_locate(impl_->zip, part.c_str(), ZIP_FL_NOCASE);
  if (index < 0) bad_workbook(file_, "no part " + part + " in the archive");
  zip_stat_t st;
  zip_stat_init(&st);
  if (zip_stat_index(impl_->zip, static_cast<zip_uint64_t>(index), 0, &st) == 0 &&
      (st.valid & ZIP_STAT_ENCRYPTION_METHOD) && st.encryption_method != ZIP_EM_NONE) {
    throw InputError(Where{file_}, fmt::format("expected a workbook that is not encrypted, found {} encrypted", part),
                     {"remove the password in the spreadsheet program and save the workbook again"});
  }
  zip_file_t* in = zip_fopen_index(impl_->zip, static_cast<zip_uint64_t>(index), 0);
  if (!in) bad_workbook(file_, fmt::format("a part {} that cannot be opened ({})", part, zip_strerror(impl_->zip)));
  std::string out;
  char chunk[1 << 16];
  while (true) {
    const zip_int64_t n = zip_fread(in, chunk, sizeof chunk);
    if (n < 0) {
      const std::string why = zip_file_strerror(in);
      zip_fclose(in);
      bad_workbook(file_, fmt::format("a damaged part {} ({})", part, why));
    }
    if (n == 0) break;
    out.append(chunk, static_cast<std::size_t>(n));
    if (out.size() > k_max_part_bytes) {
      zip_fclose(in);
      bad_workbook(file_, fmt::format("a part {} larger than 1 GiB unpacked, the most vzero reads", part));
    }
  }
  zip_fclose(in);
  return out;
}

Book read_book(const Archive& zip, const std::string& file) {
  std::string workbook = target_of_type(relations(zip, file, ""), "/officeDocument");
  if (workbook.empty()) workbook = "xl/workbook.xml";
  if (!zip.has(workbook)) bad_workbook(file, "a zip archive without a workbook part (" + workbook + ")");
  pugi::xml_document doc;
  parse_part(zip, file, workbook, doc);
  const auto rels = relations(zip, file, workbook);
  Book book;
  const pugi::xml_node root = child(doc, "workbook");
  book.date1904 = attribute(child(root, "workbookPr"), "date1904").as_bool(false);
  for (pugi::xml_node s : child(root, "sheets").children()) {
    if (local_name(s.name()) != "sheet") continue;
    const auto rel = rels.find(attribute(s, "id").value());
    book.sheet_names.emplace_back(s.attribute("name").value());
    book.sheet_parts.push_back(rel == rels.end() ? std::string() : rel->second.target);
  }
  if (book.sheet_names.empty()) bad_workbook(file, "a workbook that lists no sheets (" + workbook + ")");
  book.shared_strings = shared_strings(zip, file, target_of_type(rels, "/sharedStrings"));
  book.style_kinds = style_kinds(zip, file, target_of_type(rels, "/styles"));
  return book;
}

NumberKind kind_of_format(int id, std::string_view code) {
  // Built-in formats (ECMA-376 Part 1, 18.8.30): 14-17 dates, 18-21 times, 22 date and
  // time, 45-47 mm:ss / [h]:mm:ss / mm:ss.0; 27-36 and 50-58 are East Asian dates.
  if (code.empty()) {
    if ((id >= 14 && id <= 17) || (id >= 27 && id <= 36) || (id >= 50 && id <= 58)) return NumberKind::date;
    if ((id >= 18 && id <= 21) || (id >= 45 && id <= 47)) return NumberKind::time;
    if (id == 22) return NumberKind::date_time;
    return NumberKind::number;
  }
  // A custom code: its first section, without quoted text, escaped characters, fill and
  // padding characters, colours and conditions ([h], [m] and [s] are elapsed times).
  bool date = false, time = false, month_or_minute = false;
  const std::string_view first = code.substr(0, code.find(';'));
  for (std::size_t i = 0; i < first.size(); ++i) {
    const char c = static_cast<char>(std::tolower(static_cast<unsigned char>(first[i])));
    if (c == '"') {
      const auto close = first.find('"', i + 1);
      i = close == std::string_view::npos ? first.size() : close;
    } else if (c == '\\' || c == '_' || c == '*') {
      ++i;
    } else if (c == '[') {
      const auto close = first.find(']', i);
      const std::string_view inside = first.substr(i + 1, close == std::string_view::npos ? 0 : close - i - 1);
      if (!inside.empty() && inside.find_first_not_of("hHmMsS") == std::string_view::npos) time = true;
      i = close == std::string_view::npos ? first.size() : close;
    } else if (first.substr(i, 5) == "AM/PM" || first.substr(i, 5) == "am/pm") {
      i += 4;
    } else if (c == 'y' || c == 'd') {
      date = true;
    } else if (c == 'h' || c == 's') {
      time = true;
    } else if (c == 'm') {
      month_or_minute = true;
    }
  }
  if (time) return date ? NumberKind::date_time : NumberKind::time;
  if (date || month_or_minute) return NumberKind::date;
  return NumberKind::number;
}

}  // namespace vzero::detail::xlsx
