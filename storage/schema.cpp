// Numbered schema migrations. Each is DDL only (no values), applied in its own transaction together with
// the PRAGMA user_version that records it. Meaning of every table and column: docs/schema.md.
//
// Rules kept by the schema itself, not only by the program:
//   - STRICT tables (https://www.sqlite.org/stricttables.html): a value of the wrong type is refused.
//   - Observations and plot events are append-only: BEFORE UPDATE / BEFORE DELETE triggers RAISE(ABORT).
//     The trial definition (trial, treatment, trait, plot) is fixed once created, likewise.
//   - A correction supersedes exactly one earlier observation of the same plot and trait, and an
//     observation is superseded at most once (unique index on supersedes).
//   - An empty value is a withdrawal (migration 4): it supersedes an observation and carries no number.
//   - Timestamps are UTC ISO 8601 "YYYY-MM-DDTHH:MM:SS[.fff]Z" that SQLite's julianday() accepts.
#include "storage/schema.hpp"

#include <string>

#include "storage/sqlite_statement.hpp"

namespace pw::schema {
namespace {

// A CHECK for a UTC timestamp column: the ISO 8601 shape with a Z suffix, and a real calendar instant
// (julianday() returns NULL for month 13 or hour 25; https://www.sqlite.org/lang_datefunc.html).
#define PW_UTC_CHECK(col)                                                                        \
    "CHECK (" col " GLOB '[0-9][0-9][0-9][0-9]-[0-9][0-9]-[0-9][0-9]T[0-9][0-9]:[0-9][0-9]:[0-9][0-9]*Z'" \
    " AND julianday(" col ") IS NOT NULL)"

constexpr const char* kMigration1 = R"sql(
CREATE TABLE trial (
    id            INTEGER PRIMARY KEY CHECK (id = 1),
    code          TEXT NOT NULL CHECK (length(code) BETWEEN 2 AND 10 AND code NOT GLOB '*[^A-Z0-9]*'),
    title         TEXT NOT NULL,
    spec_toml     TEXT NOT NULL,
    spec_source   TEXT NOT NULL,
    seed          TEXT NOT NULL CHECK (length(seed) BETWEEN 1 AND 20 AND seed NOT GLOB '*[^0-9]*'),
    algorithm     TEXT NOT NULL CHECK (algorithm <> ''),
    field_x_m     REAL NOT NULL CHECK (field_x_m >= 0),
    field_y_m     REAL NOT NULL CHECK (field_y_m >= 0),
    layout_notes  TEXT NOT NULL CHECK (json_valid(layout_notes) AND json_type(layout_notes) = 'array'),
    created_utc   TEXT NOT NULL )sql" PW_UTC_CHECK("created_utc") R"sql(,
    app_version   TEXT NOT NULL
) STRICT;

CREATE TABLE treatment (
    idx           INTEGER PRIMARY KEY CHECK (idx >= 0),
    label         TEXT NOT NULL UNIQUE CHECK (label <> ''),
    description   TEXT NOT NULL,
    is_check      INTEGER NOT NULL CHECK (is_check IN (0, 1))
) STRICT;

CREATE TABLE trait (
    name          TEXT PRIMARY KEY CHECK (name GLOB '[a-z]*' AND name NOT GLOB '*[^a-z0-9_]*'),
    position      INTEGER NOT NULL UNIQUE CHECK (position >= 0),
    label         TEXT NOT NULL,
    unit          TEXT NOT NULL,
    kind          TEXT NOT NULL CHECK (kind IN ('number', 'count', 'score', 'date', 'text')),
    min           REAL,
    max           REAL,
    decimals      INTEGER NOT NULL CHECK (decimals >= 0),
    max_length    INTEGER NOT NULL CHECK (max_length > 0),
    score_labels  TEXT NOT NULL CHECK (json_valid(score_labels) AND json_type(score_labels) = 'array'),
    CHECK (min IS NULL OR max IS NULL OR min <= max)
) STRICT, WITHOUT ROWID;

CREATE TABLE plot (
    id            INTEGER PRIMARY KEY CHECK (id > 0),
    block         INTEGER NOT NULL CHECK (block >= 1),
    position      INTEGER NOT NULL CHECK (position >= 1),
    walk_order    INTEGER NOT NULL UNIQUE CHECK (walk_order >= 1),
    row           INTEGER NOT NULL CHECK (row >= 1),
    col           INTEGER NOT NULL CHECK (col >= 1),
    treatment     INTEGER NOT NULL REFERENCES treatment (idx),
    x_m           REAL NOT NULL,
    y_m           REAL NOT NULL,
    width_x_m     REAL NOT NULL CHECK (width_x_m > 0),
    width_y_m     REAL NOT NULL CHECK (width_y_m > 0),
    UNIQUE (block, position),
    UNIQUE (row, col)
) STRICT;

CREATE TABLE observation (
    id            INTEGER PRIMARY KEY,
    plot          INTEGER NOT NULL REFERENCES plot (id),
    trait         TEXT NOT NULL REFERENCES trait (name),
    value         TEXT NOT NULL,
    number        REAL,
    recorded_utc  TEXT NOT NULL )sql" PW_UTC_CHECK("recorded_utc") R"sql(,
    device        TEXT NOT NULL,
    observer      TEXT NOT NULL,
    supersedes    INTEGER REFERENCES observation (id),
    note          TEXT NOT NULL,
    CHECK (supersedes IS NULL OR note <> '')
) STRICT;

CREATE UNIQUE INDEX observation_supersedes_once ON observation (supersedes) WHERE supersedes IS NOT NULL;
CREATE INDEX observation_by_plot_trait ON observation (plot, trait);

CREATE TABLE plot_event (
    id            INTEGER PRIMARY KEY,
    plot          INTEGER NOT NULL REFERENCES plot (id),
    state         TEXT NOT NULL CHECK (state IN ('normal', 'damaged', 'missing')),
    reason        TEXT NOT NULL,
    recorded_utc  TEXT NOT NULL )sql" PW_UTC_CHECK("recorded_utc") R"sql(,
    device        TEXT NOT NULL,
    observer      TEXT NOT NULL
) STRICT;

CREATE INDEX plot_event_by_plot ON plot_event (plot);

-- A correction names an earlier observation of the same plot and trait.
CREATE TRIGGER observation_correction_same_plot_trait
BEFORE INSERT ON observation
WHEN NEW.supersedes IS NOT NULL AND NOT EXISTS (
    SELECT 1 FROM observation AS o
    WHERE o.id = NEW.supersedes AND o.plot = NEW.plot AND o.trait = NEW.trait)
BEGIN
    SELECT RAISE(ABORT, 'a correction must supersede an earlier observation of the same plot and trait');
END;

-- Append-only: what was recorded stays as it was recorded.
CREATE TRIGGER observation_no_update BEFORE UPDATE ON observation
BEGIN SELECT RAISE(ABORT, 'observations are append-only: record a correction that supersedes it'); END;
CREATE TRIGGER observation_no_delete BEFORE DELETE ON observation
BEGIN SELECT RAISE(ABORT, 'observations are append-only: record a correction that supersedes it'); END;
CREATE TRIGGER plot_event_no_update BEFORE UPDATE ON plot_event
BEGIN SELECT RAISE(ABORT, 'plot events are append-only: record a new event'); END;
CREATE TRIGGER plot_event_no_delete BEFORE DELETE ON plot_event
BEGIN SELECT RAISE(ABORT, 'plot events are append-only: record a new event'); END;

-- The trial definition is fixed when the database is created (the stored seed must reproduce it).
CREATE TRIGGER trial_fixed_update BEFORE UPDATE ON trial
BEGIN SELECT RAISE(ABORT, 'the trial definition is fixed once created'); END;
CREATE TRIGGER trial_fixed_delete BEFORE DELETE ON trial
BEGIN SELECT RAISE(ABORT, 'the trial definition is fixed once created'); END;
CREATE TRIGGER treatment_fixed_update BEFORE UPDATE ON treatment
BEGIN SELECT RAISE(ABORT, 'the trial definition is fixed once created'); END;
CREATE TRIGGER treatment_fixed_delete BEFORE DELETE ON treatment
BEGIN SELECT RAISE(ABORT, 'the trial definition is fixed once created'); END;
CREATE TRIGGER trait_fixed_update BEFORE UPDATE ON trait
BEGIN SELECT RAISE(ABORT, 'the trial definition is fixed once created'); END;
CREATE TRIGGER trait_fixed_delete BEFORE DELETE ON trait
BEGIN SELECT RAISE(ABORT, 'the trial definition is fixed once created'); END;
CREATE TRIGGER plot_fixed_update BEFORE UPDATE ON plot
BEGIN SELECT RAISE(ABORT, 'the trial layout is fixed once created'); END;
CREATE TRIGGER plot_fixed_delete BEFORE DELETE ON plot
BEGIN SELECT RAISE(ABORT, 'the trial layout is fixed once created'); END;

-- Current observations: those no other row supersedes.
CREATE VIEW current_observation AS
SELECT o.* FROM observation AS o
WHERE NOT EXISTS (SELECT 1 FROM observation AS c WHERE c.supersedes = o.id);
)sql";

#undef PW_UTC_CHECK

// Migration 2: the design framework. Every plot gets the design's own columns (0 where they do not apply,
// which is what every trial made before them, all RCBD, holds) and its harvest area (0 = the whole plot
// that way); the trial gets the names of the design's columns and its guard plots. Added columns do not
// fire the plot table's BEFORE UPDATE trigger, and the new rows stay fixed once created like the rest of
// the layout.
constexpr const char* kMigration2 = R"sql(
ALTER TABLE plot ADD COLUMN rep              INTEGER NOT NULL DEFAULT 0 CHECK (rep >= 0);
ALTER TABLE plot ADD COLUMN incomplete_block INTEGER NOT NULL DEFAULT 0 CHECK (incomplete_block >= 0);
ALTER TABLE plot ADD COLUMN main             INTEGER NOT NULL DEFAULT 0 CHECK (main >= 0);
ALTER TABLE plot ADD COLUMN sub              INTEGER NOT NULL DEFAULT 0 CHECK (sub >= 0);
ALTER TABLE plot ADD COLUMN square_row       INTEGER NOT NULL DEFAULT 0 CHECK (square_row >= 0);
ALTER TABLE plot ADD COLUMN square_col       INTEGER NOT NULL DEFAULT 0 CHECK (square_col >= 0);
ALTER TABLE plot ADD COLUMN harvest_x_m      REAL NOT NULL DEFAULT 0 CHECK (harvest_x_m >= 0);
ALTER TABLE plot ADD COLUMN harvest_y_m      REAL NOT NULL DEFAULT 0 CHECK (harvest_y_m >= 0);

ALTER TABLE trial ADD COLUMN design_columns TEXT NOT NULL DEFAULT '[]'
    CHECK (json_valid(design_columns) AND json_type(design_columns) = 'array');

CREATE TABLE guard_plot (
    id            INTEGER PRIMARY KEY CHECK (id >= 1),
    x_m           REAL NOT NULL,
    y_m           REAL NOT NULL,
    width_x_m     REAL NOT NULL CHECK (width_x_m > 0),
    width_y_m     REAL NOT NULL CHECK (width_y_m > 0)
) STRICT;

CREATE TRIGGER guard_plot_fixed_update BEFORE UPDATE ON guard_plot
BEGIN SELECT RAISE(ABORT, 'the trial layout is fixed once created'); END;
CREATE TRIGGER guard_plot_fixed_delete BEFORE DELETE ON guard_plot
BEGIN SELECT RAISE(ABORT, 'the trial layout is fixed once created'); END;
)sql";

