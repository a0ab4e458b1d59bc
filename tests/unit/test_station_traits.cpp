// Traits added to a running trial at the station (storage/station_traits.hpp, `plotwright trait add`), their
// journey to the handhelds in the station's bundles (storage/sync.hpp), and the GeoJSON export's handling
// of unresolved conflicts (storage/export_geojson.hpp).
//
// Outside sources the checks rest on:
//   - SQLite's documented behaviour (https://www.sqlite.org/docs.html), read through plain sqlite3
//     connections of the test's own, never through the Store: PRAGMA user_version is the schema version,
//     PRAGMA integrity_check answers "ok" for a sound file, a RAISE(ABORT) trigger refuses the statement
//     (SQLITE_CONSTRAINT); the file's raw bytes (std::ifstream) for "unchanged" and "holds no label".
//   - The trait files written here: the line of each key is counted in the text itself (TOML v1.0.0 has
//     one key/value pair per line), so a message naming "new.toml:4" is checked against the file.
//   - tests/data/sync/v5-station.db and v5-hh-5.db: a station and its handheld written by plotwright at
//     schema version 5, the program before migration 6 (tests/data/sync/README.md says how they were made).
//   - RFC 7946 §6.1 (GeoJSON foreign members) for where the count of left-out conflicts may go.
//   - Blinding: a blind trial shows no treatment label to the technician (DOMAIN, common practice).
#include <catch2/catch.hpp>

#include <sqlite3.h>

#include <filesystem>
#include <fstream>
#include <functional>
#include <map>
#include <sstream>

#include <nlohmann/json.hpp>

#include "core/design/layout.hpp"
#include "core/error.hpp"
#include "core/spec/trial_spec.hpp"
#include "core/sync/bundle.hpp"
#include "storage/audit_log.hpp"
#include "storage/certificate.hpp"
#include "storage/export_geojson.hpp"
#include "storage/station_traits.hpp"
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
using pw_test::raw_exec;

// An invented trial; the stake's position (an arbitrary point) lets the GeoJSON export place the plots.
const char* const kSpec = R"toml([trial]
code = "ADDT26"
title = "Added traits"
site = "Station"
crop = "sorghum"
design = "rcbd"
blocks = 2
blind = BLIND

[field]
plot_length_m = 5
plot_width_m = 3
alley_m = 1
origin = { lat_deg = -27.43, lon_deg = 151.88 }

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

// Two traits to add; line 1 is a comment, so `name` of the first table is on line 3.
const char* const kNewTraits = R"toml(# scored after the storm; compare Hybrid Zeta with the check
[[traits]]
name = "lodging_score"
label = "Lodging"
kind = "score"
min = 1
max = 5
labels = ["none", "slight", "moderate", "severe", "flat"]

[[traits]]
name = "panicle_cm"
unit = "cm"
kind = "number"
min = 0.5
max = 60
decimals = 1
)toml";

std::string spec_text(bool blind) {
    std::string s = kSpec;
    s.replace(s.find("BLIND"), 5, blind ? "true" : "false");
    return s;
}

Store make_station(const std::string& path, bool blind = false) {
    const std::string text = spec_text(blind);
    const TrialSpec spec = parse_trial_spec(text, "addt.toml");
    return Store::create(path, text, "addt.toml", spec, design_trial(spec, 26), "2026-06-01T07:00:00Z");
}

std::string export_to(Store& s, const std::string& for_device = "") {
    std::string bytes;
    export_bundle(s, for_device, "2026-06-02T12:00:00Z", [&](const std::string& b) { bytes = b; });
    return bytes;
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

std::string spec_error(const std::function<void()>& f) {
    try {
        f();
    } catch (const SpecError& e) {
        return e.what();
    }
    return "accepted";
}

std::vector<std::string> trait_names(const Store& s) {
    std::vector<std::string> out;
    for (const TraitSpec& t : s.trial().spec.traits) out.push_back(t.name);
    return out;
}

}  // namespace

