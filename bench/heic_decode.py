"""Decoding time and memory of a real 12-megapixel phone HEIC (tests/data/real/phone-b.heic).

Each run is a fresh process, alternating so machine noise hits all alike: the imports alone
(glowtemp.images.photo and pillow-heif), a bare libheif decode through pillow-heif of the primary
image, and glowtemp's ``load_photo`` (decode, ICC profile, EXIF, upright codes). Each child
times its own decode (imports excluded); the parent reads each child's peak resident memory
(ru_maxrss via wait4). Prints medians of time and the largest peak.

Run: python bench/heic_decode.py [--runs N] [--photo PATH]
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
from pathlib import Path

from glowtemp.images.photo import load_photo

DEFAULT_PHOTO = Path(__file__).resolve().parent.parent / "tests" / "data" / "real" / "phone-b.heic"

PRELUDE = (
    "import sys, time\n"
    "import numpy as np, pillow_heif\n"
    "from glowtemp.images.photo import load_photo\n"
    "data = open(sys.argv[1], 'rb').read()\n"
    "started = time.perf_counter()\n"
)
STEPS = {
    "imports only": "",
    "bare libheif decode": (
        "import io\n"
        "heif = pillow_heif.open_heif(io.BytesIO(data))\n"
        "pixels = np.asarray(heif[heif.primary_index])\n"
    ),
    "glowtemp load_photo": "photo = load_photo(data)\n",
}
EPILOGUE = "print(time.perf_counter() - started)\n"


def run(step: str, photo: Path) -> tuple[float, float]:
    """Decode seconds (as the child timed them) and peak resident MB of one child process."""
    script = PRELUDE + STEPS[step] + EPILOGUE
    child = subprocess.Popen([sys.executable, "-c", script, str(photo)], stdout=subprocess.PIPE, text=True)
    output = child.stdout.read()
    _, status, usage = os.wait4(child.pid, 0)
    if status != 0:
        raise SystemExit(f"{step} failed")
    return float(output), usage.ru_maxrss / 1024


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=5)
    parser.add_argument("--photo", type=Path, default=DEFAULT_PHOTO)
    args = parser.parse_args(argv)
    results = {step: [] for step in STEPS}
    for _ in range(args.runs):
        for step in STEPS:
            results[step].append(run(step, args.photo))
    photo = load_photo(args.photo.read_bytes())
    megapixels = photo.width * photo.height / 1e6
    print(f"{args.photo.name}: {photo.width} x {photo.height} ({megapixels:.1f} MP), "
          f"{args.photo.stat().st_size / 1e6:.1f} MB, {args.runs} fresh processes each, medians:")
    for step, samples in results.items():
        seconds = statistics.median(s[0] for s in samples)
        peak = max(s[1] for s in samples)
        print(f"  {step:22s} {seconds:6.3f} s decode   peak {peak:6.0f} MB resident")
    base = max(s[1] for s in results["imports only"])
    own = max(s[1] for s in results["glowtemp load_photo"])
    codes_mb = photo.codes.nbytes / 2**20
    print(f"  load_photo adds {own - base:.0f} MB over the imports (the upright codes alone are {codes_mb:.0f} MB)")


if __name__ == "__main__":
    main()
