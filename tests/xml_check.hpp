// A strict little XML reader for the report tests: parses the report's HTML (written as
// polyglot XHTML) and its SVG into a tree, or says where the markup is not well-formed
// (W3C XML 1.0: matching tags, quoted attributes, no duplicate attribute, only the five
// predefined entities and character references, one root element).
#pragma once

#include <map>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

namespace vzero::test {

struct XmlNode {
  std::string name;
  std::map<std::string, std::string> attrs;  // values with entities decoded
  std::vector<std::unique_ptr<XmlNode>> children;
  std::string text;  // character data directly inside, entities decoded
  const XmlNode* parent = nullptr;

  bool has(const std::string& a) const { return attrs.count(a) > 0; }
  std::string attr(const std::string& a) const {
    auto it = attrs.find(a);
    return it == attrs.end() ? "" : it->second;
  }
  // Whitespace-separated class list contains `c`.
  bool has_class(std::string_view c) const {
    std::string cls = attr("class");
    std::size_t p = 0;
    while (p < cls.size()) {
      std::size_t e = cls.find(' ', p);
      if (e == std::string::npos) e = cls.size();
      if (std::string_view(cls).substr(p, e - p) == c) return true;
      p = e + 1;
    }
    return false;
  }
  // Every descendant (depth first, document order) for which `pred` holds.
  template <class Pred>
  void collect(Pred pred, std::vector<const XmlNode*>& out) const {
    for (const auto& c : children) {
      if (pred(*c)) out.push_back(c.get());
      c->collect(pred, out);
    }
  }
  template <class Pred>
  std::vector<const XmlNode*> all(Pred pred) const {
    std::vector<const XmlNode*> out;
    collect(pred, out);
    return out;
  }
  // All text below this node, concatenated.
  std::string all_text() const {
    std::string s = text;
    for (const auto& c : children) s += c->all_text();
    return s;
  }
};

struct XmlDoc {
  std::unique_ptr<XmlNode> root;
  std::string error;  // empty when well-formed, else "offset N: what"
};

namespace xml_detail {

inline bool name_char(char c) {
  return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '-' || c == '_' ||
         c == ':' || c == '.' || static_cast<unsigned char>(c) >= 0x80;
}

class Parser {
 public:
  explicit Parser(std::string_view s) : s_(s) {}

  XmlDoc run() {
    XmlDoc d;
    try {
      skip_misc();
      if (peek("<!DOCTYPE")) {
        std::size_t e = s_.find('>', p_);
        if (e == std::string_view::npos) fail("unterminated DOCTYPE");
        p_ = e + 1;
      }
      skip_misc();
      if (p_ >= s_.size() || s_[p_] != '<') fail("expected the root element");
      d.root = element(nullptr);
      skip_misc();
      if (p_ != s_.size()) fail("content after the root element");
    } catch (const std::string& e) {
      d.error = e;
      d.root.reset();
    }
    return d;
  }