TEST_CASE("Added traits are read by the spec's trait reader, naming the file, line and key of a refusal",
          "[traits][spec]") {
    const TrialSpec trial = parse_trial_spec(spec_text(false), "addt.toml");
    const auto added = parse_added_traits(kNewTraits, "new.toml", trial);
    REQUIRE(added.size() == 2);
    CHECK(added[0].trait.name == "lodging_score");
    CHECK(added[0].trait.kind == TraitKind::Score);
    CHECK(added[0].trait.score_labels.size() == 5);
    CHECK(added[1].trait.unit == "cm");
    CHECK(added[1].trait.decimals == 1);
    // Each definition is its table alone: the file's comment is not carried.
    CHECK(added[0].toml.find("Hybrid Zeta") == std::string::npos);
    CHECK(added[0].toml.rfind("[[traits]]", 0) == 0);

    // The trial already has grain_kg (its name is on line 3 of this text).
    CHECK(spec_error([&] { parse_added_traits("\n[[traits]]\nname = \"grain_kg\"\nunit = \"kg\"\nkind = \"number\"\n", "dup.toml", trial); })
              .rfind("dup.toml:3: traits[1].name: trial ADDT26 already has a trait named 'grain_kg'", 0) == 0);
    // A kind the format does not have, on line 4: the spec's own message.
    CHECK(spec_error([&] { parse_added_traits("[[traits]]\nname = \"x\"\nunit = \"kg\"\nkind = \"weight\"\n", "kind.toml", trial); })
              .rfind("kind.toml:4: traits[1].kind: unknown kind 'weight'", 0) == 0);
    // Two tables of one name in the file (line 5 repeats line 2).
    CHECK(spec_error([&] {
              parse_added_traits("[[traits]]\nname = \"a\"\nkind = \"date\"\n[[traits]]\nname = \"a\"\nkind = \"text\"\n",
                                 "twice.toml", trial);
          }).rfind("twice.toml:5: traits[2].name: duplicate trait name 'a'; traits[1] (line 2)", 0) == 0);
    // Anything but traits is refused: the rest of the trial is fixed once designed.
    CHECK(spec_error([&] { parse_added_traits("[[treatments]]\nlabel = \"New\"\n", "treat.toml", trial); })
              .rfind("treat.toml:1: treatments: unknown key 'treatments'; expected one of: traits", 0) == 0);
    CHECK(spec_error([&] { parse_added_traits("# nothing\n", "empty.toml", trial); })
              .rfind("empty.toml: traits: missing; expected one or more [[traits]] tables", 0) == 0);
}

