"""The firing log's SQLite schema and its forward migrations.

Each migration moves the database from version ``n - 1`` to ``n`` inside one transaction,
together with the row that records version ``n`` in ``schema_version``. A database made by a
newer glowtemp (a version this code does not know) is refused rather than guessed at.

Version 1 kept each reading's result as JSON only. Version 2 adds columns for the estimate
and its bands (what the firing curve and queries read), filled in from the stored JSON, and
indexes for a firing's readings and for photo references. Version 3 adds the devices paired
with the web server (:mod:`glowtemp.firinglog.sessions`), by a digest of their session secret.
Version 4 makes firing and reading ids never reused (``AUTOINCREMENT``), so an old bookmark
of a deleted firing cannot open a newer one, and gives readings the client-made upload id
that a retried upload is recognised by (one reading per upload id, a unique index).
Version 5 gives each firing its scene kind (what is photographed: kiln, steel or other, the
brightness channel's emissivity prior), filled in for existing firings from their kind of work,
and readings a magnet value beside the thermocouple and the cone (``'let go'``: plain carbon
steel stopped attracting a magnet).

Migrations run with foreign-key enforcement off, as SQLite's procedure for rebuilding a table
asks (sqlite.org/lang_altertable.html, section 7), and each is checked with
``PRAGMA foreign_key_check`` before it commits.
"""

from __future__ import annotations

import json
import sqlite3

from .logbook_fields import utc_now

VERSION_TABLE = """
CREATE TABLE IF NOT EXISTS schema_version (
    version INTEGER PRIMARY KEY,
    applied_at TEXT NOT NULL
)
"""

VERSION_1 = """
CREATE TABLE firings (
    id INTEGER PRIMARY KEY,
    name TEXT NOT NULL,
    kiln TEXT,
    kind TEXT NOT NULL,
    target_c REAL,
    target_cone TEXT,
    started_at TEXT NOT NULL,
    notes TEXT,
    status TEXT NOT NULL DEFAULT 'open',
    closed_at TEXT,
    created_at TEXT NOT NULL
);
CREATE TABLE readings (
    id INTEGER PRIMARY KEY,
    firing_id INTEGER REFERENCES firings(id),
    photo_key TEXT NOT NULL,
    photo_name TEXT NOT NULL,
    taken_at TEXT NOT NULL,
    result_json TEXT NOT NULL,
    reference_c REAL,
    cone TEXT,
    cone_state TEXT,
    note TEXT,
    created_at TEXT NOT NULL
);
"""

VERSION_2 = """
ALTER TABLE readings ADD COLUMN status TEXT;
ALTER TABLE readings ADD COLUMN temperature_c REAL;
ALTER TABLE readings ADD COLUMN band68_low_c REAL;
ALTER TABLE readings ADD COLUMN band68_high_c REAL;
ALTER TABLE readings ADD COLUMN band95_low_c REAL;
ALTER TABLE readings ADD COLUMN band95_high_c REAL;
ALTER TABLE readings ADD COLUMN upper_bound_c REAL;
ALTER TABLE readings ADD COLUMN region_text TEXT;
ALTER TABLE readings ADD COLUMN profile TEXT;
CREATE INDEX readings_by_firing ON readings (firing_id, taken_at);
CREATE INDEX readings_by_photo ON readings (photo_key);
"""

VERSION_3 = """
CREATE TABLE sessions (
    id INTEGER PRIMARY KEY,
    secret_sha256 TEXT NOT NULL UNIQUE,
    paired_at TEXT NOT NULL,
    paired_from TEXT
);
"""

# Rebuilt with AUTOINCREMENT (sqlite.org/autoinc.html): SQLite then never hands out an id again,
# not even that of the newest row after it is deleted. The columns are those of version 3,
# spelled out so that this step does not change when later versions add columns.
VERSION_4_FIRING_COLUMNS = (
    "id, name, kiln, kind, target_c, target_cone, started_at, notes, status, closed_at, created_at"
)
VERSION_4_READING_COLUMNS = (
    "id, firing_id, photo_key, photo_name, taken_at, result_json, reference_c, cone, cone_state, note, "
    "created_at, status, temperature_c, band68_low_c, band68_high_c, band95_low_c, band95_high_c, "
    "upper_bound_c, region_text, profile"
)
VERSION_4 = f"""
CREATE TABLE firings_v4 (
    id INTEGER PRIMARY KEY AUTOINCREMENT,
    name TEXT NOT NULL,
    kiln TEXT,
    kind TEXT NOT NULL,
    target_c REAL,
    target_cone TEXT,
    started_at TEXT NOT NULL,
    notes TEXT,
    status TEXT NOT NULL DEFAULT 'open',
    closed_at TEXT,
    created_at TEXT NOT NULL
);
INSERT INTO firings_v4 ({VERSION_4_FIRING_COLUMNS}) SELECT {VERSION_4_FIRING_COLUMNS} FROM firings;
CREATE TABLE readings_v4 (
    id INTEGER PRIMARY KEY AUTOINCREMENT,
    firing_id INTEGER REFERENCES firings(id),
    photo_key TEXT NOT NULL,
    photo_name TEXT NOT NULL,
    taken_at TEXT NOT NULL,
    result_json TEXT NOT NULL,
    reference_c REAL,
    cone TEXT,
    cone_state TEXT,
    note TEXT,
    created_at TEXT NOT NULL,
    status TEXT,
    temperature_c REAL,
    band68_low_c REAL,
    band68_high_c REAL,
    band95_low_c REAL,
    band95_high_c REAL,
    upper_bound_c REAL,
    region_text TEXT,
    profile TEXT,
    upload_id TEXT
);
INSERT INTO readings_v4 ({VERSION_4_READING_COLUMNS}) SELECT {VERSION_4_READING_COLUMNS} FROM readings;
DROP TABLE readings;
DROP TABLE firings;
ALTER TABLE firings_v4 RENAME TO firings;
ALTER TABLE readings_v4 RENAME TO readings;
CREATE INDEX readings_by_firing ON readings (firing_id, taken_at);
CREATE INDEX readings_by_photo ON readings (photo_key);
CREATE UNIQUE INDEX readings_by_upload ON readings (upload_id);
"""

