// Station sync (sync.hpp; design in docs/sync.md). The SQLite session extension makes the bundles' payloads
// (https://www.sqlite.org/sessionintro.html): sqlite3session_* records the INSERTs into the sync tables. A
// handheld replays the station's with sqlite3changeset_apply and a conflict handler; the station takes a
// handheld's rows in with set-based SQL over the payload (take_in_received, storage/changeset_rows.hpp).
//
// Invariants:
//   - Nothing held is replaced. The conflict handler never answers SQLITE_CHANGESET_REPLACE; at the station,
//     a received row whose origin key is held must be identical to what is held. An identical row is left
//     out (the same row in two bundles); any other difference, constraint or foreign-key failure refuses the
//     bundle.
//   - A payload is read completely (check_bundle_payload; at the station, device_payload_summary, the same
//     rules in one pass over the bytes) before anything is written: only INSERTs into
//     sync_observation / sync_plot_event (station to device: sync_plot_event and trait_addition), with the
//     columns this program writes, of the origin the header names.
//   - An import is one transaction: the rows taken in, the rows made current, the sync_bundle record and
//     the audit entry commit together or not at all.
//   - A received correction is applied only once the observation it supersedes has been received; until
//     then it waits in sync_observation (pending) and is applied by whichever later import brings the
//     earlier one. So the observations and conflicts at the station are the same whatever the order the
//     bundles arrive in (tests/e2e/sync_checks.py).
#include "storage/sync.hpp"

#include <sqlite3.h>

#include <algorithm>
#include <cstring>
#include <filesystem>
#include <map>
#include <memory>
#include <set>
#include <string_view>
#include <tuple>
#include <vector>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "core/design/certificate.hpp"
#include "core/error.hpp"
#include "core/sync/blind_spec.hpp"
#include "storage/audit_log.hpp"
#include "storage/certificate.hpp"
#include "storage/changeset_rows.hpp"
#include "storage/sqlite_statement.hpp"
#include "storage/station_traits.hpp"
#include "storage/store.hpp"
#include "storage/sync_conflicts.hpp"

