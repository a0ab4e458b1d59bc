// The SQLite trial store: creating and reopening a trial, refusing files that are not plotwright
// databases, append-only observations kept by the database itself, corrections, durability and refused
// writes that change nothing.
//
// Outside sources the checks rest on:
//   - SQLite's documented behaviour (https://www.sqlite.org/docs.html): PRAGMA integrity_check answers the
//     single row "ok" for a sound file; RAISE(ABORT) in a BEFORE trigger fails the statement with
//     SQLITE_CONSTRAINT; PRAGMA journal_mode answers "wal" when write-ahead logging is on; a second
//     connection sees every committed row. Each check talks to the file through a plain sqlite3
//     connection of its own, not through the Store.
//   - GLP record keeping (OECD GLP principles, DOMAIN [24]): a correction never hides the old value and
//     says who, when and why.
//   - The store's contract in storage/store.hpp and docs/schema.md: the layout and spec given to create
//     are what open gives back (the expected values are the hand-built inputs below).
//   - Plot numbering block * 100 + position (common practice).
#include <catch2/catch.hpp>

#include <sqlite3.h>
#include <stdlib.h>
#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <sstream>

#include "core/error.hpp"
#include "core/design/layout.hpp"
#include "core/spec/trial_spec.hpp"
#include "storage/csv_table.hpp"
#include "storage/store.hpp"
#include "temp_dir.hpp"

using namespace pw;

namespace {

// A fresh directory per test, removed afterwards.
using pw_test::TempDir;

const char* const kSpecToml = R"toml(# sorghum nitrogen rates, store tests
[trial]
code = "STOR26"
title = "Sorghum nitrogen rates"
site = "North field"
crop = "sorghum"
design = "rcbd"
blocks = 2
seed = 42

[field]
plot_length_m = 5.0
plot_width_m = 3.0
alley_m = 1.0
plot_gap_m = 0.5

[gradient]
bearing_deg = 0
label = "slope down to the creek"

[[treatments]]
label = "N0"
description = "no nitrogen"
check = true

[[treatments]]
label = "N60"

[[treatments]]
label = "N120, split"

[[traits]]
name = "grain_kg"
unit = "kg"
kind = "number"
min = 0
max = 40
decimals = 2

[[traits]]
name = "lodging"
kind = "score"
min = 1
max = 9

[[traits]]
name = "remark"
kind = "text"
)toml";

// The largest prime below 2^64 (from memory; 2^64 - 59): above INT64_MAX, so it only survives a round
// trip if the seed is not squeezed into SQLite's signed INTEGER.
constexpr std::uint64_t kBigSeed = 18446744073709551557ULL;

// 2 blocks x 3 treatments, one row per block, plots 5 m (y) by 3 m (x) with 0.5 m gaps and a 1 m alley;
// serpentine walking order (block 2 walked right to left). Built by hand, independent of core/design.
Layout hand_layout() {
    Layout l;
    l.seed = kBigSeed;
    l.algorithm = "hand-built/1";
    l.field_x_m = 3 * 3.0 + 2 * 0.5;
    l.field_y_m = 2 * 5.0 + 1.0;
    l.notes = {"built by hand for the store tests"};
    const int treatment_in[2][3] = {{1, 0, 2}, {2, 1, 0}};
    int walk = 0;
    for (int b = 1; b <= 2; ++b) {
        for (int pos = 1; pos <= 3; ++pos) {
            PlotPlacement p;
            p.id = b * 100 + pos;
            p.block = b;
            p.position = pos;
            p.walk_order = ++walk;
            p.row = b;
            p.col = b == 1 ? pos : 4 - pos;
            p.treatment = treatment_in[b - 1][pos - 1];
            p.width_x_m = 3.0;
            p.width_y_m = 5.0;
            p.x_m = 1.5 + (p.col - 1) * 3.5;
            p.y_m = 2.5 + (b - 1) * 6.0;
            l.plots.push_back(p);
        }
    }
    return l;
}

TrialSpec spec() { return parse_trial_spec(kSpecToml, "stor26.toml"); }

Store make_store(const std::string& path) {
    return Store::create(path, kSpecToml, "stor26.toml", spec(), hand_layout(), "2026-05-02T08:00:00Z");
}

