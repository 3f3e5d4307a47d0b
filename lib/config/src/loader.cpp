// Loader entry points: read the file, parse TOML, build and check the tree, map to structs.
// Every issue is collected and sorted by position so that one run shows them all.
#include "tonewarden/config/loader.h"

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <fstream>
#include <sstream>

#include "loader_internal.h"

namespace tonewarden::config {
namespace {

// A config larger than this is certainly a mistake (a recording passed by accident...).
constexpr std::size_t kMaxConfigBytes = 4u << 20;

}  // namespace

std::string format_issue(const ConfigIssue& issue) {
  std::string out = issue.file + ":";
  if (issue.pos.line > 0) {
    out += std::to_string(issue.pos.line) + ":" + std::to_string(issue.pos.column) + ":";
  }
  out += " ";
  if (!issue.key.empty()) out += issue.key + ": ";
  out += issue.message;
  if (!issue.allowed.empty()) out += " (allowed: " + issue.allowed + ")";
  return out;
}

LoadedConfig load_config_text(const std::string& text, const std::string& file_name) {
  LoadedConfig out;
  out.file = file_name;
  const detail::IssueSink sink{file_name, &out.issues};
  toml::table doc;
  try {
    doc = toml::parse(text, file_name);
  } catch (const toml::parse_error& e) {
    const auto& b = e.source().begin;
    sink.add(SourcePos{static_cast<std::uint32_t>(b.line), static_cast<std::uint32_t>(b.column)}, "",
             "TOML syntax error: " + std::string(e.description()));
    return out;
  }
  out.tree = detail::build_tree(doc, sink);
  detail::check_semantics(out.tree, sink);
  std::stable_sort(out.issues.begin(), out.issues.end(), [](const ConfigIssue& a, const ConfigIssue& b) {
    if (a.pos.line != b.pos.line) return a.pos.line < b.pos.line;
    return a.pos.column < b.pos.column;
  });
  if (out.issues.empty()) out.config = detail::to_config(out.tree);
  return out;
}

LoadedConfig load_config_file(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    LoadedConfig out;
    out.file = path;
    out.issues.push_back(ConfigIssue{path, {}, "", std::string("cannot read: ") + std::strerror(errno), ""});
    return out;
  }
  std::ostringstream ss;
  ss << in.rdbuf();
  std::string text = ss.str();
  if (text.size() > kMaxConfigBytes) {
    LoadedConfig out;
    out.file = path;
    out.issues.push_back(ConfigIssue{path, {}, "", "file is larger than " + std::to_string(kMaxConfigBytes) +
                                                       " bytes; is it really a config?", ""});
    return out;
  }
  return load_config_text(text, path);
}

base::Result<Config> load_config(const std::string& path) {
  LoadedConfig loaded = load_config_file(path);
  if (loaded.ok()) return std::move(loaded.config);
  std::string message;
  for (const auto& issue : loaded.issues) {
    if (!message.empty()) message += "\n";
    message += format_issue(issue);
  }
  return base::make_error(base::ErrorCode::kInvalidArgument, message);
}

}  // namespace tonewarden::config
