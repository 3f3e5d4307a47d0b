// ReadingSet: registration with duplicate checks, lookup by name.
#include "tonewarden/track/reading_set.h"

namespace tonewarden::track {

base::Result<size_t> ReadingSet::add(std::string name, std::string unit, std::string channel) {
  if (name.empty()) {
    return base::make_error(base::ErrorCode::kInvalidArgument, "reading name is empty");
  }
  if (find(name)) {
    return base::make_error(base::ErrorCode::kInvalidArgument,
                            "reading '" + name + "' is registered twice");
  }
  readings_.push_back(Reading{std::move(name), std::move(unit), std::move(channel), 0.0, false});
  return readings_.size() - 1;
}

std::optional<size_t> ReadingSet::find(std::string_view name) const noexcept {
  for (size_t i = 0; i < readings_.size(); ++i) {
    if (readings_[i].name == name) return i;
  }
  return std::nullopt;
}

void ReadingSet::invalidate_all() noexcept {
  for (auto& r : readings_) r.valid = false;
}

}  // namespace tonewarden::track