// Migration 3: the layout certificate (docs/certificate.md): the SHA-256 of the layout's canonical text,
// written with the trial and fixed afterwards. A trial designed before it has no row.
constexpr const char* kMigration3 = R"sql(
CREATE TABLE layout_certificate (
    id            INTEGER PRIMARY KEY CHECK (id = 1) REFERENCES trial (id),
    format        TEXT NOT NULL CHECK (format <> ''),
    sha256        TEXT NOT NULL CHECK (length(sha256) = 64 AND sha256 NOT GLOB '*[^0-9a-f]*')
) STRICT;

CREATE TRIGGER layout_certificate_fixed_update BEFORE UPDATE ON layout_certificate
BEGIN SELECT RAISE(ABORT, 'the layout certificate is fixed once created'); END;
CREATE TRIGGER layout_certificate_fixed_delete BEFORE DELETE ON layout_certificate
BEGIN SELECT RAISE(ABORT, 'the layout certificate is fixed once created'); END;
)sql";

// Migration 4: flags from the spec and undo. A plot event names the trial's flag it records (`flag`;
// '' on rows written before, whose flag is their state's name), while `state` keeps saying what the flag
// means for the data ('damaged': values kept, 'missing': treated as missing), so a reader of the state
// alone stays right for old and new rows. An observation with an empty value is a withdrawal (undo back
// to no value): it must supersede the value it takes back and carry no number. Both are additions: no
// existing row changes, the ADD COLUMN fires no UPDATE trigger and gives old rows the default.
constexpr const char* kMigration4 = R"sql(
ALTER TABLE plot_event ADD COLUMN flag TEXT NOT NULL DEFAULT ''
    CHECK (flag = '' OR (length(flag) <= 16 AND flag GLOB '[a-z]*' AND flag NOT GLOB '*[^a-z0-9_]*'));