TEST_CASE("Adding traits at the station keeps the spec text and certificate, records who and when, and logs it",
          "[traits][store]") {
    TempDir dir;
    const std::string path = dir.file("station.db");
    std::string certificate;
    {
        Store s = make_station(path);
        certificate = stored_certificate(s)->sha256;
        const auto added = add_traits(s, kNewTraits, "new.toml", "M. Banda", "2026-06-10T08:00:00Z");
        REQUIRE(added.size() == 2);
        // The store's trial shows them at once, after the spec's traits.
        CHECK(trait_names(s) == std::vector<std::string>{"grain_kg", "stand", "lodging_score", "panicle_cm"});
        CHECK(s.trial().spec_toml == spec_text(false));
        s.add_observation(value(101, "panicle_cm", "23.5", "station", "2026-06-10T09:00:00Z"));
    }
    // Read behind the store's back: the spec text as given, the certificate as stored, the rows of their own.
    CHECK(raw_rows(path, "SELECT spec_toml FROM trial") == spec_text(false) + "\n");
    CHECK(raw_rows(path, "SELECT sha256 FROM layout_certificate") == certificate + "\n");
    CHECK(raw_rows(path, "SELECT name, position, added_utc, added_by FROM trait_addition ORDER BY position") ==
          "lodging_score|2|2026-06-10T08:00:00Z|M. Banda\npanicle_cm|3|2026-06-10T08:00:00Z|M. Banda\n");
    CHECK(raw_rows(path, "SELECT name, position, unit, kind, min, max, decimals FROM trait ORDER BY position") ==
          "grain_kg|0|kg|number|0.0|20.0|2\nstand|1|plants|count|NULL|NULL|2\n"
          "lodging_score|2||score|1.0|5.0|2\npanicle_cm|3|cm|number|0.5|60.0|1\n");
    CHECK(raw_rows(path, "SELECT action, json_extract(detail, '$.added_by'), json_extract(detail, '$.file') "
                         "FROM audit_log ORDER BY id DESC LIMIT 1") == "trait|M. Banda|new.toml\n");
    CHECK(raw_rows(path, "SELECT plot, trait, value FROM observation") == "101|panicle_cm|23.5\n");
    CHECK(raw_rows(path, "PRAGMA integrity_check") == "ok\n");

    // The schema itself refuses a trait row without its addition, and edits of an addition.
    CHECK(raw_exec(path, "INSERT INTO trait VALUES ('sneaky', 9, 'x', '', 'text', NULL, NULL, 0, 10, '[]')") ==
          SQLITE_CONSTRAINT);
    CHECK(raw_exec(path, "UPDATE trait_addition SET added_by = 'someone else'") == SQLITE_CONSTRAINT);
    CHECK(raw_exec(path, "DELETE FROM trait_addition") == SQLITE_CONSTRAINT);

    Store s = Store::open(path);
    CHECK(trait_names(s).size() == 4);
    CHECK(s.trial().spec.traits[2].score_labels[4] == "flat");
    CHECK(check_audit_log(s).ok());
    // A name the trial now has, and an empty name of who adds, are refused; the file does not change.
    const std::string before = file_bytes(path);
    CHECK(spec_error([&] {
              add_traits(s, "[[traits]]\nname = \"panicle_cm\"\nunit = \"cm\"\nkind = \"number\"\n", "again.toml", "M",
                         "2026-06-11T08:00:00Z");
          }).rfind("again.toml:2: traits[1].name: trial ADDT26 already has a trait named 'panicle_cm'", 0) == 0);
    CHECK_THROWS_AS(add_traits(s, "[[traits]]\nname = \"y\"\nkind = \"date\"\n", "y.toml", " ", "2026-06-11T08:00:00Z"),
                    InputError);
    CHECK(file_bytes(path) == before);
}

