// Fuzz target: the sync bundle reader behind `plotwright sync import`. Bundles come from handhelds over USB
// sticks and networks, so any byte string must give a bundle or a BundleError/InputError naming the file,
// never a crash or a sanitizer report. Two paths are driven:
//   1. the input as a whole file: decode_bundle (magic, lengths, checksum, header fields), then, for a
//      bundle that decodes, the payload check (SQLite's changeset reader over the payload);
//   2. the input as a payload wrapped in a well-formed bundle (a valid checksum, so the changeset reader
//      sees every input, which a random file almost never reaches).
//   3. the input as a payload read the station's way (storage/changeset_rows.hpp): when the framing check
//      passes, the records and every value must be what SQLite's own changeset iterator reads from the same
//      bytes, and the table-valued functions must give every row of their table.
//   4. such a payload imported at a station (import_bundle) as a bundle of the handheld its first row names:
//      refused, the station's file is byte for byte as before; taken in, the station holds every row SQLite's
//      iterator reads (as an observation, a correction waiting for what it corrects, or a plot event), and
//      each plain value's observation is that row (compared in SQL, so with the columns' affinities).
// A decoded bundle must re-encode to the same bytes (the format has one spelling per bundle).
#define SQLITE_ENABLE_SESSION
#define SQLITE_ENABLE_PREUPDATE_HOOK
#include <sqlite3.h>

#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <map>
#include <string>
#include <vector>

#include "core/design/layout.hpp"
#include "core/error.hpp"
#include "core/spec/trial_spec.hpp"
#include "core/sync/bundle.hpp"
#include "storage/changeset_rows.hpp"
#include "storage/store.hpp"
#include "storage/sync.hpp"
#include "tests/unit/temp_dir.hpp"

