"""Shared pieces of the benchmark scripts: a 12-megapixel test photo and a real server.

Benchmarks run as ``python bench/NAME.py``, so this folder is on the import path.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path


def render_12mp_photo(path: Path) -> None:
    """Write a 12 MP spy-hole JPEG in a child process (ISO 1600 noise gives it a phone-like size).

    Rendering in a child keeps this process small, so children it times later do not inherit
    its memory (ru_maxrss counts what a child had at fork).
    """
    script = (
        "import sys\n"
        "from glowtemp.synthetic import encode_jpeg, render_photo\n"
        "from glowtemp.synthetic_camera import CAMERAS\n"
        "photo = render_photo(1273.15, camera=CAMERAS['Nikon 5100 (NPL)'], size=(4000, 3000), seed=2, iso=1600)\n"
        "open(sys.argv[1], 'wb').write(encode_jpeg(photo))\n"
    )
    subprocess.run([sys.executable, "-c", script, str(path)], check=True)


def start_server(data_dir: Path, *extra: str):
    """Start ``glowtemp serve`` on a free loopback port; returns (process, base URL)."""
    command = [sys.executable, "-m", "glowtemp.cli", "serve", "--port", "0", "--data", str(data_dir), *extra]
    server = subprocess.Popen(command, stdout=subprocess.PIPE, stderr=subprocess.STDOUT, text=True)
    for line in server.stdout:
        if line.startswith("Open "):
            return server, line.split()[-1].rstrip("/")
    raise SystemExit("glowtemp serve did not start")
