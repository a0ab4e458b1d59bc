// The rows of a bundle's payload, read from the bytes of the SQLite changeset without applying it
// (docs/sync.md, "Import at the station"; docs/benchmarks.md, "Station sync").
//
// Format: the "changeset format" comment of sqlite3session.h / ext/session/sqlite3session.c
// (https://www.sqlite.org/sessionintro.html): a table header 'T', a varint column count, one primary-key flag
// byte per column (its 1-based place in the key, 0 when not in it), the NUL-terminated table name; then
// records: the operation (here SQLITE_INSERT = 18 only), an "indirect" byte, and one value per column: type
// 1 (integer) or 2 (real) with 8 big-endian bytes, 3 (text) or 4 (blob) with a varint length and the bytes,
// 5 (NULL). SQLite's varint: 1 to 9 bytes, big-endian 7-bit groups, the ninth byte whole.
//
// Why read it here: the station takes a handheld's rows in with set-based SQL (INSERT ... SELECT from the
// table-valued functions below), which costs about half of sqlite3changeset_apply's row-by-row INSERTs.
// What SQLite's own iterator (sqlite3changeset_next / sqlite3changeset_new) reads from the same bytes is the
// reference the tests compare with (tests/unit/test_sync_import_check.cpp), and the reader is fuzzed
// (tests/fuzz/fuzz_bundle.cpp).
#pragma once
#include <sqlite3.h>

#include <array>
#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>

namespace pw {

// The column counts of the tables a bundle may change (storage/schema.cpp): sync_observation and
// sync_plot_event are keyed by (origin, origin_id), trait_addition by its first column (name).
inline constexpr int kSyncObservationColumns = 11;
inline constexpr int kSyncPlotEventColumns = 9;
inline constexpr int kTraitAdditionColumns = 5;

// "" when the payload is framed as this program writes changesets (only INSERTs into the three tables
// above, with their column counts and keys, every value of a known type and inside the payload); else
// what is wrong, worded to follow "the payload ". Checked before SQLite's iterator ever sees a payload:
// SQLite 3.40.1's sqlite3changeset_next does not return on some malformed inputs (tests/fuzz/corpus).
std::string changeset_framing_fault(std::string_view payload);

// The records of a payload that changeset_framing_fault accepted, one by one.
class ChangesetRecords {
public:
    struct Value {
        int type = SQLITE_NULL;   // SQLITE_INTEGER, SQLITE_FLOAT, SQLITE_TEXT, SQLITE_BLOB or SQLITE_NULL
                                  // (a NaN real is SQLITE_NULL, as SQLite's iterator reads it)
        std::string_view bytes;   // 8 bytes for an integer or a real; the text or blob itself
        std::int64_t integer() const;
        double real() const;
    };

    explicit ChangesetRecords(std::string_view payload) : p_(payload) {}
    // Moves to the next record; false at the end.
    bool next();
    std::string_view table() const { return table_; }
    int columns() const { return ncol_; }
    const Value& value(int column) const { return values_[static_cast<std::size_t>(column)]; }

private:
    std::uint64_t varint();
    std::string_view p_;
    std::size_t i_ = 0;
    std::string_view table_;
    int ncol_ = 0;
    std::array<Value, kSyncObservationColumns> values_{};
};

// Registers on `db` the table-valued functions
//   pw_received_observation(payload)   the sync_observation rows of a payload, with that table's columns
//   pw_received_plot_event(payload)    the sync_plot_event rows, likewise
// (payload: a BLOB). The rows come in origin_id order (then origin), and the hidden column `ord` is each
// row's place in that order, from 0. A payload that changeset_framing_fault refuses is an SQL error naming
// the fault.
void register_received_rows(sqlite3* db);

}  // namespace pw