NewObservation obs(int plot, const std::string& trait, const std::string& value, std::optional<double> number,
                   const std::string& when) {
    NewObservation o;
    o.plot = plot;
    o.trait = trait;
    o.value = value;
    o.number = number;
    o.recorded_utc = when;
    o.device = "handheld-7";
    o.observer = "amina";
    return o;
}

// A plain sqlite3 connection of the test's own, to look at the file behind the Store's back.
struct RawDb {
    sqlite3* db = nullptr;
    explicit RawDb(const std::string& path, int flags = SQLITE_OPEN_READWRITE) {
        if (sqlite3_open_v2(path.c_str(), &db, flags, nullptr) != SQLITE_OK)
            throw std::runtime_error("cannot open " + path + ": " + sqlite3_errmsg(db));
    }
    ~RawDb() { sqlite3_close_v2(db); }
    // Runs SQL; returns the result code and the message.
    std::pair<int, std::string> exec(const std::string& sql) const {
        char* err = nullptr;
        int rc = sqlite3_exec(db, sql.c_str(), nullptr, nullptr, &err);
        std::string msg = err ? err : "";
        sqlite3_free(err);
        return {rc, msg};
    }
    // Every row of a query, columns separated by '|', rows by '\n' (NULL shown as "NULL").
    std::string rows(const std::string& sql) const {
        sqlite3_stmt* st = nullptr;
        if (sqlite3_prepare_v2(db, sql.c_str(), -1, &st, nullptr) != SQLITE_OK)
            throw std::runtime_error(std::string("prepare: ") + sqlite3_errmsg(db));
        std::string out;
        while (sqlite3_step(st) == SQLITE_ROW) {
            for (int c = 0; c < sqlite3_column_count(st); ++c) {
                if (c) out += '|';
                const unsigned char* t = sqlite3_column_text(st, c);
                out += t ? reinterpret_cast<const char*>(t) : "NULL";
            }
            out += '\n';
        }
        sqlite3_finalize(st);
        return out;
    }
    std::string one(const std::string& sql) const {
        std::string r = rows(sql);
        if (!r.empty() && r.back() == '\n') r.pop_back();
        return r;
    }
};

// Everything a plotwright database holds, in a fixed order: header pragmas, schema, every table.
std::string dump(const std::string& path) {
    RawDb raw(path, SQLITE_OPEN_READONLY);
    std::string out = "user_version " + raw.one("PRAGMA user_version") + "\n";
    out += "application_id " + raw.one("PRAGMA application_id") + "\n";
    out += raw.rows("SELECT type, name, sql FROM sqlite_schema ORDER BY type, name");
    for (const char* table : {"trial", "treatment", "trait", "plot", "observation", "plot_event"})
        out += std::string("-- ") + table + "\n" + raw.rows(std::string("SELECT * FROM ") + table + " ORDER BY 1");
    return out;
}

std::string read_file(const std::string& path) {
    std::ifstream in(path, std::ios::binary);
    std::ostringstream s;
    s << in.rdbuf();
    return s.str();
}

}  // namespace

TEST_CASE("A created trial opens again with its spec text, spec and layout unchanged", "[store]") {
    TempDir dir;
    const std::string path = dir.file("stor26.pwdb");
    const Layout given = hand_layout();
    { Store s = make_store(path); }

    Store s = Store::open(path);
    const StoredTrial& t = s.trial();
    // Expected: the inputs given to create (store.hpp: "the spec text exactly as given").
    CHECK(t.spec_toml == kSpecToml);
    CHECK(t.spec_source == "stor26.toml");
    CHECK(t.created_utc == "2026-05-02T08:00:00Z");
    CHECK(t.spec.code == "STOR26");
    CHECK(t.spec.title == "Sorghum nitrogen rates");
    REQUIRE(t.spec.treatments.size() == 3);
    CHECK(t.spec.treatments[0].label == "N0");
    CHECK(t.spec.treatments[0].check);
    CHECK(t.spec.treatments[2].label == "N120, split");
    REQUIRE(t.spec.traits.size() == 3);
    CHECK(t.spec.traits[0].name == "grain_kg");
    CHECK(t.spec.traits[1].kind == TraitKind::Score);

    CHECK(t.layout.seed == kBigSeed);
    CHECK(t.layout.algorithm == "hand-built/1");
    CHECK(t.layout.field_x_m == given.field_x_m);
    CHECK(t.layout.field_y_m == given.field_y_m);
    CHECK(t.layout.notes == given.notes);
    REQUIRE(t.layout.plots.size() == given.plots.size());
    for (std::size_t i = 0; i < given.plots.size(); ++i) {
        const PlotPlacement& a = t.layout.plots[i];
        const PlotPlacement& e = given.plots[i];
        CAPTURE(i, e.id);
        CHECK(a.id == e.id);
        CHECK(a.block == e.block);
        CHECK(a.position == e.position);
        CHECK(a.walk_order == e.walk_order);
        CHECK(a.row == e.row);
        CHECK(a.col == e.col);
        CHECK(a.treatment == e.treatment);
        // Doubles are stored as IEEE 754 binary64 REAL (sqlite.org/datatype3.html): exact round trip.
        CHECK(a.x_m == e.x_m);
        CHECK(a.y_m == e.y_m);
        CHECK(a.width_x_m == e.width_x_m);
        CHECK(a.width_y_m == e.width_y_m);
    }
}

