// The station's one-pass check of a handheld bundle's payload (storage/sync.cpp, device_payload_summary,
// reached through import_bundle): it must count and refuse what the check through SQLite's changeset
// iterator does, and a refusal must leave the station's file as it was.
//
// Outside sources the checks rest on:
//   - SQLite's session extension (https://www.sqlite.org/sessionintro.html): the payloads are changesets
//     SQLite wrote, and check_bundle_payload reads them back with SQLite's own iterator
//     (sqlite3changeset_next); its counts, and the rows and values it reads, are the reference for the
//     station's one-pass check and for its reader of the rows (storage/changeset_rows.hpp).
//   - The file's raw bytes (std::ifstream) for "unchanged", and PRAGMA integrity_check through a plain
//     sqlite3 connection for a sound file (https://www.sqlite.org/pragma.html#pragma_integrity_check).
//   - The rule that every row of a handheld's bundle is that handheld's own (docs/sync.md, "Refusals").
#include <catch2/catch.hpp>

#define SQLITE_ENABLE_SESSION
#define SQLITE_ENABLE_PREUPDATE_HOOK
#include <sqlite3.h>

#include <fstream>
#include <map>
#include <sstream>

#include "core/design/layout.hpp"
#include "core/error.hpp"
#include "core/spec/trial_spec.hpp"
#include "core/sync/bundle.hpp"
#include "storage/store.hpp"
#include "storage/sync.hpp"
#include "raw_db.hpp"
#include "temp_dir.hpp"

using namespace pw;

namespace {

using pw_test::TempDir;
using pw_test::file_bytes;
using pw_test::raw_rows;

const char* const kSpec = R"toml([trial]
code = "CHK26"
title = "Payload check trial"
site = "Station"
crop = "wheat"
design = "rcbd"
blocks = 2

[field]
plot_length_m = 5
plot_width_m = 3
alley_m = 1

[gradient]
bearing_deg = 0
label = "slope"

[[treatments]]
label = "Line A"

[[treatments]]
label = "Local check"
check = true

[[traits]]
name = "grain_kg"
unit = "kg"
kind = "number"
min = 0
max = 20
decimals = 2
)toml";

NewObservation value(int plot, const std::string& v, const std::string& device) {
    NewObservation o;
    o.plot = plot;
    o.trait = "grain_kg";
    o.value = v;
    o.number = std::stod(v);
    o.recorded_utc = "2026-06-01T09:00:00Z";
    o.device = device;
    o.observer = "obs-" + device;
    return o;
}

// The station of kSpec, with handheld hh-1 provisioned (hh1.db).
Store station_with_handheld(const TempDir& dir) {
    const TrialSpec spec = parse_trial_spec(kSpec, "chk.toml");
    Store station = Store::create(dir.file("station.db"), kSpec, "chk.toml", spec, design_trial(spec, 7),
                                  "2026-06-01T07:00:00Z");
    provision_device(station, "hh-1", dir.file("hh1.db"), "2026-06-01T08:00:00Z");
    return station;
}

// One value as "type:text" (SQLite's type codes, the text SQLite gives for it).
std::string render(sqlite3_value* v) {
    const unsigned char* t = sqlite3_value_text(v);
    return std::to_string(sqlite3_value_type(v)) + ":" + (t ? reinterpret_cast<const char*>(t) : "");
}

std::string export_of(Store& s) {
    std::string bytes;
    export_bundle(s, "", "2026-06-02T12:00:00Z", [&](const std::string& b) { bytes = b; });
    return bytes;
}

}  // namespace

