// Station sync through the store (storage/sync.hpp, storage/sync_conflicts.hpp, storage/audit_log.hpp):
// provisioning, bundles both ways, refusals that change nothing, conflicts and their resolution, the
// audit log, and a database written by the previous program version.
//
// Outside sources the checks rest on:
//   - SQLite's documented behaviour (https://www.sqlite.org/docs.html), read through plain sqlite3
//     connections of the test's own, never through the Store: PRAGMA integrity_check answers "ok" for a
//     sound file; PRAGMA user_version is the schema version; the file's bytes are the database.
//   - The file's raw bytes (std::ifstream) for "unchanged" and for "no treatment label on the handheld".
//   - tests/data/sync/v4-trial.db: a trial database written by plotwright at schema version 4 (the program
//     before migration 5; tests/data/sync/README.md says how it was made).
//   - Blinding: a blind trial shows no treatment label to the technician (DOMAIN, common practice).
//   - GLP record keeping (OECD GLP principles): nothing recorded is overwritten; a resolution says who,
//     when and why.
#include <catch2/catch.hpp>

#include <sqlite3.h>
#include <stdlib.h>

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <tuple>

#include <fmt/format.h>

#include "core/design/layout.hpp"
#include "core/error.hpp"
#include "core/spec/trial_spec.hpp"
#include "core/sync/bundle.hpp"
#include "storage/audit_log.hpp"
#include "storage/export_tables.hpp"
#include "storage/store.hpp"
#include "storage/sync.hpp"
#include "storage/sync_conflicts.hpp"
#include "raw_db.hpp"
#include "temp_dir.hpp"

using namespace pw;

namespace {

using pw_test::TempDir;
using pw_test::file_bytes;
using pw_test::raw_rows;

const char* const kSpec = R"toml([trial]
code = "SYNC26"
title = "Sync trial"
site = "Station"
crop = "sorghum"
design = "rcbd"
blocks = 2
blind = BLIND

[field]
plot_length_m = 5
plot_width_m = 3
alley_m = 1

[gradient]
bearing_deg = 0
label = "slope"

[[treatments]]
label = "Hybrid Zeta"
description = "breeder's line"

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

[[traits]]
name = "stand"
unit = "plants"
kind = "count"
)toml";

std::string spec_text(bool blind) {
    std::string s = kSpec;
    s.replace(s.find("BLIND"), 5, blind ? "true" : "false");
    return s;
}

Store make_station(const std::string& path, bool blind = false) {
    const std::string text = spec_text(blind);
    const TrialSpec spec = parse_trial_spec(text, "sync.toml");
    return Store::create(path, text, "sync.toml", spec, design_trial(spec, 26), "2026-06-01T07:00:00Z");
}

NewObservation value(int plot, const std::string& trait, const std::string& v, const std::string& device,
                     const std::string& utc) {
    NewObservation o;
    o.plot = plot;
    o.trait = trait;
    o.value = v;
    o.number = std::stod(v);
    o.recorded_utc = utc;
    o.device = device;
    o.observer = "obs-" + device;
    return o;
}

std::string export_to(Store& s, const std::string& path, const std::string& for_device = "") {
    std::string bytes;
    export_bundle(s, for_device, "2026-06-02T12:00:00Z", [&](const std::string& b) {
        bytes = b;
        std::ofstream(path, std::ios::binary) << b;
    });
    return bytes;
}

// Observations by their origin, with what they supersede by origin too: the same at every station that
// received the same bundles, whatever the order (station ids may differ).
const char* const kCanonical =
    "SELECT coalesce(x.origin, 'station'), coalesce(x.origin_id, o.id), o.plot, o.trait, o.value, o.recorded_utc, "
    "o.device, o.observer, coalesce(sx.origin || '#' || sx.origin_id, o.supersedes, '-') "
    "FROM observation o LEFT JOIN observation_origin x ON x.observation = o.id "
    "LEFT JOIN observation_origin sx ON sx.observation = o.supersedes ORDER BY 1, 2";

}  // namespace