TEST_CASE("An added trait reaches a handheld in its station bundle; twice, or in either order, changes nothing more",
          "[traits][sync]") {
    TempDir dir;
    const std::string station_path = dir.file("station.db"), hh_path = dir.file("hh1.db");
    std::string first, second;
    {
        Store station = make_station(station_path);
        provision_device(station, "hh-1", hh_path, "2026-06-01T08:00:00Z");
        first = export_to(station, "hh-1");   // before the trait: nothing of it
        add_traits(station, kNewTraits, "new.toml", "M. Banda", "2026-06-10T08:00:00Z");
        second = export_to(station, "hh-1");
        const Bundle b = decode_bundle(second, "second.bundle");
        CHECK(check_bundle_payload(b, "second.bundle").traits == 2);
        CHECK(check_bundle_payload(decode_bundle(first, "first.bundle"), "first.bundle").traits == 0);
    }
    std::filesystem::copy_file(hh_path, dir.file("hh1-b.db"));
    {
        Store hh = Store::open(hh_path);
        CHECK(trait_names(hh).size() == 2);
        import_bundle(hh, first, "first.bundle", "2026-06-11T08:00:00Z");
        const ImportResult r = import_bundle(hh, second, "second.bundle", "2026-06-11T08:01:00Z");
        CHECK(r.traits == 2);
        // The handheld's trial has them at once: its recorder asks for them.
        CHECK(trait_names(hh) == std::vector<std::string>{"grain_kg", "stand", "lodging_score", "panicle_cm"});
        hh.add_observation(value(102, "lodging_score", "3", "hh-1", "2026-06-11T09:00:00Z"));
    }
    const std::string after = file_bytes(hh_path);
    {
        Store hh = Store::open(hh_path);
        CHECK(import_bundle(hh, second, "second.bundle", "2026-06-11T10:00:00Z").already_imported);
        CHECK(trait_names(hh).size() == 4);
    }
    CHECK(file_bytes(hh_path) == after);
    {
        Store hhb = Store::open(dir.file("hh1-b.db"));   // the other order: the newer bundle first
        CHECK(import_bundle(hhb, second, "second.bundle", "2026-06-11T08:00:00Z").traits == 2);
        const ImportResult older = import_bundle(hhb, first, "first.bundle", "2026-06-11T08:01:00Z");
        CHECK(older.traits == 0);
    }
    // Both handheld copies hold the station's trait rows exactly, read through SQLite.
    const char* const traits_sql = "SELECT * FROM trait ORDER BY position";
    const char* const additions_sql = "SELECT * FROM trait_addition ORDER BY position";
    CHECK(raw_rows(hh_path, traits_sql) == raw_rows(station_path, traits_sql));
    CHECK(raw_rows(dir.file("hh1-b.db"), traits_sql) == raw_rows(station_path, traits_sql));
    CHECK(raw_rows(hh_path, additions_sql) == raw_rows(station_path, additions_sql));
    CHECK(raw_rows(hh_path, "PRAGMA integrity_check") == "ok\n");

    // The value recorded for the added trait reaches the station; the handheld's bundle carries no trait.
    Store station = Store::open(station_path);
    {
        Store hh = Store::open(hh_path);
        const std::string back = export_to(hh);
        CHECK(check_bundle_payload(decode_bundle(back, "back.bundle"), "back.bundle").traits == 0);
        CHECK(import_bundle(station, back, "back.bundle", "2026-06-12T08:00:00Z").observations == 1);
        CHECK(check_audit_log(hh).ok());
    }
    CHECK(raw_rows(station_path, "SELECT plot, trait, value, device FROM observation") == "102|lodging_score|3|hh-1\n");

    SECTION("a handheld refuses to add a trait, and its file does not change") {
        const std::string before = file_bytes(hh_path);
        Store hh = Store::open(hh_path);
        try {
            add_traits(hh, "[[traits]]\nname = \"y\"\nkind = \"date\"\n", "y.toml", "A", "2026-06-12T08:00:00Z");
            FAIL("accepted");
        } catch (const InputError& e) {
            CHECK(std::string(e.what()).find("device 'hh-1': traits are added at the station") != std::string::npos);
        }
        CHECK(file_bytes(hh_path) == before);
    }
    SECTION("a handheld provisioned after the addition has the traits at once") {
        provision_device(station, "hh-2", dir.file("hh2.db"), "2026-06-12T09:00:00Z");
        CHECK(raw_rows(dir.file("hh2.db"), traits_sql) == raw_rows(station_path, traits_sql));
        Store hh2 = Store::open(dir.file("hh2.db"));
        CHECK(trait_names(hh2).size() == 4);
        const ImportResult r = import_bundle(hh2, export_to(station, "hh-2"), "hh2.bundle", "2026-06-12T10:00:00Z");
        CHECK(r.traits == 0);
        CHECK(r.duplicates == 2);
    }
}

TEST_CASE("A bundle from a handheld that carries a trait is refused, and the station does not change",
          "[traits][sync][refuse]") {
    TempDir dir;
    const std::string station_path = dir.file("station.db");
    std::string forged;
    {
        Store station = make_station(station_path);
        provision_device(station, "hh-1", dir.file("hh1.db"), "2026-06-01T08:00:00Z");
        add_traits(station, kNewTraits, "new.toml", "M. Banda", "2026-06-10T08:00:00Z");
        // The station's payload (trait_addition rows) under a handheld's header: what a handheld would send if
        // it ever made a trait.
        const Bundle b = decode_bundle(export_to(station, "hh-1"), "for-hh1.bundle");
        BundleHeader h = b.header;
        h.kind = BundleKind::FromDevice;
        forged = encode_bundle(h, b.payload);
    }
    const std::string before = file_bytes(station_path);
    Store station = Store::open(station_path);
    CHECK_THROWS_WITH(import_bundle(station, forged, "forged.bundle", "2026-06-11T08:00:00Z"),
                      Catch::Contains("forged.bundle: refused, nothing imported: the payload changes table "
                                      "'trait_addition', which a bundle from the device never does"));
    CHECK(file_bytes(station_path) == before);
}

