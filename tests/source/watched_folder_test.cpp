// Focus: WatchedFolder readiness (size stable on two polls), order (mtime, then name), glob
// filtering, and the finished-file record that lets a restart skip done work.
#include "tonewarden/source/watched_folder.h"

#include <gtest/gtest.h>

#include <chrono>
#include <filesystem>
#include <fstream>
#include <sstream>

#include "support/temp_dir.h"

namespace tonewarden::source {
namespace {

namespace fs = std::filesystem;

class WatchedFolderTest : public ::testing::Test {
 protected:
  void SetUp() override { fs::create_directory(dir_); }

  // Writes `bytes` bytes and sets the mtime to `age_s` seconds before a fixed instant.
  void put(const std::string& name, size_t bytes, int age_s) {
    std::ofstream(dir_ / name, std::ios::binary) << std::string(bytes, 'x');
    fs::last_write_time(dir_ / name, base_time_ - std::chrono::seconds(age_s));
  }

  WatchedFolder make(const std::string& pattern = "*.wav") {
    WatchedFolderConfig c;
    c.dir = dir_.string();
    c.pattern = pattern;
    c.record_path = record_;
    auto f = WatchedFolder::create(c);
    EXPECT_TRUE(f.ok()) << (f.ok() ? "" : f.error().message);
    return std::move(f).value();
  }

  std::string path(const std::string& name) const { return (dir_ / name).string(); }

  tonewarden::testing::TempDir tmp_{"tw_watch_test"};
  const fs::path& root_ = tmp_.path();
  const fs::path dir_ = root_ / "drop";
  const std::string record_ = (root_ / "finished.txt").string();
  fs::file_time_type base_time_ = fs::file_time_type::clock::now();
};

TEST_F(WatchedFolderTest, FileIsReadyOnlyOnceItsSizeHoldsForTwoPolls) {
  WatchedFolder f = make();
  put("a.wav", 100, 10);
  ASSERT_TRUE(f.poll().ok());
  EXPECT_FALSE(f.next_ready().has_value());  // seen once: may still be growing
  ASSERT_TRUE(f.poll().ok());
  EXPECT_EQ(f.next_ready(), path("a.wav"));
  put("a.wav", 200, 10);  // the recorder appended more
  ASSERT_TRUE(f.poll().ok());
  EXPECT_FALSE(f.next_ready().has_value());
  ASSERT_TRUE(f.poll().ok());
  EXPECT_EQ(f.next_ready(), path("a.wav"));
}

TEST_F(WatchedFolderTest, OldestFirstThenByName) {
  WatchedFolder f = make();
  put("b.wav", 10, 100);
  put("a.wav", 10, 100);  // same mtime as b: name decides
  put("c.wav", 10, 300);  // oldest
  put("d.wav", 10, 50);
  ASSERT_TRUE(f.poll().ok());
  ASSERT_TRUE(f.poll().ok());
  std::vector<std::string> order;
  while (auto p = f.next_ready()) {
    order.push_back(fs::path(*p).filename().string());
    ASSERT_TRUE(f.mark_done(*p).ok());
  }
  EXPECT_EQ(order, (std::vector<std::string>{"c.wav", "a.wav", "b.wav", "d.wav"}));
}

TEST_F(WatchedFolderTest, OnlyMatchingRegularFilesCount) {
  WatchedFolder f = make("rec_*.flac");
  put("rec_1.flac", 10, 10);
  put("rec_2.wav", 10, 10);     // wrong extension
  put("other.flac", 10, 10);    // wrong prefix
  put(".rec_3.flac", 10, 10);   // hidden: FNM_PERIOD keeps a leading dot out of '*'
  fs::create_directory(dir_ / "rec_dir.flac");
  fs::create_symlink(dir_ / "rec_1.flac", dir_ / "rec_link.flac");
  ASSERT_TRUE(f.poll().ok());
  ASSERT_TRUE(f.poll().ok());
  ASSERT_EQ(f.next_ready(), path("rec_1.flac"));
  ASSERT_TRUE(f.mark_done(path("rec_1.flac")).ok());
  EXPECT_FALSE(f.next_ready().has_value());
}

TEST_F(WatchedFolderTest, RestartSkipsRecordedFilesButRetriesSkippedOnes) {
  {
    WatchedFolder f = make();
    put("one.wav", 10, 30);
    put("two.wav", 10, 20);
    ASSERT_TRUE(f.poll().ok());
    ASSERT_TRUE(f.poll().ok());
    ASSERT_TRUE(f.mark_done(path("one.wav")).ok());
    f.mark_skipped(path("two.wav"));
    EXPECT_FALSE(f.next_ready().has_value());
  }
  // The record holds the header line and the finished name only.
  std::ifstream in(record_);
  std::stringstream text;
  text << in.rdbuf();
  EXPECT_EQ(text.str(), "# tonewarden: finished recordings, one file name per line\none.wav\n");

  WatchedFolder again = make();
  EXPECT_TRUE(again.is_done("one.wav"));
  EXPECT_EQ(again.num_done(), 1u);
  ASSERT_TRUE(again.poll().ok());
  ASSERT_TRUE(again.poll().ok());
  EXPECT_EQ(again.next_ready(), path("two.wav"));  // skipped last run: reported again
}

TEST_F(WatchedFolderTest, BadFolderOrPatternIsAClearError) {
  WatchedFolderConfig c;
  c.dir = (root_ / "nowhere").string();
  auto missing = WatchedFolder::create(c);
  ASSERT_FALSE(missing.ok());
  EXPECT_EQ(missing.error().code, base::ErrorCode::kNotFound);
  EXPECT_NE(missing.error().message.find("nowhere"), std::string::npos);

  c.dir = dir_.string();
  c.pattern = "../*.wav";
  auto traversal = WatchedFolder::create(c);
  ASSERT_FALSE(traversal.ok());
  EXPECT_EQ(traversal.error().code, base::ErrorCode::kInvalidArgument);

  c.pattern = "*.wav";
  c.dir = record_;
  std::ofstream(record_) << "x\n";
  auto not_dir = WatchedFolder::create(c);
  ASSERT_FALSE(not_dir.ok());
  EXPECT_NE(not_dir.error().message.find("not a directory"), std::string::npos);
}

}  // namespace
}  // namespace tonewarden::source