TEST_CASE("The station counts a handheld bundle's observations and plot events as SQLite's changeset reader does",
          "[sync][import][payload]") {
    TempDir dir;
    Store station = station_with_handheld(dir);
    std::string bundle;
    {
        Store hh = Store::open(dir.file("hh1.db"));
        for (int plot : {101, 102, 201}) hh.add_observation(value(plot, "4.5", "hh-1"));
        PlotEvent ev;
        ev.plot = 202;
        ev.state = PlotState::Damaged;
        ev.flag = "damaged";
        ev.reason = "hail";
        ev.recorded_utc = "2026-06-01T09:30:00Z";
        ev.device = "hh-1";
        ev.observer = "obs-hh-1";
        hh.add_plot_event(ev);
        bundle = export_of(hh);
    }
    const PayloadSummary sqlite_read = check_bundle_payload(decode_bundle(bundle, "hh1.bundle"), "hh1.bundle");
    REQUIRE(sqlite_read.observations == 3);
    REQUIRE(sqlite_read.events == 1);
    const ImportResult r = import_bundle(station, bundle, "hh1.bundle", "2026-06-02T13:00:00Z");
    CHECK(r.observations == sqlite_read.observations);
    CHECK(r.events == sqlite_read.events);
    CHECK(r.applied == 3);
    CHECK(r.duplicates == 0);
}

// The station reads a handheld's rows from the changeset bytes with its own reader, through the table-valued
// functions of storage/changeset_rows.hpp. References: SQLite's own changeset iterator over the same payload
// (sqlite3changeset_next / sqlite3changeset_new), and the handheld's own tables the rows were copied from.
TEST_CASE("The station reads every row and value of a payload as SQLite's changeset iterator does",
          "[sync][import][payload]") {
    TempDir dir;
    Store station = station_with_handheld(dir);
    std::string payload;
    {
        Store hh = Store::open(dir.file("hh1.db"));
        for (int plot : {101, 102, 201, 202}) hh.add_observation(value(plot, plot == 102 ? "0.25" : "4.5", "hh-1"));
        NewObservation fix = value(101, "5.40", "hh-1");
        fix.supersedes = 1;
        fix.note = "re-weighed";
        hh.add_observation(fix);
        NewObservation undo = value(201, "1", "hh-1");
        undo.value.clear();
        undo.number.reset();
        undo.supersedes = 3;
        undo.note = "wrong plot";
        hh.add_observation(undo);
        hh.add_plot_event({202, PlotState::Damaged, "hail", "2026-06-01T09:30:00Z", "hh-1", "obs-hh-1", "damaged"});
        payload = decode_bundle(export_of(hh), "hh1.bundle").payload;
    }
    // SQLite's iterator: each row as its values, by table, in origin_id order.
    std::map<std::string, std::map<std::int64_t, std::string>> sqlite_rows;
    {
        sqlite3_changeset_iter* it = nullptr;
        REQUIRE(sqlite3changeset_start(&it, static_cast<int>(payload.size()), payload.data()) == SQLITE_OK);
        while (sqlite3changeset_next(it) == SQLITE_ROW) {
            const char* table = nullptr;
            int ncol = 0, op = 0, indirect = 0;
            sqlite3changeset_op(it, &table, &ncol, &op, &indirect);
            std::string row;
            sqlite3_value* v = nullptr;
            for (int c = 0; c < ncol; ++c) {
                REQUIRE(sqlite3changeset_new(it, c, &v) == SQLITE_OK);
                row += render(v) + "|";
            }
            sqlite3changeset_new(it, 1, &v);
            sqlite_rows[table][sqlite3_value_int64(v)] = row;
        }
        REQUIRE(sqlite3changeset_finalize(it) == SQLITE_OK);
    }
    REQUIRE(sqlite_rows["sync_observation"].size() == 6);
    REQUIRE(sqlite_rows["sync_plot_event"].size() == 1);
    // The station's reader, through SQL on the station's own connection.
    for (const auto& [table, function] : {std::pair{"sync_observation", "pw_received_observation"},
                                          std::pair{"sync_plot_event", "pw_received_plot_event"}}) {
        sqlite3_stmt* st = nullptr;
        REQUIRE(sqlite3_prepare_v2(station.handle(),
                                   (std::string("SELECT *, ord FROM ") + function + "(?1)").c_str(), -1, &st,
                                   nullptr) == SQLITE_OK);
        sqlite3_bind_blob(st, 1, payload.data(), static_cast<int>(payload.size()), SQLITE_STATIC);
        std::map<std::int64_t, std::string> rows;
        std::int64_t ord = 0, last_id = 0;
        while (sqlite3_step(st) == SQLITE_ROW) {
            const int n = sqlite3_column_count(st) - 1;
            std::string row;
            for (int c = 0; c < n; ++c) row += render(sqlite3_column_value(st, c)) + "|";
            const std::int64_t id = sqlite3_column_int64(st, 1);
            CHECK(id > last_id);                                   // in origin_id order
            CHECK(sqlite3_column_int64(st, n) == ord++);           // ord: the place in that order
            last_id = id;
            rows[id] = row;
        }
        sqlite3_finalize(st);
        CHECK(rows == sqlite_rows[table]);
    }
    // And what the handheld's table holds, value by value (the withdrawal's NULL number, the real 0.25).
    const auto& obs = sqlite_rows["sync_observation"];
    CHECK(obs.at(2) == "3:hh-1|1:2|1:102|3:grain_kg|3:0.25|2:0.25|3:2026-06-01T09:00:00Z|3:hh-1|3:obs-hh-1|5:|3:|");
    CHECK(obs.at(6) == "3:hh-1|1:6|1:201|3:grain_kg|3:|5:|3:2026-06-01T09:00:00Z|3:hh-1|3:obs-hh-1|1:3|3:wrong plot|");
}

