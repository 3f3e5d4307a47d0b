// Typed reads on the generic effective-config tree, and TOML text for single values.
#include "tonewarden/config/config_tree.h"

#include <charconv>
#include <cstdio>

namespace tonewarden::config {
namespace {

std::string toml_string(const std::string& s) {
  std::string out = "\"";
  for (const char c : s) {
    switch (c) {
      case '"': out += "\\\""; break;
      case '\\': out += "\\\\"; break;
      case '\n': out += "\\n"; break;
      case '\t': out += "\\t"; break;
      case '\r': out += "\\r"; break;
      default:
        if (static_cast<unsigned char>(c) < 0x20 || c == 0x7f) {
          char buf[8];
          std::snprintf(buf, sizeof buf, "\\u%04x", static_cast<unsigned>(c));
          out += buf;
        } else {
          out += c;
        }
    }
  }
  return out + "\"";
}

// Shortest text that reads back as the same double, always with a '.' or exponent so that
// TOML sees a float.
std::string toml_float(double v) {
  char buf[64];
  const auto r = std::to_chars(buf, buf + sizeof buf, v);
  std::string s(buf, r.ptr);
  if (s.find_first_of(".eEn") == std::string::npos) s += ".0";
  return s;
}

}  // namespace

const Entry* Section::find(const std::string& key) const {
  const auto it = values.find(key);
  return it == values.end() ? nullptr : &it->second;
}

std::string Section::get_string(const std::string& key, const std::string& fallback) const {
  const Entry* e = find(key);
  if (e == nullptr) return fallback;
  if (const auto* s = std::get_if<std::string>(&e->value)) return *s;
  return fallback;
}

std::int64_t Section::get_int(const std::string& key, std::int64_t fallback) const {
  const Entry* e = find(key);
  if (e == nullptr) return fallback;
  if (const auto* i = std::get_if<std::int64_t>(&e->value)) return *i;
  return fallback;
}

double Section::get_float(const std::string& key, double fallback) const {
  const Entry* e = find(key);
  if (e == nullptr) return fallback;
  if (const auto* d = std::get_if<double>(&e->value)) return *d;
  if (const auto* i = std::get_if<std::int64_t>(&e->value)) return static_cast<double>(*i);
  return fallback;
}

bool Section::get_bool(const std::string& key, bool fallback) const {
  const Entry* e = find(key);
  if (e == nullptr) return fallback;
  if (const auto* b = std::get_if<bool>(&e->value)) return *b;
  return fallback;
}

std::vector<std::string> Section::get_list(const std::string& key) const {
  const Entry* e = find(key);
  if (e == nullptr) return {};
  if (const auto* l = std::get_if<std::vector<std::string>>(&e->value)) return *l;
  return {};
}

SourcePos Section::pos_of(const std::string& key) const {
  const Entry* e = find(key);
  return (e != nullptr && e->from_file) ? e->pos : pos;
}

const std::vector<Section>& Section::list(const std::string& child_path) const {
  static const std::vector<Section> kEmpty;
  const auto it = children.find(child_path);
  return it == children.end() ? kEmpty : it->second;
}

const Section* Section::single(const std::string& child_path) const {
  const auto& l = list(child_path);
  return l.empty() ? nullptr : &l.front();
}

std::string value_to_toml(const Value& value) {
  struct Visitor {
    std::string operator()(std::monostate) const { return ""; }
    std::string operator()(bool b) const { return b ? "true" : "false"; }
    std::string operator()(std::int64_t i) const { return std::to_string(i); }
    std::string operator()(double d) const { return toml_float(d); }
    std::string operator()(const std::string& s) const { return toml_string(s); }
    std::string operator()(const std::vector<std::string>& l) const {
      std::string out = "[";
      for (size_t i = 0; i < l.size(); ++i) {
        if (i > 0) out += ", ";
        out += toml_string(l[i]);
      }
      return out + "]";
    }
  };
  return std::visit(Visitor{}, value);
}

}  // namespace tonewarden::config
