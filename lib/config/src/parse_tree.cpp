// First pass of the loader: walks the TOML document against the option table. Reports unknown
// keys, wrong types, out-of-range values, bad enum values, keys that don't apply to the chosen
// kind and missing required keys, each at its own line and column, and fills in defaults.
#include <cmath>
#include <map>
#include <set>

#include "loader_internal.h"

namespace tonewarden::config::detail {
namespace {

SourcePos pos_of(const toml::source_region& r) {
  return SourcePos{static_cast<std::uint32_t>(r.begin.line), static_cast<std::uint32_t>(r.begin.column)};
}

const char* node_type_name(const toml::node& n) {
  switch (n.type()) {
    case toml::node_type::table: return "table";
    case toml::node_type::array: return "array";
    case toml::node_type::string: return "string";
    case toml::node_type::integer: return "integer";
    case toml::node_type::floating_point: return "float";
    case toml::node_type::boolean: return "boolean";
    case toml::node_type::date: return "date";
    case toml::node_type::time: return "time";
    case toml::node_type::date_time: return "date-time";
    default: return "nothing";
  }
}

std::string join_path(std::string_view parent, std::string_view key) {
  return parent.empty() ? std::string(key) : std::string(parent) + "." + std::string(key);
}

std::string number_text(double v) {
  char buf[40];
  std::snprintf(buf, sizeof buf, "%.10g", v);
  return buf;
}

// Converts one node to a Value of the option's type; reports and returns monostate on failure.
Value convert(const OptionSpec& opt, const toml::node& node, const std::string& label,
              const IssueSink& sink) {
  const SourcePos pos = pos_of(node.source());
  const std::string key = key_label(label, opt.key);
  auto wrong_type = [&] {
    sink.add(pos, key, std::string("expected ") + to_string(opt.type) + ", got " + node_type_name(node),
             opt.allowed());
    return Value{};
  };
  auto in_range = [&](double v, const std::string& text) {
    if (v < opt.min || v > opt.max) {
      sink.add(pos, key, "value " + text + " is out of range", opt.allowed());
      return false;
    }
    return true;
  };
  switch (opt.type) {
    case OptionType::kBool:
      if (!node.is_boolean()) return wrong_type();
      return Value{node.as_boolean()->get()};
    case OptionType::kInt: {
      if (!node.is_integer()) return wrong_type();
      const std::int64_t v = node.as_integer()->get();
      if (!in_range(static_cast<double>(v), std::to_string(v))) return Value{};
      return Value{v};
    }
    case OptionType::kFloat: {
      double v = 0;
      if (node.is_integer()) {
        v = static_cast<double>(node.as_integer()->get());
      } else if (node.is_floating_point()) {
        v = node.as_floating_point()->get();
      } else {
        return wrong_type();
      }
      if (!std::isfinite(v)) {
        sink.add(pos, key, "value must be a finite number", opt.allowed());
        return Value{};
      }
      if (!in_range(v, number_text(v))) return Value{};
      return Value{v};
    }
    case OptionType::kString:
      if (!node.is_string()) return wrong_type();
      return Value{node.as_string()->get()};
    case OptionType::kEnum: {
      if (!node.is_string()) return wrong_type();
      const std::string& s = node.as_string()->get();
      if (!choice_contains(opt.choices, s)) {
        sink.add(pos, key, "unknown value \"" + s + "\"", opt.allowed());
        return Value{};
      }
      return Value{s};
    }
    case OptionType::kStringList: {
      if (!node.is_array()) return wrong_type();
      std::vector<std::string> out;
      bool ok = true;
      for (const auto& item : *node.as_array()) {
        if (!item.is_string()) {
          sink.add(pos_of(item.source()), key,
                   std::string("expected string in array, got ") + node_type_name(item), opt.allowed());
          ok = false;
          continue;
        }
        out.push_back(item.as_string()->get());
      }
      return ok ? Value{std::move(out)} : Value{};
    }
  }
  return Value{};
}

std::string instance_label(const std::string& path_label, const SectionSpec& spec,
                           const toml::table& tbl, size_t index) {
  std::string name = std::to_string(index);
  if (!spec.name_key.empty()) {
    if (const auto* n = tbl.get(spec.name_key); n != nullptr && n->is_string() &&
                                                 !n->as_string()->get().empty()) {
      name = n->as_string()->get();
    }
  }
  return path_label + "[" + name + "]";
}

void parse_section(const toml::table& tbl, const SectionSpec* spec, const std::string& label,
                   SourcePos fallback_pos, Section& out, const IssueSink& sink);

void parse_child(const SectionSpec& child, const toml::node* node, const std::string& parent_label,
                 const Section& parent, Section& out, const IssueSink& sink) {
  const auto dot = child.path.rfind('.');
  const std::string_view leaf = dot == std::string_view::npos ? child.path : child.path.substr(dot + 1);
  const std::string base_label = join_path(parent_label, leaf);
  auto& instances = out.children[std::string(child.path)];
  if (node == nullptr) {
    if (child.is_array) {
      if (child.required) {
        sink.add(parent.pos, base_label, "at least one [[" + std::string(child.path) + "]] table is required");
      }
      return;
    }
    if (child.required) {
      sink.add(parent.pos, base_label, "missing [" + std::string(child.path) + "] table");
      return;
    }
    instances.emplace_back();
    parse_section(toml::table{}, &child, base_label, parent.pos, instances.back(), sink);
    return;
  }
  if (child.is_array) {
    if (!node->is_array_of_tables()) {
      sink.add(pos_of(node->source()), base_label,
               std::string("expected [[") + std::string(child.path) + "]] tables, got " + node_type_name(*node));
      return;
    }
    const auto& arr = *node->as_array();
    for (size_t i = 0; i < arr.size(); ++i) {
      const auto& t = *arr[i].as_table();
      instances.emplace_back();
      parse_section(t, &child, instance_label(base_label, child, t, i), parent.pos, instances.back(), sink);
    }
    return;
  }
  if (!node->is_table()) {
    sink.add(pos_of(node->source()), base_label,
             std::string("expected [") + std::string(child.path) + "] table, got " + node_type_name(*node));
    return;
  }
  instances.emplace_back();
  parse_section(*node->as_table(), &child, base_label, parent.pos, instances.back(), sink);
}

void parse_section(const toml::table& tbl, const SectionSpec* spec, const std::string& label,
                   SourcePos fallback_pos, Section& out, const IssueSink& sink) {
  const std::string_view path = spec == nullptr ? std::string_view{} : spec->path;
  out.spec = spec;
  out.label = label;
  out.pos = tbl.source().begin.line > 0 ? pos_of(tbl.source()) : fallback_pos;

  // Discriminators (kind, source, threshold_mode) decide which other keys apply. An invalid
  // one is reported by its own row; its dependants are then skipped rather than guessed at.
  std::map<std::string, std::string> disc;
  std::set<std::string> disc_unknown;
  for (const OptionSpec* o : options_of(path)) {
    if (o->when_key.empty()) continue;
    const std::string wk(o->when_key);
    if (disc.count(wk) != 0 || disc_unknown.count(wk) != 0) continue;
    const OptionSpec* d = find_option(path, wk);
    const toml::node* n = tbl.get(wk);
    if (n != nullptr && n->is_string() && choice_contains(d->choices, n->as_string()->get())) {
      disc[wk] = n->as_string()->get();
    } else if (n == nullptr && std::holds_alternative<std::string>(d->default_value)) {
      disc[wk] = std::get<std::string>(d->default_value);
    } else {
      disc_unknown.insert(wk);
    }
  }

  // Unknown keys, in file order.
  for (const auto& [k, node] : tbl) {
    const std::string key(k.str());
    if (find_option(path, key) != nullptr) continue;
    if (find_section(join_path(path, key)) != nullptr) continue;
    std::string allowed;
    for (const OptionSpec* o : options_of(path)) allowed += (allowed.empty() ? "" : ", ") + std::string(o->key);
    for (const SectionSpec* c : children_of(path)) {
      allowed += (allowed.empty() ? "" : ", ") + std::string(c->path.substr(path.empty() ? 0 : path.size() + 1));
    }
    sink.add(pos_of(k.source()), key_label(label, key), "unknown key", allowed);
  }

  // Options in table order.
  for (const OptionSpec* o : options_of(path)) {
    const std::string key(o->key);
    bool applies = true;
    std::string disc_value;
    if (!o->when_key.empty()) {
      const std::string wk(o->when_key);
      if (disc_unknown.count(wk) != 0) continue;
      disc_value = disc[wk];
      applies = choice_contains(o->when_values, disc_value);
    }
    const toml::node* node = tbl.get(key);
    const bool replaced = !o->excluded_by.empty() && tbl.get(o->excluded_by) != nullptr;
    if (node != nullptr && replaced) {
      sink.add(pos_of(node->source()), key_label(label, key),
               "set " + std::string(o->excluded_by) + " or " + key + ", not both");
      continue;
    }
    if (replaced) continue;
    if (node != nullptr) {
      if (!applies) {
        sink.add(pos_of(tbl.get(key)->source()), key_label(label, key),
                 "applies only when " + std::string(o->when_key) + " is " + std::string(o->when_values) +
                     " (here " + std::string(o->when_key) + " = \"" + disc_value + "\")");
        continue;
      }
      Value v = convert(*o, *node, label, sink);
      if (!std::holds_alternative<std::monostate>(v)) {
        out.values[key] = Entry{std::move(v), pos_of(node->source()), true};
      }
    } else if (applies) {
      if (!std::holds_alternative<std::monostate>(o->default_value)) {
        out.values[key] = Entry{o->default_value, out.pos, false};
      } else if (o->required) {
        sink.add(out.pos, key_label(label, key), "missing required key", o->allowed());
      }
    }
  }

  // Child sections.
  for (const SectionSpec* c : children_of(path)) {
    const std::string leaf(c->path.substr(path.empty() ? 0 : path.size() + 1));
    parse_child(*c, tbl.get(leaf), label, out, out, sink);
  }
}

}  // namespace

std::string key_label(const std::string& section_label, std::string_view key) {
  return section_label.empty() ? std::string(key) : section_label + "." + std::string(key);
}

Section build_tree(const toml::table& doc, const IssueSink& sink) {
  Section root;
  parse_section(doc, nullptr, "", SourcePos{1, 1}, root, sink);
  return root;
}

}  // namespace tonewarden::config::detail
