"""Content-addressed photo files for the firing log.

A photo is kept under its SHA-256 digest (FIPS 180-4) plus a suffix chosen by the caller from
the decoded format, e.g. ``3f…9a.jpg``. It is written to a hidden temporary file in the same
folder, flushed to disk with ``fsync``, then renamed into place (an atomic replace on POSIX
file systems), and the folder itself is synced. A process killed mid-write therefore leaves
either no photo or a complete one, plus at most a temporary file whose name can never be a
key. Temporary names carry the writer's process id; opening the store removes those whose
writer is no longer running (a live writer, such as the web server, keeps its own).
"""

from __future__ import annotations

import hashlib
import os
import re
import secrets
import time
from pathlib import Path

KEY_PATTERN = re.compile(r"[0-9a-f]{64}\.[a-z0-9]{1,8}")
SUFFIX_PATTERN = re.compile(r"\.[a-z0-9]{1,8}")
TEMPORARY_PREFIX = ".incoming-"
STREAM_CHUNK_BYTES = 1 << 20


class PhotoStoreError(ValueError):
    """A photo key or suffix that cannot be used, in plain words."""


def photo_key(data: bytes, suffix: str) -> str:
    """The key a photo is stored under: SHA-256 of its bytes in hex, then ``suffix``.

    >>> photo_key(b"abc", ".jpg")[:16]
    'ba7816bf8f01cfea'
    """
    if not SUFFIX_PATTERN.fullmatch(suffix or ""):
        raise PhotoStoreError(
            f"A photo suffix is a dot and 1 to 8 lower-case letters or digits, like '.jpg'; got {suffix!r}."
        )
    return hashlib.sha256(data).hexdigest() + suffix


def check_key(key: str) -> str:
    """Return ``key`` if it has the stored form (so it can never name a path elsewhere)."""
    if not isinstance(key, str) or not KEY_PATTERN.fullmatch(key):
        raise PhotoStoreError(f"Not a stored photo's name: {key!r}.")
    return key


def sync_folder(folder: Path) -> None:
    """Flush a folder's entries (new and renamed files) to disk."""
    descriptor = os.open(folder, os.O_RDONLY)
    try:
        os.fsync(descriptor)
    finally:
        os.close(descriptor)


def _writer_running(temporary_name: str) -> bool:
    """Whether the process named in a temporary file's name still exists."""
    pid_text = temporary_name[len(TEMPORARY_PREFIX):].partition("-")[0]
    if not pid_text.isdigit() or int(pid_text) <= 0:
        return False
    try:
        os.kill(int(pid_text), 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


class PhotoStore:
    """Photos in one folder, named by content."""

    def __init__(self, folder: Path):
        self.folder = Path(folder)
        self.folder.mkdir(parents=True, exist_ok=True)
        self.remove_leftovers()

    def remove_leftovers(self) -> int:
        """Delete temporary files left by writers that are no longer running; returns how many."""
        removed = 0
        for path in self.folder.glob(TEMPORARY_PREFIX + "*"):
            if not _writer_running(path.name):
                path.unlink(missing_ok=True)
                removed += 1
        return removed

    def path(self, key: str) -> Path:
        return self.folder / check_key(key)

    def put(self, data: bytes, suffix: str) -> str:
        """Store ``data`` completely on disk and return its key (the same bytes share one file)."""
        key = photo_key(bytes(data), suffix)
        return self._place(key, [data])

    def put_stream(self, stream, key: str) -> str:
        """Store the photo read from the binary ``stream`` in chunks under ``key``, which its bytes'
        SHA-256 must match (else nothing is stored); returns the key."""
        check_key(key)
        return self._place(key, iter(lambda: stream.read(STREAM_CHUNK_BYTES), b""), expected=key.partition(".")[0])

    def _place(self, key: str, chunks, expected: str | None = None) -> str:
        """Write ``chunks`` to a temporary file, fsync, and rename it to ``key`` (see the module notes)."""
        final = self.folder / key
        if final.exists():
            os.utime(final)  # stored again just now: not an old orphan (Logbook.forget_orphan_photos)
            return key
        temporary = self.folder / f"{TEMPORARY_PREFIX}{os.getpid()}-{secrets.token_hex(8)}"
        digest = hashlib.sha256()
        try:
            with open(temporary, "xb") as handle:
                for chunk in chunks:
                    digest.update(chunk)
                    handle.write(chunk)
                handle.flush()
                os.fsync(handle.fileno())
            if expected is not None and digest.hexdigest() != expected:
                raise PhotoStoreError(f"The photo {key} does not match its SHA-256 hash; it was not stored.")
            os.replace(temporary, final)
        except BaseException:
            temporary.unlink(missing_ok=True)
            raise
        sync_folder(self.folder)
        return key

    def exists(self, key: str) -> bool:
        return self.path(key).is_file()

    def age_s(self, key: str) -> float:
        """Seconds since the photo was stored (its file's modification time)."""
        return time.time() - self.path(key).stat().st_mtime

    def remove(self, key: str) -> None:
        self.path(key).unlink(missing_ok=True)

    def keys(self) -> list[str]:
        """Keys of the stored photos (temporary files and anything else are not photos)."""
        return sorted(p.name for p in self.folder.iterdir() if KEY_PATTERN.fullmatch(p.name))
