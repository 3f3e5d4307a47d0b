// Private: opening checks and forward migrations for the store database.
#pragma once

#include <string>

#include "sqlite_db.h"
#include "tonewarden/base/result.h"

namespace tonewarden::store::detail {

// Checks the file at `path` before SQLite touches it: if it exists and is not empty, its
// first 16 bytes must be the SQLite header. kCorruptData otherwise.
base::Status check_file_header(const std::string& path);

// Reads application_id/user_version and refuses foreign or newer databases. Returns the
// schema version found (0 for a brand-new empty file).
base::Result<int> check_identity(Db& db);

// Migrates forward to `target` (<= current), one transaction per step.
base::Status migrate(Db& db, int target);

}  // namespace tonewarden::store::detail