TEST_CASE("The file is a WAL-mode SQLite database marked with the schema version, the seed as decimal text",
          "[store]") {
    TempDir dir;
    const std::string path = dir.file("stor26.pwdb");
    Store s = make_store(path);
    RawDb raw(path);
    // SQLite docs: PRAGMA journal_mode answers the mode in force; the mode is persistent for WAL.
    CHECK(raw.one("PRAGMA journal_mode") == "wal");
    CHECK(raw.one("PRAGMA user_version") == std::to_string(store_schema_version()));
    // The seed above INT64_MAX, stored as its decimal digits (docs/schema.md).
    CHECK(raw.one("SELECT typeof(seed), seed FROM trial") == "text|18446744073709551557");
    // STRICT tables (sqlite.org/stricttables.html) are listed with strict = 1 by PRAGMA table_list.
    CHECK(raw.one("SELECT count(*) FROM pragma_table_list WHERE schema = 'main' AND name IN "
                  "('trial','treatment','trait','plot','observation','plot_event') AND strict = 1") == "6");
}

TEST_CASE("A trial laid out by the design engine is stored and read back", "[store]") {
    TempDir dir;
    const std::string path = dir.file("designed.pwdb");
    const TrialSpec sp = spec();
    const Layout designed = design_trial(sp, 42);
    { Store s = Store::create(path, kSpecToml, "stor26.toml", sp, designed, "2026-05-02T08:00:00Z"); }
    Store s = Store::open(path);
    REQUIRE(s.trial().layout.plots.size() == designed.plots.size());
    for (std::size_t i = 0; i < designed.plots.size(); ++i) {
        CHECK(s.trial().layout.plots[i].id == designed.plots[i].id);
        CHECK(s.trial().layout.plots[i].treatment == designed.plots[i].treatment);
        CHECK(s.trial().layout.plots[i].x_m == designed.plots[i].x_m);
    }
    CHECK(s.trial().layout.algorithm == designed.algorithm);
}

TEST_CASE("Create refuses an existing file, names it and leaves it untouched", "[store]") {
    TempDir dir;
    const std::string path = dir.file("notes.txt");
    { std::ofstream(path) << "field notes, not a database\n"; }
    try {
        make_store(path);
        FAIL("create accepted an existing file");
    } catch (const StoreError& e) {
        CHECK_THAT(e.what(), Catch::Contains(path) && Catch::Contains("already exists"));
    }
    CHECK(read_file(path) == "field notes, not a database\n");
}

TEST_CASE("Create leaves no file behind when the layout is refused", "[store]") {
    TempDir dir;
    const std::string path = dir.file("bad.pwdb");
    Layout l = hand_layout();
    l.plots[4].treatment = 7;  // the spec has 3 treatments
    CHECK_THROWS_AS(Store::create(path, kSpecToml, "stor26.toml", spec(), l, "2026-05-02T08:00:00Z"), StoreError);
    CHECK_FALSE(std::filesystem::exists(path));
    CHECK_FALSE(std::filesystem::exists(path + "-wal"));
}

