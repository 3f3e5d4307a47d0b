// Focus: check-config reports the [notify.mqtt] settings the MQTT sink would refuse at start,
// each at its position.
#include <gtest/gtest.h>

#include <string>
#include <vector>

#include "one_rig_text.h"
#include "tonewarden/config/loader.h"

namespace tonewarden::config {
namespace {

using testing::kOneRig;
using testing::messages;

// [notify.mqtt] on line 15, the given lines from line 16 on.
std::vector<std::string> mqtt_messages(const std::string& lines) {
  return messages(load_config_text(std::string(kOneRig) + "\n[notify.mqtt]\n" + lines, "m.toml"));
}

TEST(ConfigMqttCheckTest, WildcardsAndReservedPrefixesAreRefusedAtTheirValue) {
  // Expected: MQTT topic names carry no '+' or '#', and '$' topics belong to the broker
  // (MQTT 3.1.1, sections 4.7.1 and 4.7.2; section numbers from memory).
  EXPECT_EQ(mqtt_messages("enabled = true\ntopic_prefix = \"plant/+\"\n"),
            std::vector<std::string>{"m.toml:17:16: notify.mqtt.topic_prefix: topic_prefix \"plant/+\" must not "
                                     "contain the wildcards '+' or '#'"});
  EXPECT_EQ(mqtt_messages("topic_prefix = \"$SYS/x\"\n"),
            std::vector<std::string>{"m.toml:16:16: notify.mqtt.topic_prefix: topic_prefix \"$SYS/x\" must not "
                                     "start with '$' (topics kept for the broker)"});
  EXPECT_TRUE(mqtt_messages("enabled = true\ntopic_prefix = \"plant/bay-4\"\n").empty());
}

TEST(ConfigMqttCheckTest, PasswordFileNeedsAUsername) {
  EXPECT_EQ(mqtt_messages("password_file = \"/etc/tonewarden/mqtt-pass\"\n"),
            std::vector<std::string>{"m.toml:16:17: notify.mqtt.password_file: password_file needs a username"});
  EXPECT_TRUE(mqtt_messages("username = \"rig\"\npassword_file = \"/etc/tonewarden/mqtt-pass\"\n").empty());
}

}  // namespace
}  // namespace tonewarden::config
