// Path safety for in-memory static assets (see static_assets.h).
#include "tonewarden/http/static_assets.h"

#include <cctype>

namespace tonewarden::http {
namespace {

bool ends_with(std::string_view s, std::string_view suffix) {
  return s.size() >= suffix.size() && s.substr(s.size() - suffix.size()) == suffix;
}

bool path_shape_ok(std::string_view p) {
  if (p.empty() || p.front() != '/') return false;
  size_t seg_start = 1;
  for (size_t i = 1; i <= p.size(); ++i) {
    if (i == p.size() || p[i] == '/') {
      const std::string_view seg = p.substr(seg_start, i - seg_start);
      // An empty segment is allowed only as the trailing "/" of "/" itself.
      if (seg.empty() && !(i == p.size() && p.size() == 1)) return false;
      if (seg == "." || seg == "..") return false;
      seg_start = i + 1;
    }
  }
  for (char c : p) {
    const auto u = static_cast<unsigned char>(c);
    if (u < 0x20 || u == 0x7f || c == '\\') return false;
  }
  return true;
}

}  // namespace

bool is_safe_request_path(std::string_view raw, std::string_view decoded) noexcept {
  if (!path_shape_ok(raw) || !path_shape_ok(decoded)) return false;
  // Escapes that only an attacker needs: dot, slash, backslash, NUL; any case.
  for (size_t i = 0; i + 2 < raw.size(); ++i) {
    if (raw[i] != '%') continue;
    const char a = static_cast<char>(std::tolower(static_cast<unsigned char>(raw[i + 1])));
    const char b = static_cast<char>(std::tolower(static_cast<unsigned char>(raw[i + 2])));
    if ((a == '2' && (b == 'e' || b == 'f')) || (a == '5' && b == 'c') || (a == '0' && b == '0'))
      return false;
  }
  // "..": already refused as a segment; also refuse it inside one ("/a..b" is harmless, but
  // no asset needs it and it keeps the rule simple to state).
  if (raw.find("..") != std::string_view::npos || decoded.find("..") != std::string_view::npos)
    return false;
  return true;
}

std::string_view content_type_for(std::string_view name) noexcept {
  if (ends_with(name, ".html")) return "text/html; charset=utf-8";
  if (ends_with(name, ".js") || ends_with(name, ".mjs")) return "text/javascript; charset=utf-8";
  if (ends_with(name, ".css")) return "text/css; charset=utf-8";
  if (ends_with(name, ".json")) return "application/json";
  if (ends_with(name, ".svg")) return "image/svg+xml";
  if (ends_with(name, ".png")) return "image/png";
  if (ends_with(name, ".ico")) return "image/x-icon";
  if (ends_with(name, ".woff2")) return "font/woff2";
  if (ends_with(name, ".txt")) return "text/plain; charset=utf-8";
  return "";
}

}  // namespace tonewarden::http
