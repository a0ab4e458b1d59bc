// Station sync import (docs/benchmarks.md, "Station sync").
//
// What is timed: `import_bundle` of 10 handheld bundles of 5,000 observations each (an invented RCBD of 100
// entries in 50 blocks, 10 traits; each handheld recorded every trait of its own 5 blocks) into a fresh copy
// of the station database: for each bundle the header and checksum, the payload check, the rows taken in with
// set-based SQL over the payload (observations with their origin links; docs/sync.md, "At the station"), the
// sync_bundle record and the audit entry, each bundle its own transaction; then, as `sync import` does after
// its files, the station's count of unresolved conflicts.
//
// The baseline, run side by side in the same process on the same files: the same 50,000 rows copied with a
// plain SQLite `INSERT INTO observation ... SELECT ... FROM dev.observation` from each handheld database
// attached in turn, one transaction per handheld, on a connection with the store's own settings (WAL,
// synchronous=FULL, foreign keys on). The ratio import / baseline says what sync adds to the storage engine's
// own cost of copying the rows.
//
// Not a test: nothing here passes or fails. Build with -DPLOTWRIGHT_BENCHMARKS=ON; run
//   build-bench/tests/bench/pw_bench_sync --benchmark_repetitions=8 --benchmark_enable_random_interleaving=true \
//       --benchmark_report_aggregates_only=true
#include <benchmark/benchmark.h>
#include <fmt/format.h>
#include <sqlite3.h>

#include <unistd.h>

#include <filesystem>
#include <memory>
#include <stdexcept>
#include <string>
#include <vector>

#include "core/design/layout.hpp"
#include "core/spec/trial_spec.hpp"
#include "core/sync/bundle.hpp"
#include "storage/store.hpp"
#include "storage/sync.hpp"
#include "storage/sync_conflicts.hpp"

namespace {

namespace fs = std::filesystem;

constexpr int kDevices = 10;
constexpr int kEntries = 100;
constexpr int kBlocks = 50;
constexpr int kTraits = 10;
constexpr int kBlocksPerDevice = kBlocks / kDevices;   // 5 blocks x 100 plots x 10 traits = 5,000 per handheld

std::string spec_text() {
    std::string toml = fmt::format(R"([trial]
code = "SYNCB"
title = "Invented sync benchmark trial"
site = "Invented site"
crop = "wheat"
design = "rcbd"
blocks = {}
seed = 20261202

[field]
plot_length_m = 5.0
plot_width_m = 1.5
alley_m = 1.0
plots_per_row = 50

[gradient]
bearing_deg = 0
label = "invented"
)",
                                   kBlocks);
    for (int e = 1; e <= kEntries; ++e) toml += fmt::format("\n[[treatments]]\nlabel = \"E{:03}\"\n", e);
    for (int t = 1; t <= kTraits; ++t)
        toml += fmt::format("\n[[traits]]\nname = \"t{:02}\"\nunit = \"kg\"\nkind = \"number\"\nmin = 0\nmax = 100\ndecimals = 2\n", t);
    return toml;
}

void exec(sqlite3* db, const std::string& sql) {
    char* err = nullptr;
    if (sqlite3_exec(db, sql.c_str(), nullptr, nullptr, &err) != SQLITE_OK) {
        std::string m = err ? err : "?";
        sqlite3_free(err);
        throw std::runtime_error(sql.substr(0, 60) + ": " + m);
    }
}

// The station, its 10 handhelds with their records, and their bundles; made once.
struct Fixture {
    fs::path dir;
    std::string station;
    std::vector<std::string> devices;
    std::vector<std::string> bundles;

