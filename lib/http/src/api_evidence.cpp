// Routes for raw-evidence clips: the FLAC written around an alarm and its JSON sidecar,
// streamed from DATA_DIR/evidence/RIG/NAME. Only plain names are accepted (no traversal).
#include <sys/stat.h>

#include <algorithm>
#include <cstdio>
#include <memory>

#include "route.h"

namespace tonewarden::http::detail {
namespace {

constexpr size_t kMaxNameChars = 160;
constexpr size_t kChunkBytes = 64 * 1024;

bool plain_name(const std::string& s) {
  if (s.empty() || s.size() > kMaxNameChars || s.front() == '.') return false;
  return std::all_of(s.begin(), s.end(), [](char ch) {
    return (ch >= 'a' && ch <= 'z') || (ch >= 'A' && ch <= 'Z') || (ch >= '0' && ch <= '9') ||
           ch == '-' || ch == '_' || ch == '.';
  });
}

bool ends_with(const std::string& s, const std::string& tail) {
  return s.size() >= tail.size() && s.compare(s.size() - tail.size(), tail.size(), tail) == 0;
}

void get_evidence(Ctx& c) {
  const std::string& root = c.state.config.evidence_dir;
  if (root.empty()) throw ApiError(503, "unavailable", "evidence clips are not kept by this server");
  const std::string& rig = c.path("rig");
  const std::string& file = c.path("file");
  if (!plain_name(rig)) throw ApiError(400, "bad_parameter", "rig '" + rig + "' is not a plain name", "rig");
  const bool flac = ends_with(file, ".flac");
  if (!plain_name(file) || !(flac || ends_with(file, ".json")))
    throw ApiError(400, "bad_parameter",
                   "file '" + file + "' must be a plain NAME.flac or NAME.json", "file");
  const std::string path = root + "/" + rig + "/" + file;
  struct stat st {};
  if (::stat(path.c_str(), &st) != 0 || !S_ISREG(st.st_mode))
    throw ApiError(404, "unknown_evidence",
                   "no clip " + rig + "/" + file +
                       " (it is written a few seconds after the alarm, may have been removed by "
                       "the size cap, or failed: see the log)",
                   "file");
  std::shared_ptr<FILE> in(std::fopen(path.c_str(), "rb"), [](FILE* f) { if (f) std::fclose(f); });
  if (!in) throw ApiError(500, "internal", "cannot open clip " + rig + "/" + file);
  const auto size = static_cast<size_t>(st.st_size);
  c.res.status = 200;
  c.res.set_header("Content-Disposition", "attachment; filename=\"" + file + "\"");
  c.res.set_header("Cache-Control", "no-store");
  c.res.set_content_provider(
      size, flac ? "audio/flac" : "application/json",
      [in](size_t offset, size_t length, httplib::DataSink& sink) {
        char buf[kChunkBytes];
        if (std::fseek(in.get(), static_cast<long>(offset), SEEK_SET) != 0) return false;
        const size_t n = std::fread(buf, 1, std::min(length, sizeof buf), in.get());
        if (n == 0) return false;
        return sink.write(buf, n);
      });
}

}  // namespace

void add_evidence_routes(std::vector<Route>& routes) {
  Route r{"GET", "/api/v1/evidence/{rig}/{file}", "alarms",
          "A raw clip written around an alarm activation (FLAC), or its description (JSON)"};
  ParamSpec rig{"rig"};
  rig.in_path = true;
  rig.required = true;
  rig.description = "rig name, as in the alarm log's evidence link";
  ParamSpec file{"file"};
  file.in_path = true;
  file.required = true;
  file.description = "NAME.flac (24-bit, 1.0 = channel full scale) or NAME.json (channels, units, "
                     "scaling and an analyze command line)";
  r.params = {rig, file};
  r.success_schema = "";
  r.success_type = "audio/flac";
  r.success_description = "the clip; NAME.json answers application/json";
  r.errors = {404, 503};
  r.handler = get_evidence;
  routes.push_back(std::move(r));
}

}  // namespace tonewarden::http::detail