TEST_CASE("Provisioning writes the handheld's own database and the station lists the device", "[sync][provision]") {
    TempDir dir;
    Store station = make_station(dir.file("station.db"));
    const ProvisionResult r = provision_device(station, "hh-1", dir.file("hh1.db"), "2026-06-01T08:00:00Z");
    CHECK(r.plots == station.trial().layout.plots.size());
    CHECK(raw_rows(dir.file("hh1.db"), "SELECT device, blind FROM sync_identity") == "hh-1|0\n");
    CHECK(raw_rows(dir.file("hh1.db"), "PRAGMA integrity_check") == "ok\n");
    CHECK(raw_rows(dir.file("station.db"), "SELECT name FROM sync_device") == "hh-1\n");
    // The same name again, a bad name, and provisioning from a handheld are refused.
    CHECK_THROWS_WITH(provision_device(station, "hh-1", dir.file("again.db"), "2026-06-01T08:00:00Z"),
                      Catch::Contains("provisioned a device of that name"));
    CHECK_FALSE(std::filesystem::exists(dir.file("again.db")));
    CHECK_THROWS_AS(provision_device(station, "bad name", dir.file("x.db"), "2026-06-01T08:00:00Z"), InputError);
    Store hh = Store::open(dir.file("hh1.db"));
    CHECK_THROWS_WITH(provision_device(hh, "hh-2", dir.file("hh2.db"), "2026-06-01T08:00:00Z"),
                      Catch::Contains("not a station's"));
}

TEST_CASE("A blind trial's handheld holds no treatment label anywhere in its file", "[sync][provision][blind]") {
    TempDir dir;
    {
        Store station = make_station(dir.file("station.db"), true);
        provision_device(station, "hh-b", dir.file("hhb.db"), "2026-06-01T08:00:00Z");
    }
    const std::string bytes = file_bytes(dir.file("hhb.db"));
    REQUIRE(bytes.size() > 4096);
    CHECK(bytes.find("Hybrid Zeta") == std::string::npos);
    CHECK(bytes.find("Local check") == std::string::npos);
    CHECK(bytes.find("breeder") == std::string::npos);
    // The station keeps its labels (the search finds them where they are); the handheld's database opens, and
    // its exports name the codes.
    CHECK(file_bytes(dir.file("station.db")).find("Hybrid Zeta") != std::string::npos);
    Store hh = Store::open(dir.file("hhb.db"));
    CHECK(raw_rows(dir.file("hhb.db"), "SELECT label FROM treatment ORDER BY idx") == "T01\nT02\n");
    const std::string wide = export_wide_csv(hh).text;
    CHECK(wide.find("T01") != std::string::npos);
}

