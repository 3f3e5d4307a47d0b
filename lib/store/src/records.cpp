// Names of alarm states and severities as stored in the database and shown to users.
#include "tonewarden/store/records.h"

namespace tonewarden::store {

namespace {
constexpr const char* kStateNames[] = {"normal", "unacknowledged", "acknowledged",
                                       "returned-unacknowledged", "shelved"};
constexpr const char* kSeverityNames[] = {"info", "warning", "critical"};
}  // namespace

const char* to_string(AlarmState s) noexcept { return kStateNames[static_cast<int>(s)]; }

bool parse_alarm_state(const std::string& text, AlarmState* out) {
  for (int i = 0; i < 5; ++i) {
    if (text == kStateNames[i]) {
      *out = static_cast<AlarmState>(i);
      return true;
    }
  }
  return false;
}

const char* to_string(Severity s) noexcept { return kSeverityNames[static_cast<int>(s)]; }

bool parse_severity(const std::string& text, Severity* out) {
  for (int i = 0; i < 3; ++i) {
    if (text == kSeverityNames[i]) {
      *out = static_cast<Severity>(i);
      return true;
    }
  }
  return false;
}

}  // namespace tonewarden::store
