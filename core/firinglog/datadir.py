"""Where glowtemp keeps profiles and the firing log: ``--data DIR``, else a per-user folder.

The per-user folder follows the XDG Base Directory Specification (``$XDG_DATA_HOME/glowtemp``,
by default ``~/.local/share/glowtemp``); ``GLOWTEMP_DATA`` overrides it.
"""

from __future__ import annotations

import os
from pathlib import Path


def data_dir(explicit: str | os.PathLike | None = None) -> Path:
    """The data folder to use, created if missing."""
    if explicit:
        path = Path(explicit)
    elif os.environ.get("GLOWTEMP_DATA"):
        path = Path(os.environ["GLOWTEMP_DATA"])
    else:
        base = os.environ.get("XDG_DATA_HOME") or Path.home() / ".local" / "share"
        path = Path(base) / "glowtemp"
    path.mkdir(parents=True, exist_ok=True)
    return path