TEST_CASE("Bundles from two handhelds give the same station in either order, and twice changes nothing",
          "[sync][import]") {
    TempDir dir;
    {
        Store station = make_station(dir.file("station.db"));
        provision_device(station, "hh-1", dir.file("hh1.db"), "2026-06-01T08:00:00Z");
        provision_device(station, "hh-2", dir.file("hh2.db"), "2026-06-01T08:00:00Z");
    }
    std::filesystem::copy_file(dir.file("station.db"), dir.file("station-b.db"));
    const int p1 = 101, p2 = 102, p3 = 201;
    {
        Store hh1 = Store::open(dir.file("hh1.db"));
        Store hh2 = Store::open(dir.file("hh2.db"));
        hh1.add_observation(value(p1, "grain_kg", "4.77", "hh-1", "2026-06-01T09:00:00Z"));   // differs from hh-2
        hh1.add_observation(value(p2, "grain_kg", "5.00", "hh-1", "2026-06-01T09:01:00Z"));   // equals hh-2
        const auto first = hh1.add_observation(value(p3, "stand", "40", "hh-1", "2026-06-01T09:02:00Z"));
        NewObservation fix = value(p3, "stand", "44", "hh-1", "2026-06-01T09:03:00Z");
        fix.supersedes = first;
        fix.note = "recounted";
        hh1.add_observation(fix);
        hh2.add_observation(value(p1, "grain_kg", "4.87", "hh-2", "2026-06-01T10:00:00Z"));
        hh2.add_observation(value(p2, "grain_kg", "5.00", "hh-2", "2026-06-01T10:01:00Z"));
        export_to(hh1, dir.file("a.bundle"));
        export_to(hh2, dir.file("b.bundle"));
    }
    const std::string a = file_bytes(dir.file("a.bundle")), b = file_bytes(dir.file("b.bundle"));
    {
        Store s = Store::open(dir.file("station.db"));
        const ImportResult ra = import_bundle(s, a, "a.bundle", "2026-06-02T13:00:00Z");
        CHECK(ra.observations == 4);
        CHECK(ra.pending == 0);
        import_bundle(s, b, "b.bundle", "2026-06-02T13:01:00Z");
    }
    {
        Store s = Store::open(dir.file("station-b.db"));
        import_bundle(s, b, "b.bundle", "2026-06-02T13:00:00Z");
        import_bundle(s, a, "a.bundle", "2026-06-02T13:01:00Z");
    }
    CHECK(raw_rows(dir.file("station.db"), kCanonical) == raw_rows(dir.file("station-b.db"), kCanonical));
    CHECK(raw_rows(dir.file("station.db"), "SELECT count(*) FROM observation") == "6\n");
    // The SQL view and the store agree: one conflict (plot 101), the equal values of plot 102 are none.
    CHECK(raw_rows(dir.file("station.db"), "SELECT plot, trait FROM observation_conflict") == "101|grain_kg\n");
    CHECK(raw_rows(dir.file("station.db"), "PRAGMA integrity_check") == "ok\n");

    const std::string before = file_bytes(dir.file("station.db"));
    {
        Store s = Store::open(dir.file("station.db"));
        const auto conflicts = unresolved_conflicts(s);
        REQUIRE(conflicts.size() == 1);
        CHECK(conflicts[0].plot == 101);
        REQUIRE(conflicts[0].values.size() == 2);
        CHECK(conflicts[0].values[0].origin == "hh-1");
        CHECK(conflicts[0].values[1].record.obs.value == "4.87");
        const ImportResult again = import_bundle(s, a, "a.bundle", "2026-06-02T14:00:00Z");
        CHECK(again.already_imported);
    }
    CHECK(file_bytes(dir.file("station.db")) == before);

    SECTION("the resolved values leave the conflict out, keep one of two equal values, and take the correction") {
        Store s = Store::open(dir.file("station.db"));
        const ResolvedObservations res = resolved_observations(s);
        CHECK(res.conflicts.size() == 1);
        CHECK(res.agreeing == 1);
        REQUIRE(res.rows.size() == 2);
        CHECK(res.rows[0].record.obs.plot == 102);
        CHECK(res.rows[0].record.obs.device == "hh-1");   // the earlier of the two equal values
        CHECK(res.rows[1].record.obs.value == "44");
        const std::string csv = export_observations_csv(s);
        CHECK(csv.find("4.77") == std::string::npos);
        CHECK(csv.find("4.87") == std::string::npos);
    }
    SECTION("a resolution supersedes both values, says why, and is in the audit log") {
        Store s = Store::open(dir.file("station.db"));
        Resolution r;
        r.plot = 101;
        r.trait = "grain_kg";
        r.value = "4.8";
        r.reason = "sample re-weighed";
        r.observer = "manager";
        r.now_utc = "2026-06-03T08:00:00Z";
        CHECK_THROWS_WITH([&] { Resolution bad = r; bad.value = "25"; resolve_conflict(s, bad); }(),
                          Catch::Contains("grain_kg"));
        const std::int64_t id = resolve_conflict(s, r);
        CHECK(unresolved_conflicts(s).empty());
        CHECK(raw_rows(dir.file("station.db"), "SELECT value, note FROM observation WHERE id = " + std::to_string(id)) ==
              "4.80|resolved conflict (value chosen): sample re-weighed\n");
        CHECK(raw_rows(dir.file("station.db"), "SELECT count(*) FROM observation_resolves WHERE resolution = " +
                                                   std::to_string(id)) == "2\n");
        CHECK(raw_rows(dir.file("station.db"), "SELECT count(*) FROM observation_conflict") == "0\n");
        CHECK_THROWS_WITH(resolve_conflict(s, r), Catch::Contains("not in conflict"));
        const auto log = audit_entries(s);
        REQUIRE_FALSE(log.empty());
        CHECK(log.back().action == "resolve");
        CHECK(check_audit_log(s).ok());
        CHECK(export_long_csv(s).text.find("4.80") != std::string::npos);
    }
}

