// The database schema as numbered migrations (docs/schema.md).
//
// A plotwright database is recognised by PRAGMA application_id == kApplicationId; its schema version is
// PRAGMA user_version, the number of the last migration applied. Migration n takes a database from
// version n-1 to n and is never edited once released: a change to the schema is a new migration.
#pragma once
#include <sqlite3.h>

#include <cstdint>

#include "core/spec/trial_spec.hpp"

namespace pw::schema {

// "PLWT" in ASCII, read as a big-endian 32-bit integer (SQLite stores application_id at header offset 68;
// https://www.sqlite.org/fileformat.html#application_id).
inline constexpr std::int32_t kApplicationId = 0x504C5754;

struct Migration {
    int version;        // user_version after it is applied
    const char* sql;    // statements without values: DDL only
};

// Migrations in order, version 1 first. The last one's version is the current schema version.
const Migration* migrations(int* count);
int latest_version();

// Trait kinds as stored in trait.kind (migration 1). The database owns this spelling, so a change in how
// kinds are shown elsewhere does not change the file format.
const char* stored_kind(TraitKind k);

// Applies migration `m` and sets user_version, inside a transaction the caller has opened.
void apply(sqlite3* db, const Migration& m);

}  // namespace pw::schema
