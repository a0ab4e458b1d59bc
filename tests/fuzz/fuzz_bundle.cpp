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
// A decoded bundle must re-encode to the same bytes (the format has one spelling per bundle).
#define SQLITE_ENABLE_SESSION
#define SQLITE_ENABLE_PREUPDATE_HOOK
#include <sqlite3.h>

#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <cstring>
#include <string>

#include "core/error.hpp"
#include "core/sync/bundle.hpp"
#include "storage/changeset_rows.hpp"
#include "storage/sync.hpp"

namespace {

// Path 3. Aborts (a finding) when the station's reader and SQLite's disagree on a framed payload.
void read_as_station(const std::string& payload) {
    if (!pw::changeset_framing_fault(payload).empty()) return;
    sqlite3_changeset_iter* it = nullptr;
    if (sqlite3changeset_start(&it, static_cast<int>(payload.size()), const_cast<char*>(payload.data())) != SQLITE_OK)
        return;
    pw::ChangesetRecords records(payload);
    std::size_t observations = 0, events = 0;
    int rc = SQLITE_OK;
    while ((rc = sqlite3changeset_next(it)) == SQLITE_ROW) {
        const char* table = nullptr;
        int ncol = 0, op = 0, indirect = 0;
        sqlite3changeset_op(it, &table, &ncol, &op, &indirect);
        if (!records.next() || records.table() != table || records.columns() != ncol) std::abort();
        observations += records.table() == "sync_observation";
        events += records.table() == "sync_plot_event";
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
        }
    }
    sqlite3changeset_finalize(it);
    if (rc != SQLITE_DONE) return;   // SQLite refuses what the framing let through: the reader stops here too
    if (records.next()) std::abort();
    // The table-valued functions over the same payload: every row of their table.
    sqlite3* db = nullptr;
    if (sqlite3_open(":memory:", &db) != SQLITE_OK) std::abort();
    pw::register_received_rows(db);
    for (const auto& [sql, expected] :
         {std::pair{"SELECT count(*) FROM pw_received_observation(?1)", observations},
          std::pair{"SELECT count(*) FROM pw_received_plot_event(?1)", events}}) {
        sqlite3_stmt* st = nullptr;
        sqlite3_prepare_v2(db, sql, -1, &st, nullptr);
        sqlite3_bind_blob(st, 1, payload.data(), static_cast<int>(payload.size()), SQLITE_STATIC);
        if (sqlite3_step(st) != SQLITE_ROW || static_cast<std::size_t>(sqlite3_column_int64(st, 0)) != expected)
            std::abort();
        sqlite3_finalize(st);
    }
    sqlite3_close(db);
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
