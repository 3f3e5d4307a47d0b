// Focus: the ISA-18.2 transition function against a table of (state, trigger) -> new state.
#include "tonewarden/alarm/alarm_state.h"

#include <gtest/gtest.h>

namespace tonewarden::alarm {
namespace {

using S = AlarmState;
using T = AlarmTrigger;

struct Row {
  S state;
  T trigger;
  bool active;    // condition after the trigger
  bool latching;
  S expected;
};

// Expected values: the ISA-18.2 alarm state model (normal, unacknowledged, acknowledged,
// returned-to-normal unacknowledged) plus shelving, as documented in alarm_state.h.
constexpr Row kTable[] = {
    {S::kNormal, T::kRaise, true, false, S::kUnacknowledged},
    {S::kNormal, T::kClear, false, false, S::kNormal},
    {S::kNormal, T::kAcknowledge, false, false, S::kNormal},
    {S::kNormal, T::kShelve, false, false, S::kShelved},
    {S::kUnacknowledged, T::kAcknowledge, true, false, S::kAcknowledged},
    {S::kUnacknowledged, T::kClear, false, false, S::kReturnedUnacknowledged},
    {S::kUnacknowledged, T::kEscalate, true, false, S::kUnacknowledged},
    {S::kUnacknowledged, T::kShelve, true, false, S::kShelved},
    {S::kUnacknowledged, T::kClear, false, true, S::kUnacknowledged},   // latched
    {S::kUnacknowledged, T::kAcknowledge, false, true, S::kNormal},     // latched, then reset
    {S::kAcknowledged, T::kClear, false, false, S::kNormal},
    {S::kAcknowledged, T::kEscalate, true, false, S::kUnacknowledged},  // re-announce
    {S::kAcknowledged, T::kAcknowledge, true, false, S::kAcknowledged},
    {S::kAcknowledged, T::kClear, false, true, S::kAcknowledged},       // latched
    {S::kAcknowledged, T::kAcknowledge, false, true, S::kNormal},       // reset a latch
    {S::kAcknowledged, T::kRaise, true, true, S::kUnacknowledged},
    {S::kAcknowledged, T::kShelve, true, false, S::kShelved},
    {S::kReturnedUnacknowledged, T::kAcknowledge, false, false, S::kNormal},
    {S::kReturnedUnacknowledged, T::kRaise, true, false, S::kUnacknowledged},
    {S::kReturnedUnacknowledged, T::kShelve, false, false, S::kShelved},
    {S::kShelved, T::kRaise, true, false, S::kShelved},
    {S::kShelved, T::kAcknowledge, true, false, S::kShelved},
    {S::kShelved, T::kUnshelve, true, false, S::kUnacknowledged},
    {S::kShelved, T::kUnshelve, false, false, S::kNormal},
};

TEST(AlarmStateTest, FollowsTransitionTable) {
  for (const Row& row : kTable) {
    EXPECT_EQ(transition(row.state, row.trigger, row.active, row.latching), row.expected)
        << alarm_state_name(row.state) << " --" << alarm_trigger_name(row.trigger)
        << (row.latching ? " (latching)" : "") << "--> expected " << alarm_state_name(row.expected);
  }
}

TEST(AlarmStateTest, NamesAreDistinct) {
  EXPECT_STREQ(alarm_state_name(S::kReturnedUnacknowledged), "returned-unacknowledged");
  EXPECT_STREQ(severity_name(Severity::kCritical), "critical");
}

}  // namespace
}  // namespace tonewarden::alarm