TEST_CASE("A blind trial's handheld receives an added trait without the trait file's comments",
          "[traits][sync][blind]") {
    TempDir dir;
    std::string bundle;
    {
        Store station = make_station(dir.file("station.db"), true);
        provision_device(station, "hh-b", dir.file("hhb.db"), "2026-06-01T08:00:00Z");
        add_traits(station, kNewTraits, "new.toml", "M. Banda", "2026-06-10T08:00:00Z");
        bundle = export_to(station, "hh-b");
    }
    CHECK(bundle.find("Hybrid Zeta") == std::string::npos);
    {
        Store hh = Store::open(dir.file("hhb.db"));
        CHECK(import_bundle(hh, bundle, "b.bundle", "2026-06-11T08:00:00Z").traits == 2);
    }
    const std::string bytes = file_bytes(dir.file("hhb.db"));
    REQUIRE(bytes.find("lodging_score") != std::string::npos);   // the search finds what is there
    CHECK(bytes.find("Hybrid Zeta") == std::string::npos);
    CHECK(bytes.find("Local check") == std::string::npos);

    // A trait whose label or score labels name a treatment would carry it to the handhelds: refused, naming
    // the file, line and key (whole words, any case; "Zetas" is another word).
    Store station = Store::open(dir.file("station.db"));
    CHECK_THROWS_WITH(add_traits(station, "[[traits]]\nname = \"vigour\"\nlabel = \"vigour vs hybrid zeta\"\nkind = \"count\"\nunit = \"plants\"\n",
                                 "leak.toml", "M. Banda", "2026-06-12T08:00:00Z"),
                      Catch::StartsWith("leak.toml:3") && Catch::Contains("traits[1].label") &&
                          Catch::Contains("names the treatment 'Hybrid Zeta'"));
    CHECK_THROWS_WITH(add_traits(station,
                                 "[[traits]]\nname = \"tone\"\nkind = \"score\"\nmin = 1\nmax = 2\n"
                                 "labels = [\"paler\", \"like Local check\"]\n",
                                 "leak.toml", "M. Banda", "2026-06-12T08:00:00Z"),
                      Catch::Contains("traits[1].labels") && Catch::Contains("'Local check'"));
    // A policy of adding only: a definition already stored is read without it (a station opens whatever
    // an earlier program let through).
    CHECK_NOTHROW(parse_added_traits("[[traits]]\nname = \"vigour\"\nlabel = \"vigour vs hybrid zeta\"\n"
                                     "kind = \"count\"\nunit = \"plants\"\n",
                                     "stored", station.trial().spec));
    CHECK(add_traits(station, "[[traits]]\nname = \"zetas\"\nlabel = \"Zetas per plot\"\nkind = \"count\"\nunit = \"plants\"\n",
                     "ok.toml", "M. Banda", "2026-06-12T08:00:00Z")
              .size() == 1);
}

