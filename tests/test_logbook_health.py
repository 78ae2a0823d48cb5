"""The firing log's start-up checks: a damaged database, missing photos, photos no reading names."""

from __future__ import annotations

import os
import sqlite3
import subprocess
import sys
import time
from datetime import datetime, timezone

import pytest

from glowtemp.firinglog.logbook import ORPHAN_GRACE_S, Logbook, LogbookError

PAGE_BYTES = 4096  # SQLite's default page size (sqlite.org/fileformat2.html, section 1.3.2)


def filled_log(folder, readings=300) -> None:
    with Logbook(folder) as log:
        firing_id = log.create_firing(name="Glaze")
        for n in range(readings):
            key = log.store_photo(f"photo {n}".encode(), ".jpg")
            log.add_reading(photo_key=key, photo_name=f"{n}.jpg", result={"status": "ok", "temperature_c": 900 + n},
                            taken_at=datetime(2024, 3, 1, tzinfo=timezone.utc), firing_id=firing_id, note="x" * 200)  # fmt: skip


def damage_a_page(database, page_number: int) -> None:
    """Overwrite one database page (not the header page) with bytes no b-tree page can hold."""
    with sqlite3.connect(database) as db:
        db.execute("PRAGMA wal_checkpoint(TRUNCATE)")  # every page in the main file
    with open(database, "r+b") as handle:
        handle.seek(page_number * PAGE_BYTES)
        handle.write(b"\x0d\xff\xff\x00" + b"\xa5" * (PAGE_BYTES - 4))


def test_a_healthy_log_passes_its_check(tmp_path):
    filled_log(tmp_path, readings=5)
    with Logbook(tmp_path) as log:
        log.check_database()
        assert log.missing_photos() == []


def test_a_damaged_database_is_named_with_what_to_do(tmp_path):
    filled_log(tmp_path)
    damage_a_page(tmp_path / "glowtemp.sqlite3", page_number=5)
    with pytest.raises(LogbookError) as damaged:
        with Logbook(tmp_path) as log:
            log.check_database()
    message = str(damaged.value)
    assert "damaged" in message and "glowtemp backup" in message and "keep a copy" in message


def test_serve_refuses_a_damaged_log_in_plain_words(tmp_path):
    filled_log(tmp_path)
    damage_a_page(tmp_path / "glowtemp.sqlite3", page_number=5)
    command = [sys.executable, "-m", "glowtemp.shell.cli", "serve", "--port", "0", "--data", str(tmp_path)]
    finished = subprocess.run(command, capture_output=True, text=True, timeout=60)
    assert finished.returncode == 1
    assert "damaged" in finished.stderr and "Traceback" not in finished.stderr + finished.stdout


def test_serve_refuses_a_file_that_is_not_a_database(tmp_path):
    (tmp_path / "glowtemp.sqlite3").write_bytes(b"these are holiday photos, not a database" * 100)
    command = [sys.executable, "-m", "glowtemp.shell.cli", "serve", "--port", "0", "--data", str(tmp_path)]
    finished = subprocess.run(command, capture_output=True, text=True, timeout=60)
    assert finished.returncode == 1
    assert "Cannot open the firing log" in finished.stderr and "Traceback" not in finished.stderr


def test_missing_photos_are_found(tmp_path):
    filled_log(tmp_path, readings=3)
    with Logbook(tmp_path) as log:
        gone = log.readings_in(1)[1]["photo_key"]
        log.photo_path(gone).unlink()
        assert log.missing_photos() == [gone]


def test_only_old_photos_that_no_reading_names_are_swept(tmp_path):
    filled_log(tmp_path, readings=2)
    with Logbook(tmp_path) as log:
        named = {r["photo_key"] for r in log.readings_in(1)}
        old_orphan, young_orphan = log.store_photo(b"left by a kill", ".jpg"), log.store_photo(b"an import's", ".png")
        long_ago = time.time() - ORPHAN_GRACE_S - 60
        for key in [old_orphan, *named]:
            os.utime(log.photo_path(key), (long_ago, long_ago))
        assert log.forget_orphan_photos() == 1
        assert set(log.photos.keys()) == named | {young_orphan}
        # Stored again (the same bytes, say by a new upload), an old orphan counts as new.
        os.utime(log.photo_path(young_orphan), (long_ago, long_ago))
        assert log.store_photo(b"an import's", ".png") == young_orphan
        assert log.forget_orphan_photos() == 0
