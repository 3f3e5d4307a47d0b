// Focus: kill -9 of a busy store writer, repeated 25 times: every committed batch survives
// whole, no partial batch appears, and the file passes integrity_check each time.
#include <gtest/gtest.h>

#include <random>

#include "store/kill_harness.h"
#include "store/store_test_util.h"

namespace tonewarden::store {
namespace {

TEST(StoreKillSoakTest, TwentyFiveKillsLeaveOnlyWholeCommittedBatches) {
  std::random_device rd;
  for (int run = 0; run < 25; ++run) {
    SCOPED_TRACE("run " + std::to_string(run));
    testing::TempDir dir;
    testing::kill_nine_run(dir.file("h.db"), rd());
    if (HasFatalFailure()) return;
  }
}

}  // namespace
}  // namespace tonewarden::store
