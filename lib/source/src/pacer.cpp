// Pacer implementation: condition-variable sleeps on the steady clock, woken by stop().
#include "tonewarden/source/pacer.h"

#include <cmath>

#include "tonewarden/base/check.h"

namespace tonewarden::source {

const char* to_string(Pace pace) noexcept {
  switch (pace) {
    case Pace::kRealTime: return "realtime";
    case Pace::kFast: return "fast";
  }
  return "fast";
}

std::optional<Pace> parse_pace(std::string_view text) noexcept {
  if (text == "realtime") return Pace::kRealTime;
  if (text == "fast") return Pace::kFast;
  return std::nullopt;
}

Pacer::Pacer(Pace pace, double sample_rate_hz)
    : pace_(pace), ns_per_frame_(1e9 / sample_rate_hz) {
  TW_CHECK(sample_rate_hz > 0.0);
}

void Pacer::start(base::MonoTime anchor) noexcept { anchor_ = anchor; }

void Pacer::rebase(int64_t frame, base::MonoTime at) noexcept {
  // due_time(frame) - anchor_ is the frame's offset; put that offset before `at`.
  anchor_ = at - (due_time(frame) - anchor_);
}

base::MonoTime Pacer::due_time(int64_t frame) const noexcept {
  // Double keeps sub-microsecond precision for years of frames at 48 kHz.
  const auto ns = static_cast<int64_t>(std::llround(static_cast<double>(frame) * ns_per_frame_));
  return anchor_ + std::chrono::nanoseconds(ns);
}

bool Pacer::wait_until_due(int64_t frame) {
  if (pace_ == Pace::kFast) return !stopped();
  return sleep_until(due_time(frame), /*pacing=*/true);
}

bool Pacer::sleep_for(std::chrono::nanoseconds duration) {
  return sleep_until(base::mono_now() + duration, /*pacing=*/false);
}

bool Pacer::sleep_until(base::MonoTime deadline, bool pacing) {
  std::unique_lock<std::mutex> lock(mu_);
  if (stop_) return false;
  if (base::mono_now() >= deadline) return true;
  if (pacing) ++sleeps_;
  cv_.wait_until(lock, deadline, [this] { return stop_; });
  return !stop_;
}

void Pacer::stop() noexcept {
  {
    std::lock_guard<std::mutex> lock(mu_);
    stop_ = true;
  }
  cv_.notify_all();
}

bool Pacer::stopped() const noexcept {
  std::lock_guard<std::mutex> lock(mu_);
  return stop_;
}

}  // namespace tonewarden::source
