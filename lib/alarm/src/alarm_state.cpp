// ISA-18.2 alarm state transitions.
#include "tonewarden/alarm/alarm_state.h"

namespace tonewarden::alarm {

AlarmState transition(AlarmState s, AlarmTrigger e, bool active, bool latching) noexcept {
  using S = AlarmState;
  using T = AlarmTrigger;
  if (e == T::kShelve) return S::kShelved;
  switch (s) {
    case S::kNormal:
      return e == T::kRaise ? S::kUnacknowledged : s;
    case S::kUnacknowledged:
      if (e == T::kClear) return latching ? S::kUnacknowledged : S::kReturnedUnacknowledged;
      if (e == T::kAcknowledge) return active ? S::kAcknowledged : S::kNormal;
      return s;
    case S::kAcknowledged:
      if (e == T::kEscalate || e == T::kRaise) return S::kUnacknowledged;
      if (e == T::kClear) return latching ? S::kAcknowledged : S::kNormal;
      if (e == T::kAcknowledge) return active ? S::kAcknowledged : S::kNormal;
      return s;
    case S::kReturnedUnacknowledged:
      if (e == T::kRaise || e == T::kEscalate) return S::kUnacknowledged;
      if (e == T::kAcknowledge) return S::kNormal;
      return s;
    case S::kShelved:
      if (e == T::kUnshelve) return active ? S::kUnacknowledged : S::kNormal;
      return s;
  }
  return s;
}

const char* alarm_state_name(AlarmState s) noexcept {
  switch (s) {
    case AlarmState::kNormal: return "normal";
    case AlarmState::kUnacknowledged: return "unacknowledged";
    case AlarmState::kAcknowledged: return "acknowledged";
    case AlarmState::kReturnedUnacknowledged: return "returned-unacknowledged";
    case AlarmState::kShelved: return "shelved";
  }
  return "?";
}

const char* severity_name(Severity s) noexcept {
  switch (s) {
    case Severity::kNone: return "none";
    case Severity::kWarning: return "warning";
    case Severity::kCritical: return "critical";
  }
  return "?";
}

const char* alarm_trigger_name(AlarmTrigger t) noexcept {
  switch (t) {
    case AlarmTrigger::kRaise: return "raise";
    case AlarmTrigger::kEscalate: return "escalate";
    case AlarmTrigger::kClear: return "clear";
    case AlarmTrigger::kAcknowledge: return "acknowledge";
    case AlarmTrigger::kShelve: return "shelve";
    case AlarmTrigger::kUnshelve: return "unshelve";
  }
  return "?";
}

}  // namespace tonewarden::alarm
