"""Opening firing logs written with older schema versions (their tables built by hand)."""

import json
import sqlite3

import pytest

from glowtemp.firinglog.logbook import Logbook, LogbookError
from glowtemp.firinglog.logbook_schema import CURRENT_VERSION

# The version-1 tables as the first release created them, frozen here on purpose: if the
# migration code's copy drifts, this test still builds the old layout.
VERSION_1_SQL = """
CREATE TABLE schema_version (version INTEGER PRIMARY KEY, applied_at TEXT NOT NULL);
INSERT INTO schema_version VALUES (1, '2024-01-01T00:00:00+00:00');
CREATE TABLE firings (
    id INTEGER PRIMARY KEY, name TEXT NOT NULL, kiln TEXT, kind TEXT NOT NULL, target_c REAL,
    target_cone TEXT, started_at TEXT NOT NULL, notes TEXT, status TEXT NOT NULL DEFAULT 'open',
    closed_at TEXT, created_at TEXT NOT NULL
);
CREATE TABLE readings (
    id INTEGER PRIMARY KEY, firing_id INTEGER REFERENCES firings(id), photo_key TEXT NOT NULL,
    photo_name TEXT NOT NULL, taken_at TEXT NOT NULL, result_json TEXT NOT NULL, reference_c REAL,
    cone TEXT, cone_state TEXT, note TEXT, created_at TEXT NOT NULL
);
"""


def test_version_1_log_opens_with_its_estimates_filled_in(tmp_path):
    key = "ab" * 32 + ".jpg"
    (tmp_path / "photos").mkdir()
    (tmp_path / "photos" / key).write_bytes(b"old photo")
    result = {
        "status": "ok", "temperature_c": 1180, "interval_68_c": [1160, 1200], "interval_95_c": [1140, 1220],
        "upper_bound_c": None, "region": {"kind": "rectangle", "text": "1,2,3,4"}, "profile": None,
    }  # fmt: skip
    database = sqlite3.connect(tmp_path / "glowtemp.sqlite3")
    database.executescript(VERSION_1_SQL)
    database.execute(
        "INSERT INTO firings VALUES (1, 'Old glaze', NULL, 'glaze', 1222, '6', "
        "'2024-01-02T08:00:00+00:00', NULL, 'closed', '2024-01-02T20:00:00+00:00', '2024-01-02T08:00:00+00:00')"
    )
    database.execute(
        "INSERT INTO readings VALUES (1, 1, ?, 'spy.jpg', '2024-01-02T15:00:00+00:00', ?, 1175, '6', 'bent', "
        "'cone 6 over', '2024-01-02T15:00:05+00:00')",
        (key, json.dumps(result)),
    )
    database.commit()
    database.close()

    with Logbook(tmp_path) as log:
        firing = log.get_firing(1)
        assert (firing["name"], firing["status"], firing["reading_count"]) == ("Old glaze", "closed", 1)
        (reading,) = log.readings_in(1)
        assert reading["result"] == result
        assert reading["temperature_c"] == 1180
        assert reading["interval_68_c"] == [1160, 1200] and reading["interval_95_c"] == [1140, 1220]
        assert reading["region_text"] == "1,2,3,4" and reading["status"] == "ok"
        assert (reading["reference_c"], reading["cone"], reading["cone_state"]) == (1175, "6", "bent")
        new_id = log.create_firing(name="After the upgrade")
        assert new_id == 2

    database = sqlite3.connect(tmp_path / "glowtemp.sqlite3")
    versions = [row[0] for row in database.execute("SELECT version FROM schema_version ORDER BY version")]
    columns = database.execute(
        "SELECT status, temperature_c, band68_low_c, band68_high_c, band95_low_c, band95_high_c, region_text "
        "FROM readings WHERE id = 1"
    ).fetchone()
    database.close()
    assert columns == ("ok", 1180, 1160, 1200, 1140, 1220, "1,2,3,4")  # filled in from the version-1 JSON
    assert versions == list(range(1, CURRENT_VERSION + 1))


# Version 3 as it was released, frozen here for the same reason: firings and readings with
# plain INTEGER PRIMARY KEY ids, which SQLite may hand out again (sqlite.org/autoinc.html).
VERSION_3_SQL = """
CREATE TABLE schema_version (version INTEGER PRIMARY KEY, applied_at TEXT NOT NULL);
INSERT INTO schema_version VALUES (1, '2024-01-01T00:00:00+00:00'), (2, '2024-02-01T00:00:00+00:00'),
    (3, '2024-03-01T00:00:00+00:00');
CREATE TABLE firings (
    id INTEGER PRIMARY KEY, name TEXT NOT NULL, kiln TEXT, kind TEXT NOT NULL, target_c REAL,
    target_cone TEXT, started_at TEXT NOT NULL, notes TEXT, status TEXT NOT NULL DEFAULT 'open',
    closed_at TEXT, created_at TEXT NOT NULL
);
CREATE TABLE readings (
    id INTEGER PRIMARY KEY, firing_id INTEGER REFERENCES firings(id), photo_key TEXT NOT NULL,
    photo_name TEXT NOT NULL, taken_at TEXT NOT NULL, result_json TEXT NOT NULL, reference_c REAL,
    cone TEXT, cone_state TEXT, note TEXT, created_at TEXT NOT NULL, status TEXT, temperature_c REAL,
    band68_low_c REAL, band68_high_c REAL, band95_low_c REAL, band95_high_c REAL, upper_bound_c REAL,
    region_text TEXT, profile TEXT
);
CREATE INDEX readings_by_firing ON readings (firing_id, taken_at);
CREATE INDEX readings_by_photo ON readings (photo_key);
CREATE TABLE sessions (id INTEGER PRIMARY KEY, secret_sha256 TEXT NOT NULL UNIQUE, paired_at TEXT NOT NULL,
    paired_from TEXT);
"""


