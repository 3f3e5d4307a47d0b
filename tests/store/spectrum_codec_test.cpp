// Focus: the 16-bit log spectrum code keeps every value within half a code step (0.005 dB).
#include "tonewarden/store/spectrum_codec.h"

#include <gtest/gtest.h>

#include <cmath>
#include <limits>

namespace tonewarden::store {
namespace {

double db_of(float v) { return 20.0 * std::log10(static_cast<double>(v)); }

TEST(SpectrumCodecTest, RoundTripStaysWithinHalfACodeStep) {
  // Values over 12 decades (240 dB); expected error bound: half of kCodeStepDb, by the
  // rounding in the code definition (nearest code), i.e. 0.005 dB.
  std::vector<float> mag;
  for (int i = 0; i < 1200; ++i) mag.push_back(static_cast<float>(std::pow(10.0, -9.0 + i * 0.01)));
  auto enc = encode_spectrum(mag);
  ASSERT_TRUE(enc.ok());
  EXPECT_EQ(enc->bytes.size(), mag.size() * 2);  // 2 bytes per bin by definition
  auto dec = decode_spectrum(enc->floor_db, enc->bytes);
  ASSERT_TRUE(dec.ok());
  ASSERT_EQ(dec->size(), mag.size());
  for (size_t i = 0; i < mag.size(); ++i) {
    // 0.005 dB plus float rounding of the decoded value (1e-7 relative = 1e-6 dB).
    EXPECT_NEAR(db_of((*dec)[i]), db_of(mag[i]), 0.005 + 1e-5) << "bin " << i;
  }
}

TEST(SpectrumCodecTest, ZeroStaysExactlyZero) {
  const std::vector<float> mag = {0.0f, 1.0f, 0.0f, 0.5f};
  auto enc = encode_spectrum(mag);
  ASSERT_TRUE(enc.ok());
  // Code 0 is reserved for zero (format definition in spectrum_codec.h).
  EXPECT_EQ(enc->bytes[0], 0);
  EXPECT_EQ(enc->bytes[1], 0);
  auto dec = decode_spectrum(enc->floor_db, enc->bytes);
  ASSERT_TRUE(dec.ok());
  EXPECT_EQ((*dec)[0], 0.0f);
  EXPECT_EQ((*dec)[2], 0.0f);
  // 0.5 is -6.0206 dB (20*log10(0.5)): the floor is the whole dB below it, -7 dB.
  EXPECT_EQ(enc->floor_db, -7.0);
  EXPECT_NEAR((*dec)[3], 0.5f, 0.5f * 0.00058f);  // 0.005 dB = 0.058 % in amplitude
}

TEST(SpectrumCodecTest, CodesAreLittleEndian) {
  // Floor of 1.0 is 0 dB; 10.0 is +20 dB = 2000 steps of 0.01 dB above the floor -> code 2001
  // = 0x07D1, stored low byte first.
  const std::vector<float> mag = {1.0f, 10.0f};
  auto enc = encode_spectrum(mag);
  ASSERT_TRUE(enc.ok());
  EXPECT_EQ(enc->floor_db, 0.0);
  EXPECT_EQ(static_cast<uint8_t>(enc->bytes[2]), 0xD1);
  EXPECT_EQ(static_cast<uint8_t>(enc->bytes[3]), 0x07);
}

TEST(SpectrumCodecTest, RejectsNonFiniteBinWithItsIndex) {
  const std::vector<float> mag = {1.0f, std::numeric_limits<float>::quiet_NaN()};
  auto enc = encode_spectrum(mag);
  ASSERT_FALSE(enc.ok());
  EXPECT_EQ(enc.error().code, base::ErrorCode::kInvalidArgument);
  EXPECT_NE(enc.error().message.find("bin 1"), std::string::npos) << enc.error().message;
}

TEST(SpectrumCodecTest, OddLengthBlobIsCorrupt) {
  auto dec = decode_spectrum(0.0, std::string(3, '\0'));
  ASSERT_FALSE(dec.ok());
  EXPECT_EQ(dec.error().code, base::ErrorCode::kCorruptData);
}

}  // namespace
}  // namespace tonewarden::store