TEST_CASE("Refused bundles leave the station's file byte for byte as it was", "[sync][import][refuse]") {
    TempDir dir;
    {
        Store station = make_station(dir.file("station.db"));
        provision_device(station, "hh-1", dir.file("hh1.db"), "2026-06-01T08:00:00Z");
    }
    // A copy of the station made before hh-x was provisioned from it: same trial, but the first station
    // never provisioned hh-x.
    std::filesystem::copy_file(dir.file("station.db"), dir.file("twin.db"));
    {
        Store twin = Store::open(dir.file("twin.db"));
        provision_device(twin, "hh-x", dir.file("hhx.db"), "2026-06-01T08:00:00Z");
    }
    std::string good, stranger, other_trial;
    {
        Store hh = Store::open(dir.file("hh1.db"));
        hh.add_observation(value(101, "grain_kg", "4.77", "hh-1", "2026-06-01T09:00:00Z"));
        good = export_to(hh, dir.file("good.bundle"));
        Store hx = Store::open(dir.file("hhx.db"));
        hx.add_observation(value(101, "grain_kg", "4.00", "hh-x", "2026-06-01T09:00:00Z"));
        stranger = export_to(hx, dir.file("x.bundle"));
    }
    {
        std::string text = spec_text(false);
        text.replace(text.find("SYNC26"), 6, "OTHR26");
        const TrialSpec spec = parse_trial_spec(text, "other.toml");
        Store other = Store::create(dir.file("other.db"), text, "other.toml", spec, design_trial(spec, 1), "2026-06-01T07:00:00Z");
        provision_device(other, "hh-1", dir.file("other-hh.db"), "2026-06-01T08:00:00Z");
        Store ohh = Store::open(dir.file("other-hh.db"));
        ohh.add_observation(value(101, "grain_kg", "1.00", "hh-1", "2026-06-01T09:00:00Z"));
        other_trial = export_to(ohh, dir.file("other.bundle"));
    }
    std::string flipped = good;
    flipped[good.size() / 2] = static_cast<char>(flipped[good.size() / 2] ^ 0x10);

    const std::string before = file_bytes(dir.file("station.db"));
    Store s = Store::open(dir.file("station.db"));
    auto refused = [&](const std::string& bytes, const std::string& name) -> std::string {
        try {
            import_bundle(s, bytes, name, "2026-06-02T13:00:00Z");
        } catch (const InputError& e) {
            return e.what();
        }
        return "accepted";
    };
    const std::string m1 = refused(good.substr(0, good.size() - 10), "cut.bundle");
    const std::string m2 = refused(flipped, "flip.bundle");
    const std::string m3 = refused(other_trial, "other.bundle");
    const std::string m4 = refused(stranger, "x.bundle");
    CHECK(m1.rfind("cut.bundle: truncated", 0) == 0);
    CHECK(m2.rfind("flip.bundle: corrupted", 0) == 0);
    CHECK(m3.find("other.bundle: refused, nothing imported: a bundle of trial OTHR26") == 0);
    CHECK(m4.find("x.bundle: refused, nothing imported: device 'hh-x' was never provisioned") == 0);
    CHECK(file_bytes(dir.file("station.db")) == before);
    CHECK(raw_rows(dir.file("station.db"), "PRAGMA integrity_check") == "ok\n");
    // The good one still goes in afterwards.
    CHECK(import_bundle(s, good, "good.bundle", "2026-06-02T13:00:00Z").observations == 1);
}

