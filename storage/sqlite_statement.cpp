// RAII wrappers over the SQLite C API (see sqlite_statement.hpp for the invariants).
#include "storage/sqlite_statement.hpp"

#include <limits>

namespace pw::sql {

std::string db_name(sqlite3* db) {
    const char* name = db ? sqlite3_db_filename(db, "main") : nullptr;
    return name && *name ? name : ":memory:";
}

void fail(sqlite3* db, const std::string& doing) {
    const char* msg = db ? sqlite3_errmsg(db) : "out of memory";
    throw StoreError(db_name(db) + ": " + doing + ": " + msg);
}

Statement::Statement(sqlite3* db, std::string_view sql) : db_(db), sql_(sql) {
    const char* tail = nullptr;
    if (sqlite3_prepare_v2(db, sql.data(), static_cast<int>(sql.size()), &stmt_, &tail) != SQLITE_OK)
        fail(db, "preparing \"" + sql_ + "\"");
}

Statement::~Statement() { sqlite3_finalize(stmt_); }

static void check_bind(sqlite3* db, int rc, int i, const std::string& sql) {
    if (rc != SQLITE_OK) fail(db, "binding value " + std::to_string(i) + " of \"" + sql + "\"");
}

Statement& Statement::bind(int i, std::int64_t v) {
    check_bind(db_, sqlite3_bind_int64(stmt_, i, v), i, sql_);
    return *this;
}

Statement& Statement::bind(int i, double v) {
    check_bind(db_, sqlite3_bind_double(stmt_, i, v), i, sql_);
    return *this;
}

Statement& Statement::bind(int i, std::string_view v) {
    // SQLITE_TRANSIENT: SQLite copies the bytes, so the caller's string may go away before step().
    check_bind(db_, sqlite3_bind_text64(stmt_, i, v.data(), v.size(), SQLITE_TRANSIENT, SQLITE_UTF8), i, sql_);
    return *this;
}

Statement& Statement::bind(int i, const std::optional<double>& v) {
    return v ? bind(i, *v) : bind_null(i);
}

Statement& Statement::bind(int i, const std::optional<std::int64_t>& v) {
    return v ? bind(i, *v) : bind_null(i);
}

Statement& Statement::bind_null(int i) {
    check_bind(db_, sqlite3_bind_null(stmt_, i), i, sql_);
    return *this;
}

bool Statement::step() {
    int rc = sqlite3_step(stmt_);
    if (rc == SQLITE_ROW) return true;
    if (rc == SQLITE_DONE) return false;
    fail(db_, "running \"" + sql_ + "\"");
}

int Statement::run(bool allow_constraint) {
    int rc = sqlite3_step(stmt_);
    while (rc == SQLITE_ROW) rc = sqlite3_step(stmt_);
    if (rc == SQLITE_DONE) return SQLITE_OK;
    if (allow_constraint && (rc & 0xff) == SQLITE_CONSTRAINT) {
        sqlite3_reset(stmt_);
        return rc;
    }
    fail(db_, "running \"" + sql_ + "\"");
}

std::int64_t Statement::int64(int col) const { return sqlite3_column_int64(stmt_, col); }

int Statement::integer(int col) const {
    std::int64_t v = sqlite3_column_int64(stmt_, col);
    if (v < std::numeric_limits<int>::min() || v > std::numeric_limits<int>::max())
        throw StoreError(db_name(db_) + ": column " + std::to_string(col) + " of \"" + sql_ +
                         "\" holds " + std::to_string(v) + ", outside the range of an int");
    return static_cast<int>(v);
}

double Statement::real(int col) const { return sqlite3_column_double(stmt_, col); }

std::optional<double> Statement::opt_real(int col) const {
    if (is_null(col)) return std::nullopt;
    return real(col);
}

std::optional<std::int64_t> Statement::opt_int64(int col) const {
    if (is_null(col)) return std::nullopt;
    return int64(col);
}

std::string Statement::text(int col) const {
    const unsigned char* p = sqlite3_column_text(stmt_, col);
    int n = sqlite3_column_bytes(stmt_, col);
    return p ? std::string(reinterpret_cast<const char*>(p), static_cast<std::size_t>(n)) : std::string();
}

bool Statement::is_null(int col) const { return sqlite3_column_type(stmt_, col) == SQLITE_NULL; }

void exec(sqlite3* db, const char* sql, const std::string& doing) {
    char* err = nullptr;
    if (sqlite3_exec(db, sql, nullptr, nullptr, &err) != SQLITE_OK) {
        std::string msg = err ? err : sqlite3_errmsg(db);
        sqlite3_free(err);
        throw StoreError(db_name(db) + ": " + doing + ": " + msg);
    }
}

WriteTransaction::WriteTransaction(sqlite3* db) : db_(db) {
    exec(db, "BEGIN IMMEDIATE", "starting a write transaction");
}

WriteTransaction::~WriteTransaction() {
    // A failed statement may already have rolled the transaction back (SQLITE_FULL, SQLITE_IOERR):
    // only roll back what is still open.
    if (open_ && !sqlite3_get_autocommit(db_)) sqlite3_exec(db_, "ROLLBACK", nullptr, nullptr, nullptr);
}

void WriteTransaction::commit() {
    exec(db_, "COMMIT", "committing");
    open_ = false;
}

}  // namespace pw::sql