TEST_CASE("Open refuses files that are not plotwright databases, with a clear message", "[store][migration]") {
    TempDir dir;
    SECTION("a missing file") {
        const std::string path = dir.file("absent.pwdb");
        CHECK_THROWS_WITH(Store::open(path), Catch::Contains(path) && Catch::Contains("no such file"));
        CHECK_FALSE(std::filesystem::exists(path));
    }
    SECTION("a file that is not SQLite") {
        // Not an SQLite file: the header string "SQLite format 3\0" (sqlite.org/fileformat.html) is absent.
        const std::string path = dir.file("plots.csv");
        { std::ofstream(path) << std::string(200, 'x') << "plot,block\r\n101,1\r\n" << std::string(4096, 'y'); }
        CHECK_THROWS_WITH(Store::open(path), Catch::Contains(path) && Catch::Contains("not an SQLite database"));
    }
    SECTION("an SQLite database at user_version 0 with no tables") {
        const std::string path = dir.file("empty.sqlite");
        {
            RawDb raw(path, SQLITE_OPEN_READWRITE | SQLITE_OPEN_CREATE);
            REQUIRE(raw.exec("CREATE TABLE scratch (a); DROP TABLE scratch;").first == SQLITE_OK);
        }
        CHECK_THROWS_WITH(Store::open(path), Catch::Contains("not a plotwright database"));
    }
    SECTION("another program's SQLite database") {
        const std::string path = dir.file("other.sqlite");
        {
            RawDb raw(path, SQLITE_OPEN_READWRITE | SQLITE_OPEN_CREATE);
            REQUIRE(raw.exec("CREATE TABLE plot (id INTEGER PRIMARY KEY); PRAGMA user_version = 1;").first ==
                    SQLITE_OK);
        }
        CHECK_THROWS_WITH(Store::open(path), Catch::Contains("not a plotwright database"));
    }
}

TEST_CASE("Open refuses a database written by a newer schema and leaves it as it is", "[store][migration]") {
    TempDir dir;
    const std::string path = dir.file("future.pwdb");
    { Store s = make_store(path); }
    const int newer = store_schema_version() + 1;
    {
        RawDb raw(path);
        REQUIRE(raw.exec("PRAGMA user_version = " + std::to_string(newer)).first == SQLITE_OK);
    }
    CHECK_THROWS_WITH(Store::open(path), Catch::Contains("schema version " + std::to_string(newer)) &&
                                             Catch::Contains("newer"));
    RawDb raw(path, SQLITE_OPEN_READONLY);
    CHECK(raw.one("PRAGMA user_version") == std::to_string(newer));
}

TEST_CASE("A database marked as plotwright but holding no schema is refused", "[store][migration]") {
    TempDir dir;
    const std::string path = dir.file("half.pwdb");
    {
        RawDb raw(path, SQLITE_OPEN_READWRITE | SQLITE_OPEN_CREATE);
        // "PLWT" as a big-endian integer, the application id plotwright writes (docs/schema.md).
        REQUIRE(raw.exec("PRAGMA application_id = 1347180372").first == SQLITE_OK);
    }
    CHECK_THROWS_WITH(Store::open(path), Catch::Contains("not a plotwright database") &&
                                             Catch::Contains("user_version 0"));
}

TEST_CASE("Observations and plot events cannot be updated or deleted, even with plain SQL", "[store][append-only]") {
    TempDir dir;
    const std::string path = dir.file("stor26.pwdb");
    Store s = make_store(path);
    const auto id = s.add_observation(obs(101, "grain_kg", "12.40", 12.4, "2026-09-20T10:00:00Z"));
    s.add_plot_event({102, PlotState::Damaged, "hail", "2026-09-20T10:01:00Z", "handheld-7", "amina"});
    const std::string before = dump(path);

    RawDb raw(path);
    // SQLite: RAISE(ABORT, msg) in a BEFORE trigger fails the statement with SQLITE_CONSTRAINT and msg.
    for (const std::string& sql : {"UPDATE observation SET value = '99.00' WHERE id = " + std::to_string(id),
                                  std::string("DELETE FROM observation"),
                                  std::string("UPDATE plot_event SET state = 'normal'"),
                                  std::string("DELETE FROM plot_event"),
                                  std::string("UPDATE plot SET treatment = 0 WHERE id = 101"),
                                  std::string("DELETE FROM trial")}) {
        CAPTURE(sql);
        auto [rc, msg] = raw.exec(sql);
        CHECK(rc == SQLITE_CONSTRAINT);
        CHECK_THAT(msg, Catch::Contains("append-only") || Catch::Contains("fixed once created"));
    }
    CHECK(dump(path) == before);
}

