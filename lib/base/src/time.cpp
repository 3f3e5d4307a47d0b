// Wall-clock helpers: RFC 3339 formatting and parsing, sample-count timestamps.
#include "tonewarden/base/time.h"

#include <cctype>
#include <charconv>
#include <cmath>
#include <cstdio>
#include <ctime>

namespace tonewarden::base {

WallTimeMs wall_now() noexcept {
  using namespace std::chrono;
  return WallTimeMs{duration_cast<milliseconds>(system_clock::now().time_since_epoch()).count()};
}

WallTimeMs wall_after_samples(WallTimeMs start, int64_t samples, double sample_rate_hz) noexcept {
  const double ms = static_cast<double>(samples) * 1000.0 / sample_rate_hz;
  return WallTimeMs{start.unix_ms + static_cast<int64_t>(std::floor(ms))};
}

std::string format_rfc3339(WallTimeMs t) {
  int64_t secs = t.unix_ms / 1000;
  int64_t ms = t.unix_ms % 1000;
  if (ms < 0) { ms += 1000; secs -= 1; }
  const time_t tt = static_cast<time_t>(secs);
  struct tm tm_utc {};
  gmtime_r(&tt, &tm_utc);
  char buf[64];
  std::snprintf(buf, sizeof buf, "%04d-%02d-%02dT%02d:%02d:%02d.%03dZ", tm_utc.tm_year + 1900,
                tm_utc.tm_mon + 1, tm_utc.tm_mday, tm_utc.tm_hour, tm_utc.tm_min, tm_utc.tm_sec,
                static_cast<int>(ms));
  return buf;
}

namespace {
bool read_int(const std::string& s, size_t& pos, int digits, int* out) {
  int v = 0;
  for (int i = 0; i < digits; ++i, ++pos) {
    if (pos >= s.size() || !std::isdigit(static_cast<unsigned char>(s[pos]))) return false;
    v = v * 10 + (s[pos] - '0');
  }
  *out = v;
  return true;
}
bool expect(const std::string& s, size_t& pos, char c) {
  if (pos < s.size() && (s[pos] == c || std::tolower(s[pos]) == std::tolower(c))) { ++pos; return true; }
  return false;
}
}  // namespace

bool parse_time(const std::string& text, WallTimeMs* out) {
  if (text.empty()) return false;
  // Unix milliseconds: an optional minus sign and digits only.
  size_t i = (text[0] == '-') ? 1 : 0;
  bool all_digits = i < text.size();
  for (size_t k = i; k < text.size(); ++k) all_digits &= std::isdigit(static_cast<unsigned char>(text[k])) != 0;
  if (all_digits) {
    int64_t v = 0;
    const auto [end, ec] = std::from_chars(text.data(), text.data() + text.size(), v);
    if (ec != std::errc() || end != text.data() + text.size()) return false;  // out of int64 range
    out->unix_ms = v;
    return true;
  }
  size_t p = 0;
  int y, mo, d, h, mi, s;
  if (!read_int(text, p, 4, &y) || !expect(text, p, '-') || !read_int(text, p, 2, &mo) ||
      !expect(text, p, '-') || !read_int(text, p, 2, &d) || !expect(text, p, 'T') ||
      !read_int(text, p, 2, &h) || !expect(text, p, ':') || !read_int(text, p, 2, &mi) ||
      !expect(text, p, ':') || !read_int(text, p, 2, &s))
    return false;
  if (mo < 1 || mo > 12 || d < 1 || d > 31 || h > 23 || mi > 59 || s > 60) return false;
  int ms = 0;
  if (p < text.size() && text[p] == '.') {
    ++p;
    int scale = 100;
    size_t start = p;
    while (p < text.size() && std::isdigit(static_cast<unsigned char>(text[p]))) {
      ms += (text[p] - '0') * scale;
      scale /= 10;
      ++p;
    }
    if (p == start) return false;
  }
  int offset_min = 0;
  if (p < text.size() && (text[p] == 'Z' || text[p] == 'z')) {
    ++p;
  } else if (p < text.size() && (text[p] == '+' || text[p] == '-')) {
    const int sign = text[p] == '-' ? -1 : 1;
    ++p;
    int oh, om;
    if (!read_int(text, p, 2, &oh) || !expect(text, p, ':') || !read_int(text, p, 2, &om)) return false;
    offset_min = sign * (oh * 60 + om);
  } else {
    return false;
  }
  if (p != text.size()) return false;
  struct tm tm_utc {};
  tm_utc.tm_year = y - 1900;
  tm_utc.tm_mon = mo - 1;
  tm_utc.tm_mday = d;
  tm_utc.tm_hour = h;
  tm_utc.tm_min = mi;
  tm_utc.tm_sec = s;
  const int64_t secs = static_cast<int64_t>(timegm(&tm_utc)) - offset_min * 60;
  out->unix_ms = secs * 1000 + ms;
  return true;
}

}  // namespace tonewarden::base
