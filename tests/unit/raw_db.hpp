// Reading a database file behind the store's back, for checks that must not trust the store: the file's
// bytes, rows through a plain read-only sqlite3 connection, and statements run on a connection of its own
// (what a person editing the file by hand would do). Used by the store, undo, sync and station-trait suites.
#pragma once
#include <catch2/catch.hpp>
#include <sqlite3.h>

#include <fstream>
#include <sstream>
#include <string>

namespace pw_test {

// The file's bytes, to compare a file before and after a refused operation.
inline std::string file_bytes(const std::string& path) {
    std::ifstream in(path, std::ios::binary);
    std::ostringstream ss;
    ss << in.rdbuf();
    return ss.str();
}

// Every row of `sql`, columns joined by '|', rows ended by '\n', NULL spelled NULL.
inline std::string raw_rows(const std::string& path, const std::string& sql) {
    sqlite3* db = nullptr;
    REQUIRE(sqlite3_open_v2(path.c_str(), &db, SQLITE_OPEN_READONLY, nullptr) == SQLITE_OK);
    sqlite3_stmt* st = nullptr;
    REQUIRE(sqlite3_prepare_v2(db, sql.c_str(), -1, &st, nullptr) == SQLITE_OK);
    std::string out;
    while (sqlite3_step(st) == SQLITE_ROW) {
        for (int c = 0; c < sqlite3_column_count(st); ++c) {
            const unsigned char* t = sqlite3_column_text(st, c);
            out += (c ? "|" : "") + std::string(t ? reinterpret_cast<const char*>(t) : "NULL");
        }
        out += "\n";
    }
    sqlite3_finalize(st);
    sqlite3_close(db);
    return out;
}

// sqlite3_exec's result code for `sql` run on a connection of its own.
inline int raw_exec(const std::string& path, const std::string& sql) {
    sqlite3* db = nullptr;
    REQUIRE(sqlite3_open(path.c_str(), &db) == SQLITE_OK);
    const int rc = sqlite3_exec(db, sql.c_str(), nullptr, nullptr, nullptr);
    sqlite3_close(db);
    return rc;
}

}  // namespace pw_test
