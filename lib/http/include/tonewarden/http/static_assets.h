// Static assets (the dashboard) served from memory: the daemon fills an AssetMap with files
// embedded at build time. Only exact keys are served; nothing is ever read from disk.
#pragma once

#include <functional>
#include <map>
#include <string>
#include <string_view>

namespace tonewarden::http {

struct StaticAsset {
  std::string content_type;  // e.g. "text/html; charset=utf-8"
  std::string bytes;
};

// Keys are absolute request paths: "/index.html", "/app.js". "/" serves "/index.html".
using AssetMap = std::map<std::string, StaticAsset, std::less<>>;

// Rejects what could climb out of or around the asset map, on the raw request path (before
// percent-decoding) and the decoded one alike: "." or ".." segments, any "%2e"/"%2f"/"%5c"/"%00"
// escape, backslashes, empty segments ("//"), control bytes, and anything not starting with "/".
bool is_safe_request_path(std::string_view raw_path, std::string_view decoded_path) noexcept;

// Content type by file extension for build steps that fill an AssetMap; "" when unknown.
std::string_view content_type_for(std::string_view file_name) noexcept;

}  // namespace tonewarden::http
