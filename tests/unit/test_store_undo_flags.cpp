// The store's side of undo and of the spec's flags (schema migration 4): a withdrawal (an undo back to no
// value) leaves its plot and trait without a value for every reader, a flag that treats a plot as missing
// takes its values out of the export and the analysis, flags are checked against the trial's spec, and a
// version-3 database opens, migrates and keeps its old plot events readable.
//
// Outside sources the checks rest on:
//   - SQLite's documented behaviour (https://www.sqlite.org/lang_altertable.html, lang_createtrigger.html):
//     rows that exist when a column is added read its DEFAULT; RAISE(ABORT) in a BEFORE trigger fails the
//     statement with SQLITE_CONSTRAINT. The file is read through a plain sqlite3 connection of the test's
//     own, not through the Store.
//   - Yates' missing-plot formula for a randomized complete block design, x = (rB + tT - G) / ((r-1)(t-1))
//     with B, T, G the block, treatment and grand totals of the observed plots (Yates 1933; Gomez & Gomez
//     1984; DOMAIN [18]): the test computes it from the values it recorded.
//   - GLP record keeping (OECD GLP principles, DOMAIN [24]): nothing recorded is hidden; the undone value
//     stays in the history.
//   - The store's contract (storage/store.hpp, docs/schema.md); expected rows are the hand-made inputs.
#include <catch2/catch.hpp>

#include <sqlite3.h>
#include <stdlib.h>

#include <fmt/format.h>

#include <filesystem>
#include <map>
#include <nlohmann/json.hpp>
#include <string>

#include "core/design/layout.hpp"
#include "core/error.hpp"
#include "core/spec/trial_spec.hpp"
#include "firmware_app/app.hpp"
#include "storage/csv_table.hpp"
#include "storage/schema.hpp"
#include "storage/store.hpp"
#include "old_database.hpp"
#include "raw_db.hpp"
#include "temp_dir.hpp"

using namespace pw;

namespace {

using pw_test::TempDir;
using pw_test::raw_rows;
using pw_test::raw_exec;

const char* const kSpec = R"toml([trial]
code = "UNDO26"
title = "Undo and flags"
site = "S"
crop = "wheat"
design = "rcbd"
blocks = 3
seed = 26

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
[[treatments]]
label = "C"

[[traits]]
name = "grain_kg"
unit = "kg"
kind = "number"
min = 0
max = 40

[[flags]]
name = "lodged"
analysis = "keep"

[[flags]]
name = "washout"
label = "washed"
analysis = "missing"
)toml";

// Invented grain weights by block (1..3) and treatment (0..2), deliberately not additive.
const double kValue[3][3] = {{10.2, 12.5, 13.1}, {11.4, 12.9, 14.8}, {12.1, 14.6, 15.3}};

struct Trial {
    TempDir dir;
    std::string path = dir.file("undo.pwdb");
    TrialSpec spec = parse_trial_spec(kSpec, "undo.toml");
    Store store = Store::create(path, kSpec, "undo.toml", spec, design_trial(spec, 26), "2026-06-01T07:00:00Z");
    std::map<int, std::int64_t> id_of;  // plot -> its grain_kg observation

    const PlotPlacement& plot_at(int block, int treatment) const {
        for (const auto& p : store.trial().layout.plots)
            if (p.block == block && p.treatment == treatment) return p;
        throw std::runtime_error("no such plot");
    }
    void record_all() {
        for (const auto& p : store.trial().layout.plots) {
            NewObservation o;
            o.plot = p.id;
            o.trait = "grain_kg";
            o.number = kValue[p.block - 1][p.treatment];
            o.value = fmt::format("{:.2f}", *o.number);
            o.recorded_utc = "2026-06-01T08:00:00Z";
            o.device = "hh";
            o.observer = "tester";
            id_of[p.id] = store.add_observation(o);
        }
    }
    NewObservation withdrawal(int plot) const {
        NewObservation w;
        w.plot = plot;
        w.trait = "grain_kg";
        w.recorded_utc = "2026-06-01T08:30:00Z";
        w.device = "hh";
        w.observer = "tester";
        w.supersedes = id_of.at(plot);
        w.note = "undone: no value";
        return w;
    }
};

PlotEvent event(int plot, PlotState state, const std::string& flag, const std::string& note) {
    return {plot, state, note, "2026-06-01T09:00:00Z", "hh", "tester", flag};
}

}  // namespace