CREATE TRIGGER observation_withdrawal_supersedes
BEFORE INSERT ON observation
WHEN NEW.value = '' AND (NEW.supersedes IS NULL OR NEW.number IS NOT NULL)
BEGIN
    SELECT RAISE(ABORT, 'an empty value withdraws a value: it must supersede an observation and carry no number');
END;
)sql";

// Migration 5: station sync (docs/sync.md, docs/station.md). Additions only: no existing row changes.
//   sync_identity       on a handheld's database: who it is and which station trial it belongs to (one row)
//   sync_device         on the station: every handheld it provisioned
//   sync_bundle         every bundle written or imported, on both sides: (maker, device, seq) once
//   sync_observation,   rows that crossed between databases under their origin key (origin, origin_id):
//   sync_plot_event     on a handheld what it exported, on the station what it received. Bundles are SQLite
//                       changesets of these two tables, so both sides have them with the same columns
//   observation_origin, which received row a local observation or plot event is (the same observation
//   plot_event_origin   arriving twice is recognised by its origin key)
//   observation_resolves  a station resolution and each observation it supersedes (a resolution supersedes
//                       every conflicting value, which one `supersedes` column cannot say)
//   audit_log           hash-chained log of imports, exports, provisioning, resolutions and corrections
// current_observation is re-created so that a resolved observation is no longer current, and
// observation_conflict names every plot and trait with more than one distinct value in force.
// Every new table is append-only (BEFORE UPDATE / DELETE triggers), like the observations.
#define PW_UTC_CHECK(col)                                                                        \
    "CHECK (" col " GLOB '[0-9][0-9][0-9][0-9]-[0-9][0-9]-[0-9][0-9]T[0-9][0-9]:[0-9][0-9]:[0-9][0-9]*Z'" \
    " AND julianday(" col ") IS NOT NULL)"
