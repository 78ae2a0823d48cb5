"""Cold-start speed and memory of `glowtemp measure` on a 12-megapixel JPEG.

Runs, alternating in one session so machine noise hits all alike: an empty interpreter, a bare
Pillow decode of the file, and `glowtemp measure --json` on it, each in a fresh process; prints
median wall time and peak memory (ru_maxrss of each child via wait4). With ``--compare-with
PYTHON`` the interpreter of another glowtemp install (a checkout of an older version with its
own virtual environment) measures the same file in the same rounds, so before and after stand
side by side.

Each install's modules are compiled to bytecode first, as installing a package does: where
PYTHONDONTWRITEBYTECODE is set (as on the development machines), an editable checkout would
otherwise compile its sources again in every process.

Targets: measure <= 1.0x the bare decode (interpreter start included), stretch 0.6x.

Run: python bench/speed.py [--runs N] [--compare-with PYTHON]
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

COMPILE = "import compileall, glowtemp, os; compileall.compile_dir(os.path.dirname(glowtemp.__file__), quiet=1)"


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
    parser.add_argument("--runs", type=int, default=9)
    parser.add_argument("--compare-with", metavar="PYTHON", help="interpreter of another glowtemp install")
    args = parser.parse_args(argv)
    pythons = {"glowtemp measure": sys.executable}
    if args.compare_with:
        pythons = {"glowtemp measure (other)": args.compare_with, **pythons}
    for python in pythons.values():
        subprocess.run([python, "-c", COMPILE], check=True)
    with tempfile.TemporaryDirectory() as folder:
        photo = Path(folder) / "spy_hole_12mp.jpg"
        render_12mp_photo(photo)
        commands = {
            "interpreter start": [sys.executable, "-c", "pass"],
            "bare Pillow decode": [sys.executable, "-c",
                                   f"from PIL import Image; Image.open({str(photo)!r}).load()"],
            **{name: [python, "-m", "glowtemp.shell.cli", "measure", str(photo), "--json"]
               for name, python in pythons.items()},
        }
        results = {name: [] for name in commands}
        for _ in range(args.runs):
            for name, command in commands.items():
                results[name].append(run(command))
        size_mb = photo.stat().st_size / 1e6
    print(f"12-megapixel JPEG ({size_mb:.1f} MB), {args.runs} cold runs each, alternated, medians "
          f"(load average {os.getloadavg()[0]:.2f}):")
    medians = {}
    for name, samples in results.items():
        wall = statistics.median(s[0] for s in samples)
        memory = max(s[1] for s in samples)
        medians[name] = wall
        print(f"  {name:26s} {wall:6.3f} s wall (fastest {min(s[0] for s in samples):.3f} s)   peak {memory:6.0f} MB")
    for name in pythons:
        ratio = medians[name] / medians["bare Pillow decode"]
        print(f"  {name} / bare decode: {ratio:.2f}x   target <= 1.0x, stretch <= 0.6x")


if __name__ == "__main__":
    main()