TEST_CASE("A withdrawn value is absent from the current values and the export, and stays in the history",
          "[store][undo]") {
    Trial t;
    t.record_all();
    const PlotPlacement& p = t.plot_at(2, 1);
    t.store.add_observation(t.withdrawal(p.id));
    for (const auto& row : t.store.current_observations()) CHECK(row.record.obs.plot != p.id);
    CHECK(t.store.current_observations().size() == 8);
    const CsvTable csv = parse_csv(export_observations_csv(t.store), "obs.csv");
    CHECK(csv.rows.size() == 8);
    for (const auto& r : csv.rows) CHECK(r[0] != std::to_string(p.id));
    const auto history = t.store.history(p.id);
    REQUIRE(history.size() == 2);
    CHECK(history[0].obs.value == "12.90");
    CHECK(history[1].obs.value.empty());
    // The recorder's sink still sees the withdrawal, so a later value supersedes it (one chain).
    const auto current = t.store.current_for_plot(p.id);
    REQUIRE(current.size() == 1);
    CHECK(current[0].obs.value.empty());
    CHECK(raw_rows(t.path, "SELECT quote(value), quote(number), note FROM observation WHERE id = " +
                               std::to_string(current[0].id)) == "''|NULL|undone: no value\n");
}

TEST_CASE("A withdrawal must supersede a value and carry no number, in the store and in plain SQL",
          "[store][undo]") {
    Trial t;
    t.record_all();
    const int plot = t.plot_at(1, 0).id;
    NewObservation w = t.withdrawal(plot);
    w.supersedes.reset();
    CHECK_THROWS_AS(t.store.add_observation(w), InputError);
    w = t.withdrawal(plot);
    w.number = 1.0;
    CHECK_THROWS_AS(t.store.add_observation(w), InputError);
    // Behind the store's back the schema's trigger refuses it the same way (SQLITE_CONSTRAINT).
    const int rc = raw_exec(t.path,
                            "INSERT INTO observation (plot, trait, value, number, recorded_utc, device, observer, "
                            "supersedes, note) VALUES (" + std::to_string(plot) +
                                ", 'grain_kg', '', NULL, '2026-06-01T09:00:00Z', 'sql', 'sql', NULL, '')");
    CHECK((rc & 0xff) == SQLITE_CONSTRAINT);
    CHECK(t.store.observation_count() == 9);
}

TEST_CASE("A flag is one of the spec's, and its state says what it means for the data", "[store][flags]") {
    Trial t;
    const int plot = t.plot_at(1, 1).id;
    CHECK_THROWS_WITH(t.store.add_plot_event(event(plot, PlotState::Damaged, "damaged", "hail")),
                      Catch::Contains("its flags: lodged, washout"));
    CHECK_THROWS_WITH(t.store.add_plot_event(event(plot, PlotState::Damaged, "washout", "ditch")),
                      Catch::Contains("treats the plot as missing"));
    t.store.add_plot_event(event(plot, PlotState::Damaged, "lodged", "stems flat"));
    t.store.add_plot_event(event(plot, PlotState::Missing, "washout", "ditch"));
    const auto ev = t.store.events_for_plot(plot);
    REQUIRE(ev.size() == 2);
    CHECK(ev[0].flag == "lodged");
    CHECK(ev[1].flag == "washout");
    CHECK(ev[1].state == PlotState::Missing);
    CHECK(raw_rows(t.path, "SELECT flag, state, reason FROM plot_event ORDER BY id") ==
          "lodged|damaged|stems flat\nwashout|missing|ditch\n");
}

