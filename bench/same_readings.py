"""Do two versions of glowtemp give the same readings? Saves or compares the JSON forms.

A speed change to the estimator or the pixel statistics must not change what a user is shown.
This script measures a fixed set of photos and writes every reading's JSON form
(``Reading.to_dict()``) to a file; run it once on the old code with ``save`` and once on the
new code with ``compare``, which prints the count of readings that differ (target: 0) and the
first differences field by field.

The set: the accuracy benchmark's held-out photos (bench/accuracy.py's makers, tone curves and
scene kinds, colour and brightness, and colour alone, each with the prior that leaves its maker
out), the same cameras with automatic white balance, one-camera profiles (a ``CameraTerm`` with
automatic white balance marginalised over its guessed whites), the demo images, and
12-megapixel renders (the sampled grid of large regions). Rendering is deterministic (seeded).

Run: python bench/same_readings.py save FILE [--quick]
     python bench/same_readings.py compare FILE [--quick]
"""

from __future__ import annotations

import argparse
import json
import sys
import time
from dataclasses import replace
from pathlib import Path

DEMO_FOLDER = Path(__file__).resolve().parent.parent / "demo_images"


def cases(quick: bool):
    """(name, photo, measure keyword arguments) for every reading of the set."""
    from glowtemp.estimation.estimate import CameraTerm
    from glowtemp.render.heldout import MAKERS, RENDER_CURVES, held_out_camera, held_out_photo, maker_sensors, prior_without
    from glowtemp.images.photo import load_photo

    curves = list(RENDER_CURVES)
    temperatures = range(550, 1351, 100)
    for m_index, maker in enumerate(MAKERS):
        for s_index, sensor in enumerate(maker_sensors(maker)):
            for t_index, temperature_c in enumerate(temperatures):
                if quick and (s_index > 0 or t_index % 2):
                    continue  # --quick: a subset of the same photos, under the same names
                number = 100 * m_index + 10 * s_index + t_index
                curve, kind = curves[number % len(curves)], ("kiln", "steel")[number % 2]
                camera = held_out_camera(sensor, curve, seed=1000 * s_index + 17 * t_index)
                prior = prior_without(maker, curve)
                photo, _ = held_out_photo(camera, temperature_c, kind, seed=number)
                name = f"{maker}-{s_index}-{temperature_c}"
                yield name, photo, {"scene": kind, "prior": prior}
                no_exposure = replace(photo, metadata=replace(photo.metadata, f_number=None))
                yield name + "-colour", no_exposure, {"scene": kind, "prior": prior}
                if t_index % 2 == 0:
                    auto, _ = held_out_photo(camera, temperature_c, kind, seed=number, white_balance="auto")
                    yield name + "-auto", auto, {"scene": kind, "prior": prior}
                    yield name + "-profile-auto", auto, {"scene": kind, "camera": CameraTerm(green_offset=0.01)}
    for path in sorted(DEMO_FOLDER.glob("*.jpg")):
        yield "demo-" + path.name, load_photo(path), {"scene": "kiln"}
    yield from large_cases(quick)


def large_cases(quick: bool):
    """12-megapixel photos: the benchmark spy hole and held-out cameras at 4000 x 3000."""
    from glowtemp.render.heldout import MAKERS, held_out_camera, held_out_photo, maker_sensors
    from glowtemp.images.photo import load_photo
    from glowtemp.render.synthetic import encode_jpeg, render_photo
    from glowtemp.render.synthetic_camera import CAMERAS

    rendered = render_photo(1273.15, camera=CAMERAS["Nikon 5100 (NPL)"], size=(4000, 3000), seed=2, iso=1600)
    yield "12mp-spy-hole", load_photo(encode_jpeg(rendered)), {}
    for k, maker in enumerate(MAKERS[:4]):
        if quick and k % 2:
            continue
        camera = held_out_camera(maker_sensors(maker)[0], "phone", seed=300 + k)
        kind = ("kiln", "steel")[k % 2]
        photo, _ = held_out_photo(camera, 750.0 + 150 * k, kind, seed=400 + k, size=(4000, 3000))
        yield f"12mp-{maker}", photo, {"scene": kind}


def readings(quick: bool) -> dict:
    from glowtemp.estimation.reading import measure

    found = {}
    for name, photo, options in cases(quick):
        found[name] = measure(photo, photo_name=name, **options).to_dict()
    return found


def differences(old: dict, new: dict) -> list[str]:
    lines = []
    for key in sorted(set(old) | set(new)):
        if old.get(key) != new.get(key):
            lines.append(f"{key}: {old.get(key)!r} -> {new.get(key)!r}")
    return lines


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("action", choices=("save", "compare"))
    parser.add_argument("file", type=Path)
    parser.add_argument("--quick", action="store_true", help="fewer held-out photos and 12 MP renders")
    args = parser.parse_args(argv)
    started = time.perf_counter()
    found = readings(args.quick)
    elapsed = time.perf_counter() - started
    if args.action == "save":
        args.file.write_text(json.dumps(found, indent=1, sort_keys=True))
        print(f"saved {len(found)} readings to {args.file} ({elapsed:.0f} s)")
        return 0
    saved = json.loads(args.file.read_text())
    found = json.loads(json.dumps(found))  # the same JSON round trip as the saved file
    differing = [name for name in sorted(found) if saved.get(name) != found[name]]
    print(f"{len(found)} readings measured ({elapsed:.0f} s), {len(saved)} saved, "
          f"{sum(name not in saved for name in found)} of them missing there; "
          f"differing readings: {len(differing)} (target 0)")
    for name in differing[:10]:
        print(f"  {name}:")
        for line in differences(saved.get(name) or {}, found.get(name) or {})[:6]:
            print(f"    {line}")
    return 1 if differing else 0


if __name__ == "__main__":
    sys.exit(main())
