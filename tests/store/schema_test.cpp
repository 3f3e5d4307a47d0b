// Focus: forward migration from every earlier schema version, refusal of foreign, garbage,
// corrupt and newer files with a clear error, and SCHEMA.md covering every table.
#include "tonewarden/store/schema.h"

#include <gtest/gtest.h>

#include <fstream>
#include <sstream>

#include "store_test_util.h"
#include "tonewarden/store/store_reader.h"
#include "tonewarden/store/store_writer.h"

namespace tonewarden::store {
namespace {

using testing::fast_config;
using testing::sqlite_shell;
using testing::TempDir;

TEST(SchemaTest, MigratesForwardFromEveryEarlierVersionKeepingData) {
  ASSERT_GE(current_schema_version(), 1);
  for (int v = 0; v < current_schema_version(); ++v) {
    SCOPED_TRACE("from version " + std::to_string(v));
    TempDir dir;
    const std::string path = dir.file("old.db");
    ASSERT_TRUE(create_database_at_version(path, v).ok());
    EXPECT_EQ(sqlite_shell(path, "PRAGMA user_version"), std::to_string(v));
    if (v >= 1) {  // readings exist from version 1 on: put one in with the shell
      sqlite_shell(path, "INSERT INTO series VALUES (1, 'r', 'c', 'm', 'u');"
                         "INSERT INTO readings VALUES (1, 1000, 2.5);");
    }
    {
      auto w = StoreWriter::create(fast_config(path));
      ASSERT_TRUE(w.ok()) << w.error().message;
      if (v >= 1) {  // the old series keeps its id
        EXPECT_EQ((*w)->register_series({"r", "c", "m", "u"}).value(), 1);
      }
    }
    EXPECT_EQ(sqlite_shell(path, "PRAGMA user_version"), std::to_string(current_schema_version()));
    EXPECT_EQ(sqlite_shell(path, "PRAGMA integrity_check"), "ok");
    // Objects of the last step exist (the view and the event index).
    EXPECT_EQ(sqlite_shell(path, "SELECT count(*) FROM sqlite_schema WHERE name IN "
                                 "('trend_minute', 'alarm_events_rule_t')"),
              "2");
    if (v >= 1) {
      EXPECT_EQ(sqlite_shell(path, "SELECT rig, value FROM readings_named"), "r|2.5");
    }
  }
}

TEST(SchemaTest, ReaderRefusesAnUnmigratedDatabaseWithAHint) {
  TempDir dir;
  const std::string path = dir.file("old.db");
  ASSERT_TRUE(create_database_at_version(path, 1).ok());
  auto r = StoreReader::open(path);
  ASSERT_FALSE(r.ok());
  EXPECT_NE(r.error().message.find("schema version 1"), std::string::npos) << r.error().message;
}

TEST(SchemaTest, ForeignSqliteDatabaseIsRefusedAndLeftUntouched) {
  TempDir dir;
  const std::string path = dir.file("other.db");
  sqlite_shell(path, "CREATE TABLE recipes (name TEXT); INSERT INTO recipes VALUES ('soup');");
  auto w = StoreWriter::create(fast_config(path));
  ASSERT_FALSE(w.ok());
  EXPECT_EQ(w.error().code, base::ErrorCode::kCorruptData);
  EXPECT_NE(w.error().message.find("another application"), std::string::npos) << w.error().message;
  EXPECT_NE(w.error().message.find(path), std::string::npos);
  EXPECT_EQ(sqlite_shell(path, "SELECT name FROM recipes"), "soup");
  EXPECT_EQ(sqlite_shell(path, "PRAGMA user_version"), "0");
  auto r = StoreReader::open(path);
  ASSERT_FALSE(r.ok());
  EXPECT_EQ(r.error().code, base::ErrorCode::kCorruptData);
}

TEST(SchemaTest, NonSqliteFileIsRefusedAndLeftUntouched) {
  TempDir dir;
  const std::string path = dir.file("h.db");
  const std::string text = "timestamp,value\n1,2\n";
  std::ofstream(path) << text;
  auto w = StoreWriter::create(fast_config(path));
  ASSERT_FALSE(w.ok());
  EXPECT_EQ(w.error().code, base::ErrorCode::kCorruptData);
  EXPECT_NE(w.error().message.find("not an SQLite file"), std::string::npos) << w.error().message;
  std::stringstream back;
  back << std::ifstream(path).rdbuf();
  EXPECT_EQ(back.str(), text);
}

TEST(SchemaTest, DamagedSchemaPageGivesAnErrorNotACrash) {
  TempDir dir;
  const std::string path = dir.file("h.db");
  ASSERT_TRUE(create_database_at_version(path, current_schema_version()).ok());
  sqlite_shell(path, "PRAGMA wal_checkpoint(TRUNCATE)");
  {  // Overwrite the middle of page 1 (the schema table) with garbage, keeping the header.
    std::fstream f(path, std::ios::in | std::ios::out | std::ios::binary);
    f.seekp(200);
    const std::string junk(3000, '\x5a');
    f.write(junk.data(), static_cast<std::streamsize>(junk.size()));
  }
  auto w = StoreWriter::create(fast_config(path));
  ASSERT_FALSE(w.ok());
  EXPECT_EQ(w.error().code, base::ErrorCode::kCorruptData) << w.error().message;
  EXPECT_NE(w.error().message.find(path), std::string::npos) << w.error().message;
}

TEST(SchemaTest, NewerSchemaIsRefused) {
  TempDir dir;
  const std::string path = dir.file("h.db");
  ASSERT_TRUE(create_database_at_version(path, current_schema_version()).ok());
  sqlite_shell(path, "PRAGMA user_version = 99");
  auto w = StoreWriter::create(fast_config(path));
  ASSERT_FALSE(w.ok());
  EXPECT_EQ(w.error().code, base::ErrorCode::kUnavailable);
  EXPECT_NE(w.error().message.find("newer"), std::string::npos) << w.error().message;
}

TEST(SchemaTest, CreateAtVersionRejectsBadArguments) {
  TempDir dir;
  EXPECT_FALSE(create_database_at_version(dir.file("a.db"), -1).ok());
  EXPECT_FALSE(create_database_at_version(dir.file("a.db"), current_schema_version() + 1).ok());
  ASSERT_TRUE(create_database_at_version(dir.file("a.db"), 0).ok());
  EXPECT_FALSE(create_database_at_version(dir.file("a.db"), 0).ok());  // exists already
}

TEST(SchemaTest, SchemaDocumentNamesEveryTableAndView) {
  TempDir dir;
  const std::string path = dir.file("h.db");
  ASSERT_TRUE(create_database_at_version(path, current_schema_version()).ok());
  std::stringstream doc;
  doc << std::ifstream(std::string(TONEWARDEN_SOURCE_DIR) + "/lib/store/SCHEMA.md").rdbuf();
  ASSERT_FALSE(doc.str().empty());
  std::stringstream names(sqlite_shell(
      path, "SELECT name FROM sqlite_schema WHERE type IN ('table', 'view', 'index') "
            "AND name NOT LIKE 'sqlite_%'"));
  std::string name;
  int n = 0;
  while (std::getline(names, name)) {
    ++n;
    EXPECT_NE(doc.str().find("`" + name + "`"), std::string::npos) << name << " not in SCHEMA.md";
  }
  EXPECT_GE(n, 12);  // 8 tables, 3 views, and the indexes
  EXPECT_NE(doc.str().find("user_version = " + std::to_string(current_schema_version())),
            std::string::npos);
}

}  // namespace
}  // namespace tonewarden::store
