"""Opening a firing log written with schema version 1 (the first release's tables, by hand)."""

import json
import sqlite3

from glowtemp.logbook import Logbook
from glowtemp.logbook_schema import CURRENT_VERSION

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