TEST_CASE("A correction supersedes the original, which stays in the history", "[store][append-only]") {
    TempDir dir;
    Store s = make_store(dir.file("stor26.pwdb"));
    const auto first = s.add_observation(obs(101, "grain_kg", "12.40", 12.4, "2026-09-20T10:00:00Z"));
    s.add_observation(obs(101, "lodging", "3", 3.0, "2026-09-20T10:00:10Z"));
    NewObservation fix = obs(101, "grain_kg", "21.40", 21.4, "2026-09-20T10:05:00Z");
    fix.supersedes = first;
    fix.note = "digits swapped when typing";
    const auto second = s.add_observation(fix);

    // GLP: the old value is never hidden; the current value is the correction.
    const auto current = s.current_for_plot(101);
    REQUIRE(current.size() == 2);
    CHECK(current[0].id == second);  // trait order: grain_kg before lodging
    CHECK(current[0].obs.value == "21.40");
    CHECK(current[0].obs.note == "digits swapped when typing");
    CHECK(current[1].obs.trait == "lodging");
    const auto hist = s.history(101);
    REQUIRE(hist.size() == 3);
    CHECK(hist[0].id == first);
    CHECK(hist[0].obs.value == "12.40");
    CHECK(hist[2].obs.supersedes == first);
    CHECK(s.observation_count() == 3);

    SECTION("an observation is superseded at most once") {
        NewObservation again = fix;
        again.value = "21.45";
        CHECK_THROWS_WITH(s.add_observation(again), Catch::Contains("already superseded by observation " +
                                                                    std::to_string(second)));
    }
    SECTION("a correction must name the same plot and trait") {
        NewObservation other = obs(102, "grain_kg", "11.00", 11.0, "2026-09-20T10:06:00Z");
        other.supersedes = second;
        other.note = "wrong plot";
        CHECK_THROWS_AS(s.add_observation(other), InputError);
        NewObservation other_trait = obs(101, "lodging", "4", 4.0, "2026-09-20T10:06:00Z");
        other_trait.supersedes = second;
        other_trait.note = "wrong trait";
        CHECK_THROWS_WITH(s.add_observation(other_trait), Catch::Contains("same plot and trait") ||
                                                              Catch::Contains("this plot and trait"));
    }
    SECTION("a correction must say why") {
        NewObservation silent = obs(101, "grain_kg", "21.50", 21.5, "2026-09-20T10:07:00Z");
        silent.supersedes = second;
        CHECK_THROWS_AS(s.add_observation(silent), InputError);
    }
    CHECK(s.observation_count() == 3);
}

TEST_CASE("A re-visit that keeps both values leaves two current observations", "[store]") {
    TempDir dir;
    Store s = make_store(dir.file("stor26.pwdb"));
    s.add_observation(obs(203, "lodging", "2", 2.0, "2026-09-01T09:00:00Z"));
    s.add_observation(obs(203, "lodging", "5", 5.0, "2026-09-20T09:00:00Z"));
    const auto current = s.current_for_plot(203);
    REQUIRE(current.size() == 2);
    CHECK(current[0].obs.value == "2");
    CHECK(current[1].obs.value == "5");
}

TEST_CASE("Current observations come in walking order and trait order with block, treatment and unit",
          "[store]") {
    TempDir dir;
    Store s = make_store(dir.file("stor26.pwdb"));
    // Recorded out of order on purpose.
    s.add_observation(obs(203, "grain_kg", "9.10", 9.1, "2026-09-20T11:00:00Z"));
    s.add_observation(obs(101, "lodging", "1", 1.0, "2026-09-20T10:00:00Z"));
    s.add_observation(obs(101, "grain_kg", "12.40", 12.4, "2026-09-20T10:00:05Z"));
    const auto rows = s.current_observations();
    REQUIRE(rows.size() == 3);
    // Expected from hand_layout(): plot 101 is walked first and carries treatment 1 (N60); 203 is block 2,
    // treatment 0 (N0). Trait order is the spec's: grain_kg, lodging, remark.
    CHECK(rows[0].record.obs.plot == 101);
    CHECK(rows[0].record.obs.trait == "grain_kg");
    CHECK(rows[0].treatment == "N60");
    CHECK(rows[0].unit == "kg");
    CHECK(rows[0].block == 1);
    CHECK(rows[1].record.obs.trait == "lodging");
    CHECK(rows[1].unit == "");
    CHECK(rows[2].record.obs.plot == 203);
    CHECK(rows[2].block == 2);
    CHECK(rows[2].treatment == "N0");
}