    Fixture() {
        dir = fs::temp_directory_path() / fmt::format("pw-bench-sync-{}", ::getpid());
        fs::remove_all(dir);
        fs::create_directories(dir);
        station = (dir / "station.db").string();
        const std::string text = spec_text();
        const pw::TrialSpec spec = pw::parse_trial_spec(text, "bench.toml");
        const pw::Layout layout = pw::design_trial(spec, 20261202);
        pw::Store s = pw::Store::create(station, text, "bench.toml", spec, layout, "2026-06-01T07:00:00Z");
        for (int d = 0; d < kDevices; ++d) {
            const std::string name = fmt::format("hh-{:02}", d + 1);
            const std::string path = (dir / (name + ".db")).string();
            pw::provision_device(s, name, path, "2026-06-01T08:00:00Z");
            devices.push_back(path);
            {
                // The handheld's records, written in one transaction (the recorder commits each; its cost is not
                // what is measured here).
                pw::Store hh = pw::Store::open(path);
                sqlite3* db = hh.handle();
                exec(db, "BEGIN");
                sqlite3_stmt* st = nullptr;
                sqlite3_prepare_v2(db,
                                   "INSERT INTO observation (plot, trait, value, number, recorded_utc, device, observer, "
                                   "note) VALUES (?1, ?2, ?3, ?4, '2026-06-10T09:00:00Z', ?5, 'bench', '')",
                                   -1, &st, nullptr);
                int k = 0;
                for (const pw::PlotPlacement& p : layout.plots) {
                    if ((p.block - 1) / kBlocksPerDevice != d) continue;
                    for (int t = 1; t <= kTraits; ++t) {
                        const double v = (++k % 9000) / 100.0;
                        const std::string tn = fmt::format("t{:02}", t), vt = fmt::format("{:.2f}", v);
                        sqlite3_bind_int(st, 1, p.id);
                        sqlite3_bind_text(st, 2, tn.c_str(), -1, SQLITE_TRANSIENT);
                        sqlite3_bind_text(st, 3, vt.c_str(), -1, SQLITE_TRANSIENT);
                        sqlite3_bind_double(st, 4, v);
                        sqlite3_bind_text(st, 5, name.c_str(), -1, SQLITE_TRANSIENT);
                        if (sqlite3_step(st) != SQLITE_DONE) throw std::runtime_error("insert failed");
                        sqlite3_reset(st);
                    }
                }
                sqlite3_finalize(st);
                exec(db, "COMMIT");
                std::string bytes;
                pw::export_bundle(hh, "", "2026-06-10T12:00:00Z", [&](const std::string& b) { bytes = b; });
                bundles.push_back(std::move(bytes));
            }
        }
    }
    // The station after the 10 imports (made on first use): every row of the bundles is one it holds.
    const std::string& imported_station() const {
        if (imported.empty()) {
            imported = (dir / "imported.db").string();
            fs::copy_file(station, imported);
            pw::Store s = pw::Store::open(imported);
            for (std::size_t i = 0; i < bundles.size(); ++i)
                pw::import_bundle(s, bundles[i], fmt::format("hh-{:02}.bundle", i + 1), "2026-06-11T08:00:00Z");
        }
        return imported;
    }
    mutable std::string imported;

    ~Fixture() {
        std::error_code ec;
        fs::remove_all(dir, ec);
    }
    // A fresh copy of the station as it was before any import (or of `from`).
    std::string fresh_copy(const std::string& name, const std::string& from = "") const {
        const fs::path p = dir / name;
        for (const char* suffix : {"", "-wal", "-shm"}) fs::remove(p.string() + suffix);
        fs::copy_file(from.empty() ? station : from, p);
        return p.string();
    }
};

const Fixture& fixture() {
    static const Fixture f;
    return f;
}

void BM_SyncImport(benchmark::State& state) {
    const Fixture& f = fixture();
    std::size_t rows = 0;
    for (auto _ : state) {
        state.PauseTiming();
        const std::string path = f.fresh_copy("import.db");
        {
            pw::Store s = pw::Store::open(path);
            state.ResumeTiming();
            for (std::size_t i = 0; i < f.bundles.size(); ++i)
                rows += pw::import_bundle(s, f.bundles[i], fmt::format("hh-{:02}.bundle", i + 1), "2026-06-11T08:00:00Z")
                            .applied;
            // As `sync import` does once after its files: the station's count of unresolved conflicts.
            benchmark::DoNotOptimize(pw::count_unresolved_conflicts(s));
            state.PauseTiming();
        }
        state.ResumeTiming();
    }
    state.counters["rows"] = benchmark::Counter(static_cast<double>(rows), benchmark::Counter::kAvgIterations);
    state.counters["rows/s"] = benchmark::Counter(static_cast<double>(rows), benchmark::Counter::kIsRate);
}