#define PW_HEX64_CHECK(col) "CHECK (length(" col ") = 64 AND " col " NOT GLOB '*[^0-9a-f]*')"
#define PW_DEVICE_CHECK(col)                                                                              \
    "CHECK (length(" col ") BETWEEN 1 AND 32 AND " col " NOT GLOB '*[^A-Za-z0-9._-]*' AND " col           \
    " NOT GLOB '[.-]*' AND lower(" col ") <> 'station')"
#define PW_APPEND_ONLY(table, what)                                                                       \
    "CREATE TRIGGER " table "_no_update BEFORE UPDATE ON " table                                           \
    " BEGIN SELECT RAISE(ABORT, '" what "'); END;\n"                                                          \
    "CREATE TRIGGER " table "_no_delete BEFORE DELETE ON " table                                           \
    " BEGIN SELECT RAISE(ABORT, '" what "'); END;\n"

constexpr const char* kMigration5 = R"sql(
CREATE TABLE sync_identity (
    id              INTEGER PRIMARY KEY CHECK (id = 1),
    device          TEXT NOT NULL )sql" PW_DEVICE_CHECK("device") R"sql(,
    trial_digest    TEXT NOT NULL )sql" PW_HEX64_CHECK("trial_digest") R"sql(,
    blind           INTEGER NOT NULL CHECK (blind IN (0, 1)),
    provisioned_utc TEXT NOT NULL )sql" PW_UTC_CHECK("provisioned_utc") R"sql(
) STRICT;

CREATE TABLE sync_device (
    name            TEXT PRIMARY KEY )sql" PW_DEVICE_CHECK("name") R"sql(,
    provisioned_utc TEXT NOT NULL )sql" PW_UTC_CHECK("provisioned_utc") R"sql(,
    blind           INTEGER NOT NULL CHECK (blind IN (0, 1)),
    file            TEXT NOT NULL
) STRICT, WITHOUT ROWID;