TEST_CASE("A real that is not a number reads as NULL at the station, as in SQLite's iterator, and no row is left out",
          "[sync][import][payload]") {
    // SQLite never writes a NaN into a changeset (a NaN bound to SQL is NULL), but a forged bundle can hold
    // one. SQLite's iterator reads it as NULL; the station's reader once read a real there, counted the row
    // as a correction, and left the plain value out of the import (found by tests/fuzz/fuzz_bundle.cpp).
    TempDir dir;
    Store station = station_with_handheld(dir);
    Bundle b;
    {
        Store hh = Store::open(dir.file("hh1.db"));
        hh.add_observation(value(101, "4.5", "hh-1"));
        b = decode_bundle(export_of(hh), "hh1.bundle");
    }
    // The one row ends with its supersedes (type 5, NULL) and its note (type 3, length 0): the changeset
    // format of sqlite3session.h. The supersedes becomes a real (type 2) with a NaN's 8 big-endian bytes.
    const std::string tail("\x05\x03\x00", 3);
    REQUIRE(b.payload.size() > tail.size());
    REQUIRE(b.payload.compare(b.payload.size() - 3, 3, tail) == 0);
    b.payload.replace(b.payload.size() - 3, 1, std::string("\x02\x7f\xf8\x00\x00\x00\x00\x00\x01", 9));
    {
        sqlite3_changeset_iter* it = nullptr;
        REQUIRE(sqlite3changeset_start(&it, static_cast<int>(b.payload.size()), b.payload.data()) == SQLITE_OK);
        REQUIRE(sqlite3changeset_next(it) == SQLITE_ROW);
        sqlite3_value* v = nullptr;
        REQUIRE(sqlite3changeset_new(it, 9, &v) == SQLITE_OK);
        CHECK(sqlite3_value_type(v) == SQLITE_NULL);
        CHECK(sqlite3changeset_next(it) == SQLITE_DONE);
        REQUIRE(sqlite3changeset_finalize(it) == SQLITE_OK);
    }
    const std::string forged = encode_bundle(b.header, b.payload);
    const ImportResult r = import_bundle(station, forged, "hh1.bundle", "2026-06-02T13:00:00Z");
    CHECK(r.observations == 1);
    CHECK(r.applied == 1);
    CHECK(raw_rows(dir.file("station.db"), "SELECT plot, value, supersedes IS NULL FROM observation") ==
          "101|4.5|1\n");
}