# The kinds of work and their scenes, spelled out as they were when version 5 was released (not
# taken from logbook_fields, so this step does not change if the defaults for new firings do).
VERSION_5 = """
ALTER TABLE firings ADD COLUMN scene TEXT NOT NULL DEFAULT 'other';
UPDATE firings SET scene = CASE kind
    WHEN 'bisque' THEN 'kiln' WHEN 'glaze' THEN 'kiln' WHEN 'glass' THEN 'kiln'
    WHEN 'forging' THEN 'steel' WHEN 'heat treatment' THEN 'steel'
    ELSE 'other' END;
ALTER TABLE readings ADD COLUMN magnet TEXT;
"""

RESULT_COLUMNS = (
    "status",
    "temperature_c",
    "band68_low_c",
    "band68_high_c",
    "band95_low_c",
    "band95_high_c",
    "upper_bound_c",
    "region_text",
    "profile",
)


def result_columns(result: dict) -> dict:
    """The queryable columns of a reading's result (the JSON of ``Reading.to_dict()``)."""
    from ..estimation.reading import band_columns

    region = result.get("region") or {}
    return {
        "status": result.get("status"),
        **band_columns(result),
        "region_text": region.get("text") if isinstance(region, dict) else None,
        "profile": result.get("profile"),
    }


def _fill_result_columns(connection: sqlite3.Connection) -> None:
    rows = connection.execute("SELECT id, result_json FROM readings").fetchall()
    assignments = ", ".join(f"{name} = ?" for name in RESULT_COLUMNS)
    for reading_id, text in rows:
        columns = result_columns(json.loads(text))
        connection.execute(
            f"UPDATE readings SET {assignments} WHERE id = ?",
            [columns[name] for name in RESULT_COLUMNS] + [reading_id],
        )


def _run_script(sql: str):
    def migrate(connection: sqlite3.Connection) -> None:
        for statement in sql.split(";"):
            if statement.strip():
                connection.execute(statement)

    return migrate


def _version_2(connection: sqlite3.Connection) -> None:
    _run_script(VERSION_2)(connection)
    _fill_result_columns(connection)


MIGRATIONS = {
    1: _run_script(VERSION_1), 2: _version_2, 3: _run_script(VERSION_3), 4: _run_script(VERSION_4),
    5: _run_script(VERSION_5),
}  # fmt: skip
CURRENT_VERSION = max(MIGRATIONS)


class SchemaError(ValueError):
    """A database this version of glowtemp cannot open, in plain words."""


def schema_version(connection: sqlite3.Connection) -> int:
    """The version recorded in the database; 0 for a new, empty one."""
    connection.execute(VERSION_TABLE)
    (version,) = connection.execute("SELECT COALESCE(MAX(version), 0) FROM schema_version").fetchone()
    return version


def migrate(connection: sqlite3.Connection) -> int:
    """Bring the database up to :data:`CURRENT_VERSION`; returns the version it was at.

    ``connection`` must be in autocommit mode (``isolation_level=None``): each step runs in
    its own ``BEGIN IMMEDIATE`` transaction, so a killed process leaves a whole version.
    Foreign keys are not enforced while the steps run (a table rebuild needs that) and are
    checked before each step commits; their setting is put back afterwards.
    """
    (enforced,) = connection.execute("PRAGMA foreign_keys").fetchone()
    connection.execute("PRAGMA foreign_keys = OFF")
    try:
        return _migrate_steps(connection)
    finally:
        connection.execute(f"PRAGMA foreign_keys = {'ON' if enforced else 'OFF'}")


def _migrate_steps(connection: sqlite3.Connection) -> int:
    first = None
    while True:
        connection.execute("BEGIN IMMEDIATE")
        try:
            found = schema_version(connection)
            first = found if first is None else first
            if found > CURRENT_VERSION:
                raise SchemaError(
                    f"This firing log was written by a newer glowtemp (schema version {found}; "
                    f"this program knows up to {CURRENT_VERSION}). Update glowtemp to open it."
                )
            if found == CURRENT_VERSION:
                connection.execute("COMMIT")
                return first
            MIGRATIONS[found + 1](connection)
            broken = connection.execute("PRAGMA foreign_key_check").fetchall()
            if broken:
                raise SchemaError(
                    f"Moving the firing log to schema version {found + 1} would leave {len(broken)} rows "
                    f"pointing at missing rows (first in table {broken[0][0]}); nothing was changed."
                )
            connection.execute(
                "INSERT INTO schema_version (version, applied_at) VALUES (?, ?)",
                (found + 1, utc_now()),
            )
        except BaseException:
            connection.execute("ROLLBACK")
            raise
        connection.execute("COMMIT")
