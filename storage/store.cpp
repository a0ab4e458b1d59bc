// The trial database (store.hpp): creation, opening with schema checks and migrations, recording and
// reading observations. Schema and meaning of every column: docs/schema.md, storage/schema.cpp.
//
// Invariants kept here:
//   - One connection per Store, configured with foreign_keys=ON, journal_mode=WAL, synchronous=FULL
//     (with WAL, FULL syncs the log at every commit, so a committed row survives a power cut;
//     https://www.sqlite.org/pragma.html#pragma_synchronous).
//   - Every write is one BEGIN IMMEDIATE ... COMMIT; a refused write leaves the database as it was.
//   - The spec text is the single definition of the trial: it is re-parsed on every open and checked
//     against the treatment and trait tables it was stored with; traits added at the station since
//     (trait_addition, storage/station_traits.hpp) follow the spec's, each read from its own definition.
//   - uint64 seeds are stored as decimal TEXT (SQLite's INTEGER is a signed 64-bit value).
//   - A plot event names one of the trial's flags (TrialSpec::flags) and its state says what that flag
//     means for the data; current_observations() leaves out withdrawals (empty values, an undo back to
//     no value) and every value of a plot flagged as missing, so every reader sees the same values.
#include "storage/store.hpp"

#include <fcntl.h>
#include <sqlite3.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <charconv>
#include <cstring>
#include <filesystem>
#include <nlohmann/json.hpp>

#include "core/error.hpp"
#include "storage/audit_log.hpp"
#include "storage/certificate.hpp"
#include "storage/changeset_rows.hpp"
#include "storage/schema.hpp"
#include "storage/sqlite_statement.hpp"
#include "storage/station_traits.hpp"

#ifndef PW_APP_VERSION
#error "PW_APP_VERSION must be defined by the build (storage/CMakeLists.txt)"
#endif