TEST_CASE("Analysis and export treat a withdrawn value and a plot flagged as missing as missing values",
          "[store][undo][flags][analysis]") {
    Trial t;
    t.record_all();
    const PlotPlacement& gone = t.plot_at(2, 1);
    const PlotPlacement& lodged = t.plot_at(3, 2);
    const bool withdrawn = GENERATE(true, false);
    CAPTURE(withdrawn);
    if (withdrawn)
        t.store.add_observation(t.withdrawal(gone.id));
    else
        t.store.add_plot_event(event(gone.id, PlotState::Missing, "washout", "ditch overflowed"));
    t.store.add_plot_event(event(lodged.id, PlotState::Damaged, "lodged", "stems flat"));  // values kept

    const CsvTable csv = parse_csv(export_observations_csv(t.store), "obs.csv");
    CHECK(csv.rows.size() == 8);
    for (const auto& r : csv.rows) CHECK(r[0] != std::to_string(gone.id));

    const auto j = nlohmann::json::parse(app::analyze_trait(t.store, "grain_kg", true));
    REQUIRE(j["missing"].size() == 1);
    CHECK(j["missing"][0]["block"] == "2");
    CHECK(j["missing"][0]["treatment"] == "B");
    if (!withdrawn) CHECK_THAT(j["missing"][0]["reason"].get<std::string>(), Catch::Contains("ditch overflowed"));
    // Yates' estimate from the eight observed values (r = 3 blocks, t = 3 treatments).
    double block2 = 0, trtB = 0, grand = 0;
    for (int b = 1; b <= 3; ++b)
        for (int tr = 0; tr < 3; ++tr) {
            if (b == 2 && tr == 1) continue;
            grand += kValue[b - 1][tr];
            if (b == 2) block2 += kValue[b - 1][tr];
            if (tr == 1) trtB += kValue[b - 1][tr];
        }
    const double yates = (3 * block2 + 3 * trtB - grand) / ((3 - 1) * (3 - 1));
    CHECK(j["missing"][0]["estimate"].get<double>() == Approx(yates).epsilon(1e-10));
    bool lodged_note = false;
    for (const auto& n : j["notes"])
        lodged_note |= n.get<std::string>().find(fmt::format("plot {} flagged", lodged.id)) != std::string::npos &&
                       n.get<std::string>().find("stems flat") != std::string::npos;
    CHECK(lodged_note);
}

TEST_CASE("A version-3 database migrates to flags and undo, its old plot events read as their state",
          "[store][flags][migration]") {
    TempDir dir;
    const std::string path = dir.file("v3.pwdb");
    // Migrations 1 to 3 only, with the rows a version-3 recorder wrote: values and two plot events.
    pw_test::make_old_database(
        path, 3,
        "INSERT INTO observation (plot, trait, value, number, recorded_utc, device, observer, note) VALUES"
        " (101, 'grain_kg', '4.10', 4.1, '2025-06-01T08:00:00Z', 'hh', 'o', ''),"
        " (102, 'grain_kg', '3.90', 3.9, '2025-06-01T08:01:00Z', 'hh', 'o', '');"
        "INSERT INTO plot_event (plot, state, reason, recorded_utc, device, observer) VALUES"
        " (101, 'damaged', 'hail', '2025-06-01T08:02:00Z', 'hh', 'o'),"
        " (102, 'missing', 'washed out', '2025-06-01T08:03:00Z', 'hh', 'o');");
    REQUIRE(raw_rows(path, "PRAGMA user_version") == "3\n");
    Store s = Store::open(path);
    // Every later migration is applied too (migration 5, station sync, adds tables only).
    CHECK(raw_rows(path, "PRAGMA user_version") == std::to_string(store_schema_version()) + "\n");
    CHECK(store_schema_version() >= 4);
    // The old rows are unchanged in the file and read with their state as their flag.
    CHECK(raw_rows(path, "SELECT plot, state, flag FROM plot_event ORDER BY id") == "101|damaged|\n102|missing|\n");
    const auto ev = s.plot_events();
    REQUIRE(ev.size() == 2);
    CHECK(ev[0].flag == "damaged");
    CHECK(ev[1].flag == "missing");
    CHECK(s.trial().spec.flags.size() == 3);  // the spec has no [[flags]]: damaged, missing, lodged
    // Plot 102 was flagged missing: its value is no longer a value in force; 101 (damaged) keeps its value.
    const auto cur = s.current_observations();
    REQUIRE(cur.size() == 1);
    CHECK(cur[0].record.obs.plot == 101);
    // New rows: a default flag, and an undo back to no value.
    s.add_plot_event(event(201, PlotState::Damaged, "lodged", "leaning"));
    NewObservation w;
    w.plot = 101;
    w.trait = "grain_kg";
    w.recorded_utc = "2026-06-01T08:00:00Z";
    w.device = "hh";
    w.observer = "o";
    w.supersedes = 1;
    w.note = "undone: no value";
    s.add_observation(w);
    CHECK(s.current_observations().empty());
    CHECK(raw_rows(path, "SELECT plot, state, flag FROM plot_event WHERE id = 3") == "201|damaged|lodged\n");
    CHECK(raw_rows(path, "PRAGMA integrity_check") == "ok\n");
}
