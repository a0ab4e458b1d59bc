// Conflicts, agreeing values and resolutions (sync_conflicts.hpp). The groups come from
// Store::current_observations, so the values in force mean the same here as everywhere else; the SQL
// view observation_conflict (migration 5) answers the same question for outside SQL tools.
#include "storage/sync_conflicts.hpp"

#include <sqlite3.h>

#include <algorithm>
#include <map>
#include <set>
#include <tuple>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "core/error.hpp"
#include "core/traits/value.hpp"
#include "storage/audit_log.hpp"
#include "storage/sqlite_statement.hpp"
#include "storage/sync.hpp"

namespace pw {
namespace {

using Origins = std::map<std::int64_t, std::pair<std::string, std::int64_t>>;

Origins load_origins(const Store& store) {
    sql::Statement st(store.handle(), "SELECT observation, origin, origin_id FROM observation_origin");
    Origins out;
    while (st.step()) out.emplace(st.int64(0), std::make_pair(st.text(1), st.int64(2)));
    return out;
}

ConflictValue with_origin(const ObservationRecord& r, const Origins& origins) {
    auto it = origins.find(r.id);
    if (it == origins.end()) return {r, kStationOrigin, r.id};
    return {r, it->second.first, it->second.second};
}

// Earliest recorded first; ties by origin and the id on the origin: the same order whatever order the
// observations arrived in.
bool earlier(const ConflictValue& a, const ConflictValue& b) {
    return std::tie(a.record.obs.recorded_utc, a.origin, a.origin_id) <
           std::tie(b.record.obs.recorded_utc, b.origin, b.origin_id);
}

ResolvedObservations group(const Store& store) {
    const std::vector<ObservationRow> rows = store.current_observations();  // walking order, trait order, id
    const Origins origins = load_origins(store);
    ResolvedObservations out;
    for (std::size_t i = 0; i < rows.size();) {
        std::size_t j = i;
        std::set<std::string> values;
        while (j < rows.size() && rows[j].record.obs.plot == rows[i].record.obs.plot &&
               rows[j].record.obs.trait == rows[i].record.obs.trait) {
            values.insert(rows[j].record.obs.value);
            ++j;
        }
        std::vector<std::size_t> members;
        for (std::size_t k = i; k < j; ++k) members.push_back(k);
        std::sort(members.begin(), members.end(), [&](std::size_t a, std::size_t b) {
            return earlier(with_origin(rows[a].record, origins), with_origin(rows[b].record, origins));
        });
        if (values.size() > 1) {
            Conflict c;
            c.plot = rows[i].record.obs.plot;
            c.trait = rows[i].record.obs.trait;
            for (std::size_t k : members) c.values.push_back(with_origin(rows[k].record, origins));
            out.conflicts.push_back(std::move(c));
        } else {
            if (j - i > 1) ++out.agreeing;
            out.rows.push_back(rows[members.front()]);
            const ConflictValue first = with_origin(rows[members.front()].record, origins);
            out.origins.emplace_back(first.origin, first.origin_id);
        }
        i = j;
    }
    return out;
}

}  // namespace

std::vector<Conflict> unresolved_conflicts(const Store& store) { return group(store).conflicts; }

std::size_t count_unresolved_conflicts(const Store& store) {
    sql::Statement st(store.handle(), "SELECT count(*) FROM observation_conflict");
    st.step();
    return static_cast<std::size_t>(st.int64(0));
}

ResolvedObservations resolved_observations(const Store& store) { return group(store); }

std::int64_t resolve_conflict(Store& store, const Resolution& r) {
    const StoredTrial& t = store.trial();
    const std::string where = fmt::format("plot {}, trait {}", r.plot, r.trait);
    const auto trait = std::find_if(t.spec.traits.begin(), t.spec.traits.end(),
                                    [&](const TraitSpec& s) { return s.name == r.trait; });
    if (trait == t.spec.traits.end()) {
        std::string names;
        for (const auto& s : t.spec.traits) names += (names.empty() ? "" : ", ") + s.name;
        throw InputError(fmt::format("--trait {}: trial {} has no such trait (its traits: {})", r.trait, t.spec.code, names));
    }
    if (r.reason.empty()) throw InputError(where + ": a resolution needs a reason (--reason TEXT)");
    if (r.value.has_value() == r.keep.has_value())
        throw InputError(where + ": give either --value V (the value chosen) or --keep OBSERVATION_ID");

    const auto conflicts = unresolved_conflicts(store);
    const auto c = std::find_if(conflicts.begin(), conflicts.end(),
                                [&](const Conflict& x) { return x.plot == r.plot && x.trait == r.trait; });
    if (c == conflicts.end())
        throw InputError(where + ": not in conflict (`plotwright conflicts` lists the plot/traits that are); a value "
                                 "that is wrong is corrected by recording a new one");
    TraitValue chosen;
    std::string how;
    if (r.keep) {
        const auto kept = std::find_if(c->values.begin(), c->values.end(),
                                       [&](const ConflictValue& v) { return v.record.id == *r.keep; });
        if (kept == c->values.end()) {
            std::string ids;
            for (const auto& v : c->values) ids += (ids.empty() ? "" : ", ") + std::to_string(v.record.id);
            throw InputError(fmt::format("{}: --keep {}: not one of the conflicting observations ({})", where, *r.keep, ids));
        }
        chosen = {kept->record.obs.value, kept->record.obs.number};
        how = fmt::format("kept observation {}", *r.keep);
    } else {
        chosen = parse_trait_value(*trait, *r.value);  // InputError naming the trait and what it accepts
        how = "value chosen";
    }

    sqlite3* db = store.handle();
    sql::WriteTransaction tx(db);
    sql::Statement ins(db,
                       "INSERT INTO observation (plot, trait, value, number, recorded_utc, device, observer, supersedes, "
                       "note) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, NULL, ?8)");
    ins.bind(1, r.plot).bind(2, r.trait).bind(3, chosen.text).bind(4, chosen.number).bind(5, r.now_utc)
        .bind(6, kStationOrigin).bind(7, r.observer).bind(8, "resolved conflict (" + how + "): " + r.reason);
    ins.run();
    const std::int64_t id = sqlite3_last_insert_rowid(db);
    nlohmann::json superseded = nlohmann::json::array();
    // Every current observation of the plot and trait, withdrawals included, so that none stays current.
    for (const ObservationRecord& cur : store.current_for_plot(r.plot)) {
        if (cur.obs.trait != r.trait || cur.id == id) continue;
        sql::Statement res(db, "INSERT INTO observation_resolves (resolution, resolved) VALUES (?1, ?2)");
        res.bind(1, id).bind(2, cur.id);
        res.run();
        superseded.push_back(cur.id);
    }
    append_audit(db, r.now_utc, "resolve",
                 nlohmann::json{{"plot", r.plot},
                                {"trait", r.trait},
                                {"value", chosen.text},
                                {"observation", id},
                                {"supersedes", superseded},
                                {"keep", r.keep ? nlohmann::json(*r.keep) : nlohmann::json(nullptr)},
                                {"observer", r.observer},
                                {"reason", r.reason}}
                     .dump());
    tx.commit();
    return id;
}

}  // namespace pw
