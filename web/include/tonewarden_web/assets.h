// The dashboard's files, embedded into the binary at build time (web/embed_assets.cmake).
#pragma once

#include <cstddef>
#include <span>

namespace tonewarden::web {

struct Asset {
  const char* url_path;      // e.g. "/index.html", "/vendor/uPlot.iife.min.js"
  const char* content_type;
  const char* data;
  size_t size;
};

std::span<const Asset> dashboard_assets();

}  // namespace tonewarden::web
