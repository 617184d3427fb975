#pragma once
// A minimal XML reader for the SVG and HTML the report writes: elements, attributes, text; checks
// that tags balance. Enough to read plots back in tests, not a general XML parser (no DTDs,
// no CDATA; <!DOCTYPE>, comments, <script> and <style> bodies are skipped).

#include <cctype>
#include <memory>
#include <stdexcept>
#include <string>
#include <vector>

namespace triaxcal::test {

struct Element {
  std::string name;
  std::vector<std::pair<std::string, std::string>> attributes;
  std::vector<std::unique_ptr<Element>> children;
  std::string text;  ///< text directly inside, entities &amp; &lt; &gt; &quot; &#39; decoded
  const Element* parent = nullptr;

  const std::string* attr(const std::string& key) const {
    for (const auto& [k, v] : attributes)
      if (k == key) return &v;
    return nullptr;
  }
  std::string get(const std::string& key) const {
    const std::string* v = attr(key);
    return v ? *v : std::string();
  }
  bool has_class(const std::string& c) const {
    const std::string cls = " " + get("class") + " ";
    return cls.find(" " + c + " ") != std::string::npos;
  }
  /// All descendants (depth first) for which `pred` holds.
  template <class Pred>
  void collect(Pred pred, std::vector<const Element*>& out) const {
    for (const auto& c : children) {
      if (pred(*c)) out.push_back(c.get());
      c->collect(pred, out);
    }
  }
  std::vector<const Element*> by_class(const std::string& c) const {
    std::vector<const Element*> out;
    collect([&](const Element& e) { return e.has_class(c); }, out);
    return out;
  }
  std::vector<const Element*> by_name(const std::string& n) const {
    std::vector<const Element*> out;
    collect([&](const Element& e) { return e.name == n; }, out);
    return out;
  }
  const Element* by_id(const std::string& id) const {
    std::vector<const Element*> out;
    collect([&](const Element& e) { return e.get("id") == id; }, out);
    return out.empty() ? nullptr : out.front();
  }
};

inline std::string decode_entities(const std::string& s) {
  std::string out;
  for (std::size_t i = 0; i < s.size(); ++i) {
    if (s[i] != '&') {
      out += s[i];
      continue;
    }
    const std::size_t semi = s.find(';', i);
    if (semi == std::string::npos) throw std::runtime_error("unterminated entity");
    const std::string ent = s.substr(i + 1, semi - i - 1);
    if (ent == "amp") out += '&';
    else if (ent == "lt") out += '<';
    else if (ent == "gt") out += '>';
    else if (ent == "quot") out += '"';
    else if (ent == "#39") out += '\'';
    else out += "&" + ent + ";";  // numeric entities for symbols stay as they are
    i = semi;
  }
  return out;
}

/// Parses `text`; throws std::runtime_error naming the offset for unbalanced or malformed tags.
/// HTML void elements (meta, br, ...) need no closing tag.
inline std::unique_ptr<Element> parse_xml(const std::string& text) {
  auto root = std::make_unique<Element>();
  root->name = "#root";
  std::vector<Element*> stack{root.get()};
  const std::vector<std::string> voids = {"meta", "br", "hr", "img", "input", "link"};
  std::size_t i = 0;
  auto fail = [&](const std::string& what) { throw std::runtime_error(what + " at offset " + std::to_string(i)); };
  while (i < text.size()) {
    if (text[i] != '<') {
      const std::size_t next = text.find('<', i);
      stack.back()->text += decode_entities(text.substr(i, next - i));
      i = next == std::string::npos ? text.size() : next;
      continue;
    }
    if (text.compare(i, 4, "<!--") == 0) {
      const std::size_t end = text.find("-->", i);
      if (end == std::string::npos) fail("unterminated comment");
      i = end + 3;
      continue;
    }
    if (text.compare(i, 2, "<!") == 0 || text.compare(i, 2, "<?") == 0) {
      i = text.find('>', i) + 1;
      continue;
    }
    if (text.compare(i, 2, "</") == 0) {
      const std::size_t end = text.find('>', i);
      const std::string name = text.substr(i + 2, end - i - 2);
      if (stack.size() < 2 || stack.back()->name != name) fail("unexpected </" + name + ">");
      stack.pop_back();
      i = end + 1;
      continue;
    }
    // Start tag.
    std::size_t j = i + 1;
    while (j < text.size() && !std::isspace(static_cast<unsigned char>(text[j])) && text[j] != '>' && text[j] != '/') ++j;
    auto e = std::make_unique<Element>();
    e->name = text.substr(i + 1, j - i - 1);
    e->parent = stack.back();
    bool self_closing = false;
    while (true) {
      while (j < text.size() && std::isspace(static_cast<unsigned char>(text[j]))) ++j;
      if (j >= text.size()) fail("unterminated tag");
      if (text[j] == '>') {
        ++j;
        break;
      }
      if (text.compare(j, 2, "/>") == 0) {
        self_closing = true;
        j += 2;
        break;
      }
      std::size_t k = j;
      while (k < text.size() && text[k] != '=' && text[k] != '>' && !std::isspace(static_cast<unsigned char>(text[k]))) ++k;
      const std::string key = text.substr(j, k - j);
      if (k < text.size() && text[k] == '=') {
        const char q = text[k + 1];
        if (q != '"' && q != '\'') fail("unquoted attribute " + key);
        const std::size_t close = text.find(q, k + 2);
        e->attributes.emplace_back(key, decode_entities(text.substr(k + 2, close - k - 2)));
        j = close + 1;
      } else {
        e->attributes.emplace_back(key, "");
        j = k;
      }
    }
    Element* raw = e.get();
    stack.back()->children.push_back(std::move(e));
    i = j;
    bool is_void = false;
    for (const auto& v : voids) is_void = is_void || raw->name == v;
    if (self_closing || is_void) continue;
    if (raw->name == "script" || raw->name == "style") {
      const std::size_t end = text.find("</" + raw->name + ">", i);
      if (end == std::string::npos) fail("unterminated <" + raw->name + ">");
      raw->text = text.substr(i, end - i);
      i = end + raw->name.size() + 3;
      continue;
    }
    stack.push_back(raw);
  }
  if (stack.size() != 1) throw std::runtime_error("unclosed <" + stack.back()->name + ">");
  return root;
}

}  // namespace triaxcal::test