// A bundle whose rows the station holds already (its payload sent again under a new sequence number):
// identical rows are duplicates and change nothing; a row with the same origin key and other content refuses
// the whole bundle, leaving the file as it was (docs/sync.md, "Refusals").
TEST_CASE("Rows the station holds already: identical ones are duplicates, a different one refuses the bundle",
          "[sync][import][refuse]") {
    TempDir dir;
    {
        Store station = make_station(dir.file("station.db"));
        provision_device(station, "hh-1", dir.file("hh1.db"), "2026-06-01T08:00:00Z");
    }
    // The same handheld's database, copied before it recorded anything: the same origin ids again.
    std::filesystem::copy_file(dir.file("hh1.db"), dir.file("hh1-copy.db"));
    std::string first, other;
    {
        Store hh = Store::open(dir.file("hh1.db"));
        const auto id = hh.add_observation(value(101, "grain_kg", "4.77", "hh-1", "2026-06-01T09:00:00Z"));
        hh.add_observation(value(102, "grain_kg", "5.00", "hh-1", "2026-06-01T09:01:00Z"));
        NewObservation fix = value(101, "grain_kg", "7.47", "hh-1", "2026-06-01T11:00:00Z");
        fix.supersedes = id;
        fix.note = "transposed digits";
        hh.add_observation(fix);
        hh.add_plot_event({102, PlotState::Damaged, "hail", "2026-06-01T11:05:00Z", "hh-1", "A. Mwangi", "damaged"});
        first = export_to(hh, dir.file("1.bundle"));
        Store copy = Store::open(dir.file("hh1-copy.db"));
        copy.add_observation(value(101, "grain_kg", "9.99", "hh-1", "2026-06-01T09:00:00Z"));
        other = export_to(copy, dir.file("other.bundle"));
    }
    auto as_seq = [](const std::string& bytes, std::uint64_t seq) {
        Bundle b = decode_bundle(bytes, "b");
        b.header.seq = seq;
        return encode_bundle(b.header, b.payload);
    };
    Store s = Store::open(dir.file("station.db"));
    CHECK(import_bundle(s, first, "1.bundle", "2026-06-02T13:00:00Z").observations == 3);
    const char* const all = "SELECT * FROM observation ORDER BY id; SELECT * FROM plot_event ORDER BY id; "
                            "SELECT * FROM observation_origin ORDER BY 1, 2; SELECT * FROM sync_observation ORDER BY 1, 2";
    const std::string held = raw_rows(dir.file("station.db"), all);
    const ImportResult again = import_bundle(s, as_seq(first, 2), "2.bundle", "2026-06-02T13:01:00Z");
    CHECK_FALSE(again.already_imported);
    CHECK(again.duplicates == 4);   // three observations (one a correction) and the plot event
    CHECK(again.observations == 0);
    CHECK(again.events == 0);
    CHECK(raw_rows(dir.file("station.db"), all) == held);

    const std::string before = file_bytes(dir.file("station.db"));
    CHECK_THROWS_WITH(import_bundle(s, as_seq(other, 3), "3.bundle", "2026-06-02T13:02:00Z"),
                      Catch::StartsWith("3.bundle: refused, nothing imported: sync_observation row 1 of 'hh-1' was "
                                        "received before with different content"));
    CHECK(file_bytes(dir.file("station.db")) == before);
}

TEST_CASE("A correction that arrives before what it corrects waits, and the gap is reported", "[sync][import][order]") {
    TempDir dir;
    {
        Store station = make_station(dir.file("station.db"));
        provision_device(station, "hh-1", dir.file("hh1.db"), "2026-06-01T08:00:00Z");
    }
    std::string first, second;
    {
        Store hh = Store::open(dir.file("hh1.db"));
        const auto id = hh.add_observation(value(101, "grain_kg", "4.77", "hh-1", "2026-06-01T09:00:00Z"));
        first = export_to(hh, dir.file("1.bundle"));
        NewObservation fix = value(101, "grain_kg", "7.47", "hh-1", "2026-06-01T11:00:00Z");
        fix.supersedes = id;
        fix.note = "transposed digits";
        hh.add_observation(fix);
        second = export_to(hh, dir.file("2.bundle"));
    }
    Store s = Store::open(dir.file("station.db"));
    const ImportResult r2 = import_bundle(s, second, "2.bundle", "2026-06-02T13:00:00Z");
    CHECK(r2.pending == 1);
    REQUIRE(r2.missing_seqs.size() == 1);
    CHECK(r2.missing_seqs[0] == 1);
    CHECK(s.current_observations().empty());
    const ImportResult r1 = import_bundle(s, first, "1.bundle", "2026-06-02T13:01:00Z");
    CHECK(r1.pending == 0);
    CHECK(r1.missing_seqs.empty());
    const auto cur = s.current_observations();
    REQUIRE(cur.size() == 1);
    CHECK(cur[0].record.obs.value == "7.47");
    CHECK(unresolved_conflicts(s).empty());
}