CREATE TABLE sync_bundle (
    maker           TEXT NOT NULL CHECK (maker IN ('device', 'station')),
    device          TEXT NOT NULL )sql" PW_DEVICE_CHECK("device") R"sql(,
    seq             INTEGER NOT NULL CHECK (seq >= 1),
    sha256          TEXT NOT NULL )sql" PW_HEX64_CHECK("sha256") R"sql(,
    created_utc     TEXT NOT NULL )sql" PW_UTC_CHECK("created_utc") R"sql(,
    applied_utc     TEXT NOT NULL )sql" PW_UTC_CHECK("applied_utc") R"sql(,
    observations    INTEGER NOT NULL CHECK (observations >= 0),
    events          INTEGER NOT NULL CHECK (events >= 0),
    PRIMARY KEY (maker, device, seq)
) STRICT, WITHOUT ROWID;

CREATE TABLE sync_observation (
    origin          TEXT NOT NULL CHECK (origin <> ''),
    origin_id       INTEGER NOT NULL CHECK (origin_id >= 1),
    plot            INTEGER NOT NULL REFERENCES plot (id),
    trait           TEXT NOT NULL REFERENCES trait (name),
    value           TEXT NOT NULL,
    number          REAL,
    recorded_utc    TEXT NOT NULL )sql" PW_UTC_CHECK("recorded_utc") R"sql(,
    device          TEXT NOT NULL,
    observer        TEXT NOT NULL,
    supersedes      INTEGER CHECK (supersedes IS NULL OR supersedes < origin_id),
    note            TEXT NOT NULL,
    CHECK (supersedes IS NULL OR note <> ''),
    CHECK (value <> '' OR (supersedes IS NOT NULL AND number IS NULL)),
    PRIMARY KEY (origin, origin_id)
) STRICT;

CREATE TABLE sync_plot_event (
    origin          TEXT NOT NULL CHECK (origin <> ''),
    origin_id       INTEGER NOT NULL CHECK (origin_id >= 1),
    plot            INTEGER NOT NULL REFERENCES plot (id),
    state           TEXT NOT NULL CHECK (state IN ('normal', 'damaged', 'missing')),
    reason          TEXT NOT NULL,
    recorded_utc    TEXT NOT NULL )sql" PW_UTC_CHECK("recorded_utc") R"sql(,
    device          TEXT NOT NULL,
    observer        TEXT NOT NULL,
    flag            TEXT NOT NULL,
    PRIMARY KEY (origin, origin_id)
) STRICT;

CREATE TABLE observation_origin (
    origin          TEXT NOT NULL,
    origin_id       INTEGER NOT NULL,
    observation     INTEGER NOT NULL REFERENCES observation (id),
    PRIMARY KEY (origin, origin_id)
) STRICT, WITHOUT ROWID;

CREATE TABLE plot_event_origin (
    event           INTEGER PRIMARY KEY REFERENCES plot_event (id),
    origin          TEXT NOT NULL,
    origin_id       INTEGER NOT NULL,
    UNIQUE (origin, origin_id),
    FOREIGN KEY (origin, origin_id) REFERENCES sync_plot_event (origin, origin_id)
) STRICT;

CREATE TABLE observation_resolves (
    resolution      INTEGER NOT NULL REFERENCES observation (id),
    resolved        INTEGER NOT NULL REFERENCES observation (id),
    PRIMARY KEY (resolution, resolved),
    CHECK (resolved < resolution)
) STRICT, WITHOUT ROWID;
CREATE INDEX observation_resolves_by_resolved ON observation_resolves (resolved);

-- A resolution supersedes observations of its own plot and trait only.
CREATE TRIGGER observation_resolves_same_plot_trait
BEFORE INSERT ON observation_resolves
WHEN NOT EXISTS (
    SELECT 1 FROM observation AS r JOIN observation AS o ON o.plot = r.plot AND o.trait = r.trait
    WHERE r.id = NEW.resolution AND o.id = NEW.resolved)
BEGIN
    SELECT RAISE(ABORT, 'a resolution must supersede observations of its own plot and trait');
END;

