// Scan-to-card latency of the handheld recorder (docs/benchmarks.md).
//
// What is timed: one scanned tag line ("PW1:TRIAL-PLOT-C", as a keyboard-wedge scanner types it) handed to the
// RecordingSession, which parses and checks the code, finds the plot and reads its current observations from
// the SQLite store, and then the 32x12 screen composed with the plot card: everything between the scanner's
// Enter and the card being ready to draw. Plots are scanned in a fixed pseudo-random order so that no cache
// favours walking order.
//
// The baseline, run side by side on the same database file: the two indexed lookups the card cannot do
// without, made with the SQLite C API directly (the plot's row by primary key and its observations by
// plot). The ratio scan / baseline says how much the recorder adds to the storage engine's own cost, and the
// three trial sizes (500, 5,000 and 45,000 plots; a trial holds at most 99 blocks of 999 entries) show whether the scan grows with the trial beyond the
// index lookup.
//
// Not a test: nothing here passes or fails. Build with -DPLOTWRIGHT_BENCHMARKS=ON; run
//   build-bench/tests/bench/pw_bench_scan --benchmark_counters_tabular=true
#include <benchmark/benchmark.h>
#include <fmt/format.h>
#include <sqlite3.h>

#include <unistd.h>

#include <algorithm>
#include <filesystem>
#include <map>
#include <memory>
#include <random>
#include <set>
#include <stdexcept>
#include <string>
#include <vector>

#include "core/design/layout.hpp"
#include "core/record/session.hpp"
#include "core/spec/trial_spec.hpp"
#include "core/tags/payload.hpp"
#include "firmware_app/recorder_view.hpp"
#include "storage/store.hpp"

namespace {

namespace fs = std::filesystem;

// An invented trial of `plots` plots: an RCBD of at most 500 entries in at least 4 blocks, two traits.
std::string spec_text(int plots) {
    const int entries = std::min(500, plots / 4);
    const int blocks = plots / entries;
    std::string toml = fmt::format(R"([trial]
code = "BENCH{}"
title = "Invented benchmark trial"
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
label = "invented slope"

[[traits]]
name = "height_cm"
unit = "cm"
kind = "number"
min = 0
max = 400
decimals = 0

[[traits]]
name = "vigour"
unit = "score"
kind = "number"
min = 1
max = 9
decimals = 0
)",
                                   plots, blocks);
    for (int t = 1; t <= entries; ++t) toml += fmt::format("\n[[treatments]]\nlabel = \"Entry {}\"\n", t);
    return toml;
}

// One database per trial size, made once and kept for the whole run; half the plots already hold values,
// so the card has something to show.
struct Trial {
    fs::path dir;
    std::string db;
    std::unique_ptr<pw::Store> store;
    std::vector<std::string> scans;  // tag payloads in a fixed shuffled order
    std::vector<int> plot_ids;       // the same order

    explicit Trial(int plots) {
        dir = fs::temp_directory_path() / fmt::format("pw-bench-scan-{}-{}", plots, ::getpid());
        fs::remove_all(dir);
        fs::create_directories(dir);
        db = (dir / "trial.db").string();
        const std::string text = spec_text(plots);
        const pw::TrialSpec spec = pw::parse_trial_spec(text, "bench.toml");
        const pw::Layout layout = pw::design_trial(spec, *spec.seed);
        store = std::make_unique<pw::Store>(
            pw::Store::create(db, text, "bench.toml", spec, layout, "2026-12-02T08:00:00Z"));
        for (std::size_t i = 0; i < layout.plots.size(); i += 2) {
            pw::NewObservation o;
            o.plot = layout.plots[i].id;
            o.trait = "height_cm";
            o.value = "150";
            o.number = 150;
            o.recorded_utc = "2026-12-02T08:00:00Z";
            o.device = "bench";
            o.observer = "bench";
            store->add_observation(o);
        }
        for (const auto& p : layout.plots) plot_ids.push_back(p.id);
        std::mt19937_64 rng(7);
        std::shuffle(plot_ids.begin(), plot_ids.end(), rng);
        for (int id : plot_ids) scans.push_back(pw::qr_payload(spec.code, id));
    }
    ~Trial() {
        store.reset();
        fs::remove_all(dir);
    }
};

Trial& trial_of(int plots) {
    static std::map<int, std::unique_ptr<Trial>> trials;
    auto& t = trials[plots];
    if (!t) t = std::make_unique<Trial>(plots);
    return *t;
}

void scan_to_card(benchmark::State& state) {
    Trial& t = trial_of(static_cast<int>(state.range(0)));
    const pw::StoredTrial& stored = t.store->trial();
    std::set<int> done;
    pw::RecordingSession session(stored.spec, stored.layout, *t.store, {"bench", "bench"},
                                 [] { return std::string("2026-12-02T09:00:00Z"); }, done);
    pw::app::ViewState view;
    view.device = "bench";
    view.observer = "bench";
    std::size_t i = 0;
    for (auto _ : state) {
        view.add(session.handle(t.scans[i]));
        auto screen = pw::app::compose_screen(session, stored.spec, view, 32, 12);
        benchmark::DoNotOptimize(screen);
        if (session.open_plot() == nullptr) state.SkipWithError("the scan did not open a plot");
        if (++i == t.scans.size()) i = 0;
    }
    state.counters["plots"] = static_cast<double>(state.range(0));
}

// The baseline: the plot's row by primary key and its observations, prepared once, on the same file.
void indexed_lookup(benchmark::State& state) {
    Trial& t = trial_of(static_cast<int>(state.range(0)));
    sqlite3* db = nullptr;
    if (sqlite3_open_v2(t.db.c_str(), &db, SQLITE_OPEN_READONLY, nullptr) != SQLITE_OK)
        throw std::runtime_error("cannot open the benchmark database");
    sqlite3_stmt* plot = nullptr;
    sqlite3_stmt* obs = nullptr;
    if (sqlite3_prepare_v2(db, "SELECT * FROM plot WHERE id = ?1", -1, &plot, nullptr) != SQLITE_OK ||
        sqlite3_prepare_v2(db, "SELECT * FROM observation WHERE plot = ?1", -1, &obs, nullptr) != SQLITE_OK)
        throw std::runtime_error(std::string("benchmark baseline: ") + sqlite3_errmsg(db));
    std::size_t i = 0;
    std::int64_t rows = 0;
    for (auto _ : state) {
        for (sqlite3_stmt* st : {plot, obs}) {
            sqlite3_bind_int(st, 1, t.plot_ids[i]);
            while (sqlite3_step(st) == SQLITE_ROW) rows += sqlite3_column_int(st, 0) != 0;
            sqlite3_reset(st);
        }
        if (++i == t.plot_ids.size()) i = 0;
    }
    benchmark::DoNotOptimize(rows);
    sqlite3_finalize(plot);
    sqlite3_finalize(obs);
    sqlite3_close(db);
    state.counters["plots"] = static_cast<double>(state.range(0));
}

}  // namespace

BENCHMARK(indexed_lookup)->Arg(500)->Arg(5000)->Arg(45000)->Unit(benchmark::kMicrosecond);
BENCHMARK(scan_to_card)->Arg(500)->Arg(5000)->Arg(45000)->Unit(benchmark::kMicrosecond);
BENCHMARK_MAIN();