// The rule (docs/sync.md, "Conflicts"): a plot and trait is in conflict when its values in force (current,
// not a withdrawal, the plot not flagged missing, not resolved) hold more than one distinct value. The view
// observation_conflict (SQL, migration 7) and unresolved_conflicts (the store's values in force, C++) must
// both give the plots and traits this rule gives by hand for the cases below.
TEST_CASE("The conflict view and the store list the same conflicts, the ones the rule gives", "[sync][conflicts]") {
    TempDir dir;
    std::vector<int> p;
    {
        Store station = make_station(dir.file("station.db"));
        for (const auto& pl : station.trial().layout.plots) p.push_back(pl.id);
        for (const char* d : {"hh-1", "hh-2", "hh-3"})
            provision_device(station, d, dir.file(std::string(d) + ".db"), "2026-06-01T08:00:00Z");
    }
    REQUIRE(p.size() >= 4);
    auto record = [&](const char* device, const std::vector<std::tuple<int, const char*, const char*>>& values) {
        Store hh = Store::open(dir.file(std::string(device) + ".db"));
        std::vector<std::int64_t> ids;
        for (const auto& [plot, trait, v] : values)
            ids.push_back(hh.add_observation(value(plot, trait, v, device, "2026-06-01T09:00:00Z")));
        return ids;
    };
    record("hh-1", {{p[0], "grain_kg", "4.77"}, {p[0], "stand", "10"}, {p[1], "grain_kg", "5.00"}, {p[1], "stand", "20"},
                    {p[2], "grain_kg", "3.00"}, {p[2], "stand", "6"}, {p[3], "grain_kg", "2.00"}, {p[3], "stand", "8"}});
    const auto hh2 = record("hh-2", {{p[0], "grain_kg", "4.87"}, {p[0], "stand", "12"}, {p[1], "grain_kg", "5.00"},
                                     {p[2], "grain_kg", "3.10"}, {p[2], "stand", "7"}, {p[3], "grain_kg", "2.50"},
                                     {p[3], "stand", "9"}});
    record("hh-3", {{p[2], "grain_kg", "3.20"}});
    {
        Store hh = Store::open(dir.file("hh-2.db"));
        NewObservation undo = value(p[0], "stand", "0", "hh-2", "2026-06-01T10:00:00Z");  // withdraws its 12
        undo.value.clear();
        undo.number.reset();
        undo.supersedes = hh2[1];
        undo.note = "counted the wrong plot";
        hh.add_observation(undo);
        Store hh3 = Store::open(dir.file("hh-3.db"));
        hh3.add_plot_event({p[3], PlotState::Missing, "washed out", "2026-06-01T11:00:00Z", "hh-3", "C. Ruiz", "missing"});
    }
    Store s = Store::open(dir.file("station.db"));
    for (const char* d : {"hh-1", "hh-2", "hh-3"}) {
        Store hh = Store::open(dir.file(std::string(d) + ".db"));
        import_bundle(s, export_to(hh, dir.file(std::string(d) + ".bundle")), std::string(d) + ".bundle",
                      "2026-06-02T13:00:00Z");
    }
    resolve_conflict(s, {p[2], "stand", "7", std::nullopt, "counted again", "manager", "2026-06-03T08:00:00Z"});
    // By hand: grain_kg of p0 (4.77, 4.87) and of p2 (3.00, 3.10, 3.20). Not: stand of p0 (12 withdrawn),
    // p1 (equal values; one value), stand of p2 (resolved), p3 (flagged missing).
    std::vector<std::pair<int, int>> want{{p[0], 2}, {p[2], 3}};  // plot, values in force (all distinct)
    std::sort(want.begin(), want.end());
    std::string expected;
    for (const auto& [plot, n] : want) expected += fmt::format("{}|grain_kg|{}|{}\n", plot, n, n);
    CHECK(raw_rows(dir.file("station.db"), "SELECT * FROM observation_conflict ORDER BY plot, trait") == expected);
    std::string listed;
    auto conflicts = unresolved_conflicts(s);
    std::sort(conflicts.begin(), conflicts.end(), [](const auto& a, const auto& b) { return a.plot < b.plot; });
    for (const auto& c : conflicts) listed += fmt::format("{}|{}|{}|{}\n", c.plot, c.trait, c.values.size(), c.values.size());
    CHECK(listed == expected);
}