CREATE TABLE audit_log (
    id              INTEGER PRIMARY KEY CHECK (id >= 1),
    recorded_utc    TEXT NOT NULL )sql" PW_UTC_CHECK("recorded_utc") R"sql(,
    action          TEXT NOT NULL CHECK (action IN ('provision', 'import', 'export', 'resolve', 'correct')),
    detail          TEXT NOT NULL CHECK (json_valid(detail) AND json_type(detail) = 'object'),
    prev_sha256     TEXT NOT NULL )sql" PW_HEX64_CHECK("prev_sha256") R"sql(,
    sha256          TEXT NOT NULL )sql" PW_HEX64_CHECK("sha256") R"sql(
) STRICT;

)sql" PW_APPEND_ONLY("sync_identity", "the device identity is fixed once provisioned")
      PW_APPEND_ONLY("sync_device", "provisioned devices are append-only")
      PW_APPEND_ONLY("sync_bundle", "sync bundle records are append-only")
      PW_APPEND_ONLY("sync_observation", "synced observations are append-only")
      PW_APPEND_ONLY("sync_plot_event", "synced plot events are append-only")
      PW_APPEND_ONLY("observation_origin", "observation origins are append-only")
      PW_APPEND_ONLY("plot_event_origin", "plot event origins are append-only")
      PW_APPEND_ONLY("observation_resolves", "resolutions are append-only")
      PW_APPEND_ONLY("audit_log", "audit log entries are append-only") R"sql(
-- Current observations: those no later row supersedes, and no resolution supersedes.
DROP VIEW current_observation;
CREATE VIEW current_observation AS
SELECT o.* FROM observation AS o
WHERE NOT EXISTS (SELECT 1 FROM observation AS c WHERE c.supersedes = o.id)
  AND NOT EXISTS (SELECT 1 FROM observation_resolves AS r WHERE r.resolved = o.id);

-- Plots and traits in conflict: more than one distinct value in force (withdrawals and plots flagged as
-- missing left out, as for the values in force of Store::current_observations).
CREATE VIEW observation_conflict AS
SELECT o.plot AS plot, o.trait AS trait, count(*) AS observations, count(DISTINCT o.value) AS distinct_values
FROM current_observation AS o
WHERE o.value <> ''
  AND NOT EXISTS (SELECT 1 FROM plot_event AS e WHERE e.plot = o.plot AND e.state = 'missing')
GROUP BY o.plot, o.trait
HAVING count(DISTINCT o.value) > 1;
)sql";

#undef PW_UTC_CHECK
#undef PW_HEX64_CHECK
#undef PW_DEVICE_CHECK
#undef PW_APPEND_ONLY

// Migration 6: traits added to a running trial at the station (`plotwright trait add`; docs/station.md,
// docs/sync.md). The spec text stays as given; each added trait is a row of trait_addition (its [[traits]]
// table as TOML, who, when, its place after the spec's traits) and a row of trait, which observations
// reference. A trait row inserted once the trial has plots must have its trait_addition row (same name and
// place). trait_addition crosses to the handhelds in the station's bundles (a changeset of INSERTs keyed by
// the name), so its columns are part of the bundle format. The audit log is rebuilt with the action
// 'trait' allowed: a CHECK cannot be altered in place, so the entries are copied unchanged (same ids, text
// and hashes, so the chain holds) into the new table, and the old one is dropped (DROP TABLE fires no
// DELETE trigger; https://www.sqlite.org/lang_droptable.html) - the procedure of
// https://www.sqlite.org/lang_altertable.html#otheralter.
#define PW_UTC_CHECK(col)                                                                        \
    "CHECK (" col " GLOB '[0-9][0-9][0-9][0-9]-[0-9][0-9]-[0-9][0-9]T[0-9][0-9]:[0-9][0-9]:[0-9][0-9]*Z'" \
    " AND julianday(" col ") IS NOT NULL)"
#define PW_HEX64_CHECK(col) "CHECK (length(" col ") = 64 AND " col " NOT GLOB '*[^0-9a-f]*')"
#define PW_APPEND_ONLY(table, what)                                                                       \
    "CREATE TRIGGER " table "_no_update BEFORE UPDATE ON " table                                           \
    " BEGIN SELECT RAISE(ABORT, '" what "'); END;\n"                                                          \
    "CREATE TRIGGER " table "_no_delete BEFORE DELETE ON " table                                           \
    " BEGIN SELECT RAISE(ABORT, '" what "'); END;\n"

constexpr const char* kMigration6 = R"sql(
CREATE TABLE trait_addition (
    name            TEXT PRIMARY KEY CHECK (name GLOB '[a-z]*' AND name NOT GLOB '*[^a-z0-9_]*'),
    position        INTEGER NOT NULL UNIQUE CHECK (position >= 1),
    definition      TEXT NOT NULL CHECK (definition <> ''),
    added_utc       TEXT NOT NULL )sql" PW_UTC_CHECK("added_utc") R"sql(,
    added_by        TEXT NOT NULL CHECK (added_by <> '')
) STRICT;