namespace pw {
namespace {

using sql::Statement;
using sql::WriteTransaction;

// ---- session helpers ------------------------------------------------------------------------------------

struct SessionDeleter {
    void operator()(sqlite3_session* s) const { sqlite3session_delete(s); }
};
using Session = std::unique_ptr<sqlite3_session, SessionDeleter>;

Session open_session(sqlite3* db, const char* schema, std::initializer_list<const char*> tables) {
    sqlite3_session* raw = nullptr;
    if (sqlite3session_create(db, schema, &raw) != SQLITE_OK) sql::fail(db, "starting an SQLite session");
    Session s(raw);
    for (const char* t : tables)
        if (sqlite3session_attach(raw, t) != SQLITE_OK) sql::fail(db, std::string("recording changes of ") + t);
    return s;
}

std::string take_changeset(sqlite3* db, sqlite3_session* s) {
    int n = 0;
    void* p = nullptr;
    if (sqlite3session_changeset(s, &n, &p) != SQLITE_OK) sql::fail(db, "writing the changeset");
    std::string out(static_cast<const char*>(p), static_cast<std::size_t>(n));
    sqlite3_free(p);
    return out;
}

// ---- small queries --------------------------------------------------------------------------------------

std::uint64_t next_seq(sqlite3* db, const char* maker, const std::string& device) {
    Statement st(db, "SELECT coalesce(max(seq), 0) FROM sync_bundle WHERE maker = ?1 AND device = ?2");
    st.bind(1, maker).bind(2, device);
    st.step();
    return static_cast<std::uint64_t>(st.int64(0)) + 1;
}

std::string checksum_of(const std::string& bundle_bytes) {
    static constexpr char kHex[] = "0123456789abcdef";
    std::string h;
    for (std::size_t i = bundle_bytes.size() - 32; i < bundle_bytes.size(); ++i) {
        const auto b = static_cast<unsigned char>(bundle_bytes[i]);
        h += kHex[b >> 4];
        h += kHex[b & 0x0f];
    }
    return h;
}

void record_bundle(sqlite3* db, const BundleHeader& h, const std::string& sha, const std::string& now,
                   std::size_t observations, std::size_t events) {
    Statement st(db,
                 "INSERT INTO sync_bundle (maker, device, seq, sha256, created_utc, applied_utc, observations, events) "
                 "VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8)");
    st.bind(1, to_string(h.kind)).bind(2, h.device).bind(3, static_cast<std::int64_t>(h.seq)).bind(4, sha)
        .bind(5, h.created_utc).bind(6, now).bind(7, static_cast<std::int64_t>(observations))
        .bind(8, static_cast<std::int64_t>(events));
    st.run();
}

std::string device_list(const Store& station) {
    std::string s;
    for (const auto& d : provisioned_devices(station)) s += (s.empty() ? "" : ", ") + d.name;
    return s.empty() ? "none yet" : s;
}

// ---- applying a changeset -------------------------------------------------------------------------------

bool same_value(sqlite3_value* a, sqlite3_value* b) {
    if (!a || !b) return a == b;
    const int ta = sqlite3_value_type(a);
    if (ta != sqlite3_value_type(b)) return false;
    switch (ta) {
        case SQLITE_NULL: return true;
        case SQLITE_INTEGER: return sqlite3_value_int64(a) == sqlite3_value_int64(b);
        case SQLITE_FLOAT: {
            const double x = sqlite3_value_double(a), y = sqlite3_value_double(b);
            return std::memcmp(&x, &y, sizeof x) == 0;
        }
        default: {
            const int n = sqlite3_value_bytes(a);
            if (n != sqlite3_value_bytes(b)) return false;
            const void* pa = ta == SQLITE_TEXT ? static_cast<const void*>(sqlite3_value_text(a)) : sqlite3_value_blob(a);
            const void* pb = ta == SQLITE_TEXT ? static_cast<const void*>(sqlite3_value_text(b)) : sqlite3_value_blob(b);
            return n == 0 || std::memcmp(pa, pb, static_cast<std::size_t>(n)) == 0;
        }
    }
}

std::string value_text(sqlite3_value* v) {
    if (!v) return "?";
    if (sqlite3_value_type(v) == SQLITE_NULL) return "NULL";
    const unsigned char* t = sqlite3_value_text(v);
    return t ? std::string(reinterpret_cast<const char*>(t)) : "";
}

std::string received_before_with_other_content(std::string_view table, const std::string& origin_id,
                                              const std::string& origin) {
    return fmt::format("{} row {} of '{}' was received before with different content (a device database made again "
                       "under the same name, or an edited bundle); the row already held is kept",
                       table, origin_id, origin);
}

struct ApplyContext {
    sqlite3* db = nullptr;
    std::size_t duplicate_observations = 0;
    std::size_t duplicate_events = 0;
    std::string error;
};

// Never REPLACE: what a database already holds is kept.
int on_conflict(void* p, int type, sqlite3_changeset_iter* it) {
    auto* ctx = static_cast<ApplyContext*>(p);
    const char* table = nullptr;
    int ncol = 0, op = 0, indirect = 0;
    sqlite3changeset_op(it, &table, &ncol, &op, &indirect);
    if (type == SQLITE_CHANGESET_CONFLICT && op == SQLITE_INSERT) {
        bool same = true;
        for (int i = 0; i < ncol && same; ++i) {
            sqlite3_value* mine = nullptr;
            sqlite3_value* theirs = nullptr;
            sqlite3changeset_conflict(it, i, &mine);
            sqlite3changeset_new(it, i, &theirs);
            same = same_value(mine, theirs);
        }
        if (same) {
            if (std::strcmp(table, "trait_addition") != 0)  // added traits: counted by import_bundle
                ++(std::strcmp(table, "sync_observation") == 0 ? ctx->duplicate_observations : ctx->duplicate_events);
            return SQLITE_CHANGESET_OMIT;
        }
        if (std::strcmp(table, "trait_addition") == 0) {
            sqlite3_value* name = nullptr;
            sqlite3changeset_new(it, 0, &name);
            ctx->error = fmt::format("the added trait '{}' was received before with another definition; the one held "
                                     "is kept",
                                     value_text(name));
            return SQLITE_CHANGESET_ABORT;
        }
        sqlite3_value* origin = nullptr;
        sqlite3_value* id = nullptr;
        sqlite3changeset_new(it, 0, &origin);
        sqlite3changeset_new(it, 1, &id);
        ctx->error = received_before_with_other_content(table, value_text(id), value_text(origin));
        return SQLITE_CHANGESET_ABORT;
    }
    if (type == SQLITE_CHANGESET_FOREIGN_KEY) {
        ctx->error = "a row names a plot or trait this trial does not have";
        return SQLITE_CHANGESET_ABORT;
    }
    if (type == SQLITE_CHANGESET_CONSTRAINT) {
        ctx->error = fmt::format("a {} row breaks a rule of the database ({})", table, sqlite3_errmsg(ctx->db));
        return SQLITE_CHANGESET_ABORT;
    }
    ctx->error = fmt::format("unexpected change of {} (only new rows are exchanged)", table);
    return SQLITE_CHANGESET_ABORT;
}

// Returns the rows already held, identical: {observations, events}.
std::pair<std::size_t, std::size_t> apply_payload(sqlite3* db, const std::string& payload, const std::string& source) {
    if (payload.empty()) return {0, 0};
    ApplyContext ctx;
    ctx.db = db;
    const int rc = sqlite3changeset_apply(db, static_cast<int>(payload.size()), const_cast<char*>(payload.data()),
                                          nullptr, on_conflict, &ctx);
    if (rc != SQLITE_OK) {
        if (!ctx.error.empty()) throw InputError(source + ": refused, nothing imported: " + ctx.error);
        throw InputError(source + ": refused, nothing imported: the payload could not be applied (" +
                         sqlite3_errmsg(db) + ")");
    }
    return {ctx.duplicate_observations, ctx.duplicate_events};
}

// The keys (table, origin, origin_id) of a payload's rows. SQLite's session extension writes each key once; a
// forged payload holding one twice would have the station take the second row in beside the first (a plain
// value and a correction under one key: the correction never applied; found by tests/fuzz/fuzz_bundle.cpp),
// so both payload checks refuse it.
class PayloadKeys {
public:
    void add(bool observation, std::string_view origin, std::int64_t id) {
        auto named = origins_.find(origin);
        if (named == origins_.end()) named = origins_.emplace(origin).first;
        keys_.emplace_back(id, observation, *named);
    }
    // "" or the first key held twice, worded to follow "the payload ".
    std::string repeated() {
        std::sort(keys_.begin(), keys_.end());   // by id first: nearly every comparison ends there
        const auto twice = std::adjacent_find(keys_.begin(), keys_.end());
        if (twice == keys_.end()) return "";
        const auto& [id, observation, origin] = *twice;
        return fmt::format("holds two {} rows of origin '{}' with origin id {}",
                           observation ? "sync_observation" : "sync_plot_event", origin, id);
    }

private:
    std::set<std::string, std::less<>> origins_;   // each origin once; the keys point into it
    std::vector<std::tuple<std::int64_t, bool, std::string_view>> keys_;
};

void count_observation(PayloadSummary& sum, std::int64_t origin_id, bool correction) {
    if (sum.observations == 0 || origin_id < sum.lowest_observation_id) sum.lowest_observation_id = origin_id;
    if (sum.observations == 0 || origin_id > sum.highest_observation_id) sum.highest_observation_id = origin_id;
    ++sum.observations;
    if (correction) ++sum.corrections;
}

// The payload check of a handheld's bundle at the station, in one pass over the bytes: what
// check_bundle_payload asks of it (the tables a handheld's bundle may change, each row's origin the
// header's device; op, columns and key are the framing's), without a second pass through SQLite's iterator,
// which copies every value it reads (docs/benchmarks.md, "Station sync"). Runs changeset_framing_fault
// first, so it walks a well-framed payload; the refusals and their messages are check_bundle_payload's.
PayloadSummary device_payload_summary(const Bundle& bundle, const std::string& source) {
    PayloadSummary sum;
    auto refuse = [&](const std::string& why) {
        throw BundleError(BundleFault::BadField, source + ": refused, nothing imported: the payload " + why);
    };
    if (bundle.payload.empty()) return sum;
    if (const std::string why = changeset_framing_fault(bundle.payload); !why.empty()) refuse(why);
    ChangesetRecords records(bundle.payload);
    PayloadKeys keys;
    while (records.next()) {
        const std::string_view table = records.table();
        const bool obs = table == "sync_observation";
        if (!obs && table != "sync_plot_event")
            refuse(fmt::format("changes table '{}', which a bundle from the {} never does", table,
                               to_string(bundle.header.kind)));
        const ChangesetRecords::Value& origin = records.value(0);
        if (origin.type != SQLITE_TEXT) refuse(fmt::format("has a {} row without an origin", table));
        if (origin.bytes != bundle.header.device)
            refuse(fmt::format("holds a row of device '{}' in a bundle of device '{}'", origin.bytes,
                               bundle.header.device));
        // Plain values reach no table with the sync tables' CHECK (origin_id >= 1): checked here, for all rows.
        const ChangesetRecords::Value& id = records.value(1);
        if (id.type != SQLITE_INTEGER || id.integer() < 1)
            refuse(fmt::format("has a {} row whose origin id is not a whole number from 1 up", table));
        if (obs) count_observation(sum, id.integer(), records.value(9).type != SQLITE_NULL);  // 9: supersedes
        else ++sum.events;
        keys.add(obs, origin.bytes, id.integer());
    }
    if (const std::string why = keys.repeated(); !why.empty()) refuse(why);
    return sum;
}

// The id after the highest observation id: where received observations are numbered from.
std::int64_t next_observation_id(sqlite3* db) {
    Statement top(db, "SELECT coalesce(max(id), 0) + 1 FROM observation");
    top.step();
    return top.int64(0);
}

// ---- taking a handheld's rows in at the station ---------------------------------------------------------

// Runs an INSERT of received rows into the station's tables; a row naming a plot or trait the trial does not
// have, or breaking a rule of the table, refuses the bundle.
void insert_received(Statement& st, const std::string& source) {
    const int rc = st.run(true);
    if (rc == SQLITE_OK) return;
    if (rc == SQLITE_CONSTRAINT_FOREIGNKEY)
        throw InputError(source + ": refused, nothing imported: a row names a plot or trait this trial does not have");
    throw InputError(fmt::format("{}: refused, nothing imported: a received row breaks a rule of the database ({})",
                                 source, sqlite3_errmsg(sqlite3_db_handle(st.get()))));
}

// Counts the rows `held` returns (origin, origin_id, same): rows of the bundle this database already holds,
// each of which must be identical to what it holds.
std::size_t count_duplicates(Statement& held, const char* table, const std::string& source) {
    std::size_t n = 0;
    for (; held.step(); ++n)
        if (held.int64(2) == 0)
            throw InputError(source + ": refused, nothing imported: " +
                             received_before_with_other_content(table, std::to_string(held.int64(1)), held.text(0)));
    return n;
}

struct Received {
    std::size_t duplicate_observations = 0;
    std::size_t duplicate_events = 0;
    std::size_t values = 0;   // plain values made observations at once
};

// Takes a handheld's payload in at the station, inside the import's transaction, with set-based SQL over the
// payload's rows (pw_received_observation / pw_received_plot_event, storage/changeset_rows.hpp):
//   - A row whose origin key the station already holds must be what it holds (a received correction and
//     every plot event are held in sync_*, a plain value as its observation and origin link): identical,
//     it is a duplicate and left out; different, the bundle is refused.
//   - Plot events are kept in sync_plot_event (materialize_events makes them plot events).
//   - Corrections and withdrawals are kept in sync_observation: what each corrects is named by origin and
//     may not have arrived yet (materialize_observations makes them observations once it has).
//   - Plain values (superseding nothing) depend on nothing else: they become observations at once, numbered
//     in origin_id order and linked to their origins, and are written nowhere else.
// A step with no rows to take (no plot events, no corrections, no duplicates to leave out) is not run.
Received take_in_received(sqlite3* db, const std::string& payload, const std::string& origin,
                          const PayloadSummary& sum, const std::string& source) {
    auto statement = [&](const std::string& sql) {
        auto st = std::make_unique<Statement>(db, sql);
        if (sqlite3_bind_blob64(st->get(), 1, payload.data(), payload.size(), SQLITE_STATIC) != SQLITE_OK)
            sql::fail(db, "reading the payload");
        return st;
    };
    Received r;
    // Rows this origin already sent can only be in the bundle when the station holds an origin id of this origin
    // within the bundle's range (two probes of the keys): the row by row check runs only then. A handheld
    // exports what it did not export before, so its bundles' ranges never overlap, in any order of arrival.
    bool may_hold = false;
    if (sum.observations > 0) {
        Statement probe(db,
                        "SELECT EXISTS (SELECT 1 FROM observation_origin WHERE origin = ?1 AND origin_id BETWEEN ?2 AND "
                        "?3) OR EXISTS (SELECT 1 FROM sync_observation WHERE origin = ?1 AND origin_id BETWEEN ?2 AND ?3)");
        probe.bind(1, origin).bind(2, sum.lowest_observation_id).bind(3, sum.highest_observation_id);
        probe.step();
        may_hold = probe.int64(0) != 0;
    }
    if (may_hold) {
        const auto held = statement(
            "SELECT s.origin, s.origin_id, CASE WHEN h.origin IS NOT NULL THEN (h.plot IS s.plot AND h.trait IS s.trait "
            "AND h.value IS s.value AND h.number IS s.number AND h.recorded_utc IS s.recorded_utc AND h.device IS "
            "s.device AND h.observer IS s.observer AND h.supersedes IS s.supersedes AND h.note IS s.note) "
            "ELSE (o.plot IS s.plot AND o.trait IS s.trait AND o.value IS s.value AND o.number IS s.number AND "
            "o.recorded_utc IS s.recorded_utc AND o.device IS s.device AND o.observer IS s.observer AND s.supersedes "
            "IS NULL AND o.supersedes IS NULL AND o.note IS s.note) END "
            "FROM pw_received_observation(?1) AS s "
            "LEFT JOIN sync_observation AS h ON h.origin = s.origin AND h.origin_id = s.origin_id "
            "LEFT JOIN observation_origin AS x ON x.origin = s.origin AND x.origin_id = s.origin_id "
            "LEFT JOIN observation AS o ON o.id = x.observation "
            "WHERE h.origin IS NOT NULL OR x.origin IS NOT NULL ORDER BY s.origin_id");
        r.duplicate_observations = count_duplicates(*held, "sync_observation", source);
    }
    if (sum.events > 0) {
        const auto held = statement(
            "SELECT s.origin, s.origin_id, (h.plot IS s.plot AND h.state IS s.state AND h.reason IS s.reason AND "
            "h.recorded_utc IS s.recorded_utc AND h.device IS s.device AND h.observer IS s.observer AND h.flag IS "
            "s.flag) FROM pw_received_plot_event(?1) AS s JOIN sync_plot_event AS h "
            "ON h.origin = s.origin AND h.origin_id = s.origin_id ORDER BY s.origin_id");
        r.duplicate_events = count_duplicates(*held, "sync_plot_event", source);
        if (r.duplicate_events < sum.events)
            insert_received(*statement("INSERT INTO sync_plot_event SELECT s.* FROM pw_received_plot_event(?1) AS s "
                                       "WHERE NOT EXISTS (SELECT 1 FROM sync_plot_event AS h WHERE h.origin = s.origin "
                                       "AND h.origin_id = s.origin_id) ORDER BY s.origin_id"),
                            source);
    }
    if (r.duplicate_observations == sum.observations) return r;
    // Rows held already are left out (only needed when count_duplicates found some).
    const std::string not_held =
        r.duplicate_observations == 0
            ? ""
            : " AND NOT EXISTS (SELECT 1 FROM sync_observation AS h WHERE h.origin = s.origin AND h.origin_id = "
              "s.origin_id) AND NOT EXISTS (SELECT 1 FROM observation_origin AS x WHERE x.origin = s.origin AND "
              "x.origin_id = s.origin_id)";
    if (sum.corrections > 0)
        insert_received(*statement("INSERT INTO sync_observation SELECT s.* FROM pw_received_observation(?1) AS s "
                                   "WHERE s.supersedes IS NOT NULL" +
                                   not_held + " ORDER BY s.origin_id"),
                        source);
    if (sum.corrections == sum.observations) return r;
    // The plain values, numbered first + ord (ord: the row's place in the payload's key order, so the numbers
    // follow origin_id, with a gap where a correction or a duplicate is left out); the links number them alike.
    const std::int64_t first = next_observation_id(db);
    const std::string plain =
        " FROM pw_received_observation(?1) AS s WHERE s.supersedes IS NULL" + not_held + " ORDER BY s.origin_id";
    const auto values = statement("INSERT INTO observation (id, plot, trait, value, number, recorded_utc, device, "
                                  "observer, note) SELECT ?2 + s.ord, s.plot, s.trait, s.value, s.number, "
                                  "s.recorded_utc, s.device, s.observer, s.note" +
                                  plain);
    values->bind(2, first);
    insert_received(*values, source);
    r.values = static_cast<std::size_t>(sqlite3_changes(db));
    const auto links = statement(
        "INSERT INTO observation_origin (observation, origin, origin_id) SELECT ?2 + s.ord, s.origin, s.origin_id" +
        plain);
    links->bind(2, first);
    insert_received(*links, source);
    return r;
}

// ---- making received rows current ---------------------------------------------------------------------

struct Materialized {
    std::size_t applied = 0;
    std::size_t pending = 0;
};

// Received observations of `origin` not yet linked to an observation of this database become observations,
// in origin_id order, a correction only once what it corrects is here (a correction always corrects an
// observation of its own origin, so only that origin's rows can have become ready). A correction whose target
// this database has already superseded by a row of its own is kept as a further current value (so the two
// show as a conflict when they differ, and nothing is overwritten); a withdrawal of such a target waits (it
// would take back a value this database replaced).
//
// Set-based, one pass per link of the longest chain of corrections among the new rows: the ready rows are
// numbered in a temporary table, inserted with ids first, first + 1, ... and linked to their origins by the
// same numbers.
Materialized materialize_observations(sqlite3* db, const std::string& origin) {
    sql::exec(db,
              "CREATE TEMP TABLE IF NOT EXISTS pw_ready (seq INTEGER PRIMARY KEY, origin_id INTEGER NOT NULL, plot "
              "INTEGER, trait TEXT, value TEXT, number REAL, recorded_utc TEXT, device TEXT, observer TEXT, note TEXT, "
              "target INTEGER)",
              "preparing received observations");
    Materialized m;
    // Rows of this origin not linked yet: each pass links some; none left means no further pass.
    std::int64_t unlinked = 0;
    {
        Statement total(db, "SELECT count(*) FROM sync_observation AS s WHERE s.origin = ?1 AND NOT EXISTS (SELECT 1 "
                            "FROM observation_origin AS x WHERE x.origin = s.origin AND x.origin_id = s.origin_id)");
        total.bind(1, origin);
        total.step();
        unlinked = total.int64(0);
    }
    while (unlinked > 0) {
        sql::exec(db, "DELETE FROM temp.pw_ready", "preparing received observations");
        Statement ready(db,
                        "INSERT INTO temp.pw_ready (origin_id, plot, trait, value, number, recorded_utc, device, observer, "
                        "note, target) "
                        "SELECT s.origin_id, s.plot, s.trait, s.value, s.number, s.recorded_utc, s.device, s.observer, s.note, "
                        "CASE WHEN t.observation IS NULL THEN NULL "
                        "WHEN EXISTS (SELECT 1 FROM observation AS c WHERE c.supersedes = t.observation) THEN NULL "
                        "ELSE t.observation END "
                        "FROM sync_observation AS s "
                        "LEFT JOIN observation_origin AS t ON t.origin = s.origin AND t.origin_id = s.supersedes "
                        "WHERE s.origin = ?1 "
                        "AND NOT EXISTS (SELECT 1 FROM observation_origin AS x WHERE x.origin = s.origin AND "
                        "x.origin_id = s.origin_id) "
                        "AND (s.supersedes IS NULL OR t.observation IS NOT NULL) "
                        "AND NOT (s.value = '' AND EXISTS (SELECT 1 FROM observation AS c WHERE c.supersedes = "
                        "t.observation)) "
                        "ORDER BY s.origin_id");
        ready.bind(1, origin);
        ready.run();
        const auto n = static_cast<std::size_t>(sqlite3_changes(db));
        if (n == 0) break;
        const std::int64_t first = next_observation_id(db);
        Statement ins(db,
                      "INSERT INTO observation (id, plot, trait, value, number, recorded_utc, device, observer, "
                      "supersedes, note) SELECT ?1 + seq - 1, plot, trait, value, number, recorded_utc, device, observer, "
                      "target, note FROM temp.pw_ready ORDER BY seq");
        ins.bind(1, first);
        ins.run();
        Statement link(db,
                       "INSERT INTO observation_origin (observation, origin, origin_id) "
                       "SELECT ?1 + seq - 1, ?2, origin_id FROM temp.pw_ready ORDER BY seq");
        link.bind(1, first).bind(2, origin);
        link.run();
        m.applied += n;
        unlinked -= static_cast<std::int64_t>(n);
    }
    sql::exec(db, "DELETE FROM temp.pw_ready", "clearing received observations");
    m.pending = static_cast<std::size_t>(unlinked);
    return m;
}

std::size_t materialize_events(sqlite3* db, const std::string& self) {
    Statement st(db,
                 "SELECT s.origin, s.origin_id, s.plot, s.state, s.reason, s.recorded_utc, s.device, s.observer, s.flag "
                 "FROM sync_plot_event AS s WHERE s.origin <> ?1 AND NOT EXISTS (SELECT 1 FROM plot_event_origin AS x "
                 "WHERE x.origin = s.origin AND x.origin_id = s.origin_id) ORDER BY s.origin, s.origin_id");
    st.bind(1, self);
    struct Row {
        std::string origin;
        std::int64_t origin_id;
        int plot;
        std::string state, reason, utc, device, observer, flag;
    };
    std::vector<Row> rows;
    while (st.step())
        rows.push_back({st.text(0), st.int64(1), st.integer(2), st.text(3), st.text(4), st.text(5), st.text(6), st.text(7),
                        st.text(8)});
    Statement ins(db,
                  "INSERT INTO plot_event (plot, state, reason, recorded_utc, device, observer, flag) "
                  "VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7)");
    Statement link(db, "INSERT INTO plot_event_origin (event, origin, origin_id) VALUES (?1, ?2, ?3)");
    for (const Row& r : rows) {
        sqlite3_reset(ins.get());
        ins.bind(1, r.plot).bind(2, r.state).bind(3, r.reason).bind(4, r.utc).bind(5, r.device).bind(6, r.observer)
            .bind(7, r.flag);
        ins.run();
        sqlite3_reset(link.get());
        link.bind(1, static_cast<std::int64_t>(sqlite3_last_insert_rowid(db))).bind(2, r.origin).bind(3, r.origin_id);
        link.run();
    }
    return rows.size();
}

std::vector<std::uint64_t> missing_seqs(sqlite3* db, const char* maker, const std::string& device) {
    Statement st(db, "SELECT seq FROM sync_bundle WHERE maker = ?1 AND device = ?2 ORDER BY seq");
    st.bind(1, maker).bind(2, device);
    std::vector<std::uint64_t> gaps;
    std::uint64_t expect = 1;
    while (st.step()) {
        const auto seq = static_cast<std::uint64_t>(st.int64(0));
        for (; expect < seq; ++expect) gaps.push_back(expect);
        expect = seq + 1;
    }
    return gaps;
}

// Detaches the in-memory outbox whatever happens.
struct AttachedOutbox {
    sqlite3* db;
    explicit AttachedOutbox(sqlite3* d) : db(d) {
        sql::exec(db, "ATTACH DATABASE ':memory:' AS pw_outbox", "attaching the outbox");
    }
    ~AttachedOutbox() { sqlite3_exec(db, "DETACH DATABASE pw_outbox", nullptr, nullptr, nullptr); }
};

ExportResult export_station_bundle(Store& store, const std::string& device, const std::string& now,
                                   const std::function<void(const std::string&)>& deliver) {
    sqlite3* db = store.handle();
    const auto devices = provisioned_devices(store);
    if (std::none_of(devices.begin(), devices.end(), [&](const auto& d) { return d.name == device; }))
        throw InputError(fmt::format("--for {}: this station never provisioned a device of that name (provisioned: {})",
                                     device, device_list(store)));
    // ATTACH is refused inside a transaction: attach first, then write.
    AttachedOutbox outbox(db);
    sql::exec(db,
              "CREATE TABLE pw_outbox.sync_plot_event (origin TEXT NOT NULL, origin_id INTEGER NOT NULL, plot INTEGER "
              "NOT NULL, state TEXT NOT NULL, reason TEXT NOT NULL, recorded_utc TEXT NOT NULL, device TEXT NOT NULL, "
              "observer TEXT NOT NULL, flag TEXT NOT NULL, PRIMARY KEY (origin, origin_id))",
              "making the outbox");
    // The same columns and key as main.trait_addition (migration 6): the changeset names them.
    sql::exec(db,
              "CREATE TABLE pw_outbox.trait_addition (name TEXT PRIMARY KEY NOT NULL, position INTEGER NOT NULL, "
              "definition TEXT NOT NULL, added_utc TEXT NOT NULL, added_by TEXT NOT NULL)",
              "making the outbox");
    ExportResult r;
    {
        WriteTransaction tx(db);
        r.header.kind = BundleKind::FromStation;
        r.header.trial_code = store.trial().spec.code;
        r.header.trial_digest = trial_digest(store);
        r.header.device = device;
        r.header.seq = next_seq(db, "station", device);
        r.header.created_utc = now;
        std::string payload;
        {
            Session s = open_session(db, "pw_outbox", {"sync_plot_event", "trait_addition"});
            // Every plot event of the station the handheld did not make itself: the station's own (origin
            // "station", their id) and those received from other handhelds (their origin key).
            Statement copy(db,
                           "INSERT INTO pw_outbox.sync_plot_event SELECT coalesce(x.origin, ?1), coalesce(x.origin_id, e.id), "
                           "e.plot, e.state, e.reason, e.recorded_utc, e.device, e.observer, e.flag "
                           "FROM plot_event AS e LEFT JOIN plot_event_origin AS x ON x.event = e.id "
                           "WHERE coalesce(x.origin, ?1) <> ?2 ORDER BY e.id");
            copy.bind(1, kStationOrigin).bind(2, device);
            copy.run();
            r.events = static_cast<std::size_t>(sqlite3_changes(db));
            // Every trait added at the station (only the station adds traits): sending all of them each time
            // keeps the bundle idempotent, as for the events.
            Statement traits(db,
                             "INSERT INTO pw_outbox.trait_addition (name, position, definition, added_utc, added_by) "
                             "SELECT name, position, definition, added_utc, added_by FROM main.trait_addition "
                             "ORDER BY position");
            traits.run();
            r.traits = static_cast<std::size_t>(sqlite3_changes(db));
            payload = take_changeset(db, s.get());
        }
        r.bytes = encode_bundle(r.header, payload);
        record_bundle(db, r.header, checksum_of(r.bytes), now, 0, r.events);
        append_audit(db, now, "export",
                     nlohmann::json{{"for", device}, {"seq", r.header.seq}, {"events", r.events}, {"traits", r.traits},
                                    {"sha256", checksum_of(r.bytes)}}
                         .dump());
        deliver(r.bytes);
        tx.commit();
    }
    sql::exec(db, "DROP TABLE pw_outbox.sync_plot_event", "clearing the outbox");
    sql::exec(db, "DROP TABLE pw_outbox.trait_addition", "clearing the outbox");
    return r;
}

ExportResult export_device_bundle(Store& store, const DeviceIdentity& me, const std::string& now,
                                  const std::function<void(const std::string&)>& deliver) {
    sqlite3* db = store.handle();
    ExportResult r;
    WriteTransaction tx(db);
    r.header.kind = BundleKind::FromDevice;
    r.header.trial_code = store.trial().spec.code;
    r.header.trial_digest = me.trial_digest;
    r.header.device = me.device;
    r.header.seq = next_seq(db, "device", me.device);
    r.header.created_utc = now;
    std::string payload;
    {
        // The session records the copies into the sync tables; the copies stay there as the record of what
        // was exported, so the next export takes only what is not there yet.
        Session s = open_session(db, "main", {"sync_observation", "sync_plot_event"});
        Statement obs(db,
                      "INSERT INTO sync_observation (origin, origin_id, plot, trait, value, number, recorded_utc, device, "
                      "observer, supersedes, note) "
                      "SELECT ?1, o.id, o.plot, o.trait, o.value, o.number, o.recorded_utc, o.device, o.observer, "
                      "o.supersedes, o.note FROM observation AS o "
                      "WHERE NOT EXISTS (SELECT 1 FROM observation_origin AS x WHERE x.observation = o.id) "
                      "AND NOT EXISTS (SELECT 1 FROM sync_observation AS s WHERE s.origin = ?1 AND s.origin_id = o.id) "
                      "ORDER BY o.id");
        obs.bind(1, me.device);
        obs.run();
        r.observations = static_cast<std::size_t>(sqlite3_changes(db));
        Statement ev(db,
                     "INSERT INTO sync_plot_event (origin, origin_id, plot, state, reason, recorded_utc, device, observer, "
                     "flag) SELECT ?1, e.id, e.plot, e.state, e.reason, e.recorded_utc, e.device, e.observer, e.flag "
                     "FROM plot_event AS e "
                     "WHERE NOT EXISTS (SELECT 1 FROM plot_event_origin AS x WHERE x.event = e.id) "
                     "AND NOT EXISTS (SELECT 1 FROM sync_plot_event AS s WHERE s.origin = ?1 AND s.origin_id = e.id) "
                     "ORDER BY e.id");
        ev.bind(1, me.device);
        ev.run();
        r.events = static_cast<std::size_t>(sqlite3_changes(db));
        payload = take_changeset(db, s.get());
    }
    r.bytes = encode_bundle(r.header, payload);
    record_bundle(db, r.header, checksum_of(r.bytes), now, r.observations, r.events);
    append_audit(db, now, "export",
                 nlohmann::json{{"device", me.device}, {"seq", r.header.seq}, {"observations", r.observations},
                                {"events", r.events}, {"sha256", checksum_of(r.bytes)}}
                     .dump());
    deliver(r.bytes);
    tx.commit();
    return r;
}

}  // namespace

// ---- identity and provisioning ----------------------------------------------------------------------------

std::optional<DeviceIdentity> device_identity(const Store& store) {
    Statement st(store.handle(), "SELECT device, trial_digest, blind, provisioned_utc FROM sync_identity WHERE id = 1");
    if (!st.step()) return std::nullopt;
    return DeviceIdentity{st.text(0), st.text(1), st.int64(2) != 0, st.text(3)};
}

std::string trial_digest(const Store& store) {
    if (auto id = device_identity(store)) return id->trial_digest;
    if (auto cert = stored_certificate(store)) return cert->sha256;
    return layout_digest(store.trial().spec, store.trial().layout);
}

std::vector<ProvisionedDevice> provisioned_devices(const Store& station) {
    Statement st(station.handle(), "SELECT name, provisioned_utc, blind, file FROM sync_device ORDER BY name");
    std::vector<ProvisionedDevice> out;
    while (st.step()) out.push_back({st.text(0), st.text(1), st.int64(2) != 0, st.text(3)});
    return out;
}

ProvisionResult provision_device(Store& station, const std::string& device, const std::string& out_path,
                                 const std::string& now_utc) {
    if (auto id = device_identity(station))
        throw InputError(fmt::format("this is the database of device '{}', not a station's: handhelds are provisioned "
                                     "from the station database",
                                     id->device));
    if (!valid_device_name(device))
        throw InputError(fmt::format("--name '{}': a device name is {}", device, kDeviceNameRule));
    for (const auto& d : provisioned_devices(station))
        if (d.name == device)
            throw InputError(fmt::format("--name {}: this station provisioned a device of that name on {} ({}); a "
                                         "replacement handheld gets a new name, so that its records stay apart",
                                         device, d.provisioned_utc, d.file));
    const StoredTrial& t = station.trial();
    ProvisionResult r;
    r.device = device;
    r.file = out_path;
    r.blind = t.spec.blind;
    // A blind trial's handheld never holds a treatment label: neutral codes in the spec, no layout notes.
    const std::string spec_text = r.blind ? blind_spec_toml(t.spec_toml, t.spec_source) : t.spec_toml;
    const TrialSpec spec = parse_trial_spec(spec_text, t.spec_source);
    Layout layout = t.layout;
    if (r.blind) layout.notes.clear();
    const std::string digest = trial_digest(station);
    const std::vector<AddedTrait> added = added_traits(station);
    bool made = false;
    try {
        {
            Store handheld = Store::create(out_path, spec_text, t.spec_source, spec, layout, now_utc);  // refuses an existing file
            made = true;
            sqlite3* hdb = handheld.handle();
            WriteTransaction tx(hdb);
            Statement id(hdb,
                         "INSERT INTO sync_identity (id, device, trial_digest, blind, provisioned_utc) "
                         "VALUES (1, ?1, ?2, ?3, ?4)");
            id.bind(1, device).bind(2, digest).bind(3, r.blind ? 1 : 0).bind(4, now_utc);
            id.run();
            // Traits added at the station so far, as the station's bundles carry them (migration 6).
            for (const AddedTrait& a : added) insert_added_trait(hdb, a);
            append_audit(hdb, now_utc, "provision",
                         nlohmann::json{{"device", device}, {"trial", t.spec.code}, {"trial_digest", digest},
                                        {"blind", r.blind}}
                             .dump());
            tx.commit();
        }
        sqlite3* sdb = station.handle();
        WriteTransaction stx(sdb);
        Statement dev(sdb, "INSERT INTO sync_device (name, provisioned_utc, blind, file) VALUES (?1, ?2, ?3, ?4)");
        dev.bind(1, device).bind(2, now_utc).bind(3, r.blind ? 1 : 0).bind(4, out_path);
        dev.run();
        append_audit(sdb, now_utc, "provision",
                     nlohmann::json{{"device", device}, {"file", out_path}, {"blind", r.blind}, {"trial_digest", digest}}
                         .dump());
        stx.commit();
    } catch (...) {
        // The handheld file did not exist before this call (Store::create refuses one that does): leave none.
        if (made) {
            std::error_code ec;
            for (const char* suffix : {"", "-wal", "-shm", "-journal"}) std::filesystem::remove(out_path + suffix, ec);
        }
        throw;
    }
    r.plots = layout.plots.size();
    r.traits = spec.traits.size() + added.size();
    return r;
}

// ---- export and import ------------------------------------------------------------------------------------

ExportResult export_bundle(Store& store, const std::string& for_device, const std::string& now_utc,
                           const std::function<void(const std::string&)>& deliver) {
    const auto me = device_identity(store);
    if (for_device.empty()) {
        if (!me)
            throw InputError("this is the station's database: name the handheld the bundle is for with --for DEVICE "
                             "(a handheld's own database exports without --for)");
        return export_device_bundle(store, *me, now_utc, deliver);
    }
    if (me)
        throw InputError(fmt::format("--for {}: this is the database of device '{}'; bundles for a handheld are made "
                                     "at the station",
                                     for_device, me->device));
    return export_station_bundle(store, for_device, now_utc, deliver);
}

PayloadSummary check_bundle_payload(const Bundle& bundle, const std::string& source) {
    PayloadSummary sum;
    if (bundle.payload.empty()) return sum;
    auto refuse = [&](const std::string& why) {
        throw BundleError(BundleFault::BadField, source + ": refused, nothing imported: the payload " + why);
    };
    if (const std::string why = changeset_framing_fault(bundle.payload); !why.empty()) refuse(why);
    sqlite3_changeset_iter* it = nullptr;
    if (sqlite3changeset_start(&it, static_cast<int>(bundle.payload.size()),
                               const_cast<char*>(bundle.payload.data())) != SQLITE_OK)
        refuse("is not an SQLite changeset");
    struct Finalize {
        sqlite3_changeset_iter* it;
        ~Finalize() { sqlite3changeset_finalize(it); }
    } finalize{it};
    const bool from_device = bundle.header.kind == BundleKind::FromDevice;
    PayloadKeys keys;
    int rc = SQLITE_OK;
    while ((rc = sqlite3changeset_next(it)) == SQLITE_ROW) {
        const char* table = nullptr;
        int ncol = 0, op = 0, indirect = 0;
        if (sqlite3changeset_op(it, &table, &ncol, &op, &indirect) != SQLITE_OK || !table) refuse("is damaged");
        const std::string name = table;
        if (name == "trait_addition" && !from_device) {  // a trait added at the station (migration 6)
            if (op != SQLITE_INSERT) refuse("updates or deletes trait_addition rows (bundles only add rows)");
            if (ncol != kTraitAdditionColumns)
                refuse(fmt::format("has trait_addition rows of {} columns, this program's have {} (made by another "
                                   "version?)",
                                   ncol, kTraitAdditionColumns));
            unsigned char* pk = nullptr;
            int npk = 0;
            if (sqlite3changeset_pk(it, &pk, &npk) != SQLITE_OK || !pk || pk[0] == 0)
                refuse("keys trait_addition rows otherwise than by name");
            for (int i = 1; i < npk; ++i)
                if (pk[i]) refuse("keys trait_addition rows otherwise than by name");
            sqlite3_value* trait = nullptr;
            if (sqlite3changeset_new(it, 0, &trait) != SQLITE_OK || !trait || sqlite3_value_type(trait) != SQLITE_TEXT)
                refuse("has a trait_addition row without a name");
            ++sum.traits;
            continue;
        }
        const bool obs = name == "sync_observation";
        if (!(obs && from_device) && name != "sync_plot_event")
            refuse(fmt::format("changes table '{}', which a bundle from the {} never does", name,
                               to_string(bundle.header.kind)));
        if (op != SQLITE_INSERT) refuse(fmt::format("updates or deletes {} rows (bundles only add rows)", name));
        const int expected = obs ? kSyncObservationColumns : kSyncPlotEventColumns;
        if (ncol != expected)
            refuse(fmt::format("has {} rows of {} columns, this program's have {} (made by another version?)", name,
                               ncol, expected));
        unsigned char* pk = nullptr;
        int npk = 0;
        if (sqlite3changeset_pk(it, &pk, &npk) != SQLITE_OK || !pk || pk[0] == 0 || pk[1] == 0)
            refuse(fmt::format("keys {} rows otherwise than by (origin, origin_id)", name));
        for (int i = 2; i < npk; ++i)
            if (pk[i]) refuse(fmt::format("keys {} rows otherwise than by (origin, origin_id)", name));
        sqlite3_value* origin = nullptr;
        if (sqlite3changeset_new(it, 0, &origin) != SQLITE_OK || !origin || sqlite3_value_type(origin) != SQLITE_TEXT)
            refuse(fmt::format("has a {} row without an origin", name));
        const std::string o = value_text(origin);
        if (from_device && o != bundle.header.device)
            refuse(fmt::format("holds a row of device '{}' in a bundle of device '{}'", o, bundle.header.device));
        if (!from_device && o == bundle.header.device)
            refuse(fmt::format("sends device '{}' its own plot events back", o));
        sqlite3_value* id = nullptr;
        if (sqlite3changeset_new(it, 1, &id) != SQLITE_OK || !id || sqlite3_value_type(id) != SQLITE_INTEGER ||
            sqlite3_value_int64(id) < 1)
            refuse(fmt::format("has a {} row whose origin id is not a whole number from 1 up", name));
        if (obs) {
            sqlite3_value* supersedes = nullptr;
            const bool correction = sqlite3changeset_new(it, 9, &supersedes) == SQLITE_OK && supersedes &&
                                    sqlite3_value_type(supersedes) != SQLITE_NULL;
            count_observation(sum, sqlite3_value_int64(id), correction);
        } else {
            ++sum.events;
        }
        keys.add(obs, o, sqlite3_value_int64(id));
    }
    if (rc != SQLITE_DONE) refuse("is damaged (SQLite could not read the changeset)");
    if (const std::string why = keys.repeated(); !why.empty()) refuse(why);
    return sum;
}

ImportResult import_bundle(Store& store, std::string_view bytes, const std::string& source, const std::string& now_utc) {
    const Bundle b = decode_bundle(bytes, source);
    sqlite3* db = store.handle();
    const StoredTrial& t = store.trial();
    const auto me = device_identity(store);
    const std::string self = me ? me->device : kStationOrigin;
    const std::string digest = trial_digest(store);
    ImportResult r;
    r.source = source;
    r.header = b.header;

    if (b.header.trial_code != t.spec.code)
        throw InputError(fmt::format("{}: refused, nothing imported: a bundle of trial {}, but this database holds trial {}",
                                     source, b.header.trial_code, t.spec.code));
    if (b.header.trial_digest != digest)
        throw InputError(fmt::format("{}: refused, nothing imported: a bundle of trial {} with layout digest {}, but this "
                                     "database's layout digest is {}: another randomization of the same trial code",
                                     source, b.header.trial_code, b.header.trial_digest, digest));
    if (me) {
        if (b.header.kind != BundleKind::FromStation)
            throw InputError(fmt::format("{}: refused, nothing imported: a bundle made by device '{}'; this is the database "
                                         "of device '{}' (bundles from handhelds are imported at the station)",
                                         source, b.header.device, me->device));
        if (b.header.device != me->device)
            throw InputError(fmt::format("{}: refused, nothing imported: the station made this bundle for device '{}', "
                                         "this is device '{}'",
                                         source, b.header.device, me->device));
    } else {
        if (b.header.kind != BundleKind::FromDevice)
            throw InputError(fmt::format("{}: refused, nothing imported: the station's bundle for device '{}' is "
                                         "imported on that handheld, not at the station",
                                         source, b.header.device));
        const auto devices = provisioned_devices(store);
        if (std::none_of(devices.begin(), devices.end(), [&](const auto& d) { return d.name == b.header.device; }))
            throw InputError(fmt::format("{}: refused, nothing imported: device '{}' was never provisioned by this "
                                         "station (provisioned: {})",
                                         source, b.header.device, device_list(store)));
    }
    const char* maker = to_string(b.header.kind);
    {
        Statement seen(db, "SELECT sha256, applied_utc FROM sync_bundle WHERE maker = ?1 AND device = ?2 AND seq = ?3");
        seen.bind(1, maker).bind(2, b.header.device).bind(3, static_cast<std::int64_t>(b.header.seq));
        if (seen.step()) {
            if (seen.text(0) != b.checksum_hex)
                throw InputError(fmt::format(
                    "{}: refused, nothing imported: bundle {} of device '{}' was imported on {} with other content "
                    "(SHA-256 {}, this file {}): a device database made again under the same name?",
                    source, b.header.seq, b.header.device, seen.text(1), seen.text(0), b.checksum_hex));
            r.already_imported = true;
            r.missing_seqs = missing_seqs(db, maker, b.header.device);
            return r;
        }
    }
    const PayloadSummary sum = me ? check_bundle_payload(b, source) : device_payload_summary(b, source);

    WriteTransaction tx(db);
    if (me) {
        const int changes_before = sqlite3_total_changes(db);
        const auto [dup_obs, dup_ev] = apply_payload(db, b.payload, source);
        // Traits added at the station, new here, become traits of the trial (every trait_addition row
        // received before has its trait row, so those without one are this bundle's new ones).
        r.traits = materialize_added_traits(db, t.spec, source);
        r.duplicates = dup_obs + dup_ev + (sum.traits - r.traits);
        r.observations = sum.observations - dup_obs;
        r.events = sum.events - dup_ev;
        // Each new added trait is two rows: its trait_addition row and its trait row.
        if (static_cast<std::size_t>(sqlite3_total_changes(db) - changes_before) !=
            r.observations + r.events + 2 * r.traits)
            throw InputError(fmt::format("{}: refused, nothing imported: {} rows in the payload, {} applied and {} "
                                         "already held",
                                         source, sum.observations + sum.events,
                                         sqlite3_total_changes(db) - changes_before, r.duplicates));
    } else {
        const Received in = take_in_received(db, b.payload, b.header.device, sum, source);
        r.duplicates = in.duplicate_observations + in.duplicate_events;
        r.observations = sum.observations - in.duplicate_observations;
        r.events = sum.events - in.duplicate_events;
        // Only the bundle's own device's corrections can have become ready (a correction corrects an
        // observation of its own origin).
        const Materialized m = materialize_observations(db, b.header.device);
        r.applied = in.values + m.applied;
        r.pending = m.pending;
    }
    materialize_events(db, self);
    record_bundle(db, b.header, b.checksum_hex, now_utc, r.observations, r.events);
    nlohmann::json detail{{"file", std::filesystem::path(source).filename().string()},
                          {"maker", maker},
                          {"device", b.header.device},
                          {"seq", b.header.seq},
                          {"sha256", b.checksum_hex},
                          {"observations", r.observations},
                          {"events", r.events},
                          {"duplicates", r.duplicates},
                          {"pending", r.pending}};
    if (me) detail["traits"] = r.traits;  // the station's bundle: traits added at the station, new here
    append_audit(db, now_utc, "import", detail.dump());
    tx.commit();
    if (r.traits > 0) store.reload_trial();
    r.missing_seqs = missing_seqs(db, maker, b.header.device);
    return r;
}

}  // namespace pw
