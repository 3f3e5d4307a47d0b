// Focus: bearer-token helpers: constant-time comparison is a correct equality, loopback
// detection, the Bearer header parser, token validation and token files.
#include "tonewarden/http/auth.h"

#include <gtest/gtest.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cstdlib>
#include <fstream>
#include <string>

#include "tonewarden/http/limits.h"

namespace tonewarden::http {
namespace {

TEST(AuthTest, ConstantTimeEqualsIsExactEquality) {
  // Expected: true only for identical strings (definition of equality); the cases cover a
  // difference in the first and in the last byte, prefixes both ways, and empty strings.
  const std::string token = "abcdefghijklmnop";
  EXPECT_TRUE(constant_time_equals(token, token));
  EXPECT_TRUE(constant_time_equals("", ""));
  EXPECT_FALSE(constant_time_equals("Xbcdefghijklmnop", token));
  EXPECT_FALSE(constant_time_equals("abcdefghijklmnoX", token));
  EXPECT_FALSE(constant_time_equals("abcdefghijklmno", token));    // a prefix of it
  EXPECT_FALSE(constant_time_equals("abcdefghijklmnopq", token));  // it is a prefix
  EXPECT_FALSE(constant_time_equals("", token));
  EXPECT_FALSE(constant_time_equals(token, ""));
  // A provided string equal to the expected one followed by NULs must not match: reading
  // zeros past the end of a shorter string is how the loop avoids an early exit.
  EXPECT_FALSE(constant_time_equals(std::string("ab\0\0", 4), "ab"));
  EXPECT_FALSE(constant_time_equals("ab", std::string("ab\0\0", 4)));
}

TEST(AuthTest, ConstantTimeEqualsAgreesWithOperatorEqualsOnEveryPairOfShortStrings) {
  // Exhaustive over all strings of length 0..2 on a 3-letter alphabet: 13 x 13 pairs.
  std::vector<std::string> all = {""};
  for (char a : {'a', 'b', '\0'}) {
    all.push_back(std::string(1, a));
    for (char b : {'a', 'b', '\0'}) all.push_back(std::string{a, b});
  }
  for (const auto& x : all)
    for (const auto& y : all) EXPECT_EQ(constant_time_equals(x, y), x == y);
}

TEST(AuthTest, LoopbackAddresses) {
  // 127.0.0.0/8 and ::1 are loopback (RFC 1122 section 3.2.1.3, RFC 4291 section 2.5.3).
  for (const char* a : {"127.0.0.1", "127.1.2.3", "127.255.255.255", "::1", "[::1]", "localhost"})
    EXPECT_TRUE(is_loopback_address(a)) << a;
  for (const char* a : {"0.0.0.0", "::", "192.168.1.10", "10.0.0.1", "127.0.0", "127.0.0.256",
                        "127.0.0.1.5", "127..0.1", "128.0.0.1", "", "localhost.example"})
    EXPECT_FALSE(is_loopback_address(a)) << a;
}

TEST(AuthTest, BearerHeaderParsing) {
  EXPECT_EQ(bearer_token("Bearer abc"), "abc");
  EXPECT_EQ(bearer_token("bearer   abc  "), "abc");  // scheme is case-insensitive (RFC 7235)
  EXPECT_EQ(bearer_token("Basic abc"), "");
  EXPECT_EQ(bearer_token("Bearer"), "");
  EXPECT_EQ(bearer_token("Bearer "), "");
  EXPECT_EQ(bearer_token("Bearerabc"), "");
  EXPECT_EQ(bearer_token(""), "");
}

TEST(AuthTest, TokenValidation) {
  EXPECT_TRUE(validate_token(std::string(kMinTokenChars, 'x')).ok());
  EXPECT_FALSE(validate_token(std::string(kMinTokenChars - 1, 'x')).ok());
  EXPECT_FALSE(validate_token(std::string(kMaxTokenChars + 1, 'x')).ok());
  EXPECT_FALSE(validate_token("abcdefgh ijklmnopq").ok());  // space
  EXPECT_FALSE(validate_token("abcdefghijklmnopq\x01").ok());
}

class TokenFileTest : public ::testing::Test {
 protected:
  void SetUp() override {
    char tmpl[] = "/tmp/tw_token_XXXXXX";
    const int fd = mkstemp(tmpl);
    ASSERT_GE(fd, 0);
    close(fd);
    path_ = tmpl;
  }
  void TearDown() override { unlink(path_.c_str()); }
  void write(const std::string& text, mode_t mode) {
    std::ofstream(path_) << text;
    ASSERT_EQ(chmod(path_.c_str(), mode), 0);
  }
  std::string path_;
};

TEST_F(TokenFileTest, ReadsFirstLineTrimmed) {
  write("  0123456789abcdefXYZ \nsecond line\n", 0600);
  auto t = load_token_file(path_);
  ASSERT_TRUE(t.ok()) << t.error().message;
  EXPECT_EQ(*t, "0123456789abcdefXYZ");
}

TEST_F(TokenFileTest, RefusesFileReadableByOthers) {
  write("0123456789abcdefXYZ\n", 0644);
  auto t = load_token_file(path_);
  ASSERT_FALSE(t.ok());
  EXPECT_NE(t.error().message.find("chmod 600"), std::string::npos) << t.error().message;
}

TEST_F(TokenFileTest, RefusesShortTokenAndMissingFile) {
  write("short\n", 0600);
  auto t = load_token_file(path_);
  ASSERT_FALSE(t.ok());
  EXPECT_NE(t.error().message.find(path_), std::string::npos);
  EXPECT_FALSE(load_token_file(path_ + ".missing").ok());
}

}  // namespace
}  // namespace tonewarden::http