TEST_CASE("Databases made by the schema-5 program migrate with their audit log as it was, and take added traits",
          "[traits][migration]") {
    TempDir dir;
    const std::string station_path = dir.file("station.db"), hh_path = dir.file("hh-5.db");
    std::filesystem::copy_file(std::string(PW_TEST_DATA_DIR) + "/sync/v5-station.db", station_path);
    std::filesystem::copy_file(std::string(PW_TEST_DATA_DIR) + "/sync/v5-hh-5.db", hh_path);
    REQUIRE(raw_rows(station_path, "PRAGMA user_version") == "5\n");
    const char* const log_sql = "SELECT * FROM audit_log ORDER BY id";
    const char* const obs_sql = "SELECT * FROM observation ORDER BY id";
    const std::string log_before = raw_rows(station_path, log_sql), obs_before = raw_rows(station_path, obs_sql);
    const std::string hh_log_before = raw_rows(hh_path, log_sql);
    REQUIRE(log_before.find("|resolve|") != std::string::npos);
    std::string bundle;
    {
        Store station = Store::open(station_path);
        CHECK(raw_rows(station_path, "PRAGMA user_version") == std::to_string(store_schema_version()) + "\n");
        CHECK(raw_rows(station_path, log_sql) == log_before);
        CHECK(raw_rows(station_path, obs_sql) == obs_before);
        CHECK(check_audit_log(station).ok());
        CHECK(check_audit_log(station).entries == 3);
        // The rebuilt log still refuses edits.
        CHECK(raw_exec(station_path, "UPDATE audit_log SET detail = '{}' WHERE id = 1") == SQLITE_CONSTRAINT);
        CHECK(raw_exec(station_path, "DELETE FROM audit_log") == SQLITE_CONSTRAINT);
        add_traits(station, kNewTraits, "new.toml", "M. Banda", "2026-12-03T08:00:00Z");
        CHECK(check_audit_log(station).entries == 4);
        CHECK(check_audit_log(station).ok());
        bundle = export_to(station, "hh-5");
    }
    {
        Store hh = Store::open(hh_path);
        CHECK(raw_rows(hh_path, log_sql) == hh_log_before);
        CHECK(import_bundle(hh, bundle, "hh5.bundle", "2026-12-03T09:00:00Z").traits == 2);
        CHECK(trait_names(hh).size() == 9);   // the demo's seven, then the two added
        CHECK(check_audit_log(hh).ok());
    }
    CHECK(raw_rows(station_path, "PRAGMA integrity_check") == "ok\n");
    CHECK(raw_rows(hh_path, "PRAGMA integrity_check") == "ok\n");
}

TEST_CASE("GeoJSON leaves a plot and trait in unresolved conflict out and says how many", "[traits][geojson]") {
    TempDir dir;
    {
        Store station = make_station(dir.file("station.db"));
        provision_device(station, "hh-1", dir.file("hh1.db"), "2026-06-01T08:00:00Z");
        provision_device(station, "hh-2", dir.file("hh2.db"), "2026-06-01T08:00:00Z");
    }
    Store station = Store::open(dir.file("station.db"));
    for (const char* name : {"hh-1", "hh-2"}) {
        Store hh = Store::open(dir.file(std::string(name) == "hh-1" ? "hh1.db" : "hh2.db"));
        const bool one = std::string(name) == "hh-1";
        hh.add_observation(value(101, "grain_kg", one ? "4.77" : "4.87", name, "2026-06-01T09:00:00Z"));  // differ
        hh.add_observation(value(102, "grain_kg", "5.00", name, one ? "2026-06-01T09:01:00Z" : "2026-06-01T10:00:00Z"));
        import_bundle(station, export_to(hh), std::string(name) + ".bundle", "2026-06-02T13:00:00Z");
    }
    const nlohmann::json doc = nlohmann::json::parse(export_plots_geojson(station));
    // RFC 7946 §6.1: foreign members beside "type", "bbox" and "features".
    CHECK(doc["type"] == "FeatureCollection");
    CHECK(doc["unresolved_conflicts"] == 1);
    CHECK(doc["conflicts"] == nlohmann::json::parse(R"([{"plot":101,"trait":"grain_kg"}])"));
    std::map<int, nlohmann::json> props;
    for (const auto& f : doc["features"]) props[f["properties"]["plot"].get<int>()] = f["properties"];
    REQUIRE(props.count(101) == 1);
    CHECK_FALSE(props[101].contains("grain_kg"));   // neither 4.77 nor 4.87
    CHECK(props[102]["grain_kg"] == 5.0);          // equal values: no conflict
    // Resolved, the chosen value is shown and nothing is left out.
    Resolution r;
    r.plot = 101;
    r.trait = "grain_kg";
    r.value = "4.8";
    r.reason = "re-weighed";
    r.observer = "manager";
    r.now_utc = "2026-06-03T08:00:00Z";
    resolve_conflict(station, r);
    const nlohmann::json after = nlohmann::json::parse(export_plots_geojson(station));
    CHECK(after["unresolved_conflicts"] == 0);
    CHECK(after["features"][0]["properties"]["plot"] == 101);   // walking order starts at plot 101 here
    CHECK(after["features"][0]["properties"]["grain_kg"] == 4.8);
}
