// Canonical dump of the effective configuration (table order, defaults included), its hash,
// and the key-by-key diff used on SIGHUP to split live changes from those needing a restart.
#include "tonewarden/config/dump.h"

#include <cstdio>
#include <set>

namespace tonewarden::config {
namespace {

constexpr const char* kRedacted = "\"<redacted>\"";

std::string entry_text(const OptionSpec* opt, const Entry& e, bool redact) {
  if (redact && opt != nullptr && opt->secret) {
    const auto* s = std::get_if<std::string>(&e.value);
    if (s != nullptr && !s->empty()) return kRedacted;
  }
  return value_to_toml(e.value);
}

void dump_section(const Section& s, const DumpOptions& o, std::string& out) {
  const std::string_view path = s.spec == nullptr ? std::string_view{} : s.spec->path;
  if (s.spec != nullptr && !s.values.empty()) {
    if (!out.empty()) out += "\n";
    out += s.spec->is_array ? "[[" + std::string(path) + "]]\n" : "[" + std::string(path) + "]\n";
    for (const OptionSpec* opt : options_of(path)) {
      const Entry* e = s.find(std::string(opt->key));
      if (e == nullptr) continue;
      if (o.with_help) out += "# " + std::string(opt->help) + "\n";
      out += std::string(opt->key) + " = " + entry_text(opt, *e, o.redact_secrets) + "\n";
    }
  }
  for (const SectionSpec* child : children_of(path)) {
    for (const Section& c : s.list(std::string(child->path))) dump_section(c, o, out);
  }
}

void diff_section(const Section* a, const Section* b, std::vector<ConfigChange>& out);

void diff_children(const Section* a, const Section* b, const SectionSpec& child, std::vector<ConfigChange>& out) {
  static const std::vector<Section> kNone;
  const std::string path(child.path);
  const auto& la = a != nullptr ? a->list(path) : kNone;
  const auto& lb = b != nullptr ? b->list(path) : kNone;
  // Instances are matched by label, which carries the name (or the index when unnamed).
  std::set<std::string> labels;
  for (const Section& s : la) labels.insert(s.label);
  for (const Section& s : lb) labels.insert(s.label);
  auto find = [](const std::vector<Section>& l, const std::string& label) -> const Section* {
    for (const Section& s : l) {
      if (s.label == label) return &s;
    }
    return nullptr;
  };
  // Keep file order: walk la then the additions from lb.
  std::vector<std::string> order;
  for (const Section& s : la) order.push_back(s.label);
  for (const Section& s : lb) {
    if (find(la, s.label) == nullptr) order.push_back(s.label);
  }
  for (const std::string& label : order) {
    const Section* sa = find(la, label);
    const Section* sb = find(lb, label);
    if (sa != nullptr && sb != nullptr) {
      diff_section(sa, sb, out);
    } else if (child.is_array) {
      out.push_back(ConfigChange{label, sa != nullptr ? "[section]" : "", sb != nullptr ? "[section]" : "",
                                 child.reloadable});
    } else {
      diff_section(sa, sb, out);
    }
  }
}

void diff_section(const Section* a, const Section* b, std::vector<ConfigChange>& out) {
  const Section* any = a != nullptr ? a : b;
  const std::string_view path = any->spec == nullptr ? std::string_view{} : any->spec->path;
  for (const OptionSpec* opt : options_of(path)) {
    const std::string key(opt->key);
    const Entry* ea = a != nullptr ? a->find(key) : nullptr;
    const Entry* eb = b != nullptr ? b->find(key) : nullptr;
    if (ea == nullptr && eb == nullptr) continue;
    if (ea != nullptr && eb != nullptr && ea->value == eb->value) continue;
    const std::string label = any->label.empty() ? key : any->label + "." + key;
    out.push_back(ConfigChange{label, ea != nullptr ? entry_text(opt, *ea, true) : "",
                               eb != nullptr ? entry_text(opt, *eb, true) : "", opt->reloadable});
  }
  for (const SectionSpec* child : children_of(path)) diff_children(a, b, *child, out);
}

}  // namespace

std::string dump_toml(const Section& root, const DumpOptions& options) {
  std::string out;
  dump_section(root, options, out);
  return out;
}

std::uint64_t fnv1a64(std::string_view bytes) noexcept {
  // FNV-1a 64-bit offset basis and prime (published FNV parameters).
  std::uint64_t h = 0xcbf29ce484222325ULL;
  for (const char c : bytes) {
    h ^= static_cast<unsigned char>(c);
    h *= 0x100000001b3ULL;
  }
  return h;
}

std::string config_hash(const Section& root) {
  DumpOptions o;
  o.redact_secrets = false;
  char buf[20];
  std::snprintf(buf, sizeof buf, "%016llx", static_cast<unsigned long long>(fnv1a64(dump_toml(root, o))));
  return buf;
}

std::vector<ConfigChange> diff_configs(const Section& before, const Section& after) {
  std::vector<ConfigChange> out;
  diff_section(&before, &after, out);
  return out;
}

bool all_reloadable(const std::vector<ConfigChange>& changes) {
  for (const auto& c : changes) {
    if (!c.reloadable) return false;
  }
  return true;
}

}  // namespace tonewarden::config