TEST_CASE("Plot events are kept in the order recorded", "[store]") {
    TempDir dir;
    Store s = make_store(dir.file("stor26.pwdb"));
    s.add_plot_event({202, PlotState::Damaged, "wheel track", "2026-07-01T08:00:00Z", "handheld-7", "amina"});
    s.add_plot_event({202, PlotState::Missing, "washed out", "2026-07-09T08:00:00Z", "handheld-2", "jo"});
    const auto ev = s.plot_events();
    REQUIRE(ev.size() == 2);
    CHECK(ev[0].state == PlotState::Damaged);
    CHECK(ev[0].reason == "wheel track");
    CHECK(ev[1].state == PlotState::Missing);
    CHECK(ev[1].device == "handheld-2");
    CHECK_THROWS_AS(s.add_plot_event({999, PlotState::Damaged, "x", "2026-07-09T08:00:00Z", "d", "o"}), InputError);
}

TEST_CASE("An unknown plot or trait is refused by the foreign keys with a clear message", "[store]") {
    TempDir dir;
    const std::string path = dir.file("stor26.pwdb");
    Store s = make_store(path);
    CHECK_THROWS_WITH(s.add_observation(obs(999, "grain_kg", "1.00", 1.0, "2026-09-20T10:00:00Z")),
                      Catch::Contains("has no plot 999"));
    CHECK_THROWS_WITH(s.add_observation(obs(101, "yield_t", "1.00", 1.0, "2026-09-20T10:00:00Z")),
                      Catch::Contains("has no trait 'yield_t'") && Catch::Contains("grain_kg, lodging, remark"));
    CHECK(s.observation_count() == 0);
}

TEST_CASE("A refused write leaves the database row for row the same in every table", "[store]") {
    TempDir dir;
    const std::string path = dir.file("stor26.pwdb");
    Store s = make_store(path);
    const auto first = s.add_observation(obs(101, "grain_kg", "12.40", 12.4, "2026-09-20T10:00:00Z"));
    NewObservation fix = obs(101, "grain_kg", "12.45", 12.45, "2026-09-20T10:01:00Z");
    fix.supersedes = first;
    fix.note = "re-weighed";
    s.add_observation(fix);
    const std::string before = dump(path);

    CHECK_THROWS(s.add_observation(obs(999, "grain_kg", "1.00", 1.0, "2026-09-20T10:00:00Z")));
    CHECK_THROWS(s.add_observation(obs(101, "height_cm", "1", 1.0, "2026-09-20T10:00:00Z")));
    // Not a UTC ISO 8601 time (the recorded_utc CHECK, docs/schema.md): month 13, then a local time.
    CHECK_THROWS_AS(s.add_observation(obs(101, "lodging", "2", 2.0, "2026-13-20T10:00:00Z")), StoreError);
    CHECK_THROWS_AS(s.add_observation(obs(101, "lodging", "2", 2.0, "2026-09-20 10:00")), StoreError);
    CHECK_THROWS(s.add_observation(fix));  // the original is already superseded
    CHECK_THROWS(s.add_plot_event({999, PlotState::Missing, "?", "2026-09-20T10:00:00Z", "d", "o"}));

    CHECK(dump(path) == before);
}

