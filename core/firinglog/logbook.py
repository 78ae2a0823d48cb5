"""The firing log: firings, their readings with photos and trusted values, in the data folder.

``data_dir/glowtemp.sqlite3`` is an SQLite database in write-ahead-log mode with full
synchronous commits; ``data_dir/photos/`` holds the photos by content
(:mod:`glowtemp.firinglog.photo_store`). A photo is complete on disk before the row that names it is
committed, and rows are removed before the photos they alone referred to, so a process
killed at any point leaves no row pointing at a missing photo.

One connection serves all threads of a process (the web server answers from several),
guarded by a lock; other processes wait up to :data:`BUSY_TIMEOUT_S` for a write lock.
"""

from __future__ import annotations

import json
import sqlite3
import threading
from contextlib import contextmanager
from pathlib import Path

from . import logbook_fields as fields
from ..estimation.cones import ConeError, cone_table
from .logbook_fields import LogbookError
from .logbook_schema import RESULT_COLUMNS, SchemaError, migrate, result_columns
from .photo_store import PhotoStore, PhotoStoreError
from .result_schema import ResultError, check_result
from .storage import translated

__all__ = ["Logbook", "LogbookError", "UploadConflict"]

DATABASE_NAME = "glowtemp.sqlite3"
PHOTOS_FOLDER = "photos"
BUSY_TIMEOUT_S = 10.0
ORPHAN_GRACE_S = 3600.0  # a photo no row names is swept only when older than this

TRUSTED_FIELDS = ("reference_c", "cone", "cone_state", "magnet", "note", "taken_at", "firing_id")
FIRING_FIELDS = ("name", "kiln", "kind", "scene", "target_c", "target_cone", "started_at", "notes", "status")


class UploadConflict(LogbookError):
    """An upload id that already names a reading of another photo or another firing."""


def _firing_values(known_cones, **given) -> dict:
    """Check the editable fields of a firing; only those given are returned."""
    checks = {
        "name": lambda v: fields.text(v, "firing name", required=True),
        "kiln": lambda v: fields.text(v, "kiln or forge name"),
        "kind": lambda v: fields.choice(v, fields.FIRING_KINDS, "kind of firing"),
        "scene": fields.scene,
        "target_c": lambda v: fields.temperature_c(v, "target temperature"),
        "target_cone": lambda v: fields.cone(v, known_cones, "target cone"),
        "started_at": lambda v: fields.time_text(v, "start time"),
        "notes": lambda v: fields.text(v, "notes", longest=fields.LONGEST_NOTE),
        "status": lambda v: fields.choice(v, fields.FIRING_STATUSES, "status"),
    }
    unknown = sorted(set(given) - set(checks))
    if unknown:
        raise LogbookError(f"A firing has no field {', '.join(unknown)}.")
    return {name: checks[name](value) for name, value in given.items()}


