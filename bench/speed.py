"""Cold-start speed and memory of `glowtemp measure` on a 12-megapixel JPEG.

Runs, alternating in one session so machine noise hits all alike: an empty interpreter, a bare
Pillow decode of the file, and `glowtemp measure --json` on it, each in a fresh process; prints
median wall time and peak memory (ru_maxrss of each child via wait4).

Targets: measure <= 2x the bare decode (interpreter start included), < 1 s wall, < 400 MB peak.

Run: python bench/speed.py [--runs N]
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from common import render_12mp_photo



def run(command: list[str]) -> tuple[float, float]:
    """Wall seconds and peak resident MB of one child process."""
    started = time.perf_counter()
    child = subprocess.Popen(command, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    _, status, usage = os.wait4(child.pid, 0)
    elapsed = time.perf_counter() - started
    if status != 0:
        raise SystemExit(f"command failed: {' '.join(command)}")
    return elapsed, usage.ru_maxrss / 1024


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=7)
    args = parser.parse_args(argv)
    with tempfile.TemporaryDirectory() as folder:
        photo = Path(folder) / "spy_hole_12mp.jpg"
        render_12mp_photo(photo)
        commands = {
            "interpreter start": [sys.executable, "-c", "pass"],
            "bare Pillow decode": [sys.executable, "-c",
                                   f"from PIL import Image; Image.open({str(photo)!r}).load()"],
            "glowtemp measure": [sys.executable, "-m", "glowtemp.cli", "measure", str(photo), "--json"],
        }
        results = {name: [] for name in commands}
        for _ in range(args.runs):
            for name, command in commands.items():
                results[name].append(run(command))
        size_mb = photo.stat().st_size / 1e6
    print(f"12-megapixel JPEG ({size_mb:.1f} MB), {args.runs} cold runs each, medians:")
    medians = {}
    for name, samples in results.items():
        wall = statistics.median(s[0] for s in samples)
        memory = max(s[1] for s in samples)
        medians[name] = wall
        print(f"  {name:20s} {wall:6.3f} s wall   peak {memory:6.0f} MB")
    ratio = medians["glowtemp measure"] / medians["bare Pillow decode"]
    print(f"  measure / bare decode (both with interpreter start): {ratio:.2f}x   target <= 2x")
    print(f"  measure wall: {medians['glowtemp measure']:.3f} s   target < 1 s; peak memory target < 400 MB")


if __name__ == "__main__":
    main()