// Not part of the ratio: the same 50,000 rows sent again, each bundle's payload under a new sequence number,
// so that every row is compared with the one the station holds (all duplicates: nothing is written but the
// bundle records and audit entries). One copy of the imported station serves every iteration, each with the
// next sequence numbers, so that no file is copied between runs.
void BM_SyncImportRepeatedRows(benchmark::State& state) {
    const Fixture& f = fixture();
    const std::string path = f.fresh_copy("repeated.db", f.imported_station());
    pw::Store s = pw::Store::open(path);
    std::vector<pw::Bundle> decoded;
    for (const std::string& b : f.bundles) decoded.push_back(pw::decode_bundle(b, "b"));
    std::uint64_t seq = 1;
    std::size_t rows = 0;
    for (auto _ : state) {
        state.PauseTiming();
        ++seq;
        std::vector<std::string> again;
        for (pw::Bundle& b : decoded) {
            b.header.seq = seq;
            again.push_back(pw::encode_bundle(b.header, b.payload));
        }
        state.ResumeTiming();
        for (std::size_t i = 0; i < again.size(); ++i)
            rows += pw::import_bundle(s, again[i], fmt::format("hh-{:02}-{}.bundle", i + 1, seq), "2026-06-12T08:00:00Z")
                        .duplicates;
        benchmark::DoNotOptimize(pw::count_unresolved_conflicts(s));
    }
    state.counters["rows"] = benchmark::Counter(static_cast<double>(rows), benchmark::Counter::kAvgIterations);
}

void BM_InsertSelectBaseline(benchmark::State& state) {
    const Fixture& f = fixture();
    std::size_t rows = 0;
    for (auto _ : state) {
        state.PauseTiming();
        const std::string path = f.fresh_copy("baseline.db");
        sqlite3* db = nullptr;
        sqlite3_open(path.c_str(), &db);
        exec(db, "PRAGMA foreign_keys = ON; PRAGMA journal_mode = WAL; PRAGMA synchronous = FULL");
        state.ResumeTiming();
        for (const std::string& dev : f.devices) {
            sqlite3_stmt* at = nullptr;
            sqlite3_prepare_v2(db, "ATTACH DATABASE ?1 AS dev", -1, &at, nullptr);
            sqlite3_bind_text(at, 1, dev.c_str(), -1, SQLITE_TRANSIENT);
            sqlite3_step(at);
            sqlite3_finalize(at);
            exec(db, "BEGIN IMMEDIATE; INSERT INTO observation (plot, trait, value, number, recorded_utc, device, "
                     "observer, supersedes, note) SELECT plot, trait, value, number, recorded_utc, device, observer, "
                     "supersedes, note FROM dev.observation ORDER BY id; COMMIT; DETACH DATABASE dev");
            rows += static_cast<std::size_t>(sqlite3_changes(db));
        }
        state.PauseTiming();
        sqlite3_close(db);
        state.ResumeTiming();
    }
    state.counters["rows"] = benchmark::Counter(static_cast<double>(rows), benchmark::Counter::kAvgIterations);
    state.counters["rows/s"] = benchmark::Counter(static_cast<double>(rows), benchmark::Counter::kIsRate);
}

}  // namespace

BENCHMARK(BM_SyncImport)->Unit(benchmark::kMillisecond)->MinTime(2.0);
BENCHMARK(BM_InsertSelectBaseline)->Unit(benchmark::kMillisecond)->MinTime(2.0);
BENCHMARK(BM_SyncImportRepeatedRows)->Unit(benchmark::kMillisecond)->MinTime(2.0);

BENCHMARK_MAIN();