def version_3_log(folder):
    """A version-3 log with firings 1 and 2, firing 2 holding readings 1 and 2."""
    key = "cd" * 32 + ".jpg"
    (folder / "photos").mkdir()
    (folder / "photos" / key).write_bytes(b"old photo")
    result = {"status": "ok", "temperature_c": 1000, "interval_68_c": [990, 1010], "interval_95_c": [980, 1020],
              "upper_bound_c": None, "region": {"kind": "rectangle", "text": "1,2,3,4"}, "profile": None}  # fmt: skip
    database = sqlite3.connect(folder / "glowtemp.sqlite3")
    database.executescript(VERSION_3_SQL)
    for firing_id in (1, 2):
        database.execute(
            "INSERT INTO firings (id, name, kind, started_at, status, created_at) "
            "VALUES (?, ?, 'glaze', '2024-03-02T08:00:00+00:00', 'open', '2024-03-02T08:00:00+00:00')",
            (firing_id, f"Firing {firing_id}"),
        )
    for reading_id in (1, 2):
        database.execute(
            "INSERT INTO readings (id, firing_id, photo_key, photo_name, taken_at, result_json, created_at, status, "
            "temperature_c) VALUES (?, 2, ?, 'spy.jpg', ?, ?, '2024-03-02T09:00:00+00:00', 'ok', 1000)",
            (reading_id, key, f"2024-03-02T{8 + reading_id:02d}:00:00+00:00", json.dumps(result)),
        )
    database.commit()
    database.close()
    return key


def test_version_4_keeps_every_row_and_never_hands_out_an_id_again(tmp_path):
    key = version_3_log(tmp_path)
    with Logbook(tmp_path) as log:
        assert [f["name"] for f in log.list_firings()] == ["Firing 2", "Firing 1"]
        assert [r["id"] for r in log.readings_in(2)] == [1, 2]
        assert log.get_reading(2)["temperature_c"] == 1000 and log.get_reading(2)["photo_key"] == key
        # The newest firing and the newest reading deleted: plain row ids would be given out again
        # (sqlite.org/autoinc.html), so an old bookmark of /firings/3 would open another firing.
        third = log.create_firing(name="Deleted soon")
        assert third == 3
        log.delete_reading(2)
        log.delete_firing(third)
        assert log.create_firing(name="After the deletion") == 4
        new_reading = log.add_reading(photo_key=log.store_photo(b"new photo", ".jpg"), photo_name="n.jpg",
                                      result={"status": "ok"}, taken_at="2024-03-02T12:00:00+00:00", firing_id=2)  # fmt: skip
        assert new_reading == 3

    database = sqlite3.connect(tmp_path / "glowtemp.sqlite3")
    versions = [row[0] for row in database.execute("SELECT version FROM schema_version ORDER BY version")]
    indexes = {row[1]: row[2] for row in database.execute("PRAGMA index_list(readings)")}
    references = database.execute("PRAGMA foreign_key_list(readings)").fetchall()
    database.close()
    assert versions[:4] == [1, 2, 3, 4]
    assert indexes["readings_by_upload"] == 1  # unique: one reading per upload id
    assert {"readings_by_firing", "readings_by_photo"} <= set(indexes)
    assert [(r[2], r[3], r[4]) for r in references] == [("firings", "firing_id", "id")]


def test_a_reading_pointing_at_a_missing_firing_stops_the_migration_unchanged(tmp_path):
    version_3_log(tmp_path)
    database = sqlite3.connect(tmp_path / "glowtemp.sqlite3")
    database.execute("UPDATE readings SET firing_id = 99 WHERE id = 1")  # written with foreign keys off
    database.commit()
    database.close()
    with pytest.raises(LogbookError, match="schema version 4 would leave 1 rows pointing at missing rows"):
        Logbook(tmp_path)
    database = sqlite3.connect(tmp_path / "glowtemp.sqlite3")
    assert database.execute("SELECT MAX(version) FROM schema_version").fetchone() == (3,)
    assert database.execute("SELECT COUNT(*) FROM readings").fetchone() == (2,)
    database.close()