-- Once the trial has plots, a new trait row is an added trait: its trait_addition row comes first.
CREATE TRIGGER trait_added_with_its_row
BEFORE INSERT ON trait
WHEN EXISTS (SELECT 1 FROM plot) AND NOT EXISTS (
    SELECT 1 FROM trait_addition AS a WHERE a.name = NEW.name AND a.position = NEW.position)
BEGIN
    SELECT RAISE(ABORT, 'a trait is added to a running trial with its trait_addition row (plotwright trait add)');
END;

CREATE TABLE audit_log_6 (
    id              INTEGER PRIMARY KEY CHECK (id >= 1),
    recorded_utc    TEXT NOT NULL )sql" PW_UTC_CHECK("recorded_utc") R"sql(,
    action          TEXT NOT NULL CHECK (action IN ('provision', 'import', 'export', 'resolve', 'correct', 'trait')),
    detail          TEXT NOT NULL CHECK (json_valid(detail) AND json_type(detail) = 'object'),
    prev_sha256     TEXT NOT NULL )sql" PW_HEX64_CHECK("prev_sha256") R"sql(,
    sha256          TEXT NOT NULL )sql" PW_HEX64_CHECK("sha256") R"sql(
) STRICT;
INSERT INTO audit_log_6 (id, recorded_utc, action, detail, prev_sha256, sha256)
    SELECT id, recorded_utc, action, detail, prev_sha256, sha256 FROM audit_log ORDER BY id;
DROP TABLE audit_log;
ALTER TABLE audit_log_6 RENAME TO audit_log;

)sql" PW_APPEND_ONLY("trait_addition", "added traits are append-only")
      PW_APPEND_ONLY("audit_log", "audit log entries are append-only");

#undef PW_UTC_CHECK
#undef PW_HEX64_CHECK
#undef PW_APPEND_ONLY

// Migration 7: the view observation_conflict gives the same rows, found faster. A plot and trait with one
// observation cannot hold two values, so the view now looks only at plots and traits with more than one
// (a covering scan of the index observation_by_plot_trait) before it checks what is current and in force.
// It was reading every observation of the station three times over for every `sync import`
// (docs/benchmarks.md, "Station sync"). DDL only: no row changes.
constexpr const char* kMigration7 = R"sql(
DROP VIEW observation_conflict;
CREATE VIEW observation_conflict AS
SELECT o.plot AS plot, o.trait AS trait, count(*) AS observations, count(DISTINCT o.value) AS distinct_values
FROM current_observation AS o
WHERE o.value <> ''
  AND (o.plot, o.trait) IN (SELECT plot, trait FROM observation GROUP BY plot, trait HAVING count(*) > 1)
  AND NOT EXISTS (SELECT 1 FROM plot_event AS e WHERE e.plot = o.plot AND e.state = 'missing')
GROUP BY o.plot, o.trait
HAVING count(DISTINCT o.value) > 1;
)sql";

constexpr Migration kMigrations[] = {
    {1, kMigration1},
    {2, kMigration2},
    {3, kMigration3},
    {4, kMigration4},
    {5, kMigration5},
    {6, kMigration6},
    {7, kMigration7},
};

}  // namespace

const Migration* migrations(int* count) {
    *count = static_cast<int>(std::size(kMigrations));
    return kMigrations;
}

int latest_version() { return kMigrations[std::size(kMigrations) - 1].version; }

void apply(sqlite3* db, const Migration& m) {
    const std::string doing = "applying schema migration " + std::to_string(m.version);
    sql::exec(db, m.sql, doing);
    // PRAGMA arguments cannot be bound; the version is a constant of this program, not an input value.
    const std::string set_version = "PRAGMA user_version = " + std::to_string(m.version);
    sql::exec(db, set_version.c_str(), doing);
}

const char* stored_kind(TraitKind k) {
    switch (k) {
        case TraitKind::Number: return "number";
        case TraitKind::Count: return "count";
        case TraitKind::Score: return "score";
        case TraitKind::Date: return "date";
        case TraitKind::Text: return "text";
    }
    return "number";
}

}  // namespace pw::schema