TEST_CASE("Plot states from the station reach a handheld and are not sent back", "[sync][station-bundle]") {
    TempDir dir;
    Store station = make_station(dir.file("station.db"));
    provision_device(station, "hh-1", dir.file("hh1.db"), "2026-06-01T08:00:00Z");
    PlotEvent ev;
    ev.plot = 102;
    ev.state = PlotState::Missing;
    ev.flag = "missing";
    ev.reason = "washed out";
    ev.recorded_utc = "2026-06-01T12:00:00Z";
    ev.device = "station";
    ev.observer = "manager";
    station.add_plot_event(ev);
    const std::string bundle = export_to(station, dir.file("for-hh1.bundle"), "hh-1");
    CHECK_THROWS_WITH(import_bundle(station, bundle, "for-hh1.bundle", "2026-06-02T13:00:00Z"),
                      Catch::Contains("imported on that handheld"));
    {
        Store hh = Store::open(dir.file("hh1.db"));
        const ImportResult r = import_bundle(hh, bundle, "for-hh1.bundle", "2026-06-02T13:00:00Z");
        CHECK(r.events == 1);
        REQUIRE(hh.events_for_plot(102).size() == 1);
        CHECK(hh.events_for_plot(102)[0].reason == "washed out");
        CHECK(import_bundle(hh, bundle, "for-hh1.bundle", "2026-06-02T13:00:00Z").already_imported);
        const std::string back = export_to(hh, dir.file("back.bundle"));
        const Bundle decoded = decode_bundle(back, "back.bundle");
        CHECK(check_bundle_payload(decoded, "back.bundle").events == 0);
    }
    CHECK(raw_rows(dir.file("hh1.db"), "PRAGMA integrity_check") == "ok\n");
}

TEST_CASE("An edited audit log is caught at the entry that was edited", "[sync][audit]") {
    TempDir dir;
    {
        Store station = make_station(dir.file("station.db"));
        provision_device(station, "hh-1", dir.file("hh1.db"), "2026-06-01T08:00:00Z");
        provision_device(station, "hh-2", dir.file("hh2.db"), "2026-06-01T08:05:00Z");
        CHECK(check_audit_log(station).ok());
        CHECK(check_audit_log(station).entries == 2);
    }
    // By hand, behind plotwright's back: the append-only trigger refuses, so it is dropped first.
    sqlite3* db = nullptr;
    REQUIRE(sqlite3_open(dir.file("station.db").c_str(), &db) == SQLITE_OK);
    CHECK(sqlite3_exec(db, "UPDATE audit_log SET detail = '{}' WHERE id = 1", nullptr, nullptr, nullptr) ==
          SQLITE_CONSTRAINT);
    REQUIRE(sqlite3_exec(db, "DROP TRIGGER audit_log_no_update; UPDATE audit_log SET recorded_utc = "
                             "'2026-05-01T08:00:00Z' WHERE id = 1",
                         nullptr, nullptr, nullptr) == SQLITE_OK);
    sqlite3_close(db);
    Store s = Store::open(dir.file("station.db"));
    const AuditCheck c = check_audit_log(s);
    REQUIRE_FALSE(c.ok());
    CHECK(*c.first_broken == 1);
}

TEST_CASE("A database made by the schema-4 program opens, migrates to the current schema and syncs",
          "[sync][migration]") {
    TempDir dir;
    const std::string path = dir.file("old.db");
    std::filesystem::copy_file(std::string(PW_TEST_DATA_DIR) + "/sync/v4-trial.db", path);
    REQUIRE(raw_rows(path, "PRAGMA user_version") == "4\n");
    const std::string rows_before = raw_rows(path, "SELECT * FROM observation ORDER BY id");
    const std::string events_before = raw_rows(path, "SELECT * FROM plot_event ORDER BY id");
    {
        Store s = Store::open(path);
        CHECK(raw_rows(path, "PRAGMA user_version") == std::to_string(store_schema_version()) + "\n");
        CHECK(raw_rows(path, "SELECT * FROM observation ORDER BY id") == rows_before);
        CHECK(raw_rows(path, "SELECT * FROM plot_event ORDER BY id") == events_before);
        CHECK(unresolved_conflicts(s).empty());
        // Three values were recorded (one corrected); plot 203 is flagged missing and has none.
        CHECK(resolved_observations(s).rows.size() == 3);
        provision_device(s, "hh-new", dir.file("new.db"), "2026-06-05T08:00:00Z");
        Store hh = Store::open(dir.file("new.db"));
        hh.add_observation(value(101, "grain_kg", "4.77", "hh-new", "2026-06-05T09:00:00Z"));   // equal: no conflict
        hh.add_observation(value(102, "grain_kg", "3.10", "hh-new", "2026-06-05T09:01:00Z"));
        import_bundle(s, export_to(hh, dir.file("n.bundle")), "n.bundle", "2026-06-05T10:00:00Z");
        CHECK(unresolved_conflicts(s).empty());
        CHECK(resolved_observations(s).rows.size() == 4);
    }
    CHECK(raw_rows(path, "PRAGMA integrity_check") == "ok\n");
}
