"""How fast could a cold `glowtemp measure` of a 12 MP JPEG be? The floors, side by side.

Every command runs in a fresh process, alternated over the rounds so machine noise hits all
alike; medians are printed as ratios to a bare Pillow decode of the same file (interpreter
start included, as in bench/speed.py):

- the interpreter alone, and the interpreter loading numpy (every reading computes with it);
- Pillow's 1/8-scale (DCT-scaled) decode: libjpeg-turbo still reads all the entropy-coded data
  and skips only the inverse transform of the higher frequencies, so this is the least any
  finder that sees the whole frame pays;
- that reduced decode in a worker thread while numpy loads: the floor of a measure that finds
  its region at reduced scale, before it decodes the region itself at full scale (the codes
  the reading needs to be the same), loads its modules or computes anything;
- the full decode in a worker thread while numpy loads;
- `glowtemp measure --json` itself.

Run: python bench/decode_floor.py [--runs N]
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

ONE_BLOCK = "im.decodermaxblock = 1 << 30"  # the whole file in one decoder call: one lock release
THREADED = "import threading; t = threading.Thread(target=im.load); t.start(); import numpy; t.join()"


def commands(photo: str) -> dict[str, list[str]]:
    python = sys.executable
    opened = f"from PIL import Image; im = Image.open({photo!r})"
    eighth = "im.draft('RGB', (im.width // 8, im.height // 8))"
    return {
        "interpreter start": [python, "-c", "pass"],
        "interpreter + numpy": [python, "-c", "import numpy"],
        "bare Pillow decode": [python, "-c", f"{opened}; im.load()"],
        "1/8-scale decode": [python, "-c", f"{opened}; {eighth}; im.load()"],
        "1/8-scale decode || numpy": [python, "-c", f"{opened}; {eighth}; {ONE_BLOCK}; {THREADED}"],
        "full decode || numpy": [python, "-c", f"{opened}; {ONE_BLOCK}; {THREADED}"],
        "glowtemp measure": [python, "-m", "glowtemp.shell.cli", "measure", photo, "--json"],
    }


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=9)
    args = parser.parse_args(argv)
    with tempfile.TemporaryDirectory() as folder:
        photo = Path(folder) / "spy_hole_12mp.jpg"
        render_12mp_photo(photo)
        timed = commands(str(photo))
        seconds = {name: [] for name in timed}
        for _ in range(args.runs):
            for name, command in timed.items():
                started = time.perf_counter()
                subprocess.run(command, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, check=True)
                seconds[name].append(time.perf_counter() - started)
    bare = statistics.median(seconds["bare Pillow decode"])
    print(f"12 MP JPEG, {args.runs} cold runs each, alternated, medians (load average {os.getloadavg()[0]:.2f}):")
    for name, samples in seconds.items():
        median = statistics.median(samples)
        print(f"  {name:28s} {median * 1000:6.0f} ms   {median / bare:5.2f}x the bare decode")


if __name__ == "__main__":
    main()
