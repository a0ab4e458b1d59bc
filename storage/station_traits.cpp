// Traits added to a running trial (station_traits.hpp; table trait_addition, migration 6, docs/schema.md).
// The definitions are read with the spec's own trait reader (parse_added_traits), on adding, on every open
// and on a handheld receiving them, so one set of rules and messages applies everywhere.
#include "storage/station_traits.hpp"

#include <sqlite3.h>

#include <filesystem>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "core/error.hpp"
#include "storage/audit_log.hpp"
#include "storage/schema.hpp"
#include "storage/sqlite_statement.hpp"
#include "storage/store.hpp"
#include "storage/sync.hpp"

namespace pw {
namespace {

using sql::Statement;
using sql::WriteTransaction;

using schema::stored_kind;

// Inserts the trait row; returns SQLite's result code when a constraint refuses it.
int insert_trait_row(sqlite3* db, const TraitSpec& t, int position) {
    Statement st(db,
                 "INSERT INTO trait (name, position, label, unit, kind, min, max, decimals, max_length, score_labels) "
                 "VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10)");
    st.bind(1, t.name).bind(2, position).bind(3, t.label).bind(4, t.unit).bind(5, stored_kind(t.kind)).bind(6, t.min)
        .bind(7, t.max).bind(8, t.decimals).bind(9, t.max_length).bind(10, nlohmann::json(t.score_labels).dump());
    return st.run(true);
}

struct StoredAddition {
    std::string name;
    int position = 0;
    std::string definition, added_utc, added_by;
};

std::vector<StoredAddition> stored_additions(sqlite3* db, bool without_trait_row) {
    Statement st(db, without_trait_row
                         ? "SELECT a.name, a.position, a.definition, a.added_utc, a.added_by FROM trait_addition AS a "
                           "WHERE NOT EXISTS (SELECT 1 FROM trait AS t WHERE t.name = a.name) ORDER BY a.position"
                         : "SELECT name, position, definition, added_utc, added_by FROM trait_addition ORDER BY position");
    std::vector<StoredAddition> out;
    while (st.step()) out.push_back({st.text(0), st.integer(1), st.text(2), st.text(3), st.text(4)});
    return out;
}

// The one trait a stored definition holds, read against the traits before it. Throws SpecError.
TraitSpec read_definition(const StoredAddition& a, const TrialSpec& before, const std::string& source) {
    const std::vector<AddedTraitTable> tables = parse_added_traits(a.definition, source, before);
    if (tables.size() != 1 || tables[0].trait.name != a.name)
        throw SpecError(source, "traits",
                        fmt::format("expected exactly one [[traits]] table, of the trait named '{}'", a.name));
    return tables[0].trait;
}

}  // namespace

std::vector<AddedTrait> added_traits(const Store& store) {
    const std::vector<TraitSpec>& traits = store.trial().spec.traits;
    std::vector<AddedTrait> out;
    for (const StoredAddition& a : stored_additions(store.handle(), false)) {
        AddedTrait t;
        for (const TraitSpec& s : traits)
            if (s.name == a.name) t.trait = s;
        t.position = a.position;
        t.definition = a.definition;
        t.added_utc = a.added_utc;
        t.added_by = a.added_by;
        out.push_back(std::move(t));
    }
    return out;
}

void append_added_traits(sqlite3* db, TrialSpec& spec, const std::string& path) {
    for (const StoredAddition& a : stored_additions(db, false)) {
        try {
            spec.traits.push_back(read_definition(a, spec, path + ": trait_addition '" + a.name + "'"));
        } catch (const SpecError& e) {
            throw StoreError(fmt::format("{}: the added trait '{}' no longer reads: {}", path, a.name, e.what()));
        }
    }
}

void insert_added_trait(sqlite3* db, const AddedTrait& t) {
    Statement add(db,
                  "INSERT INTO trait_addition (name, position, definition, added_utc, added_by) "
                  "VALUES (?1, ?2, ?3, ?4, ?5)");
    add.bind(1, t.trait.name).bind(2, t.position).bind(3, t.definition).bind(4, t.added_utc).bind(5, t.added_by);
    add.run();
    if (insert_trait_row(db, t.trait, t.position) != SQLITE_OK)
        sql::fail(db, "adding trait '" + t.trait.name + "'");
}

std::size_t materialize_added_traits(sqlite3* db, const TrialSpec& spec, const std::string& source) {
    TrialSpec sofar = spec;
    const std::vector<StoredAddition> waiting = stored_additions(db, true);
    for (const StoredAddition& a : waiting) {
        TraitSpec t;
        try {
            t = read_definition(a, sofar, "trait '" + a.name + "' of the bundle");
        } catch (const SpecError& e) {
            throw InputError(fmt::format("{}: refused, nothing imported: {}", source, e.what()));
        }
        if (insert_trait_row(db, t, a.position) != SQLITE_OK)
            throw InputError(fmt::format("{}: refused, nothing imported: the added trait '{}' at place {} does not fit "
                                         "this database's traits ({})",
                                         source, a.name, a.position, sqlite3_errmsg(db)));
        sofar.traits.push_back(std::move(t));
    }
    return waiting.size();
}

std::vector<AddedTrait> add_traits(Store& store, const std::string& toml_text, const std::string& source,
                                   const std::string& added_by, const std::string& now_utc) {
    sqlite3* db = store.handle();
    if (auto me = device_identity(store))
        throw InputError(fmt::format("{}: this is the database of device '{}': traits are added at the station "
                                     "(plotwright trait add --db STATION) and reach the handheld in its station bundle "
                                     "(plotwright sync export --db STATION --for {})",
                                     sql::db_name(db), me->device, me->device));
    if (added_by.find_first_not_of(" \t") == std::string::npos)
        throw InputError("--observer: expected the name of who adds the trait, got an empty one");
    const std::vector<AddedTraitTable> tables = parse_added_traits(toml_text, source, store.trial().spec);
    refuse_treatment_names_in_added_traits(toml_text, source, store.trial().spec);

    WriteTransaction tx(db);
    int next = 0;
    {
        Statement top(db, "SELECT coalesce(max(position), -1) + 1 FROM trait");
        top.step();
        next = top.integer(0);
    }
    std::vector<AddedTrait> out;
    nlohmann::json listed = nlohmann::json::array();
    for (const AddedTraitTable& table : tables) {
        AddedTrait a;
        a.trait = table.trait;
        a.position = next++;
        a.definition = table.toml;
        a.added_utc = now_utc;
        a.added_by = added_by;
        insert_added_trait(db, a);
        listed.push_back({{"name", a.trait.name}, {"kind", to_string(a.trait.kind)}, {"unit", a.trait.unit},
                          {"position", a.position}});
        out.push_back(std::move(a));
    }
    append_audit(db, now_utc, "trait",
                 nlohmann::json{{"file", std::filesystem::path(source).filename().string()},
                                {"added_by", added_by},
                                {"traits", listed}}
                     .dump());
    tx.commit();
    store.reload_trial();
    return out;
}

}  // namespace pw
