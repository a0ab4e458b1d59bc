// The certificate stored with a trial (storage/certificate.hpp) and verification of a trial database whose
// tables were edited behind plotwright's back, through the SQLite C API (the way any sqlite tool would).
//
// Outside sources: the edits are made with SQLite's own C API (sqlite3_exec), not through the store; the
// stored digest is compared with coreutils sha256sum by tests/cmake/verify.cmake.
#include <catch2/catch.hpp>

#include <sqlite3.h>
#include <stdlib.h>

#include <filesystem>
#include <string>

#include "core/design/certificate.hpp"
#include "core/spec/trial_spec.hpp"
#include "storage/certificate.hpp"
#include "storage/store.hpp"
#include "temp_dir.hpp"

namespace {

using pw_test::TempDir;

constexpr const char* kSpec = R"toml(
[trial]
code = "VERI1"
title = "Verification test"
site = "Test field"
crop = "barley"
design = "rcbd"
blocks = 3

[field]
plot_length_m = 5.0
plot_width_m = 1.5
alley_m = 1.0

[gradient]
bearing_deg = 90
label = "drainage, wetter eastward"

[[treatments]]
label = "A"
[[treatments]]
label = "B"
[[treatments]]
label = "C"
[[treatments]]
label = "D"

[[traits]]
name = "yield"
unit = "t/ha"
kind = "number"
)toml";

pw::Store make_trial(const std::string& path, std::uint64_t seed) {
    const pw::TrialSpec spec = pw::parse_trial_spec(kSpec, "verify.toml");
    return pw::Store::create(path, kSpec, "verify.toml", spec, pw::design_trial(spec, seed), "2026-05-01T08:00:00Z");
}

// Runs SQL on the file with the plain SQLite C API, outside the store.
void edit_with_sqlite(const std::string& path, const std::string& sql) {
    sqlite3* db = nullptr;
    REQUIRE(sqlite3_open_v2(path.c_str(), &db, SQLITE_OPEN_READWRITE, nullptr) == SQLITE_OK);
    char* err = nullptr;
    const int rc = sqlite3_exec(db, sql.c_str(), nullptr, nullptr, &err);
    const std::string message = err ? err : "";
    sqlite3_free(err);
    sqlite3_close(db);
    INFO(message);
    REQUIRE(rc == SQLITE_OK);
}

pw::VerifyReport verify(const std::string& path) {
    const pw::Store store = pw::Store::open(path);
    const auto cert = pw::stored_certificate(store);
    return pw::verify_layout(store.trial().spec, store.trial().layout,
                             cert ? std::optional<std::string>(cert->sha256) : std::nullopt);
}

}  // namespace

TEST_CASE("A new trial stores the certificate of its layout, and an untouched trial verifies", "[certificate][store]") {
    TempDir dir;
    const std::string path = dir.file("t.db");
    std::string digest;
    {
        const pw::Store store = make_trial(path, 31);
        const auto cert = pw::stored_certificate(store);
        REQUIRE(cert.has_value());
        CHECK(cert->format == pw::kCertificateFormat);
        REQUIRE(cert->sha256.size() == 64);
        digest = cert->sha256;
    }
    const pw::VerifyReport r = verify(path);
    CAPTURE(r.message);
    REQUIRE(r.outcome == pw::VerifyOutcome::Verified);
    CHECK(r.digest_of_stored == digest);
}

TEST_CASE("Two treatments swapped in the plot table through the SQLite C API fail verification, naming both plots",
          "[certificate][store]") {
    TempDir dir;
    const std::string path = dir.file("t.db");
    int a = 0, b = 0, ta = 0, tb = 0;
    {
        const pw::Store store = make_trial(path, 31);
        // Two plots of block 1 (they hold different treatments: each block holds each once).
        const auto& plots = store.trial().layout.plots;
        a = plots[0].id;
        b = plots[1].id;
        ta = plots[0].treatment;
        tb = plots[1].treatment;
        REQUIRE(ta != tb);
    }
    // The schema forbids updating plots (trigger plot_fixed_update); someone determined drops the trigger first.
    edit_with_sqlite(path, "DROP TRIGGER plot_fixed_update;"
                           "UPDATE plot SET treatment = " + std::to_string(tb) + " WHERE id = " + std::to_string(a) + ";"
                           "UPDATE plot SET treatment = " + std::to_string(ta) + " WHERE id = " + std::to_string(b) + ";");
    const pw::VerifyReport r = verify(path);
    CAPTURE(r.message);
    REQUIRE(r.outcome == pw::VerifyOutcome::PlotsEdited);
    REQUIRE(r.differences.size() == 2);
    CHECK(r.differences[0].plot == std::min(a, b));
    CHECK(r.differences[1].plot == std::max(a, b));
    CHECK_THAT(r.message, Catch::Contains(std::to_string(a)) && Catch::Contains(std::to_string(b)));
    CHECK(r.digest_of_stored != r.stored_digest);
    CHECK(r.digest_of_derived == r.stored_digest);
}

TEST_CASE("A digest replaced through the SQLite C API is reported as not matching the plots", "[certificate][store]") {
    TempDir dir;
    const std::string path = dir.file("t.db");
    { make_trial(path, 8); }
    edit_with_sqlite(path, "DROP TRIGGER layout_certificate_fixed_update;"
                           "UPDATE layout_certificate SET sha256 = '" + std::string(64, 'a') + "';");
    const pw::VerifyReport r = verify(path);
    REQUIRE(r.outcome == pw::VerifyOutcome::DigestMismatch);
    CHECK_THAT(r.message, Catch::Contains(std::string(64, 'a')));
}

TEST_CASE("The stored certificate cannot be changed or deleted through SQL while its triggers stand",
          "[certificate][store]") {
    TempDir dir;
    const std::string path = dir.file("t.db");
    { make_trial(path, 8); }
    sqlite3* db = nullptr;
    REQUIRE(sqlite3_open_v2(path.c_str(), &db, SQLITE_OPEN_READWRITE, nullptr) == SQLITE_OK);
    CHECK(sqlite3_exec(db, "UPDATE layout_certificate SET sha256 = sha256", nullptr, nullptr, nullptr) == SQLITE_CONSTRAINT);
    CHECK(sqlite3_exec(db, "DELETE FROM layout_certificate", nullptr, nullptr, nullptr) == SQLITE_CONSTRAINT);
    sqlite3_close(db);
    REQUIRE(verify(path).outcome == pw::VerifyOutcome::Verified);
}
