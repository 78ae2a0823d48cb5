"""Reading a named file whole, safely: regular files only, and never more than a limit.

A name can point at a FIFO (reading waits for a writer that may never come), a device such as
``/dev/zero`` (endless bytes) or a folder. The file is opened without waiting
(``O_NONBLOCK``, which makes opening a FIFO return at once, POSIX ``open``), checked with
``fstat`` on the opened descriptor (so a name swapped after a check cannot slip through), and
read up to one byte past the limit, so a file that grows is refused rather than read without end.
"""

from __future__ import annotations

import os
import stat


class FileRefused(ValueError):
    """A file that is not read: not a regular file, or larger than the limit; in plain words."""


def size_text(size_bytes: int) -> str:
    """A byte count in MB (binary multiples) or KB.

    >>> size_text(200 * 1024 * 1024), size_text(16 * 1024)
    ('200 MB', '16 KB')
    """
    if size_bytes >= 1024 * 1024:
        return f"{size_bytes / (1024 * 1024):.0f} MB"
    return f"{max(1, round(size_bytes / 1024))} KB"


def read_regular_file(path, max_bytes: int, what: str = "file") -> bytes:
    """The bytes of the regular file at ``path``; :class:`FileRefused` for anything else.

    OSError (missing, unreadable) passes through for the caller to word.
    """
    descriptor = os.open(path, os.O_RDONLY | os.O_NONBLOCK | getattr(os, "O_CLOEXEC", 0))
    with os.fdopen(descriptor, "rb", buffering=0) as handle:
        mode = os.fstat(descriptor).st_mode
        if not stat.S_ISREG(mode):
            kind = ("a folder" if stat.S_ISDIR(mode) else "a pipe (FIFO)" if stat.S_ISFIFO(mode)
                    else "a device" if stat.S_ISCHR(mode) or stat.S_ISBLK(mode) else "a socket or special file")  # fmt: skip
            raise FileRefused(f"The {what} {os.fspath(path)} is {kind}, not a regular file; give the file itself.")
        if os.fstat(descriptor).st_size > max_bytes:
            raise FileRefused(f"The {what} {os.fspath(path)} is larger than {size_text(max_bytes)}; it is not read.")
        chunks, total = [], 0
        while total <= max_bytes:
            chunk = handle.read(min(1 << 20, max_bytes + 1 - total))
            if not chunk:
                break
            chunks.append(chunk)
            total += len(chunk)
    if total > max_bytes:
        raise FileRefused(f"The {what} {os.fspath(path)} grew beyond {size_text(max_bytes)} while being read; it is not read.")
    return b"".join(chunks)