# Version 4 as it was released, frozen here too: firings without a scene, readings without a
# magnet value.
VERSION_4_SQL = """
CREATE TABLE schema_version (version INTEGER PRIMARY KEY, applied_at TEXT NOT NULL);
INSERT INTO schema_version VALUES (1, '2024-01-01T00:00:00+00:00'), (2, '2024-02-01T00:00:00+00:00'),
    (3, '2024-03-01T00:00:00+00:00'), (4, '2024-04-01T00:00:00+00:00');
CREATE TABLE firings (
    id INTEGER PRIMARY KEY AUTOINCREMENT, name TEXT NOT NULL, kiln TEXT, kind TEXT NOT NULL, target_c REAL,
    target_cone TEXT, started_at TEXT NOT NULL, notes TEXT, status TEXT NOT NULL DEFAULT 'open',
    closed_at TEXT, created_at TEXT NOT NULL
);
CREATE TABLE readings (
    id INTEGER PRIMARY KEY AUTOINCREMENT, firing_id INTEGER REFERENCES firings(id), photo_key TEXT NOT NULL,
    photo_name TEXT NOT NULL, taken_at TEXT NOT NULL, result_json TEXT NOT NULL, reference_c REAL,
    cone TEXT, cone_state TEXT, note TEXT, created_at TEXT NOT NULL, status TEXT, temperature_c REAL,
    band68_low_c REAL, band68_high_c REAL, band95_low_c REAL, band95_high_c REAL, upper_bound_c REAL,
    region_text TEXT, profile TEXT, upload_id TEXT
);
CREATE INDEX readings_by_firing ON readings (firing_id, taken_at);
CREATE INDEX readings_by_photo ON readings (photo_key);
CREATE UNIQUE INDEX readings_by_upload ON readings (upload_id);
CREATE TABLE sessions (id INTEGER PRIMARY KEY, secret_sha256 TEXT NOT NULL UNIQUE, paired_at TEXT NOT NULL,
    paired_from TEXT);
"""
KINDS_AND_SCENES = [("bisque", "kiln"), ("glaze", "kiln"), ("glass", "kiln"), ("forging", "steel"),
                    ("heat treatment", "steel"), ("other", "other")]  # fmt: skip


def test_version_5_gives_each_firing_the_scene_of_its_kind_and_keeps_every_row(tmp_path):
    key = "ef" * 32 + ".jpg"
    (tmp_path / "photos").mkdir()
    (tmp_path / "photos" / key).write_bytes(b"old photo")
    result = {"status": "ok", "temperature_c": 800, "interval_68_c": [790, 810], "interval_95_c": [780, 820],
              "upper_bound_c": None, "region": {"kind": "rectangle", "text": "1,2,3,4"}, "profile": None}  # fmt: skip
    database = sqlite3.connect(tmp_path / "glowtemp.sqlite3")
    database.executescript(VERSION_4_SQL)
    for number, (kind, _) in enumerate(KINDS_AND_SCENES, start=1):
        database.execute(
            "INSERT INTO firings (id, name, kind, started_at, status, created_at) "
            "VALUES (?, ?, ?, '2024-04-02T08:00:00+00:00', 'open', '2024-04-02T08:00:00+00:00')",
            (number, f"Old {kind}", kind),
        )
        database.execute(
            "INSERT INTO readings (id, firing_id, photo_key, photo_name, taken_at, result_json, reference_c, cone, "
            "cone_state, note, created_at, status, temperature_c, upload_id) VALUES (?, ?, ?, 'spy.jpg', "
            "'2024-04-02T09:00:00+00:00', ?, 812.5, '014', 'bent', 'kept', '2024-04-02T09:00:05+00:00', 'ok', 800, ?)",
            (number, number, key, json.dumps(result), f"upload-id-number-{number:04d}"),
        )
    database.commit()
    database.close()

    with Logbook(tmp_path) as log:
        for number, (kind, scene) in enumerate(KINDS_AND_SCENES, start=1):
            firing = log.get_firing(number)
            assert (firing["name"], firing["kind"], firing["scene"], firing["reading_count"]) == (f"Old {kind}", kind, scene, 1)
            (reading,) = log.readings_in(number)
            assert reading["result"] == result and reading["magnet"] is None
            assert (reading["reference_c"], reading["cone"], reading["cone_state"], reading["note"]) == (812.5, "014", "bent", "kept")
            assert reading["upload_id"] == f"upload-id-number-{number:04d}"
        # New firings: the kind's scene unless one is chosen, and a chosen one is kept when the kind changes.
        assert log.get_firing(log.create_firing(name="New forging", kind="forging"))["scene"] == "steel"
        chosen = log.create_firing(name="Enamel on steel", kind="glaze", scene="steel")
        assert log.update_firing(chosen, kind="other")["scene"] == "steel"
        assert log.create_firing(name="After") == len(KINDS_AND_SCENES) + 3  # ids still never reused

    database = sqlite3.connect(tmp_path / "glowtemp.sqlite3")
    versions = [row[0] for row in database.execute("SELECT version FROM schema_version ORDER BY version")]
    database.close()
    assert versions == [1, 2, 3, 4, 5] == list(range(1, CURRENT_VERSION + 1))