class Logbook:
    """The firing log in ``data_dir`` (created if missing)."""

    def __init__(self, data_dir: Path):
        self.data_dir = Path(data_dir)
        self.data_dir.mkdir(parents=True, exist_ok=True)
        self.photos = PhotoStore(self.data_dir / PHOTOS_FOLDER)
        self.database_path = self.data_dir / DATABASE_NAME
        self._lock = threading.RLock()
        self._db = sqlite3.connect(
            self.database_path,
            timeout=BUSY_TIMEOUT_S,
            isolation_level=None,
            check_same_thread=False,
        )
        self._db.row_factory = sqlite3.Row
        try:
            self._db.execute("PRAGMA journal_mode = WAL")
            self._db.execute("PRAGMA synchronous = FULL")
            self._db.execute("PRAGMA foreign_keys = ON")
            migrate(self._db)
        except (SchemaError, sqlite3.DatabaseError) as error:
            self._db.close()
            raise LogbookError(f"Cannot open the firing log in {self.data_dir}: {error}") from error

    def close(self) -> None:
        with self._lock:
            self._db.close()

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()

    @contextmanager
    def _write(self):
        """One write transaction; a full disk or read-only folder raises :class:`StorageError`."""
        with self._lock, translated(self.data_dir):
            self._db.execute("BEGIN IMMEDIATE")
            try:
                yield self._db
            except BaseException:
                if self._db.in_transaction:  # SQLite may have rolled back already (SQLITE_FULL)
                    self._db.execute("ROLLBACK")
                raise
            self._db.execute("COMMIT")

    def _read(self, sql: str, parameters=()) -> list[sqlite3.Row]:
        with self._lock:
            return self._db.execute(sql, parameters).fetchall()

    # Photos

    def store_photo(self, data: bytes, suffix: str) -> str:
        """Store a photo's bytes completely; returns its key (SHA-256 hex + ``suffix``)."""
        try:
            with translated(self.data_dir):
                return self.photos.put(data, suffix)
        except PhotoStoreError as error:
            raise LogbookError(str(error)) from None

    def store_photo_stream(self, stream, key: str) -> str:
        """Store a photo read in chunks from ``stream`` under ``key`` (its SHA-256 must match)."""
        try:
            with translated(self.data_dir):
                return self.photos.put_stream(stream, key)
        except PhotoStoreError as error:
            raise LogbookError(str(error)) from None

    def photo_path(self, key: str) -> Path:
        """Where the photo with ``key`` is kept; refuses anything but a stored photo's name."""
        try:
            return self.photos.path(key)
        except PhotoStoreError as error:
            raise LogbookError(str(error)) from None

    def forget_unused_photos(self, keys) -> None:
        """Remove photo files that no row refers to any more (after the rows are gone)."""
        with self._lock:
            for key in set(keys):
                if not self._read("SELECT 1 FROM readings WHERE photo_key = ? LIMIT 1", (key,)):
                    self.photos.remove(key)

    # Health, checked when the server starts

    def check_database(self) -> None:
        """Run SQLite's ``PRAGMA quick_check``; a damaged database raises :class:`LogbookError`."""
        try:
            problems = [row[0] for row in self._read("PRAGMA quick_check")]
        except sqlite3.DatabaseError as error:
            problems = [str(error)]
        if problems != ["ok"]:
            shown = "; ".join(problems[:3]) + (f" (and {len(problems) - 3} more)" if len(problems) > 3 else "")
            raise LogbookError(
                f"The firing log database {self.database_path} is damaged ({shown}). Stop glowtemp, keep a "
                f"copy of the folder {self.data_dir} as it is, and restore the latest copy made with "
                "'glowtemp backup' (or run sqlite3's .recover on the copy)."
            )

    def missing_photos(self) -> list[str]:
        """Keys named by readings whose photo file is not in the store (should never happen)."""
        keys = [row[0] for row in self._read("SELECT DISTINCT photo_key FROM readings ORDER BY photo_key")]
        return [key for key in keys if not self.photos.exists(key)]

    def forget_orphan_photos(self, older_than_s: float = ORPHAN_GRACE_S) -> int:
        """Remove whole photos that no reading names, left by a writer killed between storing a
        photo and committing its row; returns how many. Only photos older than ``older_than_s``
        go, since another process (an import) may be about to commit rows for younger ones."""
        removed = 0
        with self._lock:
            named = {row[0] for row in self._read("SELECT DISTINCT photo_key FROM readings")}
            for key in self.photos.keys():
                if key not in named and self.photos.age_s(key) > older_than_s:
                    self.photos.remove(key)
                    removed += 1
        return removed

    # Firings

    def create_firing(
        self, *, name, kiln=None, kind="glaze", scene=None, target_c=None, target_cone=None, started_at=None,
        notes=None,
    ) -> int:  # fmt: skip
        """Start a new open firing; returns its id. Without ``scene`` it is the one its kind suggests."""
        values = _firing_values(
            self._known_cones(), name=name, kiln=kiln, kind=kind, target_c=target_c, target_cone=target_cone, notes=notes,
            scene=fields.scene_for_kind(kind) if scene in (None, "") else scene,
            started_at=fields.utc_now() if started_at is None else started_at,
        )  # fmt: skip
        values.update(status="open", created_at=fields.utc_now())
        with self._write() as db:
            return self._insert_firing(db, values)

    def _insert_firing(self, db, values: dict) -> int:
        names = ", ".join(values)
        marks = ", ".join("?" for _ in values)
        return db.execute(f"INSERT INTO firings ({names}) VALUES ({marks})", list(values.values())).lastrowid

    def get_firing(self, firing_id: int) -> dict | None:
        rows = self._read(
            "SELECT firings.*, (SELECT COUNT(*) FROM readings WHERE firing_id = firings.id) AS reading_count "
            "FROM firings WHERE id = ?",
            (firing_id,),
        )
        return dict(rows[0]) if rows else None

    def _need_firing(self, firing_id) -> dict:
        firing = self.get_firing(firing_id)
        if firing is None:
            raise LogbookError(f"There is no firing number {firing_id} in the log.")
        return firing

    def list_firings(self) -> list[dict]:
        """All firings, newest start first, each with its reading count."""
        rows = self._read(
            "SELECT firings.*, COUNT(readings.id) AS reading_count FROM firings "
            "LEFT JOIN readings ON readings.firing_id = firings.id "
            "GROUP BY firings.id ORDER BY firings.started_at DESC, firings.id DESC"
        )
        return [dict(row) for row in rows]

    def update_firing(self, firing_id: int, /, **changes) -> dict:
        """Change a firing's fields (name, kiln, kind, scene, target_c, target_cone, started_at, notes, status).

        A changed kind keeps the firing's scene: it was chosen (or defaulted) once, and changes
        only when ``scene`` is given.
        """
        values = _firing_values(self._known_cones(), **changes)
        with self._write() as db:
            current = self._need_firing(firing_id)
            if values.get("status", current["status"]) != current["status"]:
                values["closed_at"] = fields.utc_now() if values["status"] == "closed" else None
            if values:
                assignments = ", ".join(f"{name} = ?" for name in values)
                db.execute(f"UPDATE firings SET {assignments} WHERE id = ?", [*values.values(), firing_id])
        return self.get_firing(firing_id)

    def close_firing(self, firing_id: int) -> dict:
        return self.update_firing(firing_id, status="closed")

    def delete_firing(self, firing_id: int) -> None:
        """Remove a firing and its readings in one transaction, then photos nothing else uses."""
        with self._write() as db:
            self._need_firing(firing_id)
            keys = [row["photo_key"] for row in db.execute("SELECT photo_key FROM readings WHERE firing_id = ?", (firing_id,))]
            db.execute("DELETE FROM readings WHERE firing_id = ?", (firing_id,))
            db.execute("DELETE FROM firings WHERE id = ?", (firing_id,))
        self.forget_unused_photos(keys)

    # Readings

    def add_reading(
        self, *, photo_key, photo_name, result: dict, taken_at, firing_id=None,
        reference_c=None, cone=None, cone_state=None, magnet=None, note=None,
    ) -> int:  # fmt: skip
        """Record a measured photo (already stored with :meth:`store_photo`); returns the reading id."""
        reading_id, _ = self.add_uploaded_reading(
            None, photo_key=photo_key, photo_name=photo_name, result=result, taken_at=taken_at, firing_id=firing_id,
            reference_c=reference_c, cone=cone, cone_state=cone_state, magnet=magnet, note=note,
        )  # fmt: skip
        return reading_id

    def add_uploaded_reading(
        self, upload_id, *, photo_key, photo_name, result: dict, taken_at, firing_id=None,
        reference_c=None, cone=None, cone_state=None, magnet=None, note=None,
    ) -> tuple[int, bool]:  # fmt: skip
        """Record a measured photo once per ``upload_id``; returns (reading id, whether it is new).

        A reading that already carries ``upload_id`` (a retry whose first answer was lost) is
        returned as it is, found and inserted in one transaction, so two copies of one upload
        sent at once still make one row (the unique index on ``upload_id`` holds it across
        processes too). The same upload id with another photo or firing is refused with
        :class:`UploadConflict`. ``upload_id`` None records a new reading every time.
        """
        upload_id = fields.upload_id(upload_id)
        values = self._trusted_values(
            reference_c=reference_c, cone=cone, cone_state=cone_state, magnet=magnet, note=note, taken_at=taken_at
        )
        _check_cone_pair(values["cone"], values["cone_state"])
        values.update(
            photo_name=fields.text(photo_name, "photo name", required=True),
            result_json=self._result_json(result),
            created_at=fields.utc_now(),
            upload_id=upload_id,
            **result_columns(result),
        )
        with self._write() as db:
            values["photo_key"] = self._stored_key(photo_key)  # under the lock: see forget_unused_photos
            if upload_id is not None:
                stored = self.reading_for_upload(upload_id)
                if stored is not None:
                    check_same_upload(stored, photo_key, firing_id)
                    return stored["id"], False
            if firing_id is not None:
                self._need_firing(firing_id)
            values["firing_id"] = firing_id
            return self._insert_reading(db, values), True

    def reading_for_upload(self, upload_id: str) -> dict | None:
        """The reading recorded for a client-made upload id, if there is one."""
        rows = self._read("SELECT * FROM readings WHERE upload_id = ?", (fields.upload_id(upload_id),))
        return self._reading_dict(rows[0]) if rows else None

    def _insert_reading(self, db, values: dict) -> int:
        names = ", ".join(values)
        marks = ", ".join("?" for _ in values)
        return db.execute(f"INSERT INTO readings ({names}) VALUES ({marks})", list(values.values())).lastrowid

    def _stored_key(self, key) -> str:
        """``key`` if its photo is in the store. Checked with the lock held before a row names the
        photo, so a concurrent :meth:`forget_unused_photos` (which holds it too) cannot remove it."""
        if not self.photo_path(key).is_file():
            raise LogbookError(f"The photo {key} is not in the photo store; store it before recording a reading.")
        return key

    @staticmethod
    def _result_json(result) -> str:
        """The result as JSON text, once it has the declared shape (:mod:`glowtemp.firinglog.result_schema`)."""
        try:
            check_result(result)
        except ResultError as error:
            raise LogbookError(f"A reading's result cannot be stored: {error}.") from None
        try:
            return json.dumps(result, sort_keys=True, allow_nan=False)
        except (TypeError, ValueError) as error:
            raise LogbookError(f"A reading's result cannot be stored as JSON: {error}.") from None

    def _known_cones(self) -> set[str]:
        try:
            return set(cone_table(self.data_dir)[0])
        except ConeError as error:
            raise LogbookError(str(error)) from None

    def _trusted_values(self, **given) -> dict:
        known_cones = self._known_cones() if "cone" in given else set()
        checks = {
            "reference_c": lambda v: fields.temperature_c(v, "thermocouple reading"),
            "cone": lambda v: fields.cone(v, known_cones),
            "cone_state": lambda v: None if v in (None, "") else fields.choice(v, fields.CONE_STATES, "cone state"),
            "magnet": fields.magnet,
            "note": lambda v: fields.text(v, "note", longest=fields.LONGEST_NOTE),
            "taken_at": lambda v: fields.time_text(v, "time the photo was taken"),
            "firing_id": lambda v: v,
        }
        unknown = sorted(set(given) - set(checks))
        if unknown:
            raise LogbookError(f"A reading has no field {', '.join(unknown)} that can be edited.")
        return {name: checks[name](value) for name, value in given.items()}

    @staticmethod
    def _reading_dict(row: sqlite3.Row) -> dict:
        reading = {key: row[key] for key in row.keys() if key not in ("result_json", *RESULT_COLUMNS)}
        result = json.loads(row["result_json"])
        columns = result_columns(result)  # as the estimator wrote them (the columns hold floats)
        reading.update(
            result=result,
            interval_68_c=_band(columns.pop("band68_low_c"), columns.pop("band68_high_c")),
            interval_95_c=_band(columns.pop("band95_low_c"), columns.pop("band95_high_c")),
            **columns,
        )
        return reading

    def get_reading(self, reading_id: int) -> dict | None:
        """A reading with its result dict, photo key, region text and trusted values."""
        rows = self._read("SELECT * FROM readings WHERE id = ?", (reading_id,))
        return self._reading_dict(rows[0]) if rows else None

    def _need_reading(self, reading_id) -> dict:
        reading = self.get_reading(reading_id)
        if reading is None:
            raise LogbookError(f"There is no reading number {reading_id} in the log.")
        return reading

    def update_reading_result(self, reading_id: int, result: dict) -> dict:
        """Replace a reading's result (after measuring its photo again, e.g. with a new region)."""
        values = {"result_json": self._result_json(result), **result_columns(result)}
        return self._update_reading(reading_id, values)

    def update_reading(self, reading_id: int, /, **trusted_fields) -> dict:
        """Change trusted values: reference_c, cone, cone_state, magnet, note, taken_at (or firing_id)."""
        values = self._trusted_values(**trusted_fields)
        return self._update_reading(reading_id, values)

    def _update_reading(self, reading_id, values: dict) -> dict:
        with self._write() as db:
            reading = self._need_reading(reading_id)
            if values.get("firing_id") is not None:
                self._need_firing(values["firing_id"])
            _check_cone_pair(values.get("cone", reading["cone"]), values.get("cone_state", reading["cone_state"]))
            if values:
                assignments = ", ".join(f"{name} = ?" for name in values)
                db.execute(f"UPDATE readings SET {assignments} WHERE id = ?", [*values.values(), reading_id])
        return self.get_reading(reading_id)

    def delete_reading(self, reading_id: int) -> None:
        with self._write() as db:
            key = self._need_reading(reading_id)["photo_key"]
            db.execute("DELETE FROM readings WHERE id = ?", (reading_id,))
        self.forget_unused_photos([key])

    def readings_in(self, firing_id: int) -> list[dict]:
        """A firing's readings in the order they were taken."""
        self._need_firing(firing_id)
        rows = self._read("SELECT * FROM readings WHERE firing_id = ? ORDER BY taken_at, id", (firing_id,))
        return [self._reading_dict(row) for row in rows]

    # Restoring a whole firing (used by bundle import)

    def restore_firing(self, firing: dict, readings: list[dict]) -> int:
        """Insert a firing and its readings in one transaction, keeping their times; returns the new id.

        ``firing`` has the columns of :meth:`get_firing` (id and counts are ignored); each reading
        has those of :meth:`get_reading`. Every photo must already be in the store. A firing
        without a scene (written before firings had one) gets the one its kind suggests; a
        reading without a magnet value has none.
        """
        return self.insert_restored(self.check_restored(firing, readings))

    def check_restored(self, firing: dict, readings: list[dict]) -> tuple[dict, list[dict]]:
        """Every field of a firing and its readings checked, as rows for :meth:`insert_restored`;
        nothing is stored, and photos need not be in the store yet (their keys are checked)."""
        given = {name: firing.get(name) for name in FIRING_FIELDS}
        if given["scene"] is None:
            given["scene"] = fields.scene_for_kind(given["kind"])
        firing_values = _firing_values(self._known_cones(), **given)
        firing_values.update(
            closed_at=None if firing.get("closed_at") is None else fields.time_text(firing["closed_at"], "closing time"),
            created_at=fields.time_text(firing.get("created_at"), "creation time"),
        )
        rows = []
        for reading in readings:
            values = self._trusted_values(**{name: reading.get(name) for name in TRUSTED_FIELDS if name != "firing_id"})
            _check_cone_pair(values["cone"], values["cone_state"])
            result = reading.get("result")
            values.update(
                photo_key=self.photo_path(reading.get("photo_key")).name,
                photo_name=fields.text(reading.get("photo_name"), "photo name", required=True),
                result_json=self._result_json(result),
                created_at=fields.time_text(reading.get("created_at"), "creation time"),
                **result_columns(result),
            )
            rows.append(values)
        return firing_values, rows

    def insert_restored(self, checked: tuple[dict, list[dict]]) -> int:
        """Insert what :meth:`check_restored` returned, in one transaction; every photo must be stored."""
        firing_values, rows = checked
        with self._write() as db:
            for values in rows:
                self._stored_key(values["photo_key"])
            firing_id = self._insert_firing(db, firing_values)
            for values in rows:
                self._insert_reading(db, {**values, "firing_id": firing_id})
        return firing_id


def check_same_upload(stored: dict, photo_key: str, firing_id) -> None:
    """Refuse an upload id sent again with another photo or into another firing."""
    if stored["photo_key"] != photo_key:
        raise UploadConflict(
            f"The upload id {stored['upload_id']} already belongs to reading {stored['id']} of another photo; "
            "nothing was stored. The page makes a new id for each photo."
        )
    if stored["firing_id"] != firing_id:
        where = f"firing {stored['firing_id']}" if stored["firing_id"] is not None else "no firing"
        raise UploadConflict(
            f"The upload id {stored['upload_id']} is already stored as reading {stored['id']} in {where}; "
            "nothing was stored again."
        )


def _check_cone_pair(cone, cone_state) -> None:
    if cone_state is not None and cone is None:
        raise LogbookError("A cone state (standing or bent) needs the number of the cone it belongs to.")


def _band(low, high):
    return None if low is None or high is None else [low, high]

