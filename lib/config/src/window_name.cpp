// The [rig.analysis] window value: parsed by the spectrum module's own parser, so the config
// accepts exactly the names `tonewarden analyze --window` does, kaiser:BETA included.
#include "loader_internal.h"

#include "tonewarden/dsp/window.h"

namespace tonewarden::config::detail {
namespace {

// Spellings the config accepted before it shared the analyzer's names; kept so that existing
// files still load. The dump shows what the file says.
struct Alias {
  const char* old_name;
  const char* name;
};
constexpr Alias kAliases[] = {{"flat-top", "flattop"}, {"rectangular", "rect"}};

WindowKind to_config_kind(dsp::WindowKind kind) {
  switch (kind) {
    case dsp::WindowKind::kRectangular: return WindowKind::kRectangular;
    case dsp::WindowKind::kHann: return WindowKind::kHann;
    case dsp::WindowKind::kHamming: return WindowKind::kHamming;
    case dsp::WindowKind::kBlackman: return WindowKind::kBlackman;
    case dsp::WindowKind::kBlackmanHarris: return WindowKind::kBlackmanHarris;
    case dsp::WindowKind::kFlatTop: return WindowKind::kFlatTop;
    case dsp::WindowKind::kHft95: return WindowKind::kHft95;
    case dsp::WindowKind::kKaiser: return WindowKind::kKaiser;
  }
  return WindowKind::kHann;  // unreachable: the switch names every kind
}

}  // namespace

bool parse_window(const std::string& text, WindowKind& kind, double& kaiser_beta, std::string& error) {
  std::string_view name = text;
  for (const Alias& a : kAliases) {
    if (name == a.old_name) name = a.name;
  }
  const auto spec = dsp::parse_window_spec(name);
  if (!spec) {
    error = spec.error().message;
    return false;
  }
  kind = to_config_kind(spec->kind);
  kaiser_beta = spec->kind == dsp::WindowKind::kKaiser ? spec->kaiser_beta : 0.0;
  return true;
}

}  // namespace tonewarden::config::detail
