"""Batch throughput: the same photos measured on 1 and on 2 processes, side by side in one run.

Rendering many 12-megapixel JPEGs would take long, so four 4000 x 3000 JPEGs of
glow (different temperatures and cameras) are rendered once and copied to many files; every
file is decoded and measured in full, as ``glowtemp measure FOLDER`` does. The 2-process time
includes starting the worker pool (this process measures meanwhile). The machine is shared, so
1- and 2-process runs alternate for a few rounds and the best of each is compared (as
``timeit`` does). Target: at least 1.9x the single-process throughput.

Run: python bench/batch.py [--photos N]
"""

from __future__ import annotations

import argparse
import os
import shutil
import sys
import tempfile
import time
from pathlib import Path

from glowtemp.shell.batch import collect_photos, measure_many, start_method

SIZE = (4000, 3000)  # 12 megapixels, as many phones save
TARGET_SPEED_UP = 1.9


def make_photos(folder: Path, count: int) -> list[str]:
    # imported here: worker processes re-import this script, and need no renderer
    from glowtemp.render.synthetic import encode_jpeg, render_photo
    from glowtemp.render.synthetic_camera import CAMERAS

    cameras = list(CAMERAS.values())
    originals = []
    for k in range(4):
        rendered = render_photo(1173.15 + 80 * k, camera=cameras[k % len(cameras)], size=SIZE, seed=k)
        originals.append(encode_jpeg(rendered))
    for k in range(count):
        (folder / f"photo-{k:03d}.jpg").write_bytes(originals[k % len(originals)])
    return collect_photos([folder])


def timed(paths, jobs: int) -> float:
    started = time.perf_counter()
    results = list(measure_many(paths, jobs=jobs, progress=False))
    elapsed = time.perf_counter() - started
    assert len(results) == len(paths) and not any(m.error for m in results)
    return elapsed


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--photos", type=int, default=32, help="number of photo files (default 32)")
    parser.add_argument("--rounds", type=int, default=3, help="alternated timing rounds (default 3)")
    args = parser.parse_args(argv)
    folder = Path(tempfile.mkdtemp(prefix="glowtemp-batch-"))
    try:
        paths = make_photos(folder, args.photos)
        size_mb = sum(os.path.getsize(p) for p in paths) / 1e6
        print(f"{len(paths)} JPEGs of {SIZE[0]} x {SIZE[1]} pixels ({size_mb:.0f} MB), {os.cpu_count()} cores, "
              f"start method {start_method()}")
        print(f"load average before the run (other work on this machine): {os.getloadavg()[0]:.2f}")
        timed(paths[:2], 1)  # warm the caches (blackbody table, imports) in this process
        rounds = [(timed(paths, 1), timed(paths, 2)) for _ in range(args.rounds)]  # alternated
        for k, (single, pooled) in enumerate(rounds, 1):
            print(f"  round {k}: 1 process {single:5.2f} s, 2 processes {pooled:5.2f} s, speed-up {single / pooled:.2f}x")
        one, two = min(r[0] for r in rounds), min(r[1] for r in rounds)
        print(f"best of {args.rounds} rounds (the least disturbed by other work):")
        print(f"  1 process : {one:6.2f} s  {len(paths) / one:5.1f} photos/s")
        print(f"  2 processes: {two:6.2f} s  {len(paths) / two:5.1f} photos/s (pool start included)")
        speed_up = one / two
        print(f"  speed-up {speed_up:.2f}x   target >= {TARGET_SPEED_UP}x: {'met' if speed_up >= TARGET_SPEED_UP else 'NOT met'}")
    finally:
        shutil.rmtree(folder, ignore_errors=True)


if __name__ == "__main__":
    sys.exit(main())
