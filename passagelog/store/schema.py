"""The logbook's schema and its numbered migrations.

``PRAGMA user_version`` holds the schema version of a logbook file. :data:`MIGRATIONS` maps
each version to the SQL that takes a logbook from the version before it to that version;
opening an older logbook applies the missing steps in order, in one transaction, in place.
A released step is never edited: a change to the schema is a new step (version N + 1) that
alters the tables and, where needed, rewrites derived data. The tests keep a frozen copy of
every released version's SQL and upgrade a logbook made with each.

Append-only tables (fixes, log entries, plan revisions with their waypoints and schedules,
plan assignments, imports) carry triggers that refuse UPDATE and DELETE. ``chain_head`` is
updated by the logbook at every append and refuses DELETE. ``fix_block`` is a derived cache
of the fix columns as packed arrays (fast loading); it is rewritten freely and checked against
the fix records by ``verify``. ``derived_result`` (version 2) keeps results computed from a
voyage's records (the review shown by the terminal UI) with the content stamp of the records
they were computed from; it is rewritten freely, never trusted when the stamp differs, and
emptied by ``verify --rebuild-cache``.
"""

from __future__ import annotations

#: The SQL of schema version 1.
V1 = r"""
CREATE TABLE craft (
    craft_id INTEGER PRIMARY KEY,
    name TEXT NOT NULL UNIQUE CHECK (length(trim(name)) > 0),
    kind TEXT NOT NULL CHECK (kind IN ('ship', 'aircraft')),
    usual_speed_kn REAL CHECK (usual_speed_kn >= 0),
    max_speed_kn REAL CHECK (max_speed_kn >= 0),
    created_utc TEXT NOT NULL
);

CREATE TABLE plan (
    plan_id INTEGER PRIMARY KEY,
    name TEXT NOT NULL UNIQUE CHECK (length(trim(name)) > 0),
    created_utc TEXT NOT NULL
);

CREATE TABLE voyage (
    voyage_id INTEGER PRIMARY KEY,
    name TEXT NOT NULL UNIQUE CHECK (length(trim(name)) > 0),
    craft_id INTEGER REFERENCES craft (craft_id),
    from_place TEXT NOT NULL,
    to_place TEXT NOT NULL,
    departure_utc TEXT,
    zd_minutes INTEGER NOT NULL CHECK (zd_minutes BETWEEN -840 AND 720),
    created_utc TEXT NOT NULL
);

-- one plan revision: the route's own fields; waypoints and schedule in the tables below
CREATE TABLE plan_revision (
    revision_id INTEGER PRIMARY KEY,
    plan_id INTEGER NOT NULL REFERENCES plan (plan_id),
    revision INTEGER NOT NULL CHECK (revision >= 1),
    route_name TEXT NOT NULL,
    note TEXT NOT NULL,
    extras_json TEXT NOT NULL,
    recorded_utc TEXT NOT NULL,
    prev_hash BLOB NOT NULL,
    hash BLOB NOT NULL,
    UNIQUE (plan_id, revision)
);

-- waypoint idx of a revision, with the leg that ends at it (no leg on idx 0, as in RTZ)
CREATE TABLE plan_point (
    revision_id INTEGER NOT NULL REFERENCES plan_revision (revision_id),
    idx INTEGER NOT NULL CHECK (idx >= 0),
    name TEXT NOT NULL,
    lat REAL NOT NULL CHECK (lat BETWEEN -90 AND 90),
    lon REAL NOT NULL CHECK (lon >= -180 AND lon < 180),
    arrival_radius_m REAL CHECK (arrival_radius_m >= 0),
    rtz_id INTEGER,
    wp_revision INTEGER,
    wp_extras_json TEXT NOT NULL,
    sailing TEXT CHECK (sailing IN ('great-circle', 'rhumb')),
    speed_kn REAL CHECK (speed_kn >= 0),
    xtl_port_m REAL CHECK (xtl_port_m >= 0),
    xtl_stbd_m REAL CHECK (xtl_stbd_m >= 0),
    turn_radius_m REAL CHECK (turn_radius_m >= 0),
    leg_notes TEXT,
    speed_min_kn REAL CHECK (speed_min_kn >= 0),
    speed_max_kn REAL CHECK (speed_max_kn >= 0),
    leg_extras_json TEXT,
    PRIMARY KEY (revision_id, idx),
    CHECK ((idx = 0) = (sailing IS NULL))
);

CREATE TABLE plan_schedule (
    revision_id INTEGER NOT NULL REFERENCES plan_revision (revision_id),
    idx INTEGER NOT NULL CHECK (idx >= 0),
    waypoint_index INTEGER NOT NULL CHECK (waypoint_index >= 0),
    eta_utc TEXT,
    etd_utc TEXT,
    kind TEXT NOT NULL CHECK (kind IN ('manual', 'calculated')),
    schedule_name TEXT NOT NULL,
    PRIMARY KEY (revision_id, idx)
);

-- which plan revision is in force on a voyage from when (NULL: from the start)
CREATE TABLE plan_assignment (
    assignment_id INTEGER PRIMARY KEY,
    voyage_id INTEGER NOT NULL REFERENCES voyage (voyage_id),
    plan_id INTEGER NOT NULL,
    revision INTEGER NOT NULL,
    from_utc TEXT,
    recorded_utc TEXT NOT NULL,
    prev_hash BLOB NOT NULL,
    hash BLOB NOT NULL,
    FOREIGN KEY (plan_id, revision) REFERENCES plan_revision (plan_id, revision)
);

CREATE TABLE fix (
    fix_id INTEGER PRIMARY KEY,
    voyage_id INTEGER NOT NULL REFERENCES voyage (voyage_id),
    time_utc TEXT NOT NULL,
    time_s REAL NOT NULL,
    lat REAL NOT NULL CHECK (lat BETWEEN -90 AND 90),
    lon REAL NOT NULL CHECK (lon >= -180 AND lon < 180),
    method TEXT NOT NULL
        CHECK (method IN ('gnss', 'radar', 'visual', 'celestial', 'dr', 'ep', 'other')),
    hdop REAL CHECK (hdop >= 0),
    satellites INTEGER CHECK (satellites >= 0),
    fix_mode TEXT,
    cog REAL CHECK (cog >= 0 AND cog < 360),
    sog_kn REAL CHECK (sog_kn >= 0),
    heading REAL CHECK (heading >= 0 AND heading < 360),
    stw_kn REAL CHECK (stw_kn >= 0),
    remarks TEXT NOT NULL,
    source TEXT,
    supersedes INTEGER REFERENCES fix (fix_id),
    reason TEXT,
    recorded_utc TEXT NOT NULL,
    suspect INTEGER NOT NULL CHECK (suspect IN (0, 1)),
    implied_speed_kn REAL CHECK (implied_speed_kn >= 0),
    prev_hash BLOB NOT NULL,
    hash BLOB NOT NULL,
    CHECK ((supersedes IS NULL) = (reason IS NULL)),
    CHECK (supersedes IS NULL OR supersedes < fix_id)
);
CREATE INDEX fix_voyage_time ON fix (voyage_id, time_s);
CREATE UNIQUE INDEX fix_supersedes ON fix (supersedes) WHERE supersedes IS NOT NULL;

CREATE TABLE entry (
    entry_id INTEGER PRIMARY KEY,
    voyage_id INTEGER NOT NULL REFERENCES voyage (voyage_id),
    time_utc TEXT NOT NULL,
    time_s REAL NOT NULL,
    kind TEXT NOT NULL CHECK (kind IN ('departure', 'arrival', 'clock-change',
                                       'course-alteration', 'event', 'remark')),
    text TEXT NOT NULL,
    zd_minutes INTEGER CHECK (zd_minutes BETWEEN -840 AND 720),
    lat REAL CHECK (lat BETWEEN -90 AND 90),
    lon REAL CHECK (lon >= -180 AND lon < 180),
    supersedes INTEGER REFERENCES entry (entry_id),
    reason TEXT,
    recorded_utc TEXT NOT NULL,
    prev_hash BLOB NOT NULL,
    hash BLOB NOT NULL,
    CHECK ((supersedes IS NULL) = (reason IS NULL)),
    CHECK (supersedes IS NULL OR supersedes < entry_id),
    CHECK ((lat IS NULL) = (lon IS NULL)),
    CHECK (kind <> 'clock-change' OR zd_minutes IS NOT NULL)
);
CREATE INDEX entry_voyage_time ON entry (voyage_id, time_s);
CREATE UNIQUE INDEX entry_supersedes ON entry (supersedes) WHERE supersedes IS NOT NULL;

-- files already imported (idempotent imports), by the SHA-256 of their bytes
CREATE TABLE import_record (
    import_id INTEGER PRIMARY KEY,
    sha256 TEXT NOT NULL UNIQUE CHECK (length(sha256) = 64),
    source_name TEXT NOT NULL,
    kind TEXT NOT NULL,
    counts_json TEXT NOT NULL,
    recorded_utc TEXT NOT NULL,
    prev_hash BLOB NOT NULL,
    hash BLOB NOT NULL
);

-- the last record id and hash of each chain
CREATE TABLE chain_head (
    chain TEXT PRIMARY KEY,
    last_id INTEGER NOT NULL CHECK (last_id >= 0),
    last_hash BLOB NOT NULL
);
INSERT INTO chain_head (chain, last_id, last_hash) VALUES
    ('plan_revision', 0, zeroblob(32)),
    ('plan_assignment', 0, zeroblob(32)),
    ('fix', 0, zeroblob(32)),
    ('entry', 0, zeroblob(32)),
    ('import_record', 0, zeroblob(32));

-- derived cache of fix columns as packed little-endian arrays (see store.logbook.BLOCK_DTYPE)
CREATE TABLE fix_block (
    block_id INTEGER PRIMARY KEY,
    voyage_id INTEGER NOT NULL REFERENCES voyage (voyage_id),
    n INTEGER NOT NULL CHECK (n > 0),
    last_fix_id INTEGER NOT NULL,
    data BLOB NOT NULL
);
CREATE INDEX fix_block_voyage ON fix_block (voyage_id, block_id);

CREATE TRIGGER chain_head_no_delete BEFORE DELETE ON chain_head
BEGIN SELECT RAISE(ABORT, 'chain_head rows cannot be deleted'); END;
""" + "".join(
    f"""
CREATE TRIGGER {table}_no_update BEFORE UPDATE ON {table}
BEGIN SELECT RAISE(ABORT, '{table} records are append-only: UPDATE refused; record a correction instead'); END;
CREATE TRIGGER {table}_no_delete BEFORE DELETE ON {table}
BEGIN SELECT RAISE(ABORT, '{table} records are append-only: DELETE refused; record a correction instead'); END;
"""
    for table in ("fix", "entry", "plan_revision", "plan_point", "plan_schedule",
                  "plan_assignment", "import_record")
)

#: Tables whose rows may only be appended (each has a ``_no_update`` and a ``_no_delete``
#: trigger).
APPEND_ONLY_TABLES = ("fix", "entry", "plan_revision", "plan_point", "plan_schedule",
                      "plan_assignment", "import_record")

#: The SQL of schema version 2: derived results kept with the stamp of their inputs.
V2 = r"""
CREATE TABLE derived_result (
    voyage_id INTEGER NOT NULL REFERENCES voyage (voyage_id),
    kind TEXT NOT NULL CHECK (length(kind) > 0),
    stamp TEXT NOT NULL,
    written_utc TEXT NOT NULL,
    data BLOB NOT NULL,
    PRIMARY KEY (voyage_id, kind)
);
"""

#: version -> SQL taking a logbook from ``version - 1`` to ``version``.
MIGRATIONS: dict[int, str] = {
    1: V1,
    2: V2,
}

#: The schema version this release writes.
SCHEMA_VERSION = max(MIGRATIONS)
