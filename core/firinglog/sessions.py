"""Devices paired with the web server, kept in the firing log's database (schema version 3).

A paired device holds a random session secret in a cookie; the database keeps only the secret's
SHA-256 digest (FIPS 180-4), so a copy of the database, such as a backup, lets nobody in. Each
check reads the table, so revoking (``glowtemp sessions revoke``, from another process) takes
effect on the next request of a running server.

The store has its own connection to the database, which :class:`glowtemp.firinglog.logbook.Logbook`
creates and migrates: open the log first.
"""

from __future__ import annotations

import hashlib
import secrets
import sqlite3
import threading
from pathlib import Path

from .logbook_fields import utc_now
from .storage import translated

SECRET_BYTES = 32  # 256 random bits, from the operating system's generator
BUSY_TIMEOUT_S = 10.0


def secret_digest(secret: str) -> str:
    """The SHA-256 hex digest a session secret is stored under.

    >>> secret_digest("abc")[:16]
    'ba7816bf8f01cfea'
    """
    return hashlib.sha256(secret.encode("utf-8")).hexdigest()


class SessionStore:
    """Paired devices in the SQLite database at ``database_path`` (shared by the server's threads)."""

    def __init__(self, database_path: Path):
        self._lock = threading.Lock()
        self.folder = Path(database_path).parent
        self._db = sqlite3.connect(database_path, timeout=BUSY_TIMEOUT_S, isolation_level=None, check_same_thread=False)

    def close(self) -> None:
        with self._lock:
            self._db.close()

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()

    def pair(self, paired_from: str | None = None) -> str:
        """Record a newly paired device; returns its session secret (never stored as such)."""
        secret = secrets.token_urlsafe(SECRET_BYTES)
        now = utc_now()
        with self._lock, translated(self.folder):
            self._db.execute(
                "INSERT INTO sessions (secret_sha256, paired_at, paired_from) VALUES (?, ?, ?)",
                (secret_digest(secret), now, paired_from),
            )
        return secret

    def is_paired(self, secret: str | None) -> bool:
        """Whether ``secret`` belongs to a device that is still paired."""
        if not secret:
            return False
        with self._lock:
            row = self._db.execute("SELECT 1 FROM sessions WHERE secret_sha256 = ?", (secret_digest(secret),)).fetchone()
        return row is not None

    def paired_devices(self) -> list[dict]:
        """When and from which address each paired device was paired, oldest first."""
        with self._lock:
            rows = self._db.execute("SELECT id, paired_at, paired_from FROM sessions ORDER BY id").fetchall()
        return [{"id": id_, "paired_at": at, "paired_from": address} for id_, at, address in rows]

    def revoke_all(self) -> int:
        """Unpair every device; returns how many were paired."""
        with self._lock:
            return self._db.execute("DELETE FROM sessions").rowcount