namespace pw {
namespace {

using sql::Statement;
using sql::WriteTransaction;

using schema::stored_kind;

struct DbCloser {
    void operator()(sqlite3* db) const { sqlite3_close_v2(db); }
};
using DbHandle = std::unique_ptr<sqlite3, DbCloser>;

DbHandle open_connection(const std::string& path, int flags) {
    sqlite3* raw = nullptr;
    int rc = sqlite3_open_v2(path.c_str(), &raw, flags, nullptr);
    DbHandle db(raw);
    if (rc != SQLITE_OK)
        throw StoreError(path + ": cannot open: " + (raw ? sqlite3_errmsg(raw) : "out of memory"));
    sqlite3_extended_result_codes(raw, 1);
    sqlite3_busy_timeout(raw, 5000);
    return db;
}

// Per-connection settings (foreign_keys and synchronous are not stored in the file; journal_mode=WAL is).
void configure(sqlite3* db) {
    sql::exec(db, "PRAGMA foreign_keys = ON", "enabling foreign keys");
    {
        Statement fk(db, "PRAGMA foreign_keys");
        if (!fk.step() || fk.int64(0) != 1)
            throw StoreError(sql::db_name(db) + ": this SQLite library does not enforce foreign keys");
    }
    {
        Statement wal(db, "PRAGMA journal_mode = WAL");
        if (!wal.step() || wal.text(0) != "wal")
            throw StoreError(sql::db_name(db) + ": cannot switch to write-ahead logging (journal_mode " +
                             wal.text(0) + ")");
    }
    sql::exec(db, "PRAGMA synchronous = FULL", "setting synchronous=FULL");
    register_received_rows(db);  // the station's import reads a handheld's rows with them (storage/sync.cpp)
}

std::int64_t pragma_int(sqlite3* db, const char* pragma) {
    Statement st(db, std::string("PRAGMA ") + pragma);
    if (!st.step()) throw StoreError(sql::db_name(db) + ": PRAGMA " + pragma + " returned nothing");
    return st.int64(0);
}

std::uint64_t parse_seed(const std::string& text, const std::string& path) {
    std::uint64_t v = 0;
    auto [end, ec] = std::from_chars(text.data(), text.data() + text.size(), v);
    if (ec != std::errc() || end != text.data() + text.size() || text.empty())
        throw StoreError(path + ": trial.seed: '" + text + "' is not a decimal unsigned 64-bit seed");
    return v;
}

// The stored spec must name the same treatments and traits as the tables filled from it.
void check_agrees(const TrialSpec& a, const TrialSpec& b, const std::string& where, const std::string& what) {
    auto differ = [&](const std::string& detail) {
        throw StoreError(where + ": " + what + ": " + detail);
    };
    if (a.code != b.code) differ("trial code '" + a.code + "' vs '" + b.code + "'");
    if (a.treatments.size() != b.treatments.size())
        differ(std::to_string(a.treatments.size()) + " treatments vs " + std::to_string(b.treatments.size()));
    for (std::size_t i = 0; i < a.treatments.size(); ++i)
        if (a.treatments[i].label != b.treatments[i].label || a.treatments[i].check != b.treatments[i].check)
            differ("treatment " + std::to_string(i + 1) + ": '" + a.treatments[i].label + "' vs '" +
                   b.treatments[i].label + "'");
    if (a.traits.size() != b.traits.size())
        differ(std::to_string(a.traits.size()) + " traits vs " + std::to_string(b.traits.size()));
    for (std::size_t i = 0; i < a.traits.size(); ++i)
        if (a.traits[i].name != b.traits[i].name || a.traits[i].kind != b.traits[i].kind ||
            a.traits[i].unit != b.traits[i].unit)
            differ("trait " + std::to_string(i + 1) + ": '" + a.traits[i].name + "' vs '" + b.traits[i].name +
                   "'");
}

TrialSpec parse_stored_spec(const std::string& toml, const std::string& source, const std::string& path) {
    try {
        return parse_trial_spec(toml, source);
    } catch (const SpecError& e) {
        throw StoreError(path + ": the stored trial spec no longer parses: " + std::string(e.what()));
    }
}

void insert_definition(sqlite3* db, const std::string& spec_toml, const std::string& spec_source,
                       const TrialSpec& spec, const Layout& layout, const std::string& now_utc) {
    Statement trial(db,
                    "INSERT INTO trial (id, code, title, spec_toml, spec_source, seed, algorithm, field_x_m, "
                    "field_y_m, layout_notes, created_utc, app_version, design_columns) "
                    "VALUES (1, ?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12)");
    trial.bind(1, spec.code).bind(2, spec.title).bind(3, spec_toml).bind(4, spec_source)
        .bind(5, std::to_string(layout.seed)).bind(6, layout.algorithm)
        .bind(7, layout.field_x_m).bind(8, layout.field_y_m).bind(9, nlohmann::json(layout.notes).dump())
        .bind(10, now_utc).bind(11, PW_APP_VERSION).bind(12, nlohmann::json(layout.columns).dump());
    trial.run();

    for (std::size_t i = 0; i < spec.treatments.size(); ++i) {
        const TreatmentSpec& t = spec.treatments[i];
        Statement st(db, "INSERT INTO treatment (idx, label, description, is_check) VALUES (?1, ?2, ?3, ?4)");
        st.bind(1, static_cast<std::int64_t>(i)).bind(2, t.label).bind(3, t.description).bind(4, t.check ? 1 : 0);
        st.run();
    }
    for (std::size_t i = 0; i < spec.traits.size(); ++i) {
        const TraitSpec& t = spec.traits[i];
        Statement st(db,
                     "INSERT INTO trait (name, position, label, unit, kind, min, max, decimals, max_length, "
                     "score_labels) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10)");
        st.bind(1, t.name).bind(2, static_cast<std::int64_t>(i)).bind(3, t.label).bind(4, t.unit)
            .bind(5, stored_kind(t.kind)).bind(6, t.min).bind(7, t.max).bind(8, t.decimals)
            .bind(9, t.max_length).bind(10, nlohmann::json(t.score_labels).dump());
        st.run();
    }
    for (const PlotPlacement& p : layout.plots) {
        Statement st(db,
                     "INSERT INTO plot (id, block, position, walk_order, row, col, treatment, x_m, y_m, "
                     "width_x_m, width_y_m, rep, incomplete_block, main, sub, square_row, square_col, "
                     "harvest_x_m, harvest_y_m) "
                     "VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, ?14, ?15, ?16, ?17, ?18, ?19)");
        st.bind(1, p.id).bind(2, p.block).bind(3, p.position).bind(4, p.walk_order).bind(5, p.row)
            .bind(6, p.col).bind(7, p.treatment).bind(8, p.x_m).bind(9, p.y_m).bind(10, p.width_x_m)
            .bind(11, p.width_y_m).bind(12, p.rep).bind(13, p.incomplete_block).bind(14, p.main).bind(15, p.sub)
            .bind(16, p.square_row).bind(17, p.square_col).bind(18, p.harvest_x_m).bind(19, p.harvest_y_m);
        if (int rc = st.run(true); rc != SQLITE_OK)
            throw StoreError(sql::db_name(db) + ": plot " + std::to_string(p.id) + " refused (" +
                             sqlite3_errmsg(db) + "); treatment index " + std::to_string(p.treatment) + " of " +
                             std::to_string(spec.treatments.size()));
    }
    for (std::size_t i = 0; i < layout.guards.size(); ++i) {
        const GuardPlot& g = layout.guards[i];
        Statement st(db, "INSERT INTO guard_plot (id, x_m, y_m, width_x_m, width_y_m) VALUES (?1, ?2, ?3, ?4, ?5)");
        st.bind(1, static_cast<std::int64_t>(i + 1)).bind(2, g.x_m).bind(3, g.y_m).bind(4, g.width_x_m)
            .bind(5, g.width_y_m);
        st.run();
    }
}

// Reads the trial back: spec re-parsed from its text, checked against the tables, layout from plot.
StoredTrial load_trial(sqlite3* db, const std::string& path) {
    StoredTrial t;
    Statement st(db,
                 "SELECT spec_toml, spec_source, created_utc, seed, algorithm, field_x_m, field_y_m, "
                 "layout_notes, design_columns FROM trial WHERE id = 1");
    if (!st.step()) throw StoreError(path + ": the trial table is empty: not a complete plotwright database");
    t.spec_toml = st.text(0);
    t.spec_source = st.text(1);
    t.created_utc = st.text(2);
    t.layout.seed = parse_seed(st.text(3), path);
    t.layout.algorithm = st.text(4);
    t.layout.field_x_m = st.real(5);
    t.layout.field_y_m = st.real(6);
    try {
        t.layout.notes = nlohmann::json::parse(st.text(7)).get<std::vector<std::string>>();
    } catch (const nlohmann::json::exception& e) {
        throw StoreError(path + ": trial.layout_notes: expected a JSON array of strings (" + e.what() + ")");
    }
    try {
        t.layout.columns = nlohmann::json::parse(st.text(8)).get<std::vector<std::string>>();
    } catch (const nlohmann::json::exception& e) {
        throw StoreError(path + ": trial.design_columns: expected a JSON array of strings (" + e.what() + ")");
    }
    t.spec = parse_stored_spec(t.spec_toml, t.spec_source, path);
    append_added_traits(db, t.spec, path);  // traits added at the station, after the spec's (migration 6)

    TrialSpec tables;
    {
        Statement c(db, "SELECT code FROM trial WHERE id = 1");
        c.step();
        tables.code = c.text(0);
    }
    Statement tr(db, "SELECT label, is_check FROM treatment ORDER BY idx");
    while (tr.step()) {
        TreatmentSpec ts;
        ts.label = tr.text(0);
        ts.check = tr.int64(1) != 0;
        tables.treatments.push_back(ts);
    }
    Statement tt(db, "SELECT name, kind, unit FROM trait ORDER BY position");
    while (tt.step()) {
        TraitSpec ts;
        ts.name = tt.text(0);
        std::string kind = tt.text(1);
        ts.kind = TraitKind::Number;
        for (TraitKind k : {TraitKind::Number, TraitKind::Count, TraitKind::Score, TraitKind::Date, TraitKind::Text})
            if (kind == stored_kind(k)) ts.kind = k;
        ts.unit = tt.text(2);
        tables.traits.push_back(ts);
    }
    check_agrees(t.spec, tables, path, "the stored spec text and the treatment/trait tables disagree");

    Statement pl(db,
                 "SELECT id, block, position, walk_order, row, col, treatment, x_m, y_m, width_x_m, width_y_m, "
                 "rep, incomplete_block, main, sub, square_row, square_col, harvest_x_m, harvest_y_m "
                 "FROM plot ORDER BY walk_order");
    while (pl.step()) {
        PlotPlacement p;
        p.id = pl.integer(0);
        p.block = pl.integer(1);
        p.position = pl.integer(2);
        p.walk_order = pl.integer(3);
        p.row = pl.integer(4);
        p.col = pl.integer(5);
        p.treatment = pl.integer(6);
        p.x_m = pl.real(7);
        p.y_m = pl.real(8);
        p.width_x_m = pl.real(9);
        p.width_y_m = pl.real(10);
        p.rep = pl.integer(11);
        p.incomplete_block = pl.integer(12);
        p.main = pl.integer(13);
        p.sub = pl.integer(14);
        p.square_row = pl.integer(15);
        p.square_col = pl.integer(16);
        p.harvest_x_m = pl.real(17);
        p.harvest_y_m = pl.real(18);
        t.layout.plots.push_back(p);
    }
    Statement gp(db, "SELECT x_m, y_m, width_x_m, width_y_m FROM guard_plot ORDER BY id");
    while (gp.step()) t.layout.guards.push_back({gp.real(0), gp.real(1), gp.real(2), gp.real(3)});
    return t;
}

// Rows of observation in the column order used by read_observation.
constexpr const char* kObservationColumns =
    "o.id, o.plot, o.trait, o.value, o.number, o.recorded_utc, o.device, o.observer, o.supersedes, o.note";

ObservationRecord read_observation(const Statement& st) {
    ObservationRecord r;
    r.id = st.int64(0);
    r.obs.plot = st.integer(1);
    r.obs.trait = st.text(2);
    r.obs.value = st.text(3);
    r.obs.number = st.opt_real(4);
    r.obs.recorded_utc = st.text(5);
    r.obs.device = st.text(6);
    r.obs.observer = st.text(7);
    r.obs.supersedes = st.opt_int64(8);
    r.obs.note = st.text(9);
    return r;
}

// Rows of plot_event in the column order used by read_event.
constexpr const char* kEventColumns = "plot, state, reason, recorded_utc, device, observer, flag";

PlotEvent read_event(const Statement& st, const std::string& path) {
    PlotEvent ev;
    ev.plot = st.integer(0);
    const std::string state = st.text(1);
    auto parsed = plot_state_from_string(state);
    if (!parsed) throw StoreError(path + ": plot_event.state: unknown state '" + state + "'");
    ev.state = *parsed;
    ev.reason = st.text(2);
    ev.recorded_utc = st.text(3);
    ev.device = st.text(4);
    ev.observer = st.text(5);
    ev.flag = st.text(6);
    if (ev.flag.empty()) ev.flag = state;  // written before migration 4: the state was the flag
    return ev;
}

bool exists_row(sqlite3* db, const char* sql_text, std::int64_t key) {
    Statement st(db, sql_text);
    st.bind(1, key);
    return st.step();
}

bool trait_exists(sqlite3* db, const std::string& name) {
    Statement st(db, "SELECT 1 FROM trait WHERE name = ?1");
    st.bind(1, name);
    return st.step();
}

std::string trait_list(const TrialSpec& spec) {
    std::string s;
    for (const TraitSpec& t : spec.traits) s += (s.empty() ? "" : ", ") + t.name;
    return s;
}

}  // namespace

struct Store::Impl {
    DbHandle db;
    std::string path;
    StoredTrial trial;
};

Store::Store(std::unique_ptr<Impl> impl) : impl_(std::move(impl)) {}
Store::Store(Store&&) noexcept = default;
Store& Store::operator=(Store&&) noexcept = default;
Store::~Store() = default;

int store_schema_version() { return schema::latest_version(); }

Store Store::create(const std::string& path, const std::string& spec_toml, const std::string& spec_source,
                    const TrialSpec& spec, const Layout& layout, const std::string& now_utc) {
    // O_EXCL makes "refuse an existing file" atomic: no other process can slip a file in between a check
    // and the creation. SQLite treats the empty file as an empty database.
    int fd = ::open(path.c_str(), O_WRONLY | O_CREAT | O_EXCL | O_CLOEXEC, 0644);
    if (fd < 0) {
        if (errno == EEXIST)
            throw StoreError(path + ": already exists; a trial database is never overwritten (choose another "
                                    "file name or open the existing one)");
        throw StoreError(path + ": cannot create: " + std::strerror(errno));
    }
    ::close(fd);

    auto impl = std::make_unique<Impl>();
    impl->path = path;
    try {
        TrialSpec parsed = parse_trial_spec(spec_toml, spec_source);
        check_agrees(parsed, spec, spec_source, "the spec given does not match the spec text");
        impl->db = open_connection(path, SQLITE_OPEN_READWRITE);
        sqlite3* db = impl->db.get();
        configure(db);
        WriteTransaction tx(db);
        // The application id is a constant of this program (schema.hpp), not an input value.
        const std::string set_id = "PRAGMA application_id = " + std::to_string(schema::kApplicationId);
        sql::exec(db, set_id.c_str(), "marking the file as a plotwright database");
        int count = 0;
        const schema::Migration* ms = schema::migrations(&count);
        for (int i = 0; i < count; ++i) schema::apply(db, ms[i]);
        insert_definition(db, spec_toml, spec_source, parsed, layout, now_utc);
        insert_certificate(db, parsed, layout);  // docs/certificate.md
        tx.commit();
        impl->trial = load_trial(db, path);
    } catch (...) {
        // Leave nothing behind: the file did not exist before this call.
        impl->db.reset();
        std::error_code ec;
        for (const char* suffix : {"", "-wal", "-shm", "-journal"})
            std::filesystem::remove(path + suffix, ec);
        throw;
    }
    return Store(std::move(impl));
}

Store Store::open(const std::string& path) {
    std::error_code ec;
    if (!std::filesystem::exists(path, ec))
        throw StoreError(path + ": no such file (a trial database is made by creating a trial from its spec)");
    if (!std::filesystem::is_regular_file(path, ec))
        throw StoreError(path + ": not a regular file, so not a plotwright database");

    auto impl = std::make_unique<Impl>();
    impl->path = path;
    impl->db = open_connection(path, SQLITE_OPEN_READWRITE);
    sqlite3* db = impl->db.get();

    std::int64_t app_id = 0, version = 0;
    try {
        app_id = pragma_int(db, "application_id");
        version = pragma_int(db, "user_version");
    } catch (const StoreError&) {
        if ((sqlite3_errcode(db) & 0xff) == SQLITE_NOTADB)
            throw StoreError(path + ": not an SQLite database, so not a plotwright database");
        throw;
    }
    if (app_id != schema::kApplicationId)
        throw StoreError(path + ": not a plotwright database (SQLite application_id " + std::to_string(app_id) +
                         ", expected " + std::to_string(schema::kApplicationId) + ")");
    const int latest = schema::latest_version();
    if (version > latest)
        throw StoreError(path + ": schema version " + std::to_string(version) +
                         " is newer than this program understands (up to " + std::to_string(latest) +
                         "); open it with a newer plotwright");
    if (version < 1)
        throw StoreError(path + ": not a plotwright database (marked as one but holds no schema, user_version 0)");

    configure(db);
    int count = 0;
    const schema::Migration* ms = schema::migrations(&count);
    for (int i = 0; i < count; ++i) {
        if (ms[i].version <= version) continue;
        WriteTransaction tx(db);
        // Another process may have migrated between our read and the write lock.
        if (pragma_int(db, "user_version") >= ms[i].version) continue;
        schema::apply(db, ms[i]);
        Statement fk(db, "PRAGMA foreign_key_check");
        if (fk.step())
            throw StoreError(path + ": migration " + std::to_string(ms[i].version) +
                             " left a dangling reference in table " + fk.text(0));
        tx.commit();
    }
    impl->trial = load_trial(db, path);
    return Store(std::move(impl));
}

const StoredTrial& Store::trial() const { return impl_->trial; }

void Store::reload_trial() { impl_->trial = load_trial(impl_->db.get(), impl_->path); }

sqlite3* Store::handle() const { return impl_->db.get(); }

std::int64_t Store::add_observation(const NewObservation& obs) {
    sqlite3* db = impl_->db.get();
    const std::string where = impl_->path + ": plot " + std::to_string(obs.plot) + ", trait '" + obs.trait + "'";
    if (obs.supersedes && obs.note.empty())
        throw InputError(where + ": a correction needs a note saying why the earlier value is replaced");
    if (is_withdrawal(obs) && (!obs.supersedes || obs.number))
        throw InputError(where + ": an empty value withdraws a value (undo): it must supersede the observation it "
                                 "takes back and carry no number");

    WriteTransaction tx(db);
    Statement ins(db,
                  "INSERT INTO observation (plot, trait, value, number, recorded_utc, device, observer, "
                  "supersedes, note) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9)");
    ins.bind(1, obs.plot).bind(2, obs.trait).bind(3, obs.value).bind(4, obs.number).bind(5, obs.recorded_utc)
        .bind(6, obs.device).bind(7, obs.observer).bind(8, obs.supersedes).bind(9, obs.note);
    const int rc = ins.run(true);
    if (rc != SQLITE_OK) {
        const std::string why = sqlite3_errmsg(db);
        if (rc == SQLITE_CONSTRAINT_FOREIGNKEY || rc == SQLITE_CONSTRAINT_TRIGGER) {
            if (!exists_row(db, "SELECT 1 FROM plot WHERE id = ?1", obs.plot))
                throw InputError(where + ": refused: trial " + impl_->trial.spec.code + " has no plot " +
                                 std::to_string(obs.plot));
            if (!trait_exists(db, obs.trait))
                throw InputError(where + ": refused: trial " + impl_->trial.spec.code + " has no trait '" +
                                 obs.trait + "' (its traits: " + trait_list(impl_->trial.spec) + ")");
            if (obs.supersedes)
                throw InputError(where + ": refused: observation " + std::to_string(*obs.supersedes) +
                                 " is not an earlier observation of this plot and trait, so it cannot be corrected "
                                 "by this one");
        }
        if (rc == SQLITE_CONSTRAINT_UNIQUE && obs.supersedes) {
            Statement by(db, "SELECT id FROM observation WHERE supersedes = ?1");
            by.bind(1, *obs.supersedes);
            std::string other = by.step() ? std::to_string(by.int64(0)) : "another";
            throw InputError(where + ": refused: observation " + std::to_string(*obs.supersedes) +
                             " is already superseded by observation " + other + "; correct that one instead");
        }
        throw StoreError(where + ": observation refused by the database: " + why);
    }
    const std::int64_t id = sqlite3_last_insert_rowid(db);
    // A correction (or an undo) is logged in the hash-chained audit log with the row (docs/station.md).
    if (obs.supersedes)
        append_audit(db, obs.recorded_utc, "correct",
                     nlohmann::json{{"observation", id}, {"supersedes", *obs.supersedes}, {"plot", obs.plot},
                                    {"trait", obs.trait}, {"value", obs.value}, {"device", obs.device},
                                    {"observer", obs.observer}, {"note", obs.note}}
                         .dump());
    tx.commit();
    return id;
}

void Store::add_plot_event(const PlotEvent& ev) {
    sqlite3* db = impl_->db.get();
    const std::string where = impl_->path + ": plot " + std::to_string(ev.plot);
    // The flag must be one of the trial's (TrialSpec::flags), and the state must say what that flag means
    // for the data, so that a reader of `state` alone (an outside SQL tool) is right.
    const std::string name = ev.flag.empty() ? to_string(ev.state) : ev.flag;
    const std::vector<FlagSpec>& flags = impl_->trial.spec.flags;
    auto f = std::find_if(flags.begin(), flags.end(), [&](const FlagSpec& x) { return x.name == name; });
    if (f == flags.end()) {
        std::string names;
        for (const FlagSpec& x : flags) names += (names.empty() ? "" : ", ") + x.name;
        throw InputError(where + ": refused: '" + name + "' is not a flag of trial " + impl_->trial.spec.code +
                         " (its flags: " + names + ")");
    }
    const PlotState state = f->missing ? PlotState::Missing : PlotState::Damaged;
    if (ev.state != state)
        throw InputError(where + ": refused: flag '" + name + "' " +
                         (f->missing ? "treats the plot as missing" : "keeps the plot's values") +
                         ", so its state is " + to_string(state) + ", not " + to_string(ev.state));
    WriteTransaction tx(db);
    Statement ins(db,
                  "INSERT INTO plot_event (plot, state, reason, recorded_utc, device, observer, flag) "
                  "VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7)");
    ins.bind(1, ev.plot).bind(2, to_string(ev.state)).bind(3, ev.reason).bind(4, ev.recorded_utc)
        .bind(5, ev.device).bind(6, ev.observer).bind(7, name);
    const int rc = ins.run(true);
    if (rc != SQLITE_OK) {
        if (rc == SQLITE_CONSTRAINT_FOREIGNKEY)
            throw InputError(where + ": plot event refused: trial " + impl_->trial.spec.code + " has no plot " +
                             std::to_string(ev.plot));
        throw StoreError(where + ": plot event refused by the database: " + sqlite3_errmsg(db));
    }
    tx.commit();
}

std::vector<ObservationRecord> Store::current_for_plot(int plot) const {
    Statement st(impl_->db.get(),
                 std::string("SELECT ") + kObservationColumns +
                     " FROM current_observation AS o JOIN trait AS t ON t.name = o.trait"
                     " WHERE o.plot = ?1 ORDER BY t.position, o.id");
    st.bind(1, plot);
    std::vector<ObservationRecord> out;
    while (st.step()) out.push_back(read_observation(st));
    return out;
}

std::vector<ObservationRow> Store::current_observations() const {
    Statement st(impl_->db.get(),
                 std::string("SELECT ") + kObservationColumns +
                     ", p.block, tr.label, t.unit"
                     " FROM current_observation AS o"
                     " JOIN plot AS p ON p.id = o.plot"
                     " JOIN treatment AS tr ON tr.idx = p.treatment"
                     " JOIN trait AS t ON t.name = o.trait"
                     " WHERE o.value <> ''"  // a withdrawal: no value in force (migration 4)
                     " AND NOT EXISTS (SELECT 1 FROM plot_event AS e WHERE e.plot = o.plot AND e.state = 'missing')"
                     " ORDER BY p.walk_order, t.position, o.id");
    std::vector<ObservationRow> out;
    while (st.step()) {
        ObservationRow row;
        row.record = read_observation(st);
        row.block = st.integer(10);
        row.treatment = st.text(11);
        row.unit = st.text(12);
        out.push_back(std::move(row));
    }
    return out;
}

std::vector<ObservationRecord> Store::history(int plot) const {
    Statement st(impl_->db.get(),
                 std::string("SELECT ") + kObservationColumns + " FROM observation AS o WHERE o.plot = ?1 ORDER BY o.id");
    st.bind(1, plot);
    std::vector<ObservationRecord> out;
    while (st.step()) out.push_back(read_observation(st));
    return out;
}

std::vector<PlotEvent> Store::plot_events() const {
    Statement st(impl_->db.get(), std::string("SELECT ") + kEventColumns + " FROM plot_event ORDER BY id");
    std::vector<PlotEvent> out;
    while (st.step()) out.push_back(read_event(st, impl_->path));
    return out;
}

std::vector<PlotEvent> Store::events_for_plot(int plot) const {
    Statement st(impl_->db.get(), std::string("SELECT ") + kEventColumns + " FROM plot_event WHERE plot = ?1 ORDER BY id");
    st.bind(1, plot);
    std::vector<PlotEvent> out;
    while (st.step()) out.push_back(read_event(st, impl_->path));
    return out;
}

std::int64_t Store::observation_count() const {
    Statement st(impl_->db.get(), "SELECT count(*) FROM observation");
    st.step();
    return st.int64(0);
}

}  // namespace pw
