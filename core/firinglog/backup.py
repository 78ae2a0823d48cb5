"""A consistent copy of the data folder, made while the server may be writing to it.

The database is copied with SQLite's online backup API, which gives a snapshot of one moment
even while others write (it restarts when another connection writes mid-copy). Photos never
change once stored (their names are their SHA-256), so they are copied as files: first every
photo present, then the snapshot, then any photo the snapshot names that arrived meanwhile.
Rows are removed before their photos (:mod:`glowtemp.firinglog.logbook`), so a photo the snapshot names
can be gone only if its reading was deleted after the snapshot: then the copy starts again.

The destination becomes a data folder of its own (``glowtemp serve --data DEST`` opens it):
``glowtemp.sqlite3`` as one self-contained file (rollback journal, not WAL) that is written
beside and renamed into place, ``photos/`` with exactly the photos the snapshot names (each
read back and checked against its name), and the camera profiles and ``cones.csv``. Paired
devices are not copied: a restored server pairs its devices anew. Running it again on the
same destination copies only what changed.

References
----------
- SQLite, "Online Backup API" (sqlite3_backup_init/step/finish), used through Python's
  ``sqlite3.Connection.backup``; "PRAGMA quick_check".
"""

from __future__ import annotations

import os
import shutil
import sqlite3
from dataclasses import dataclass
from pathlib import Path

from .logbook import BUSY_TIMEOUT_S, DATABASE_NAME, PHOTOS_FOLDER, Logbook
from .photo_store import TEMPORARY_PREFIX, PhotoStore, photo_key, sync_folder

ATTEMPTS = 3
COPIED_FILES = ("cones.csv",)
COPIED_FOLDERS = ("profiles",)


class BackupError(ValueError):
    """A backup that could not be made, in plain words; the destination keeps its last good copy."""


@dataclass(frozen=True)
class BackupSummary:
    firings: int
    readings: int
    photos: int
    photos_copied: int
    destination: Path


def _copy_photo(source: PhotoStore, target: PhotoStore, key: str) -> bool:
    """Copy one photo unless the target has it; False if the source no longer has it."""
    if target.exists(key) and target.path(key).stat().st_size == source.path(key).stat().st_size:
        return True
    try:
        data = source.path(key).read_bytes()
    except FileNotFoundError:
        return False
    suffix = "." + key.rsplit(".", 1)[1]
    if photo_key(data, suffix) != key:
        raise BackupError(f"The stored photo {key} is damaged (its content no longer matches its name).")
    target.put(data, suffix)
    return True


def _snapshot(database: Path, partial: Path) -> tuple[list[str], int, int]:
    """Copy the database to ``partial`` as one self-contained file; returns the photo keys it
    names and its numbers of firings and readings."""
    partial.unlink(missing_ok=True)
    source = sqlite3.connect(database, timeout=BUSY_TIMEOUT_S)
    copy = sqlite3.connect(partial, isolation_level=None)
    try:
        source.backup(copy)
        copy.execute("DELETE FROM sessions")
        copy.execute("PRAGMA journal_mode = DELETE")
        if copy.execute("PRAGMA quick_check").fetchone()[0] != "ok":
            raise BackupError(f"The copy of {database} does not pass SQLite's quick_check.")
        keys = [row[0] for row in copy.execute("SELECT DISTINCT photo_key FROM readings")]
        counts = [copy.execute(f"SELECT COUNT(*) FROM {table}").fetchone()[0] for table in ("firings", "readings")]
        return keys, *counts
    finally:
        copy.close()
        source.close()


def _replace_database(partial: Path, final: Path) -> None:
    with open(partial, "rb+") as handle:
        os.fsync(handle.fileno())
    for leftover in (final.with_name(final.name + "-wal"), final.with_name(final.name + "-shm")):
        leftover.unlink(missing_ok=True)  # an old log's journal must never meet the new file
    os.replace(partial, final)
    sync_folder(final.parent)


def _copy_settings(source_dir: Path, dest_dir: Path) -> None:
    """The camera profiles and the cone table, each file written whole and renamed into place."""
    for name in COPIED_FILES:
        if (source_dir / name).is_file():
            _copy_file(source_dir / name, dest_dir / name)
    for folder in COPIED_FOLDERS:
        for path in sorted((source_dir / folder).glob("*.json")) if (source_dir / folder).is_dir() else []:
            (dest_dir / folder).mkdir(exist_ok=True)
            _copy_file(path, dest_dir / folder / path.name)


def _copy_file(source: Path, target: Path) -> None:
    partial = target.with_name(f"{TEMPORARY_PREFIX}{os.getpid()}-{target.name}")
    shutil.copyfile(source, partial)
    with open(partial, "rb+") as handle:
        os.fsync(handle.fileno())
    os.replace(partial, target)


def backup(data_dir: Path, dest_dir: Path) -> BackupSummary:
    """Write a consistent copy of the data folder ``data_dir`` into ``dest_dir`` (see the module notes)."""
    data_dir, dest_dir = Path(data_dir), Path(dest_dir)
    if dest_dir.resolve() == data_dir.resolve():
        raise BackupError("The backup must go to another folder than the data folder itself.")
    if not (data_dir / DATABASE_NAME).is_file():
        raise BackupError(f"There is no firing log in {data_dir} to back up.")
    with Logbook(data_dir) as log:  # brings the schema up to date and checks it first
        log.check_database()
        source = log.photos
    dest_dir.mkdir(parents=True, exist_ok=True)
    target = PhotoStore(dest_dir / PHOTOS_FOLDER)
    partial = dest_dir / f"{TEMPORARY_PREFIX}{os.getpid()}-{DATABASE_NAME}"
    copied_before = set(target.keys())
    try:
        for _ in range(ATTEMPTS):
            for key in source.keys():
                _copy_photo(source, target, key)
            named, firings, readings = _snapshot(data_dir / DATABASE_NAME, partial)
            if all(_copy_photo(source, target, key) for key in named):
                break
        else:
            raise BackupError(f"Photos kept being deleted while copying; try the backup again ({ATTEMPTS} attempts).")
        _replace_database(partial, dest_dir / DATABASE_NAME)
    finally:
        for path in (partial, partial.with_name(partial.name + "-wal"), partial.with_name(partial.name + "-shm")):
            path.unlink(missing_ok=True)
    for key in set(target.keys()) - set(named):
        target.remove(key)  # photos the copied log no longer names (deleted since the last backup)
    _copy_settings(data_dir, dest_dir)
    return BackupSummary(firings, readings, len(set(named)), len(set(named) - copied_before), dest_dir)