TEST_CASE("A payload holding one origin key twice is refused by both checks and changes nothing",
          "[sync][import][payload][refuse]") {
    // SQLite's session extension records one change per primary key (sessionintro.html), so a changeset it
    // wrote never holds a key twice; a forged one can. The station once took in a plain value and a correction
    // under one key, and the correction was never applied (found by tests/fuzz/fuzz_bundle.cpp).
    TempDir dir;
    Bundle b;
    {
        Store station = station_with_handheld(dir);
        Store hh = Store::open(dir.file("hh1.db"));
        hh.add_observation(value(101, "4.5", "hh-1"));   // origin id 1
        hh.add_observation(value(102, "4.6", "hh-1"));   // 2
        NewObservation fix = value(101, "5.40", "hh-1");  // 3, correcting 1
        fix.supersedes = 1;
        fix.note = "re-weighed";
        hh.add_observation(fix);
        b = decode_bundle(export_of(hh), "hh1.bundle");
    }
    // Each row starts with its origin (type 3, length 4, "hh-1") and origin id (type 1, 8 big-endian bytes):
    // the changeset format of sqlite3session.h. The correction's id 3 becomes 2, the plain value's.
    const std::string third("\x03\x04hh-1\x01\x00\x00\x00\x00\x00\x00\x00\x03", 15);
    const std::size_t at = b.payload.find(third);
    REQUIRE(at != std::string::npos);
    b.payload[at + 14] = '\x02';
    const std::string message = "the payload holds two sync_observation rows of origin 'hh-1' with origin id 2";
    CHECK_THROWS_WITH(check_bundle_payload(b, "hh1.bundle"), Catch::Contains(message));
    const std::string before = file_bytes(dir.file("station.db"));
    {
        Store station = Store::open(dir.file("station.db"));
        CHECK_THROWS_WITH(import_bundle(station, encode_bundle(b.header, b.payload), "hh1.bundle", "2026-06-02T13:00:00Z"),
                          Catch::StartsWith("hh1.bundle: refused, nothing imported: " + message));
    }
    CHECK(file_bytes(dir.file("station.db")) == before);
}

TEST_CASE("A handheld bundle holding another device's rows is refused at the station and changes nothing",
          "[sync][import][payload][refuse]") {
    TempDir dir;
    const TrialSpec spec = parse_trial_spec(kSpec, "chk.toml");
    {
        Store station = Store::create(dir.file("station.db"), kSpec, "chk.toml", spec, design_trial(spec, 7),
                                      "2026-06-01T07:00:00Z");
        provision_device(station, "hh-1", dir.file("hh1.db"), "2026-06-01T08:00:00Z");
        provision_device(station, "hh-2", dir.file("hh2.db"), "2026-06-01T08:00:00Z");
    }
    std::string relabelled;
    {
        Store hh = Store::open(dir.file("hh1.db"));
        hh.add_observation(value(101, "4.5", "hh-1"));
        // hh-1's rows under a header naming hh-2, with a checksum that matches (encode_bundle writes it).
        Bundle b = decode_bundle(export_of(hh), "hh1.bundle");
        b.header.device = "hh-2";
        relabelled = encode_bundle(b.header, b.payload);
    }
    // SQLite's reader, through check_bundle_payload, sees the same fault.
    CHECK_THROWS_WITH(check_bundle_payload(decode_bundle(relabelled, "hh2.bundle"), "hh2.bundle"),
                      Catch::Contains("holds a row of device 'hh-1' in a bundle of device 'hh-2'"));
    const std::string before = file_bytes(dir.file("station.db"));
    {
        Store station = Store::open(dir.file("station.db"));
        CHECK_THROWS_WITH(import_bundle(station, relabelled, "hh2.bundle", "2026-06-02T13:00:00Z"),
                          Catch::StartsWith("hh2.bundle: refused, nothing imported: the payload holds a row of device "
                                            "'hh-1' in a bundle of device 'hh-2'"));
    }
    CHECK(file_bytes(dir.file("station.db")) == before);
    CHECK(raw_rows(dir.file("station.db"), "PRAGMA integrity_check") == "ok\n");
}
