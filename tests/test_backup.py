"""`glowtemp backup`: a consistent copy of the data folder, also while another process writes."""

from __future__ import annotations

import hashlib
import sqlite3
import subprocess
import sys
import time
from datetime import datetime, timezone

import pytest

from glowtemp.firinglog.backup import BackupError, backup
from glowtemp.shell.cli import main
from glowtemp.firinglog.logbook import Logbook
from glowtemp.firinglog.photo_store import photo_key
from glowtemp.firinglog.sessions import SessionStore

WRITER = r"""
import os, sys
from datetime import datetime, timezone
from pathlib import Path
from glowtemp.firinglog.logbook import Logbook
log = Logbook(Path(sys.argv[1]))
firing_id = log.create_firing(name="Busy")
print("ready", flush=True)
n = 0
while n < 5000:
    n += 1
    key = log.store_photo(os.urandom(64 * 1024), ".jpg")
    reading = log.add_reading(photo_key=key, photo_name=f"{n}.jpg", result={"status": "ok", "temperature_c": n},
                              taken_at=datetime.now(timezone.utc), firing_id=firing_id)
    if n % 3 == 0:
        log.delete_reading(reading)  # deletions too: rows first, then the photo
"""


def add_readings(log, firing_id, count, start=0):
    for n in range(start, start + count):
        key = log.store_photo(f"photo {n}".encode() * 100, ".jpg")
        log.add_reading(photo_key=key, photo_name=f"{n}.jpg", result={"status": "ok", "temperature_c": 800 + n},
                        taken_at=datetime(2024, 3, 1, 9, n % 60, tzinfo=timezone.utc), firing_id=firing_id)  # fmt: skip


def assert_consistent(folder, orphans_allowed=False) -> int:
    """Every reading's photo is there and whole (its SHA-256 is its name), and (unless a writer was
    killed between storing a photo and its row) every photo belongs to a reading; returns the count."""
    with Logbook(folder) as log:
        log.check_database()
        keys = [row[0] for row in sqlite3.connect(log.database_path).execute("SELECT photo_key FROM readings")]
        for key in keys:
            data = log.photo_path(key).read_bytes()
            assert photo_key(data, "." + key.rsplit(".", 1)[1]) == key  # FIPS 180-4 digest of the content
        assert set(log.photos.keys()) >= set(keys)
        assert orphans_allowed or set(log.photos.keys()) == set(keys)
        return len(keys)


def test_backup_copies_firings_readings_photos_and_profiles(tmp_path):
    source, dest = tmp_path / "data", tmp_path / "copy"
    with Logbook(source) as log:
        firing_id = log.create_firing(name="Cone 6 glaze", target_cone="6", notes="shelf test")
        add_readings(log, firing_id, 4)
        with SessionStore(log.database_path) as sessions:
            sessions.pair("192.168.1.50")
        originals = {k: log.photo_path(k).read_bytes() for k in log.photos.keys()}
        readings = log.readings_in(firing_id)
    (source / "profiles").mkdir()
    (source / "profiles" / "kiln_phone.json").write_text('{"name": "kiln phone"}')
    (source / "cones.csv").write_text("cone,temperature_c\n6,1222\n")

    summary = backup(source, dest)
    assert (summary.firings, summary.readings, summary.photos, summary.photos_copied) == (1, 4, 4, 4)
    # One self-contained file: SQLite's rollback-journal mode, not WAL (sqlite.org/pragma.html#pragma_journal_mode).
    assert sqlite3.connect(dest / "glowtemp.sqlite3").execute("PRAGMA journal_mode").fetchone()[0] == "delete"
    assert not (dest / "glowtemp.sqlite3-wal").exists()
    assert assert_consistent(dest) == 4
    with Logbook(dest) as copy:
        assert copy.readings_in(firing_id) == readings
        assert {k: copy.photo_path(k).read_bytes() for k in copy.photos.keys()} == originals
        with SessionStore(copy.database_path) as sessions:
            assert sessions.paired_devices() == []  # a restored server pairs its devices anew
    assert (dest / "profiles" / "kiln_phone.json").read_text() == '{"name": "kiln phone"}'
    assert (dest / "cones.csv").read_text().endswith("6,1222\n")


def test_a_second_backup_copies_only_what_changed(tmp_path):
    source, dest = tmp_path / "data", tmp_path / "copy"
    with Logbook(source) as log:
        firing_id = log.create_firing(name="Bisque")
        add_readings(log, firing_id, 3)
    backup(source, dest)
    with Logbook(source) as log:
        add_readings(log, firing_id, 2, start=3)
        log.delete_reading(log.readings_in(firing_id)[0]["id"])
    summary = backup(source, dest)
    assert (summary.readings, summary.photos, summary.photos_copied) == (4, 4, 2)
    assert assert_consistent(dest) == 4  # the deleted reading's photo is gone from the copy too


def test_backup_while_another_process_writes_is_consistent(tmp_path):
    source, dest = tmp_path / "data", tmp_path / "copy"
    Logbook(source).close()
    writer = subprocess.Popen([sys.executable, "-c", WRITER, str(source)], stdout=subprocess.PIPE)
    try:
        assert writer.stdout.readline().strip() == b"ready"
        time.sleep(0.3)
        counts = []
        for _ in range(3):  # several copies, each taken mid-write
            backup(source, dest)
            counts.append(assert_consistent(dest))
            time.sleep(0.1)
    finally:
        writer.kill()
        writer.wait()
    assert counts[0] > 0 and counts == sorted(counts)  # the writer only got further
    assert counts[-1] <= assert_consistent(source, orphans_allowed=True)  # the writer was killed mid-way


def test_backup_refuses_its_own_folder_and_an_empty_one(tmp_path):
    Logbook(tmp_path / "data").close()
    with pytest.raises(BackupError, match="another folder"):
        backup(tmp_path / "data", tmp_path / "data")
    with pytest.raises(BackupError, match="no firing log"):
        backup(tmp_path / "nothing", tmp_path / "copy")


def test_a_damaged_photo_stops_the_backup_and_keeps_the_last_copy(tmp_path):
    source, dest = tmp_path / "data", tmp_path / "copy"
    with Logbook(source) as log:
        add_readings(log, log.create_firing(name="Glass"), 2)
    backup(source, dest)
    before = (dest / "glowtemp.sqlite3").read_bytes()
    with Logbook(source) as log:
        add_readings(log, 1, 1, start=2)
        newest = log.readings_in(1)[-1]["photo_key"]
        log.photo_path(newest).write_bytes(b"bit rot")
    with pytest.raises(BackupError, match="damaged"):
        backup(source, dest)
    assert (dest / "glowtemp.sqlite3").read_bytes() == before
    assert assert_consistent(dest) == 2


def test_backup_command(tmp_path, capsys):
    with Logbook(tmp_path / "data") as log:
        add_readings(log, log.create_firing(name="Forge"), 2)
    assert main(["backup", str(tmp_path / "copy"), "--data", str(tmp_path / "data")]) == 0
    assert "backed up 1 firings, 2 readings and 2 photos" in capsys.readouterr().out
    assert main(["backup", str(tmp_path / "copy"), "--data", str(tmp_path / "missing")]) == 2
    assert "no firing log" in capsys.readouterr().err
    digest = hashlib.sha256((tmp_path / "copy" / "glowtemp.sqlite3").read_bytes()).hexdigest()
    assert len(digest) == 64
