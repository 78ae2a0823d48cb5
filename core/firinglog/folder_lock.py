"""One server per data folder: an exclusive lock held for as long as ``glowtemp serve`` runs.

Two servers on one folder would each sweep photos that no reading names yet, removing the
other's uploads between their photo and their row. The lock is an advisory ``flock`` on
``<data>/serve.lock`` (POSIX.1-2024 leaves ``flock`` to the system; Linux and the BSDs have it),
taken without waiting; the kernel releases it when the process ends, even by ``kill -9``, so
a stale lock never blocks a restart. The file names the holder (process id and address) so a
second server can say which one is running.
"""

from __future__ import annotations

import fcntl
import os
from pathlib import Path

LOCK_NAME = "serve.lock"


class FolderInUse(Exception):
    """Another running server holds the data folder's lock; the message names it."""


class FolderLock:
    """The data folder's serve lock; :meth:`take` it, :meth:`describe` the holder, :meth:`release`."""

    def __init__(self, data_dir):
        self.data_dir = Path(data_dir)
        self.path = self.data_dir / LOCK_NAME
        self._descriptor = None

    def take(self) -> None:
        """Hold the lock, or raise :class:`FolderInUse` naming the server that holds it."""
        descriptor = os.open(self.path, os.O_RDWR | os.O_CREAT | getattr(os, "O_CLOEXEC", 0), 0o644)
        try:
            fcntl.flock(descriptor, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except BlockingIOError:
            holder = os.pread(descriptor, 1000, 0).decode("utf-8", "replace").strip() or "a glowtemp serve"
            os.close(descriptor)
            raise FolderInUse(
                f"Another glowtemp serve ({holder}) is using the data folder {self.data_dir}. Stop that "
                "one first, or give this one its own folder with --data."
            ) from None
        self._descriptor = descriptor
        self.describe(f"process {os.getpid()}")

    def describe(self, holder: str) -> None:
        """Write who holds the lock (read by a second server's message)."""
        os.ftruncate(self._descriptor, 0)
        os.pwrite(self._descriptor, holder.encode("utf-8") + b"\n", 0)

    def release(self) -> None:
        if self._descriptor is not None:
            os.close(self._descriptor)  # closing the descriptor releases the flock
            self._descriptor = None
