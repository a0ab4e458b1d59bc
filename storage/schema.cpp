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

constexpr Migration kMigrations[] = {
    {1, kMigration1},
    {2, kMigration2},
    {3, kMigration3},
    {4, kMigration4},
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

}  // namespace pw::schema