namespace {

namespace fs = std::filesystem;

std::string file_bytes(const fs::path& path) {
    std::ifstream in(path, std::ios::binary);
    return {std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>()};
}

// Where path 4's stations go: tmpfs when there is one (each accepted import commits with an fsync).
fs::path station_base() {
    return fs::is_directory("/dev/shm") ? fs::path("/dev/shm") : fs::temp_directory_path();
}

// Path 4's station, made once: the demo trial (layouts/demo.toml, the trial of the seed bundles) with handhelds
// hh-1 to hh-9 provisioned. `pristine` is the station file's bytes, written to a directory of its own for each
// input (pw_test::TempDir, removed after the input: libFuzzer ends without running atexit handlers).
struct Station {
    std::string pristine, digest;
};

const Station& station() {
    static const Station s = [] {
        Station st;
        const pw_test::TempDir dir(station_base());
        const std::string text = file_bytes(PW_DEMO_SPEC);
        const pw::TrialSpec spec = pw::parse_trial_spec(text, "demo.toml");
        {
            pw::Store store = pw::Store::create(dir.file("station.db"), text, "demo.toml", spec,
                                                pw::design_trial(spec, spec.seed.value_or(1)), "2026-06-01T07:00:00Z");
            for (int k = 1; k <= 9; ++k) {
                const std::string device = "hh-" + std::to_string(k);
                pw::provision_device(store, device, dir.file(device + ".db"), "2026-06-01T08:00:00Z");
            }
            st.digest = pw::trial_digest(store);
        }
        st.pristine = file_bytes(dir.file("station.db"));
        return st;
    }();
    return s;
}

// What SQLite's iterator read from a payload, for path 4.
struct IteratorRows {
    std::string first_origin;
    std::size_t observations = 0, events = 0;
    std::map<std::int64_t, std::vector<sqlite3_value*>> plain;   // origin_id -> values (sqlite3_value_dup)
    ~IteratorRows() {
        for (auto& [id, values] : plain)
            for (sqlite3_value* v : values) sqlite3_value_free(v);
    }
};

// True when `sql`, with ?1 the origin, counts `expected`.
bool count_is(sqlite3* db, const char* sql, const std::string& origin, std::int64_t expected) {
    sqlite3_stmt* st = nullptr;
    if (sqlite3_prepare_v2(db, sql, -1, &st, nullptr) != SQLITE_OK) std::abort();
    sqlite3_bind_text(st, 1, origin.data(), static_cast<int>(origin.size()), SQLITE_STATIC);
    const bool same = sqlite3_step(st) == SQLITE_ROW && sqlite3_column_int64(st, 0) == expected;
    sqlite3_finalize(st);
    return same;
}

void sql_or_abort(sqlite3* db, const char* sql) {
    if (sqlite3_exec(db, sql, nullptr, nullptr, nullptr) != SQLITE_OK) std::abort();
}

// Path 4. Aborts (a finding) when an import changes a file it refuses, or takes a payload in without
// holding every row of it as SQLite's iterator read them.
void import_at_station(const std::string& payload, const IteratorRows& rows) {
    const Station& s = station();
    pw::BundleHeader h;
    h.kind = pw::BundleKind::FromDevice;
    h.trial_code = "SORG26";
    h.trial_digest = s.digest;
    h.device = rows.first_origin.empty() ? "hh-1" : rows.first_origin;
    h.seq = 1;
    h.created_utc = "2026-06-14T09:31:05Z";
    std::string bundle;
    try {
        bundle = pw::encode_bundle(h, payload);
    } catch (const pw::Error&) {
        return;   // a device name the header cannot carry: no bundle to import
    }
    const pw_test::TempDir dir(station_base());
    const std::string file = dir.file("station.db");
    {
        std::ofstream out(file, std::ios::binary);
        out.write(s.pristine.data(), static_cast<std::streamsize>(s.pristine.size()));
    }
    bool taken = false;
    {
        pw::Store store = pw::Store::open(file);
        try {
            pw::import_bundle(store, bundle, "fuzz.bundle", "2026-06-14T12:00:00Z");
            taken = true;
        } catch (const pw::Error&) {
        }
        if (taken) {
            sqlite3* db = store.handle();
            if (!count_is(db,
                     "SELECT count(*) FROM (SELECT origin_id FROM observation_origin WHERE origin = ?1 UNION "
                     "SELECT origin_id FROM sync_observation WHERE origin = ?1)",
                     h.device, static_cast<std::int64_t>(rows.observations)) ||
                !count_is(db, "SELECT count(*) FROM sync_plot_event WHERE origin = ?1", h.device,
                     static_cast<std::int64_t>(rows.events)))
                std::abort();
            // Each plain value as its observation: columns 2 to 8 and 10 of sync_observation (plot, trait,
            // value, number, recorded_utc, device, observer; note) stored in a table typed as `observation`
            // (so with its conversions: a whole number in the REAL column becomes a real), compared with IS.
            sql_or_abort(db, "CREATE TEMP TABLE expected (origin_id INTEGER, plot INTEGER, trait TEXT, value TEXT, "
                             "number REAL, recorded_utc TEXT, device TEXT, observer TEXT, note TEXT) STRICT");
            sqlite3_stmt* st = nullptr;
            if (sqlite3_prepare_v2(db, "INSERT INTO expected VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9)", -1, &st,
                                   nullptr) != SQLITE_OK)
                std::abort();
            for (const auto& [id, values] : rows.plain) {
                sqlite3_bind_int64(st, 1, id);
                for (int c = 2; c <= 8; ++c) sqlite3_bind_value(st, c, values[static_cast<std::size_t>(c)]);
                sqlite3_bind_value(st, 9, values[10]);
                if (sqlite3_step(st) != SQLITE_DONE) std::abort();
                sqlite3_reset(st);
            }
            sqlite3_finalize(st);
            if (!count_is(db,
                     "SELECT count(*) FROM expected AS e JOIN observation_origin AS x ON x.origin = ?1 AND "
                     "x.origin_id = e.origin_id JOIN observation AS o ON o.id = x.observation WHERE o.plot IS e.plot "
                     "AND o.trait IS e.trait AND o.value IS e.value AND o.number IS e.number AND o.recorded_utc IS "
                     "e.recorded_utc AND o.device IS e.device AND o.observer IS e.observer AND o.note IS e.note AND "
                     "o.supersedes IS NULL",
                     h.device, static_cast<std::int64_t>(rows.plain.size())))
                std::abort();
        }
    }
    if (!taken && file_bytes(file) != s.pristine) std::abort();
}

// Path 3, then path 4. Aborts (a finding) when the station's reader and SQLite's disagree on a framed payload.
void read_as_station(const std::string& payload) {
    if (!pw::changeset_framing_fault(payload).empty()) return;
    sqlite3_changeset_iter* it = nullptr;
    if (sqlite3changeset_start(&it, static_cast<int>(payload.size()), const_cast<char*>(payload.data())) != SQLITE_OK)
        return;
    pw::ChangesetRecords records(payload);
    IteratorRows rows;
    int rc = SQLITE_OK;
    while ((rc = sqlite3changeset_next(it)) == SQLITE_ROW) {
        const char* table = nullptr;
        int ncol = 0, op = 0, indirect = 0;
        sqlite3changeset_op(it, &table, &ncol, &op, &indirect);
        if (!records.next() || records.table() != table || records.columns() != ncol) std::abort();
        const bool observation = records.table() == "sync_observation";
        rows.observations += observation;
        rows.events += records.table() == "sync_plot_event";
        std::vector<sqlite3_value*> copies;
        for (int c = 0; c < ncol; ++c) {
            sqlite3_value* v = nullptr;
            if (sqlite3changeset_new(it, c, &v) != SQLITE_OK || !v) std::abort();
            const pw::ChangesetRecords::Value& mine = records.value(c);
            if (sqlite3_value_type(v) != mine.type) std::abort();
            switch (mine.type) {
                case SQLITE_INTEGER:
                    if (sqlite3_value_int64(v) != mine.integer()) std::abort();
                    break;
                case SQLITE_FLOAT: {
                    const double a = sqlite3_value_double(v), b = mine.real();
                    if (std::memcmp(&a, &b, sizeof a) != 0) std::abort();
                    break;
                }
                case SQLITE_TEXT:
                case SQLITE_BLOB: {
                    const void* p = mine.type == SQLITE_TEXT ? static_cast<const void*>(sqlite3_value_text(v))
                                                             : sqlite3_value_blob(v);
                    if (static_cast<std::size_t>(sqlite3_value_bytes(v)) != mine.bytes.size() ||
                        (!mine.bytes.empty() && std::memcmp(p, mine.bytes.data(), mine.bytes.size()) != 0))
                        std::abort();
                    break;
                }
                default: break;
            }
            if (observation) copies.push_back(sqlite3_value_dup(v));
        }
        if (rows.first_origin.empty() && ncol > 0 && records.value(0).type == SQLITE_TEXT)
            rows.first_origin = std::string(records.value(0).bytes);
        // A plain value (supersedes, column 9, NULL); a forged payload may repeat an origin_id (then refused).
        if (observation && ncol == pw::kSyncObservationColumns && sqlite3_value_type(copies[9]) == SQLITE_NULL &&
            sqlite3_value_type(copies[1]) == SQLITE_INTEGER && !rows.plain.count(sqlite3_value_int64(copies[1])))
            rows.plain.emplace(sqlite3_value_int64(copies[1]), std::move(copies));
        else
            for (sqlite3_value* c : copies) sqlite3_value_free(c);
    }
    sqlite3changeset_finalize(it);
    if (rc != SQLITE_DONE) return;   // SQLite refuses what the framing let through: the reader stops here too
    if (records.next()) std::abort();
    // The table-valued functions over the same payload: every row of their table.
    sqlite3* db = nullptr;
    if (sqlite3_open(":memory:", &db) != SQLITE_OK) std::abort();
    pw::register_received_rows(db);
    for (const auto& [sql, expected] :
         {std::pair{"SELECT count(*) FROM pw_received_observation(?1)", rows.observations},
          std::pair{"SELECT count(*) FROM pw_received_plot_event(?1)", rows.events}}) {
        sqlite3_stmt* st = nullptr;
        sqlite3_prepare_v2(db, sql, -1, &st, nullptr);
        sqlite3_bind_blob(st, 1, payload.data(), static_cast<int>(payload.size()), SQLITE_STATIC);
        if (sqlite3_step(st) != SQLITE_ROW || static_cast<std::size_t>(sqlite3_column_int64(st, 0)) != expected)
            std::abort();
        sqlite3_finalize(st);
    }
    sqlite3_close(db);
    import_at_station(payload, rows);
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string bytes(reinterpret_cast<const char*>(data), size);
    try {
        const pw::Bundle b = pw::decode_bundle(bytes, "fuzz.bundle");
        if (pw::encode_bundle(b.header, b.payload) != bytes) std::abort();
        pw::check_bundle_payload(b, "fuzz.bundle");
    } catch (const pw::Error&) {
    }
    for (pw::BundleKind kind : {pw::BundleKind::FromDevice, pw::BundleKind::FromStation}) {
        pw::BundleHeader h;
        h.kind = kind;
        h.trial_code = "SORG26";
        h.trial_digest = "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855";
        h.device = "hh-1";
        h.seq = 1;
        h.created_utc = "2026-06-14T09:31:05Z";
        try {
            const pw::Bundle b = pw::decode_bundle(pw::encode_bundle(h, bytes), "fuzz.bundle");
            if (b.payload != bytes) std::abort();
            pw::check_bundle_payload(b, "fuzz.bundle");
        } catch (const pw::Error&) {
        }
    }
    read_as_station(bytes);
    return 0;
}