 private:
  [[noreturn]] void fail(const std::string& what) const { throw "offset " + std::to_string(p_) + ": " + what; }
  bool peek(std::string_view t) const { return s_.substr(p_, t.size()) == t; }
  void skip_space() {
    while (p_ < s_.size() && (s_[p_] == ' ' || s_[p_] == '\n' || s_[p_] == '\t' || s_[p_] == '\r')) ++p_;
  }
  void skip_comment() {
    std::size_t e = s_.find("-->", p_ + 4);
    if (e == std::string_view::npos) fail("unterminated comment");
    p_ = e + 3;
  }
  void skip_misc() {
    for (;;) {
      skip_space();
      if (peek("<!--"))
        skip_comment();
      else if (peek("<?")) {
        std::size_t e = s_.find("?>", p_);
        if (e == std::string_view::npos) fail("unterminated processing instruction");
        p_ = e + 2;
      } else
        return;
    }
  }
  std::string name() {
    std::size_t b = p_;
    while (p_ < s_.size() && name_char(s_[p_])) ++p_;
    if (b == p_) fail("expected a name");
    return std::string(s_.substr(b, p_ - b));
  }
  // Decodes character data up to `stop`, checking every '&'.
  std::string decode(std::string_view raw) {
    std::string out;
    for (std::size_t i = 0; i < raw.size(); ++i) {
      if (raw[i] != '&') {
        out += raw[i];
        continue;
      }
      std::size_t e = raw.find(';', i);
      if (e == std::string_view::npos) fail("'&' without ';'");
      std::string_view ent = raw.substr(i + 1, e - i - 1);
      if (ent == "amp")
        out += '&';
      else if (ent == "lt")
        out += '<';
      else if (ent == "gt")
        out += '>';
      else if (ent == "quot")
        out += '"';
      else if (ent == "apos")
        out += '\'';
      else if (ent.size() > 1 && ent[0] == '#') {
        unsigned long cp = ent[1] == 'x' ? std::stoul(std::string(ent.substr(2)), nullptr, 16)
                                         : std::stoul(std::string(ent.substr(1)), nullptr, 10);
        if (cp < 0x80)
          out += static_cast<char>(cp);
        else
          out += "?";  // the tests only look at ASCII references
      } else
        fail("unknown entity &" + std::string(ent) + ";");
      i = e;
    }
    return out;
  }
  std::unique_ptr<XmlNode> element(const XmlNode* parent) {
    auto node = std::make_unique<XmlNode>();
    node->parent = parent;
    ++p_;  // '<'
    node->name = name();
    for (;;) {
      skip_space();
      if (p_ >= s_.size()) fail("unterminated tag <" + node->name);
      if (peek("/>")) {
        p_ += 2;
        return node;
      }
      if (s_[p_] == '>') {
        ++p_;
        break;
      }
      std::string an = name();
      skip_space();
      if (p_ >= s_.size() || s_[p_] != '=') fail("attribute " + an + " without a value");
      ++p_;
      skip_space();
      if (p_ >= s_.size() || (s_[p_] != '"' && s_[p_] != '\'')) fail("attribute " + an + " not quoted");
      char q = s_[p_++];
      std::size_t e = s_.find(q, p_);
      if (e == std::string_view::npos) fail("unterminated attribute " + an);
      std::string_view raw = s_.substr(p_, e - p_);
      if (raw.find('<') != std::string_view::npos) fail("'<' in attribute " + an);
      if (node->attrs.count(an)) fail("duplicate attribute " + an + " on <" + node->name + ">");
      node->attrs[an] = decode(raw);
      p_ = e + 1;
    }
    // Content.
    for (;;) {
      if (p_ >= s_.size()) fail("<" + node->name + "> is not closed");
      if (peek("</")) {
        p_ += 2;
        std::string closing = name();
        if (closing != node->name) fail("</" + closing + "> closes <" + node->name + ">");
        skip_space();
        if (p_ >= s_.size() || s_[p_] != '>') fail("bad closing tag");
        ++p_;
        return node;
      }
      if (peek("<!--")) {
        skip_comment();
        continue;
      }
      if (peek("<![CDATA[")) {
        std::size_t e = s_.find("]]>", p_);
        if (e == std::string_view::npos) fail("unterminated CDATA");
        node->text += std::string(s_.substr(p_ + 9, e - p_ - 9));
        p_ = e + 3;
        continue;
      }
      if (s_[p_] == '<') {
        node->children.push_back(element(node.get()));
        continue;
      }
      std::size_t e = s_.find('<', p_);
      if (e == std::string_view::npos) e = s_.size();
      node->text += decode(s_.substr(p_, e - p_));
      p_ = e;
    }
  }

  std::string_view s_;
  std::size_t p_ = 0;
};

}  // namespace xml_detail

inline XmlDoc parse_xml(std::string_view text) { return xml_detail::Parser(text).run(); }

}  // namespace vzero::test
