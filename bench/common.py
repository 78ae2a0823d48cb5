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
        "from glowtemp.render.synthetic import encode_jpeg, render_photo\n"
        "from glowtemp.render.synthetic_camera import CAMERAS\n"
        "photo = render_photo(1273.15, camera=CAMERAS['Nikon 5100 (NPL)'], size=(4000, 3000), seed=2, iso=1600)\n"
        "open(sys.argv[1], 'wb').write(encode_jpeg(photo))\n"
    )
    subprocess.run([sys.executable, "-c", script, str(path)], check=True)


def start_server(data_dir: Path, *extra: str, python: str = sys.executable):
    """Start ``glowtemp serve`` (of the install ``python`` runs) on a free loopback port;
    returns (process, base URL)."""
    command = [python, "-m", "glowtemp.shell.cli", "serve", "--port", "0", "--data", str(data_dir), *extra]
    server = subprocess.Popen(command, stdout=subprocess.PIPE, stderr=subprocess.STDOUT, text=True)
    for line in server.stdout:
        if line.startswith("Open "):
            return server, line.split()[-1].rstrip("/")
    raise SystemExit("glowtemp serve did not start")


def fresh_copy(photo: Path, number: int) -> Path:
    """The photo with a JPEG comment (COM marker, ITU-T T.81 B.2.4.5) naming the run, so every
    upload is a new file for the content-addressed photo store, as every real photo is."""
    data = photo.read_bytes()
    comment = f"bench run {number}".encode()
    marker = b"\xff\xfe" + (len(comment) + 2).to_bytes(2, "big") + comment
    copy = photo.with_name(f"run-{number}.jpg")
    copy.write_bytes(data[:2] + marker + data[2:])
    return copy
