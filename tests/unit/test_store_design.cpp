// The store's side of the design framework (schema migration 2): the design's own columns, harvest areas
// and guard plots are kept with the trial, a database made before them is migrated with the values every
// plot then had, and the plots export appends the design's columns after the common ones.
//
// Outside sources the checks rest on:
//   - SQLite's documented ALTER TABLE ADD COLUMN (https://www.sqlite.org/lang_altertable.html): rows that
//     exist when a column is added read its DEFAULT; PRAGMA user_version is the number the program set.
//   - The store's contract (storage/store.hpp, docs/schema.md): what create is given, open gives back; the
//     expected values below are the hand-built inputs, not the program's output.
//   - The column order of `plots` documented in docs/design.md ("Columns of `plots`").
#include <catch2/catch.hpp>

#include <sqlite3.h>
#include <stdlib.h>

#include <filesystem>
#include <string>

#include "core/design/layout.hpp"
#include "core/spec/trial_spec.hpp"
#include "storage/csv_table.hpp"
#include "storage/schema.hpp"
#include "storage/store.hpp"
#include "old_database.hpp"
#include "temp_dir.hpp"

using namespace pw;

namespace {

using pw_test::TempDir;

const char* const kSplitToml = R"toml([trial]
code = "SPL26"
title = "Irrigation by variety"
site = "Flat"
crop = "wheat"
design = "split"
blocks = 2

[field]
plot_length_m = 4
plot_width_m = 2
alley_m = 1

[gradient]
bearing_deg = 0
label = "slope"

[[factors]]
name = "Water"
levels = ["Dry", "Wet"]

[[factors]]
name = "Variety"
levels = ["V1", "V2"]

[[traits]]
name = "grain_kg"
unit = "kg"
kind = "number"
)toml";

// A hand-built split-plot layout: 2 blocks x (2 main plots x 2 subplots), one guard plot, a harvest area.
Layout hand_layout() {
    Layout l;
    l.seed = 5;
    l.algorithm = "test-algorithm;design=split/1";
    l.field_x_m = 8;
    l.field_y_m = 14;
    l.columns = {"rep", "main", "sub"};
    int walk = 0;
    for (int b = 1; b <= 2; ++b)
        for (int m = 1; m <= 2; ++m)
            for (int s = 1; s <= 2; ++s) {
                PlotPlacement p;
                p.block = b, p.rep = b, p.main = m, p.sub = s;
                p.position = (m - 1) * 2 + s;
                p.id = b * 100 + p.position;
                p.walk_order = ++walk;
                p.row = b, p.col = p.position;
                p.treatment = (m - 1) * 2 + (s - 1);
                p.x_m = 1 + 2 * (p.position - 1), p.y_m = 2 + 5 * (b - 1);
                p.width_x_m = 2, p.width_y_m = 4;
                p.harvest_x_m = 1.5, p.harvest_y_m = 3;
                l.plots.push_back(p);
            }
    l.guards.push_back({4.0, 12.0, 8.0, 4.0});
    return l;
}

}  // namespace

TEST_CASE("Design columns, harvest areas and guard plots are kept with the trial", "[store][design]") {
    TempDir dir;
    const TrialSpec spec = parse_trial_spec(kSplitToml, "split.toml");
    const Layout given = hand_layout();
    Store::create(dir.file("t.pwdb"), kSplitToml, "split.toml", spec, given, "2026-03-01T08:00:00Z");
    const Store s = Store::open(dir.file("t.pwdb"));
    const Layout& got = s.trial().layout;
    CHECK(got.columns == std::vector<std::string>{"rep", "main", "sub"});
    REQUIRE(got.plots.size() == 8);
    for (std::size_t i = 0; i < 8; ++i) {
        CHECK(got.plots[i].rep == given.plots[i].rep);
        CHECK(got.plots[i].main == given.plots[i].main);
        CHECK(got.plots[i].sub == given.plots[i].sub);
        CHECK(got.plots[i].harvest_x_m == 1.5);
        CHECK(got.plots[i].harvest_y_m == 3.0);
    }
    REQUIRE(got.guards.size() == 1);
    CHECK(got.guards[0].x_m == 4.0);
    CHECK(got.guards[0].width_x_m == 8.0);

    // docs/design.md: the common columns first, then rep, main, sub.
    const CsvTable t = parse_csv(export_plots_csv(s), "plots.csv");
    CHECK(t.header == std::vector<std::string>{"plot", "block", "row", "col", "treatment", "x_m", "y_m", "walk_order",
                                               "tag", "rep", "main", "sub"});
    // Plot 204: block 2, main plot 2, subplot 2, treatment 3 = the crossing's fourth label, Wet × V2.
    const auto& last = t.rows.back();
    CHECK(last[0] == "204");
    CHECK(last[4] == "Wet \xc3\x97 V2");
    CHECK(std::vector<std::string>(last.end() - 3, last.end()) == std::vector<std::string>{"2", "2", "2"});
}

TEST_CASE("A database made before the design columns is migrated with the values its plots had",
          "[store][design][migration]") {
    // Build a version-1 database by hand: migration 1 only, one RCBD trial of 2 treatments x 2 blocks.
    TempDir dir;
    const std::string path = dir.file("old.pwdb");
    pw_test::make_old_database(path, 1);
    const Store s = Store::open(path);
    CHECK(store_schema_version() >= 2);
    const Layout& l = s.trial().layout;
    CHECK(l.columns.empty());
    CHECK(l.guards.empty());
    REQUIRE(l.plots.size() == 4);
    for (const auto& p : l.plots) {
        CHECK(p.rep == 0);
        CHECK(p.main == 0);
        CHECK(p.harvest_x_m == 0.0);
    }
    CHECK(l.plots[3].id == 202);
    // The export of a trial without design columns keeps exactly the common columns.
    CHECK(parse_csv(export_plots_csv(s), "p.csv").header ==
          std::vector<std::string>{"plot", "block", "row", "col", "treatment", "x_m", "y_m", "walk_order", "tag"});
    sqlite3* db = nullptr;
    REQUIRE(sqlite3_open(path.c_str(), &db) == SQLITE_OK);
    sqlite3_stmt* st = nullptr;
    REQUIRE(sqlite3_prepare_v2(db, "PRAGMA user_version", -1, &st, nullptr) == SQLITE_OK);
    REQUIRE(sqlite3_step(st) == SQLITE_ROW);
    CHECK(sqlite3_column_int(st, 0) == store_schema_version());  // migrated forward by open
    sqlite3_finalize(st);
    sqlite3_close(db);
}
