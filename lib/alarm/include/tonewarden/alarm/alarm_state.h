// The ISA-18.2 alarm states (plus shelved) and the pure transition function behind them.
// Kept free of timing and thresholds so that it can be checked against a transition table.
#pragma once

namespace tonewarden::alarm {

enum class AlarmState {
  kNormal,          // condition clear, nothing to acknowledge
  kUnacknowledged,  // condition active (or latched), not yet acknowledged
  kAcknowledged,    // condition active (or latched), acknowledged
  kReturnedUnacknowledged,  // condition cleared before anyone acknowledged it (RTN-unack)
  kShelved,         // taken out of service by an operator for a time
};

enum class Severity { kNone, kWarning, kCritical };

enum class AlarmTrigger {
  kRaise,        // condition became active (none -> warning/critical)
  kEscalate,     // active condition rose (warning -> critical)
  kClear,        // condition returned to normal
  kAcknowledge,  // operator acknowledged
  kShelve,       // operator shelved
  kUnshelve,     // operator unshelved, or the shelf time ran out
};

// Transition rules:
//  normal  --raise--> unack; --shelve--> shelved
//  unack   --clear--> rtn-unack (latching: stays unack); --ack--> acked (or normal when the
//          condition is already clear); --shelve--> shelved
//  acked   --escalate--> unack; --clear--> normal (latching: stays acked until acknowledged
//          again, which resets it); --shelve--> shelved
//  rtn-unack --raise--> unack; --ack--> normal; --shelve--> shelved
//  shelved --unshelve--> unack if the condition is active, else normal; all else ignored
// Anything not listed leaves the state unchanged. `condition_active` is the condition after
// the trigger has been applied.
AlarmState transition(AlarmState state, AlarmTrigger trigger, bool condition_active,
                      bool latching) noexcept;

const char* alarm_state_name(AlarmState state) noexcept;  // "normal" "unacknowledged" ...
const char* severity_name(Severity severity) noexcept;    // "none" "warning" "critical"
const char* alarm_trigger_name(AlarmTrigger trigger) noexcept;

}  // namespace tonewarden::alarm
