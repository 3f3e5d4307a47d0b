// ReadingSet: the flat, preallocated array of named readings (value, unit, valid flag) that
// track fills each averaging period and alarm, LiveState and the store consume.
#pragma once

#include <cstddef>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "tonewarden/base/result.h"
#include "tonewarden/base/time.h"

namespace tonewarden::track {

struct Reading {
  std::string name;     // "<channel>.<target>.amplitude", "<channel>.rms", "speed_rpm"...
  std::string unit;     // "g", "mm/s", "Hz", "rpm", "" for ratios
  std::string channel;  // the channel the reading belongs to; "" for rig-wide readings
  double value = 0.0;
  bool valid = false;   // false: not measured this period (e.g. speed unknown)
};

// Setup (add) allocates and happens before the first period; after that set()/invalidate()
// write in place without allocating. Copy-assigning one ReadingSet onto another of the same
// layout reuses the target's string capacity, so a steady-state copy allocates nothing.
// Not thread-safe: one writer (the analysis thread); readers take copies.
class ReadingSet {
 public:
  // Registers a reading; returns its index. Errors on an empty or duplicate name.
  base::Result<size_t> add(std::string name, std::string unit, std::string channel);

  size_t size() const noexcept { return readings_.size(); }
  std::span<const Reading> readings() const noexcept { return readings_; }
  const Reading& operator[](size_t index) const noexcept { return readings_[index]; }
  // Linear search by name (no allocation).
  std::optional<size_t> find(std::string_view name) const noexcept;

  void set(size_t index, double value) noexcept {
    readings_[index].value = value;
    readings_[index].valid = true;
  }
  void invalidate(size_t index) noexcept { readings_[index].valid = false; }
  void invalidate_all() noexcept;

  // The time of the period these values describe.
  base::WallTimeMs time() const noexcept { return time_; }
  void set_time(base::WallTimeMs t) noexcept { time_ = t; }

 private:
  std::vector<Reading> readings_;
  base::WallTimeMs time_{};
};

}  // namespace tonewarden::track
