// Reading a payload's rows from the changeset bytes (changeset_rows.hpp), and the table-valued functions
// over them (https://www.sqlite.org/vtab.html: an eponymous-only virtual table with a hidden column for
// the argument, https://www.sqlite.org/vtab.html#tabfunc2).
#include "storage/changeset_rows.hpp"

#include <algorithm>
#include <cmath>
#include <cstring>
#include <limits>
#include <vector>

#include "storage/sqlite_statement.hpp"

namespace pw {
namespace {

// SQLite's varint at p[i]: 1 to 9 bytes, big-endian 7-bit groups, the ninth byte whole. False when the
// bytes end first.
bool read_varint(std::string_view p, std::size_t& i, std::uint64_t& v) {
    v = 0;
    for (int k = 0; k < 9; ++k) {
        if (i >= p.size()) return false;
        const auto b = static_cast<unsigned char>(p[i++]);
        if (k == 8) {
            v = (v << 8) | b;
            return true;
        }
        v = (v << 7) | (b & 0x7f);
        if (!(b & 0x80)) return true;
    }
    return true;
}

std::uint64_t big_endian64(std::string_view b) {
    std::uint64_t v = 0;
    for (std::size_t k = 0; k < 8; ++k) v = (v << 8) | static_cast<unsigned char>(b[k]);
    return v;
}

}  // namespace

std::string changeset_framing_fault(std::string_view p) {
    std::size_t i = 0;
    int ncol = 0;
    while (i < p.size()) {
        const char op = p[i++];
        if (op == 'T') {
            std::uint64_t n = 0;
            if (!read_varint(p, i, n) ||
                (n != std::uint64_t{kSyncObservationColumns} && n != std::uint64_t{kSyncPlotEventColumns} &&
                 n != std::uint64_t{kTraitAdditionColumns}))
                return "has a table of an unknown shape";
            ncol = static_cast<int>(n);
            if (p.size() - i < n) return "ends inside a table header";
            const int keys = ncol == kTraitAdditionColumns ? 1 : 2;  // (name) or (origin, origin_id)
            for (int c = 0; c < ncol; ++c)
                if (p[i + static_cast<std::size_t>(c)] != (c < keys ? c + 1 : 0))
                    return "keys a table otherwise than this program does";
            i += n;
            const std::size_t end = p.find('\0', i);
            if (end == std::string_view::npos) return "ends inside a table name";
            const std::string_view name = p.substr(i, end - i);
            if (!((name == "sync_observation" && ncol == kSyncObservationColumns) ||
                  (name == "sync_plot_event" && ncol == kSyncPlotEventColumns) ||
                  (name == "trait_addition" && ncol == kTraitAdditionColumns)))
                return "names a table a bundle never changes";
            i = end + 1;
            continue;
        }
        if (ncol == 0) return "is not an SQLite changeset (no table header first)";
        if (op != SQLITE_INSERT) return "updates or deletes rows (bundles only add rows)";
        if (i >= p.size() || static_cast<unsigned char>(p[i]) > 1) return "is damaged (bad record flag)";
        ++i;
        for (int c = 0; c < ncol; ++c) {
            if (i >= p.size()) return "ends inside a row";
            const int type = p[i++];
            std::uint64_t n = 0;
            switch (type) {
                case SQLITE_INTEGER:
                case SQLITE_FLOAT: n = 8; break;
                case SQLITE_TEXT:
                case SQLITE_BLOB:
                    if (!read_varint(p, i, n)) return "ends inside a row";
                    break;
                case SQLITE_NULL: break;
                default: return "is damaged (unknown value type)";
            }
            if (p.size() - i < n) return "ends inside a value";
            i += static_cast<std::size_t>(n);
        }
    }
    return "";
}

std::int64_t ChangesetRecords::Value::integer() const {
    return static_cast<std::int64_t>(big_endian64(bytes));
}

double ChangesetRecords::Value::real() const {
    const std::uint64_t bits = big_endian64(bytes);
    double d = 0;
    std::memcpy(&d, &bits, sizeof d);
    return d;
}

std::uint64_t ChangesetRecords::varint() {
    std::uint64_t v = 0;
    read_varint(p_, i_, v);
    return v;
}

bool ChangesetRecords::next() {
    // The framing was checked (changeset_framing_fault): every length is inside the payload.
    while (i_ < p_.size() && p_[i_] == 'T') {
        ++i_;
        ncol_ = static_cast<int>(varint());
        i_ += static_cast<std::size_t>(ncol_);
        const std::size_t end = p_.find('\0', i_);
        table_ = p_.substr(i_, end - i_);
        i_ = end + 1;
    }
    if (i_ >= p_.size()) return false;
    i_ += 2;  // the operation (an INSERT) and the "indirect" flag
    for (int c = 0; c < ncol_; ++c) {
        Value& v = values_[static_cast<std::size_t>(c)];
        v.type = p_[i_++];
        const std::uint64_t n = v.type == SQLITE_INTEGER || v.type == SQLITE_FLOAT ? 8
                                : v.type == SQLITE_NULL                           ? 0
                                                                                  : varint();
        v.bytes = p_.substr(i_, static_cast<std::size_t>(n));
        i_ += static_cast<std::size_t>(n);
        // A real whose bits are a NaN reads as NULL, as in SQLite's iterator (sessionReadRecord stores reals
        // with sqlite3VdbeMemSetDouble, which keeps a NaN as NULL) and in any SQL value. SQLite never writes
        // one; a forged payload could, and a reader seeing a real where SQL sees NULL would count a plain value
        // as a correction (docs/fuzzing.md).
        if (v.type == SQLITE_FLOAT && std::isnan(v.real())) v = Value{};
    }
    return true;
}

// ---- the table-valued functions ----------------------------------------------------------------------------

namespace {

struct RowsTable {
    const char* table;        // the changeset table whose rows it gives
    const char* declaration;  // its columns, then the hidden argument
};

const RowsTable kReceivedObservation{
    "sync_observation",
    "CREATE TABLE x (origin, origin_id, plot, trait, value, number, recorded_utc, device, observer, supersedes, "
    "note, payload HIDDEN, ord HIDDEN)"};
const RowsTable kReceivedPlotEvent{
    "sync_plot_event",
    "CREATE TABLE x (origin, origin_id, plot, state, reason, recorded_utc, device, observer, flag, payload HIDDEN, "
    "ord HIDDEN)"};

struct Vtab {
    sqlite3_vtab base{};
    const RowsTable* rows = nullptr;
    int columns = 0;
};

using Row = std::array<ChangesetRecords::Value, kSyncObservationColumns>;

struct Cursor {
    sqlite3_vtab_cursor base{};
    std::string payload;     // the cursor's own copy: the rows' values point into it until the cursor closes
    std::vector<Row> rows;   // the function's table's rows, by (origin_id, origin)
    std::size_t at = 0;
};

int x_connect(sqlite3* db, void* aux, int, const char* const*, sqlite3_vtab** out, char**) {
    const auto* rows = static_cast<const RowsTable*>(aux);
    if (const int rc = sqlite3_declare_vtab(db, rows->declaration); rc != SQLITE_OK) return rc;
    auto* t = new Vtab;
    t->rows = rows;
    t->columns = rows == &kReceivedObservation ? kSyncObservationColumns : kSyncPlotEventColumns;
    *out = &t->base;
    return SQLITE_OK;
}

int x_disconnect(sqlite3_vtab* v) {
    delete reinterpret_cast<Vtab*>(v);
    return SQLITE_OK;
}

// The payload must be given (payload = ?): without it there are no rows to read. The rows come in
// origin_id order, so an ORDER BY origin_id needs no sort.
int x_best_index(sqlite3_vtab* v, sqlite3_index_info* info) {
    const int payload_column = reinterpret_cast<Vtab*>(v)->columns;
    for (int k = 0; k < info->nConstraint; ++k) {
        const auto& c = info->aConstraint[k];
        if (c.iColumn != payload_column || c.op != SQLITE_INDEX_CONSTRAINT_EQ) continue;
        if (!c.usable) return SQLITE_CONSTRAINT;
        info->aConstraintUsage[k].argvIndex = 1;
        info->aConstraintUsage[k].omit = 1;
        info->estimatedCost = 1000;
        info->estimatedRows = 1000;
        info->orderByConsumed = info->nOrderBy == 1 && info->aOrderBy[0].iColumn == 1 && !info->aOrderBy[0].desc;
        return SQLITE_OK;
    }
    return SQLITE_CONSTRAINT;
}

int x_open(sqlite3_vtab*, sqlite3_vtab_cursor** out) {
    *out = &(new Cursor)->base;
    return SQLITE_OK;
}

int x_close(sqlite3_vtab_cursor* c) {
    delete reinterpret_cast<Cursor*>(c);
    return SQLITE_OK;
}

// The key order of the rows: origin_id (an integer in every row this program writes), then origin.
bool key_less(const Row& a, const Row& b) {
    const auto id = [](const Row& r) {
        return r[1].type == SQLITE_INTEGER ? r[1].integer() : std::numeric_limits<std::int64_t>::max();
    };
    const std::int64_t ia = id(a), ib = id(b);
    return ia != ib ? ia < ib : a[0].bytes < b[0].bytes;
}

int x_filter(sqlite3_vtab_cursor* base, int, const char*, int argc, sqlite3_value** argv) {
    auto* c = reinterpret_cast<Cursor*>(base);
    const auto* t = reinterpret_cast<const Vtab*>(base->pVtab);
    c->payload.clear();
    c->rows.clear();
    c->at = 0;
    if (argc == 1 && sqlite3_value_type(argv[0]) != SQLITE_NULL) {
        const void* blob = sqlite3_value_blob(argv[0]);
        c->payload.assign(static_cast<const char*>(blob), static_cast<std::size_t>(sqlite3_value_bytes(argv[0])));
    }
    if (const std::string why = changeset_framing_fault(c->payload); !why.empty()) {
        sqlite3_free(base->pVtab->zErrMsg);
        base->pVtab->zErrMsg = sqlite3_mprintf("the payload %s", why.c_str());
        return SQLITE_ERROR;
    }
    ChangesetRecords records(c->payload);
    while (records.next())
        if (records.table() == t->rows->table && records.columns() == t->columns) {
            Row r{};
            for (int k = 0; k < t->columns; ++k) r[static_cast<std::size_t>(k)] = records.value(k);
            c->rows.push_back(r);
        }
    std::stable_sort(c->rows.begin(), c->rows.end(), key_less);
    return SQLITE_OK;
}

int x_next(sqlite3_vtab_cursor* base) {
    ++reinterpret_cast<Cursor*>(base)->at;
    return SQLITE_OK;
}

int x_eof(sqlite3_vtab_cursor* base) {
    const auto* c = reinterpret_cast<Cursor*>(base);
    return c->at >= c->rows.size() ? 1 : 0;
}

int x_column(sqlite3_vtab_cursor* base, sqlite3_context* ctx, int column) {
    const auto* c = reinterpret_cast<Cursor*>(base);
    const int columns = reinterpret_cast<const Vtab*>(base->pVtab)->columns;
    if (column == columns + 1) {  // ord: the row's place in key order, from 0
        sqlite3_result_int64(ctx, static_cast<sqlite3_int64>(c->at));
        return SQLITE_OK;
    }
    if (column >= columns) {  // the payload argument
        sqlite3_result_null(ctx);
        return SQLITE_OK;
    }
    const ChangesetRecords::Value& v = c->rows[c->at][static_cast<std::size_t>(column)];
    const int n = static_cast<int>(v.bytes.size());
    switch (v.type) {
        case SQLITE_INTEGER: sqlite3_result_int64(ctx, v.integer()); break;
        case SQLITE_FLOAT: sqlite3_result_double(ctx, v.real()); break;
        // The bytes stay in the cursor's copy of the payload while the statement reads them.
        case SQLITE_TEXT: sqlite3_result_text(ctx, v.bytes.data(), n, SQLITE_STATIC); break;
        case SQLITE_BLOB: sqlite3_result_blob(ctx, v.bytes.data(), n, SQLITE_STATIC); break;
        default: sqlite3_result_null(ctx); break;
    }
    return SQLITE_OK;
}

int x_rowid(sqlite3_vtab_cursor* base, sqlite3_int64* rowid) {
    *rowid = static_cast<sqlite3_int64>(reinterpret_cast<Cursor*>(base)->at);
    return SQLITE_OK;
}

sqlite3_module make_module() {
    sqlite3_module m{};
    m.iVersion = 1;
    m.xCreate = nullptr;  // eponymous-only: usable as pw_received_...(payload), never CREATE VIRTUAL TABLE
    m.xConnect = x_connect;
    m.xBestIndex = x_best_index;
    m.xDisconnect = x_disconnect;
    m.xDestroy = x_disconnect;
    m.xOpen = x_open;
    m.xClose = x_close;
    m.xFilter = x_filter;
    m.xNext = x_next;
    m.xEof = x_eof;
    m.xColumn = x_column;
    m.xRowid = x_rowid;
    return m;
}

const sqlite3_module kModule = make_module();

}  // namespace

void register_received_rows(sqlite3* db) {
    for (const auto& [name, rows] : {std::pair{"pw_received_observation", &kReceivedObservation},
                                     std::pair{"pw_received_plot_event", &kReceivedPlotEvent}})
        if (sqlite3_create_module_v2(db, name, &kModule, const_cast<RowsTable*>(rows), nullptr) != SQLITE_OK)
            sql::fail(db, std::string("registering ") + name);
}

}  // namespace pw
