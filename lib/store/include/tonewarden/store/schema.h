// Schema version facts (the tables themselves are documented in lib/store/SCHEMA.md).
#pragma once

#include <string>

#include "tonewarden/base/result.h"

namespace tonewarden::store {

// PRAGMA application_id of every tonewarden database: ASCII "TWH1".
inline constexpr int kApplicationId = 0x54574831;

// The schema version this build writes (PRAGMA user_version). Opening a database migrates it
// forward from any earlier version; a newer one is refused.
int current_schema_version() noexcept;

// Creates a new database at `path` migrated only up to `version` (0 .. current): for migration
// tests and for tools that reproduce an old layout. Fails if the file already exists.
base::Status create_database_at_version(const std::string& path, int version);

}  // namespace tonewarden::store
