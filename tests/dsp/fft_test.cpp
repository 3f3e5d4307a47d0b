// Focus: RealFft and ComplexFft agree with a naive DFT, round-trip, reject bad lengths, and
// wisdom saves and loads through a temp directory.
#include "tonewarden/dsp/fft.h"

#include <gtest/gtest.h>

#include <cmath>
#include <complex>
#include <filesystem>
#include <fstream>
#include <numbers>
#include <random>
#include <vector>

namespace tonewarden::dsp {
namespace {

std::vector<std::complex<double>> naive_dft(const std::vector<std::complex<double>>& x, int sign) {
  const size_t n = x.size();
  std::vector<std::complex<double>> out(n);
  for (size_t k = 0; k < n; ++k) {
    std::complex<double> acc = 0;
    for (size_t i = 0; i < n; ++i) {
      const double ang = sign * 2.0 * std::numbers::pi * static_cast<double>((k * i) % n) /
                         static_cast<double>(n);
      acc += x[i] * std::polar(1.0, ang);
    }
    out[k] = acc;
  }
  return out;
}

std::vector<float> random_signal(size_t n, unsigned seed) {
  std::mt19937 rng(seed);
  std::normal_distribution<float> dist(0.0f, 1.0f);
  std::vector<float> x(n);
  for (auto& v : x) v = dist(rng);
  return x;
}

TEST(FftTest, RealFftMatchesNaiveDft) {
  // Even, odd, and prime lengths; expected values from the DFT definition.
  for (size_t n : {2u, 7u, 16u, 45u, 97u, 256u}) {
    for (FftPlanning planning : {FftPlanning::kEstimate, FftPlanning::kMeasure, FftPlanning::kAuto}) {
      auto fft = RealFft::create(n, planning);
      ASSERT_TRUE(fft.ok()) << fft.error().message;
      ASSERT_EQ(fft->length(), n);
      ASSERT_EQ(fft->output().size(), n / 2 + 1);
      const auto x = random_signal(n, static_cast<unsigned>(n));
      std::copy(x.begin(), x.end(), fft->input().begin());
      fft->execute();
      std::vector<std::complex<double>> xc(x.begin(), x.end());
      const auto ref = naive_dft(xc, -1);
      for (size_t k = 0; k <= n / 2; ++k) {
        EXPECT_NEAR(fft->output()[k].real(), ref[k].real(), 1e-4 * std::sqrt(n)) << n << " " << k;
        EXPECT_NEAR(fft->output()[k].imag(), ref[k].imag(), 1e-4 * std::sqrt(n)) << n << " " << k;
      }
    }
  }
}

TEST(FftTest, ComplexForwardBackwardRoundTrip) {
  const size_t n = 60;
  auto fwd = ComplexFft::create(n, ComplexFft::Direction::kForward);
  auto bwd = ComplexFft::create(n, ComplexFft::Direction::kBackward);
  ASSERT_TRUE(fwd.ok() && bwd.ok());
  const auto re = random_signal(n, 1);
  const auto im = random_signal(n, 2);
  std::vector<std::complex<double>> x(n);
  for (size_t i = 0; i < n; ++i) {
    x[i] = {re[i], im[i]};
    fwd->input()[i] = {re[i], im[i]};
  }
  fwd->execute();
  const auto ref = naive_dft(x, -1);
  for (size_t k = 0; k < n; ++k) {
    EXPECT_NEAR(std::abs(std::complex<double>(fwd->output()[k]) - ref[k]), 0.0, 1e-4);
  }
  std::copy(fwd->output().begin(), fwd->output().end(), bwd->input().begin());
  bwd->execute();
  // The backward transform is unnormalised: x·n comes back.
  for (size_t i = 0; i < n; ++i) {
    EXPECT_NEAR(bwd->output()[i].real() / n, re[i], 1e-5);
    EXPECT_NEAR(bwd->output()[i].imag() / n, im[i], 1e-5);
  }
}

TEST(FftTest, BuffersStartZeroedAfterPlanning) {
  auto fft = RealFft::create(512, FftPlanning::kMeasure);
  ASSERT_TRUE(fft.ok());
  for (float v : fft->input()) ASSERT_EQ(v, 0.0f);
  fft->execute();
  for (auto v : fft->output()) ASSERT_EQ(std::abs(v), 0.0f);
}

TEST(FftTest, MovedObjectStillWorks) {
  auto created = RealFft::create(8);
  ASSERT_TRUE(created.ok());
  RealFft fft = std::move(created).value();
  for (size_t i = 0; i < 8; ++i) fft.input()[i] = 1.0f;
  fft.execute();
  EXPECT_FLOAT_EQ(fft.output()[0].real(), 8.0f);  // DC = Σx
  EXPECT_NEAR(std::abs(fft.output()[1]), 0.0, 1e-6);
}

TEST(FftTest, RejectsTooShortLengths) {
  for (size_t n : {0u, 1u}) {
    auto r = RealFft::create(n);
    ASSERT_FALSE(r.ok());
    EXPECT_NE(r.error().message.find("too short"), std::string::npos) << r.error().message;
    auto c = ComplexFft::create(n, ComplexFft::Direction::kForward);
    ASSERT_FALSE(c.ok());
    EXPECT_EQ(c.error().code, base::ErrorCode::kInvalidArgument);
  }
}

class FftWisdomTest : public ::testing::Test {
 protected:
  void SetUp() override {
    dir_ = std::filesystem::temp_directory_path() /
           ("tw_wisdom_" + std::to_string(::testing::UnitTest::GetInstance()->random_seed()) + "_" +
            ::testing::UnitTest::GetInstance()->current_test_info()->name());
    std::filesystem::remove_all(dir_);
    std::filesystem::create_directories(dir_);
  }
  void TearDown() override { std::filesystem::remove_all(dir_); }
  std::filesystem::path dir_;
};

TEST_F(FftWisdomTest, SaveThenLoadRoundTrip) {
  // A measured plan puts something into the wisdom; saving writes it, loading reads it back.
  auto fft = RealFft::create(1024, FftPlanning::kMeasure);
  ASSERT_TRUE(fft.ok());
  const std::string path = (dir_ / "wisdom.txt").string();
  auto saved = FftWisdom::save(path);
  ASSERT_TRUE(saved.ok()) << saved.error().message;
  ASSERT_TRUE(std::filesystem::exists(path));
  EXPECT_GT(std::filesystem::file_size(path), 0u);
  // No temp file stays behind.
  size_t files = 0;
  for (auto& e : std::filesystem::directory_iterator(dir_)) { (void)e; ++files; }
  EXPECT_EQ(files, 1u);
  bool loaded = false;
  auto status = FftWisdom::load(path, &loaded);
  ASSERT_TRUE(status.ok()) << status.error().message;
  EXPECT_TRUE(loaded);
  EXPECT_TRUE(FftWisdom::any_loaded());
  // With wisdom loaded, kAuto may use the measured plan; either way it must be correct.
  auto again = RealFft::create(1024, FftPlanning::kAuto);
  ASSERT_TRUE(again.ok());
  again->input()[1] = 1.0f;
  again->execute();
  EXPECT_NEAR(std::abs(again->output()[5]), 1.0, 1e-6);  // |e^{-j2π·5/1024}| = 1
}

TEST_F(FftWisdomTest, MissingFileIsNotAnError) {
  bool loaded = true;
  auto status = FftWisdom::load((dir_ / "absent.txt").string(), &loaded);
  EXPECT_TRUE(status.ok());
  EXPECT_FALSE(loaded);
}

TEST_F(FftWisdomTest, CorruptFileIsAnErrorNamingThePath) {
  const std::string path = (dir_ / "garbage.txt").string();
  std::ofstream(path) << "this is not wisdom\n";
  bool loaded = true;
  auto status = FftWisdom::load(path, &loaded);
  ASSERT_FALSE(status.ok());
  EXPECT_FALSE(loaded);
  EXPECT_NE(status.error().message.find(path), std::string::npos) << status.error().message;
}

TEST_F(FftWisdomTest, SaveIntoMissingDirectoryFails) {
  const std::string path = (dir_ / "no" / "such" / "wisdom.txt").string();
  auto status = FftWisdom::save(path);
  ASSERT_FALSE(status.ok());
  EXPECT_EQ(status.error().code, base::ErrorCode::kIo);
  EXPECT_NE(status.error().message.find("wisdom"), std::string::npos);
}

}  // namespace
}  // namespace tonewarden::dsp
