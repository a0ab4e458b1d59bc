// Thin RAII wrappers over the SQLite C API, for storage/ only: a prepared statement with typed binds and
// column reads, and a write transaction that rolls back unless committed.
//
// Invariants: every value reaches SQL through a bind (sqlite3_bind_*), never through the SQL text; every
// failing call throws StoreError carrying the database file name, what was being done and SQLite's own
// message (sqlite3_errmsg), so "disk is full" or "database is locked" reach the person at the keyboard.
#pragma once
#include <sqlite3.h>

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

#include "core/error.hpp"

namespace pw::sql {

// Throws StoreError "<file>: <doing>: <sqlite message>".
[[noreturn]] void fail(sqlite3* db, const std::string& doing);

// The file name of the main database, for messages ("" for an in-memory database).
std::string db_name(sqlite3* db);

class Statement {
public:
    Statement(sqlite3* db, std::string_view sql);
    Statement(const Statement&) = delete;
    Statement& operator=(const Statement&) = delete;
    ~Statement();

    // Binds are 1-based, as in sqlite3_bind_*.
    Statement& bind(int i, std::int64_t v);
    Statement& bind(int i, int v) { return bind(i, static_cast<std::int64_t>(v)); }
    Statement& bind(int i, double v);
    Statement& bind(int i, std::string_view v);
    Statement& bind(int i, const std::string& v) { return bind(i, std::string_view(v)); }
    Statement& bind(int i, const char* v) { return bind(i, std::string_view(v)); }
    Statement& bind(int i, const std::optional<double>& v);
    Statement& bind(int i, const std::optional<std::int64_t>& v);
    Statement& bind_null(int i);

    // Steps once: true when a row is ready, false when done. Throws StoreError on any error.
    bool step();
    // Steps to completion, expecting no row. Returns sqlite3's result code for the caller to inspect when
    // `allow_constraint` is true and a constraint fails (SQLITE_CONSTRAINT_*); throws otherwise.
    int run(bool allow_constraint = false);

    std::int64_t int64(int col) const;
    int integer(int col) const;
    double real(int col) const;
    std::optional<double> opt_real(int col) const;
    std::optional<std::int64_t> opt_int64(int col) const;
    std::string text(int col) const;
    bool is_null(int col) const;

    sqlite3_stmt* get() const { return stmt_; }

private:
    sqlite3* db_;
    sqlite3_stmt* stmt_ = nullptr;
    std::string sql_;
};

// Runs SQL text that takes no values (schema, pragmas, BEGIN/COMMIT).
void exec(sqlite3* db, const char* sql, const std::string& doing);

// BEGIN IMMEDIATE on construction: the write lock is taken at once, so a busy database fails here and
// not halfway through. Rolls back in the destructor unless commit() was called.
class WriteTransaction {
public:
    explicit WriteTransaction(sqlite3* db);
    WriteTransaction(const WriteTransaction&) = delete;
    WriteTransaction& operator=(const WriteTransaction&) = delete;
    ~WriteTransaction();
    void commit();

private:
    sqlite3* db_;
    bool open_ = true;
};

}  // namespace pw::sql
