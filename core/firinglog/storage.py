"""The data folder as storage: whether it can be written, and its failures in plain words.

A full disk and a read-only folder reach glowtemp as an ``OSError`` (errno ``ENOSPC`` or
``EDQUOT``; ``EROFS``, ``EACCES`` or ``EPERM``, POSIX ``<errno.h>``) from a photo being written,
or as an SQLite error (result codes ``SQLITE_FULL`` 13 and ``SQLITE_READONLY`` 8, sqlite.org
rescode.html) from the firing log. :func:`translated` turns those into :class:`StorageError`,
which says which it is and what to do; the web app answers it with 507 or 503.
:func:`check_writable` tries a real write in each folder before a server starts, since
permission bits say nothing for root and a read-only mount shows only when written to.
"""

from __future__ import annotations

import errno
import os
import secrets
import sqlite3
from contextlib import contextmanager
from pathlib import Path

FULL_ERRNOS = frozenset({errno.ENOSPC, errno.EDQUOT})
READ_ONLY_ERRNOS = frozenset({errno.EROFS, errno.EACCES, errno.EPERM})
SQLITE_FULL, SQLITE_READONLY = 13, 8  # primary result codes (the low byte of extended ones)
PROBE_PREFIX = ".write-check-"


class StorageError(Exception):
    """The data folder is full or read-only: nothing was stored. ``full`` tells which."""

    def __init__(self, folder, full: bool):
        self.folder = Path(folder)
        self.full = full
        if full:
            message = (f"The data folder {self.folder} is full, so nothing was stored. Free some disk space "
                       "(or move the data folder to a larger disk and give it with --data), then try again.")  # fmt: skip
        else:
            message = (f"The data folder {self.folder} is read-only, so nothing was stored. Make it writable "
                       "(check that its disk is not mounted read-only and that glowtemp may write there), "
                       "then start glowtemp again.")  # fmt: skip
        super().__init__(message)


def kind_of_failure(error: BaseException) -> str | None:
    """"full", "read-only", or None for an error that is neither."""
    if isinstance(error, OSError):
        return "full" if error.errno in FULL_ERRNOS else "read-only" if error.errno in READ_ONLY_ERRNOS else None
    if isinstance(error, sqlite3.Error):
        code = (getattr(error, "sqlite_errorcode", None) or 0) & 0xFF
        return "full" if code == SQLITE_FULL else "read-only" if code == SQLITE_READONLY else None
    return None


@contextmanager
def translated(folder):
    """Run a write; a full disk or read-only folder raises :class:`StorageError` instead."""
    try:
        yield
    except (OSError, sqlite3.Error) as error:
        kind = kind_of_failure(error)
        if kind is None:
            raise
        raise StorageError(folder, full=kind == "full") from error


def check_writable(data_dir, folders=(), files=()) -> None:
    """Write, sync and remove a small file in ``data_dir`` and in each of ``folders`` (made if
    missing), and open each of ``files`` that exists for writing; raises :class:`StorageError`."""
    data_dir = Path(data_dir)
    with translated(data_dir):
        for folder in (data_dir, *folders):
            folder = Path(folder)
            folder.mkdir(parents=True, exist_ok=True)
            probe = folder / f"{PROBE_PREFIX}{os.getpid()}-{secrets.token_hex(4)}"
            descriptor = os.open(probe, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o600)
            try:
                os.write(descriptor, b"glowtemp")
                os.fsync(descriptor)
            finally:
                os.close(descriptor)
                probe.unlink(missing_ok=True)
        for name in files:
            if Path(name).is_file():
                os.close(os.open(name, os.O_RDWR))
