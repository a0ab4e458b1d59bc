// A trial database as an older plotwright left it, made by hand for migration tests: the schema's first
// `migrations` migrations only (storage/schema.hpp), and one invented RCBD trial OLD25 of 2 treatments in
// 2 blocks with the rows every version has (trial, treatments, a trait, 4 plots), plus `extra_rows` (SQL)
// that a recorder of that version could have written. Include after catch.hpp.
#pragma once
#include <sqlite3.h>

#include <string>

#include "storage/schema.hpp"

namespace pw_test {

inline constexpr const char* kOldTrialToml = R"toml([trial]
code = "OLD25"
title = "Old"
site = "S"
crop = "wheat"
design = "rcbd"
blocks = 2
[field]
plot_length_m = 4
plot_width_m = 2
alley_m = 1
[gradient]
bearing_deg = 0
label = "slope"
[[treatments]]
label = "A"
[[treatments]]
label = "B"
[[traits]]
name = "grain_kg"
unit = "kg"
kind = "number"
)toml";

inline void make_old_database(const std::string& path, int migrations, const std::string& extra_rows = "") {
    sqlite3* db = nullptr;
    REQUIRE(sqlite3_open(path.c_str(), &db) == SQLITE_OK);
    int count = 0;
    const pw::schema::Migration* ms = pw::schema::migrations(&count);
    REQUIRE(count > migrations);
    REQUIRE(ms[migrations].version == migrations + 1);
    const std::string mark = "PRAGMA application_id = " + std::to_string(pw::schema::kApplicationId) + "; BEGIN";
    REQUIRE(sqlite3_exec(db, mark.c_str(), nullptr, nullptr, nullptr) == SQLITE_OK);
    for (int i = 0; i < migrations; ++i) pw::schema::apply(db, ms[i]);
    const std::string rows =
        std::string("INSERT INTO trial (id, code, title, spec_toml, spec_source, seed, algorithm, field_x_m, "
                    "field_y_m, layout_notes, created_utc, app_version) VALUES (1, 'OLD25', 'Old', '") +
        kOldTrialToml +
        "', 'old.toml', '7', 'x;design=rcbd/1', 4, 9, '[]', '2025-01-01T00:00:00Z', '0.1.0');"
        "INSERT INTO treatment VALUES (0, 'A', '', 0), (1, 'B', '', 0);"
        "INSERT INTO trait VALUES ('grain_kg', 0, 'grain_kg', 'kg', 'number', NULL, NULL, 2, 200, '[]');"
        "INSERT INTO plot (id, block, position, walk_order, row, col, treatment, x_m, y_m, width_x_m, width_y_m)"
        " VALUES (101, 1, 1, 1, 1, 1, 1, 1, 2, 2, 4), (102, 1, 2, 2, 1, 2, 0, 3, 2, 2, 4),"
        " (201, 2, 1, 3, 2, 2, 0, 3, 7, 2, 4), (202, 2, 2, 4, 2, 1, 1, 1, 7, 2, 4);" +
        extra_rows + "COMMIT";
    char* err = nullptr;
    CHECK(sqlite3_exec(db, rows.c_str(), nullptr, nullptr, &err) == SQLITE_OK);
    if (err) FAIL(err);
    sqlite3_close(db);
}

}  // namespace pw_test