TEST_CASE("A committed observation is in the file when the call returns", "[store][durability]") {
    TempDir dir;
    const std::string path = dir.file("stor26.pwdb");
    Store s = make_store(path);
    const auto id = s.add_observation(obs(102, "grain_kg", "10.05", 10.05, "2026-09-20T10:00:00Z"));
    // A second, independent connection sees only committed data (SQLite isolation, sqlite.org/isolation.html).
    RawDb raw(path, SQLITE_OPEN_READONLY);
    CHECK(raw.one("SELECT plot, trait, value, number FROM observation WHERE id = " + std::to_string(id)) ==
          "102|grain_kg|10.05|10.05");
    // The Store's connection holds no open transaction after the call.
    CHECK(sqlite3_get_autocommit(s.handle()) != 0);
}

TEST_CASE("SQLite's own integrity checks pass after creating and recording", "[store]") {
    TempDir dir;
    const std::string path = dir.file("stor26.pwdb");
    {
        Store s = make_store(path);
        const auto a = s.add_observation(obs(101, "grain_kg", "12.40", 12.4, "2026-09-20T10:00:00Z"));
        NewObservation fix = obs(101, "grain_kg", "12.45", 12.45, "2026-09-20T10:01:00Z");
        fix.supersedes = a;
        fix.note = "re-weighed";
        s.add_observation(fix);
        s.add_observation(obs(101, "remark", "tillers, \"many\"", std::nullopt, "2026-09-20T10:02:00Z"));
        s.add_plot_event({103, PlotState::Damaged, "rabbits", "2026-09-20T10:03:00Z", "handheld-7", "amina"});
    }
    RawDb raw(path, SQLITE_OPEN_READONLY);
    // SQLite docs: integrity_check answers one row "ok"; foreign_key_check answers no rows.
    CHECK(raw.one("PRAGMA integrity_check") == "ok");
    CHECK(raw.rows("PRAGMA foreign_key_check").empty());
}

TEST_CASE("The plot export lists every plot in walking order with its treatment label", "[store][csv]") {
    TempDir dir;
    Store s = make_store(dir.file("stor26.pwdb"));
    const CsvTable t = parse_csv(export_plots_csv(s), "plots.csv");
    // Column names and order as declared in storage/store.hpp.
    CHECK(t.header == std::vector<std::string>{"plot", "block", "row", "col", "treatment", "x_m", "y_m",
                                               "walk_order", "tag"});
    REQUIRE(t.rows.size() == 6);
    // hand_layout(): plot 101 centre (1.5, 2.5) m, treatment 1 = N60; plot 201 is walked fourth, at col 3.
    // Tag check characters from python-stdnum 1.18, iso7064.mod_37_36.calc_check_digit("STOR26101") = "H"
    // and ("STOR26201") = "9".
    CHECK(t.rows[0] ==
          std::vector<std::string>{"101", "1", "1", "1", "N60", "1.500", "2.500", "1", "PW1:STOR26-101-H"});
    CHECK(t.rows[3] == std::vector<std::string>{"201", "2", "2", "3", "N120, split", "8.500", "8.500", "4",
                                                "PW1:STOR26-201-9"});
}

TEST_CASE("The observation export has one row per current observation", "[store][csv]") {
    TempDir dir;
    Store s = make_store(dir.file("stor26.pwdb"));
    const auto a = s.add_observation(obs(101, "grain_kg", "12.40", 12.4, "2026-09-20T10:00:00Z"));
    NewObservation fix = obs(101, "grain_kg", "12.45", 12.45, "2026-09-20T10:01:00Z");
    fix.supersedes = a;
    fix.note = "re-weighed";
    s.add_observation(fix);
    s.add_observation(obs(201, "remark", "lodged, \"flat\"", std::nullopt, "2026-09-20T10:02:00Z"));
    const std::string csv = export_observations_csv(s);
    // RFC 4180 section 2 rules 6 and 7: the comma and quotes force quoting, quotes doubled; CRLF ends.
    CHECK_THAT(csv, Catch::Contains("\r\n201,2,\"N120, split\",remark,\"lodged, \"\"flat\"\"\",,"
                                    "2026-09-20T10:02:00Z,handheld-7,amina\r\n"));
    const CsvTable t = parse_csv(csv, "observations.csv");
    CHECK(t.header == std::vector<std::string>{"plot", "block", "treatment", "trait", "value", "unit",
                                               "recorded_utc", "device", "observer"});
    REQUIRE(t.rows.size() == 2);
    CHECK(t.rows[0][4] == "12.45");  // the correction, not the original
    CHECK(t.rows[0][5] == "kg");
}
