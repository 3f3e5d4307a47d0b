// Focus: SoundFileReader reads hand-built WAV bytes (PCM 16/24/32, float, extra and odd-sized
// chunks) exactly, round-trips FLAC and WAV through SoundFileWriter, and names every bad input.
#include "tonewarden/source/sound_file_reader.h"

#include <gtest/gtest.h>
#include <unistd.h>

#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstring>
#include <fstream>
#include <string>
#include <vector>

#include "tonewarden/source/sound_file_writer.h"

namespace tonewarden::source {
namespace {

using base::ErrorCode;

// A scratch directory per test binary run, removed by the OS tmp cleaner; names are unique.
std::string temp_path(const std::string& name) {
  static const std::string dir = [] {
    std::string tmpl = ::testing::TempDir() + "tw_source_XXXXXX";
    std::vector<char> buf(tmpl.begin(), tmpl.end());
    buf.push_back('\0');
    const char* made = mkdtemp(buf.data());
    return std::string(made ? made : "/tmp");
  }();
  return dir + "/" + name;
}

void put_le(std::vector<uint8_t>& b, uint64_t v, int bytes) {
  for (int i = 0; i < bytes; ++i) b.push_back(static_cast<uint8_t>(v >> (8 * i)));
}
void put_id(std::vector<uint8_t>& b, const char* id) { b.insert(b.end(), id, id + 4); }

struct WavSpec {
  uint16_t format_tag = 1;  // 1 PCM, 3 IEEE float
  uint16_t channels = 1;
  uint32_t sample_rate = 8000;
  uint16_t bits = 16;
  bool fmt18 = false;             // 18-byte fmt chunk (cbSize = 0) plus a fact chunk
  bool extra_chunks = false;      // a LIST chunk and an odd-sized chunk (with pad byte) before data
  int64_t declared_data_bytes = -1;  // override the data chunk's size field
};

// Builds a RIFF/WAVE file byte by byte, so the test does not depend on the writer it checks.
std::vector<uint8_t> build_wav(const WavSpec& s, const std::vector<uint8_t>& data) {
  std::vector<uint8_t> body;
  put_id(body, "WAVE");
  put_id(body, "fmt ");
  put_le(body, s.fmt18 ? 18 : 16, 4);
  put_le(body, s.format_tag, 2);
  put_le(body, s.channels, 2);
  put_le(body, s.sample_rate, 4);
  const uint32_t align = s.channels * s.bits / 8u;
  put_le(body, s.sample_rate * align, 4);
  put_le(body, align, 2);
  put_le(body, s.bits, 2);
  if (s.fmt18) {
    put_le(body, 0, 2);  // cbSize
    put_id(body, "fact");
    put_le(body, 4, 4);
    put_le(body, data.size() / align, 4);
  }
  if (s.extra_chunks) {
    put_id(body, "LIST");
    put_le(body, 4 + 8 + 6, 4);
    put_id(body, "INFO");
    put_id(body, "ICMT");
    put_le(body, 6, 4);
    for (char c : std::string("rig 4\0", 6)) body.push_back(static_cast<uint8_t>(c));
    put_id(body, "twx1");  // unknown chunk of odd size 3: one pad byte follows
    put_le(body, 3, 4);
    body.insert(body.end(), {0xAA, 0xBB, 0xCC, 0x00});
  }
  put_id(body, "data");
  put_le(body, s.declared_data_bytes >= 0 ? static_cast<uint64_t>(s.declared_data_bytes) : data.size(), 4);
  body.insert(body.end(), data.begin(), data.end());
  std::vector<uint8_t> file;
  put_id(file, "RIFF");
  put_le(file, body.size(), 4);
  file.insert(file.end(), body.begin(), body.end());
  return file;
}

std::string write_bytes(const std::string& name, const std::vector<uint8_t>& bytes) {
  const std::string path = temp_path(name);
  std::ofstream out(path, std::ios::binary | std::ios::trunc);
  out.write(reinterpret_cast<const char*>(bytes.data()), static_cast<std::streamsize>(bytes.size()));
  return path;
}

std::vector<float> read_all(SoundFileReader& r, size_t block_frames) {
  std::vector<float> all, buf(block_frames * r.channels());
  for (;;) {
    auto got = r.read(buf);
    EXPECT_TRUE(got.ok()) << (got.ok() ? "" : got.error().message);
    if (!got.ok() || *got == 0) break;
    all.insert(all.end(), buf.begin(), buf.begin() + static_cast<long>(*got * r.channels()));
  }
  return all;
}

// libsndfile scales PCM to float by 1/2^(bits-1), so full scale reads as 1.0 (its documented
// default, SFC_SET_NORM_FLOAT on). Expected values are v / 2^(bits-1), computed here.
TEST(SoundFileReaderTest, Pcm16ReadsBackExactly) {
  const std::vector<int16_t> v = {0, 1, -1, 32767, -32768, 12345, -20000};
  std::vector<uint8_t> data;
  for (int16_t s : v) put_le(data, static_cast<uint16_t>(s), 2);
  auto r = SoundFileReader::create(write_bytes("pcm16.wav", build_wav({}, data)));
  ASSERT_TRUE(r.ok()) << r.error().message;
  EXPECT_EQ(r->frames(), v.size());
  EXPECT_EQ(r->channels(), 1u);
  EXPECT_EQ(r->sample_rate_hz(), 8000.0);
  EXPECT_EQ(r->format_description(), "WAV, 16-bit PCM, 1 ch, 8000 Hz");
  const auto got = read_all(*r, 3);  // blocks of 3 frames: the stream crosses block edges
  ASSERT_EQ(got.size(), v.size());
  for (size_t i = 0; i < v.size(); ++i) EXPECT_EQ(got[i], static_cast<float>(v[i] / 32768.0)) << i;
}

TEST(SoundFileReaderTest, Pcm24WithExtraChunksReadsBackExactly) {
  const std::vector<int32_t> v = {0, 8388607, -8388608, 1, -1, 4194304, -1234567};
  std::vector<uint8_t> data;
  for (int32_t s : v) put_le(data, static_cast<uint32_t>(s) & 0xFFFFFFu, 3);
  WavSpec spec;
  spec.bits = 24;
  spec.extra_chunks = true;
  auto r = SoundFileReader::create(write_bytes("pcm24.wav", build_wav(spec, data)));
  ASSERT_TRUE(r.ok()) << r.error().message;
  const auto got = read_all(*r, 4);
  ASSERT_EQ(got.size(), v.size());
  for (size_t i = 0; i < v.size(); ++i) EXPECT_EQ(got[i], static_cast<float>(v[i] / 8388608.0)) << i;
}

TEST(SoundFileReaderTest, Pcm32ReadsBackExactly) {
  // Values with at most 24 significant bits, so the float result is exact.
  const std::vector<int32_t> v = {0, 1 << 20, -(1 << 30), 2147483392, -2147483647 - 1};
  std::vector<uint8_t> data;
  for (int32_t s : v) put_le(data, static_cast<uint32_t>(s), 4);
  WavSpec spec;
  spec.bits = 32;
  auto r = SoundFileReader::create(write_bytes("pcm32.wav", build_wav(spec, data)));
  ASSERT_TRUE(r.ok()) << r.error().message;
  const auto got = read_all(*r, 64);
  ASSERT_EQ(got.size(), v.size());
  for (size_t i = 0; i < v.size(); ++i) EXPECT_EQ(got[i], static_cast<float>(v[i] / 2147483648.0)) << i;
}

TEST(SoundFileReaderTest, FloatWithFactChunkKeepsEngineeringValues) {
  // Float files hold engineering units (g, Pa): values above 1.0 must come out unchanged.
  const std::vector<float> v = {0.0f, 3.5f, -12.25f, 1e-7f, 0.999f, -0.5f};
  std::vector<uint8_t> data;
  for (float f : v) {
    uint32_t u;
    std::memcpy(&u, &f, 4);
    put_le(data, u, 4);
  }
  WavSpec spec;
  spec.format_tag = 3;
  spec.bits = 32;
  spec.fmt18 = true;  // the layout of the bearing recordings in tests/data
  spec.extra_chunks = true;
  auto r = SoundFileReader::create(write_bytes("float.wav", build_wav(spec, data)));
  ASSERT_TRUE(r.ok()) << r.error().message;
  EXPECT_EQ(r->format_description(), "WAV, 32-bit float, 1 ch, 8000 Hz");
  EXPECT_EQ(read_all(*r, 2), v);
}

TEST(SoundFileReaderTest, StereoPicksOneChannel) {
  std::vector<uint8_t> data;
  const std::vector<int16_t> left = {100, 200, 300, 400, 500}, right = {-1, -2, -3, -4, -5};
  for (size_t i = 0; i < left.size(); ++i) {
    put_le(data, static_cast<uint16_t>(left[i]), 2);
    put_le(data, static_cast<uint16_t>(right[i]), 2);
  }
  WavSpec spec;
  spec.channels = 2;
  auto r = SoundFileReader::create(write_bytes("stereo.wav", build_wav(spec, data)));
  ASSERT_TRUE(r.ok()) << r.error().message;
  std::vector<float> got, buf(2);
  for (;;) {
    auto n = r->read_channel(1, buf);
    ASSERT_TRUE(n.ok()) << n.error().message;
    if (*n == 0) break;
    got.insert(got.end(), buf.begin(), buf.begin() + static_cast<long>(*n));
  }
  ASSERT_EQ(got.size(), right.size());
  for (size_t i = 0; i < right.size(); ++i) EXPECT_EQ(got[i], static_cast<float>(right[i] / 32768.0));
}

TEST(SoundFileReaderTest, FlacRoundTripIsLossless) {
  // 16-bit FLAC is lossless, so samples on the 1/32768 grid must come back bit for bit.
  std::vector<float> x(20000);
  for (size_t i = 0; i < x.size(); ++i)
    x[i] = static_cast<float>(std::lround(20000.0 * std::sin(0.01 * static_cast<double>(i))) / 32768.0);
  const std::string path = temp_path("tone.flac");
  {
    auto w = SoundFileWriter::create(path, {44100.0, 1, SoundFileEncoding::kFlac16});
    ASSERT_TRUE(w.ok()) << w.error().message;
    ASSERT_TRUE(w->write(x).ok());
    ASSERT_TRUE(w->close().ok());
    EXPECT_EQ(w->frames_written(), x.size());
  }
  auto r = SoundFileReader::create(path);
  ASSERT_TRUE(r.ok()) << r.error().message;
  EXPECT_EQ(r->format_description(), "FLAC, 16-bit PCM, 1 ch, 44100 Hz");
  EXPECT_EQ(r->frames(), x.size());
  EXPECT_EQ(read_all(*r, 4096), x);
}

TEST(SoundFileReaderTest, FloatWavRoundTripThroughWriter) {
  const std::vector<float> x = {1.0f, -2.0f, 0.25f, 9.81f, -0.001f, 0.0f};  // 3 stereo frames
  const std::string path = temp_path("writer.wav");
  {
    auto w = SoundFileWriter::create(path, {51200.0, 2, SoundFileEncoding::kWavFloat32});
    ASSERT_TRUE(w.ok()) << w.error().message;
    EXPECT_FALSE(w->write(std::vector<float>{1.0f}).ok());  // half a frame is refused
    ASSERT_TRUE(w->write(x).ok());
  }
  auto r = SoundFileReader::create(path);
  ASSERT_TRUE(r.ok()) << r.error().message;
  EXPECT_EQ(r->frames(), 3u);
  EXPECT_EQ(read_all(*r, 16), x);
}

TEST(SoundFileReaderTest, MissingFileIsNotFoundAndNamed) {
  const std::string path = temp_path("does_not_exist.wav");
  auto r = SoundFileReader::create(path);
  ASSERT_FALSE(r.ok());
  EXPECT_EQ(r.error().code, ErrorCode::kNotFound);
  EXPECT_EQ(r.error().message, path + ": no such file");
}

TEST(SoundFileReaderTest, TextFileIsNotAudio) {
  const std::string text = "frequency_hz,value\n1,2\n3,4\n5,6\n7,8\n9,10\n11,12\n";
  const std::string path = write_bytes("notes.wav", std::vector<uint8_t>(text.begin(), text.end()));
  auto r = SoundFileReader::create(path);
  ASSERT_FALSE(r.ok());
  EXPECT_EQ(r.error().code, ErrorCode::kCorruptData);
  EXPECT_EQ(r.error().message.rfind(path + ": not a readable WAV or FLAC sound file", 0), 0u)
      << r.error().message;
  EXPECT_EQ(r.error().message.find('\n'), std::string::npos);
}

TEST(SoundFileReaderTest, ZeroByteFileIsRejected) {
  const std::string path = write_bytes("empty.wav", {});
  auto r = SoundFileReader::create(path);
  ASSERT_FALSE(r.ok());
  EXPECT_EQ(r.error().code, ErrorCode::kCorruptData);
  EXPECT_EQ(r.error().message, path + ": empty file (0 bytes), not a sound file");
}

TEST(SoundFileReaderTest, WavWithoutFramesIsRejected) {
  const std::string path = write_bytes("noframes.wav", build_wav({}, {}));
  auto r = SoundFileReader::create(path);
  ASSERT_FALSE(r.ok());
  EXPECT_EQ(r.error().code, ErrorCode::kCorruptData);
  EXPECT_EQ(r.error().message, path + ": holds no audio frames (empty data)");
}

TEST(SoundFileReaderTest, TruncatedWavIsDetectedUpFront) {
  // The data chunk claims 1000 16-bit frames but only 500 follow (a copy cut short).
  std::vector<uint8_t> data(1000, 0);
  WavSpec spec;
  spec.declared_data_bytes = 2000;
  const std::string path = write_bytes("cut.wav", build_wav(spec, data));
  auto r = SoundFileReader::create(path);
  ASSERT_FALSE(r.ok());
  EXPECT_EQ(r.error().code, ErrorCode::kCorruptData);
  EXPECT_EQ(r.error().message, path + ": truncated: header says 1000 frames, file holds 500");
}

TEST(SoundFileReaderTest, TruncatedFlacIsDetectedAtTheEnd) {
  // FLAC's STREAMINFO states the total; a file cut in half delivers fewer frames than that.
  std::vector<float> x(40000);
  for (size_t i = 0; i < x.size(); ++i) x[i] = static_cast<float>(0.5 * std::sin(0.003 * static_cast<double>(i * i % 9973)));
  const std::string whole = temp_path("whole.flac");
  {
    auto w = SoundFileWriter::create(whole, {8000.0, 1, SoundFileEncoding::kFlac16});
    ASSERT_TRUE(w.ok());
    ASSERT_TRUE(w->write(x).ok());
  }
  std::ifstream in(whole, std::ios::binary);
  std::vector<uint8_t> bytes((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  bytes.resize(bytes.size() / 2);
  const std::string path = write_bytes("half.flac", bytes);
  auto r = SoundFileReader::create(path);
  ASSERT_TRUE(r.ok()) << r.error().message;
  EXPECT_EQ(r->frames(), x.size());
  std::vector<float> buf(4096);
  base::Result<size_t> got = size_t{0};
  do {
    got = r->read(buf);
  } while (got.ok() && *got > 0);
  ASSERT_FALSE(got.ok());
  EXPECT_EQ(got.error().code, ErrorCode::kCorruptData);
  const std::string expected_start = path + ": truncated: header says 40000 frames, file holds ";
  EXPECT_EQ(got.error().message.rfind(expected_start, 0), 0u) << got.error().message;
}

TEST(SoundFileReaderTest, MissingChannelIsNamed) {
  std::vector<uint8_t> data(8, 0);
  const std::string path = write_bytes("mono.wav", build_wav({}, data));
  auto r = SoundFileReader::create(path);
  ASSERT_TRUE(r.ok());
  std::vector<float> buf(4);
  auto got = r->read_channel(2, buf);
  ASSERT_FALSE(got.ok());
  EXPECT_EQ(got.error().code, ErrorCode::kInvalidArgument);
  EXPECT_EQ(got.error().message,
            path + ": channel 2 does not exist (the file has 1 channel, numbered from 0)");
  EXPECT_TRUE(r->check_channel(0).ok());
}

TEST(SoundFileReaderTest, DirectoryIsRefused) {
  const std::string dir = temp_path("");
  auto r = SoundFileReader::create(dir);
  ASSERT_FALSE(r.ok());
  EXPECT_EQ(r.error().code, ErrorCode::kInvalidArgument);
}

TEST(PickChannelTest, CopiesEveryNthSample) {
  const std::vector<float> in = {0, 10, 20, 1, 11, 21, 2, 12, 22};
  std::vector<float> out(3);
  pick_channel(in, 3, 2, out);
  EXPECT_EQ(out, (std::vector<float>{20, 21, 22}));
}

}  // namespace
}  // namespace tonewarden::source
