// Focus: OpenMetrics exposition: names, counter _total samples, label escaping, number
// format, "# EOF" last; and a lint by promtool when it is installed.
#include "tonewarden/http/openmetrics.h"

#include <gtest/gtest.h>
#include <unistd.h>

#include <cmath>
#include <limits>
#include <regex>
#include <sstream>

#include "support/subprocess.h"

namespace tonewarden::http {
namespace {

StatusInfo sample_status() {
  StatusInfo s;
  s.version = "1.2.3";
  s.uptime_s = 12.5;
  SourceStatus a;
  a.name = "usb \"A\"";
  a.state = "running";
  a.frames = 100;
  a.overflows = 1;
  a.drops = 7;
  a.evidence_clips = 2;
  a.evidence_failures = 1;
  s.sources = {a};
  s.storage.rows_written = 55;
  return s;
}

std::vector<Reading> sample_readings() {
  return {{"s1", "bay4", "motor\\de", "bpfo\nouter", "amplitude", "g", 0.25, {}},
          {"s2", "bay4", "motor_de", "", "velocity_rms", "mm/s", 2.5, {}},
          {"s3", "bay4", "motor_de", "", "speed", "rpm", std::nan(""), {}}};
}

std::string render_sample() {
  const StatusInfo st = sample_status();
  const auto readings = sample_readings();
  std::vector<AlarmState> alarms(1);
  alarms[0].id = "a1";
  alarms[0].rule = "r1";
  alarms[0].severity = "critical";
  alarms[0].state = "unacknowledged";
  MetricsInput in;
  in.status = &st;
  in.readings = &readings;
  in.alarms = &alarms;
  in.http.responses_by_class = {0, 10, 0, 3, 1};
  return render_openmetrics(in);
}

TEST(OpenMetricsTest, EscapesLabelValues) {
  // OpenMetrics 1.0, "Escaping": label values escape \ as \\, " as \" and line feed as \n.
  EXPECT_EQ(escape_label_value(R"(a"b\c)"), R"(a\"b\\c)");
  EXPECT_EQ(escape_label_value("line1\nline2"), "line1\\nline2");
  EXPECT_EQ(escape_label_value("plain"), "plain");
}

TEST(OpenMetricsTest, FormatsSpecialValues) {
  // OpenMetrics 1.0 ABNF: realnumber, "NaN", "+Inf", "-Inf".
  EXPECT_EQ(format_metric_value(std::nan("")), "NaN");
  EXPECT_EQ(format_metric_value(std::numeric_limits<double>::infinity()), "+Inf");
  EXPECT_EQ(format_metric_value(-std::numeric_limits<double>::infinity()), "-Inf");
  EXPECT_EQ(format_metric_value(0.25), "0.25");
  EXPECT_EQ(format_metric_value(2975), "2975");
}

TEST(OpenMetricsTest, ExpositionShape) {
  const std::string text = render_sample();
  // Ends with the EOF marker and a newline (OpenMetrics 1.0: "# EOF" ends the exposition).
  ASSERT_GE(text.size(), 6u);
  EXPECT_EQ(text.substr(text.size() - 6), "# EOF\n");
  EXPECT_EQ(text.find("# EOF"), text.size() - 6);  // exactly once
  // Counters: family without _total, samples with it.
  EXPECT_NE(text.find("# TYPE tonewarden_source_frames counter\n"), std::string::npos);
  EXPECT_NE(text.find("tonewarden_source_frames_total{source=\"usb \\\"A\\\"\"} 100\n"),
            std::string::npos);
  EXPECT_NE(text.find("tonewarden_source_overflows_total{source=\"usb \\\"A\\\"\"} 1\n"),
            std::string::npos);
  EXPECT_NE(text.find("tonewarden_source_drops_total{source=\"usb \\\"A\\\"\"} 7\n"),
            std::string::npos);
  EXPECT_NE(text.find("# TYPE tonewarden_evidence_clips counter\n"), std::string::npos);
  EXPECT_NE(text.find("tonewarden_evidence_clips_total{source=\"usb \\\"A\\\"\",result=\"written\"} 2\n"),
            std::string::npos);
  EXPECT_NE(text.find("tonewarden_evidence_clips_total{source=\"usb \\\"A\\\"\",result=\"skipped\"} 0\n"),
            std::string::npos);
  EXPECT_NE(text.find("tonewarden_evidence_clips_total{source=\"usb \\\"A\\\"\",result=\"failed\"} 1\n"),
            std::string::npos);
  EXPECT_NE(text.find("tonewarden_http_requests_total{class=\"2xx\"} 10\n"), std::string::npos);
  EXPECT_NE(text.find("tonewarden_http_requests_total{class=\"4xx\"} 3\n"), std::string::npos);
  // Reading gauges, with escaped labels; the NaN reading is left out.
  EXPECT_NE(text.find("# TYPE tonewarden_reading gauge\n"), std::string::npos);
  EXPECT_NE(text.find("tonewarden_reading{rig=\"bay4\",channel=\"motor\\\\de\",target=\"bpfo\\nouter\","
                      "metric=\"amplitude\",unit=\"g\"} 0.25\n"),
            std::string::npos)
      << text;
  EXPECT_EQ(text.find("metric=\"speed\""), std::string::npos);
  EXPECT_NE(text.find("tonewarden_alarm_severity{alarm=\"a1\",rule=\"r1\"} 2\n"),
            std::string::npos);
  EXPECT_NE(text.find("# UNIT tonewarden_uptime_seconds seconds\n"), std::string::npos);
  // Every sample line: name, optional labels, one value; every counter sample ends in _total.
  const std::regex sample_re(R"(^([a-zA-Z_:][a-zA-Z0-9_:]*)(\{.*\})? (\S+)$)");
  std::istringstream lines(text);
  std::string line, counter_family;
  while (std::getline(lines, line)) {
    if (line.rfind("# TYPE ", 0) == 0) {
      std::istringstream w(line.substr(7));
      std::string name, type;
      w >> name >> type;
      counter_family = type == "counter" ? name : "";
      continue;
    }
    if (line.rfind("#", 0) == 0) continue;
    std::smatch m;
    ASSERT_TRUE(std::regex_match(line, m, sample_re)) << line;
    if (!counter_family.empty()) {
      EXPECT_EQ(m[1].str(), counter_family + "_total") << line;
    }
  }
}

TEST(OpenMetricsTest, DuplicateLabelSetsAppearOnce) {
  std::vector<Reading> r = {{"a", "bay4", "c", "t", "m", "g", 1.0, {}},
                            {"b", "bay4", "c", "t", "m", "g", 2.0, {}}};
  MetricsInput in;
  in.readings = &r;
  const std::string text = render_openmetrics(in);
  EXPECT_NE(text.find("} 1\n"), std::string::npos);
  EXPECT_EQ(text.find("} 2\n"), std::string::npos);
}

TEST(OpenMetricsTest, PromtoolLintsClean) {
  const char* promtool = "/usr/bin/promtool";
  if (access(promtool, X_OK) != 0)
    GTEST_SKIP() << "promtool not installed (Debian package prometheus); lint skipped";
  const std::string text = render_sample();
  const auto r = tonewarden::testing::run_process({promtool, "check", "metrics"}, text);
  // promtool 2.42 parses the Prometheus 0.0.4 text format, where an OpenMetrics counter
  // ("# TYPE x counter" with samples x_total) reads as a second family x_total without HELP.
  // Exit 1 would be a parse error; exit 3 is lint findings. Accept exactly that one finding,
  // and only for an x_total whose family x has HELP in our output.
  ASSERT_NE(r.exit_code, 1) << r.stderr_text << r.stdout_text;
  std::istringstream findings(r.stdout_text + r.stderr_text);
  std::string line;
  int other = 0;
  while (std::getline(findings, line)) {
    if (line.empty()) continue;
    std::smatch m;
    if (std::regex_match(line, m, std::regex(R"(^(\S+)_total no help text$)")) &&
        text.find("# HELP " + m[1].str() + " ") != std::string::npos)
      continue;
    ++other;
    ADD_FAILURE() << "promtool: " << line;
  }
  EXPECT_EQ(other, 0);
  EXPECT_TRUE(r.exit_code == 0 || r.exit_code == 3) << r.exit_code;
}

}  // namespace
}  // namespace tonewarden::http
