"""Would a JPEG decoded at reduced scale give the same readings? Counts the readings that differ.

libjpeg-turbo can decode a JPEG at 1/2, 1/4 or 1/8 of its size by an inverse DCT of fewer
coefficients (Pillow's ``Image.draft``), skipping most of the transform. Each photo here is
measured at full scale (the reading glowtemp gives), then in the same region scaled down on
the copy decoded at 1/2, 1/4 and 1/8, and on 2 x 2 and 8 x 8 block means of the full-scale codes
(which separates what averaging does from what the scaled transform does). A reading counts as
different when what the user is shown differs after rounding: status, central value, 68 % and
95 % bands, ceiling, resolution, heat-colour name or warning codes (pixel counts are left out,
since a reduced copy has fewer pixels).

Why they differ: the estimator needs the mean of *linear* light, and a block's mean code
decoded to linear is not the mean of its pixels' linear values (Jensen's inequality: with an
encoding curve of gamma about 2.2, a pixel scatter of s codes at level c lowers it by about
1.3 (s / c)^2); dark channels clipped at code 0 in each pixel are not clipped in a block mean;
and the clipping and outlier masks see blocks, not pixels.

Photos: the benchmark's 12 MP spy hole and held-out cameras rendered at 4000 x 3000.

Run: python bench/reduced_scale.py [--photos N]
"""

from __future__ import annotations

import argparse
import io
import sys
from dataclasses import replace

import numpy as np
from PIL import Image

SHOWN = ("status", "temperature_c", "interval_68_c", "interval_95_c", "upper_bound_c", "resolution_c",
         "temperature_f", "interval_68_f", "interval_95_f", "upper_bound_f", "glow_name", "channels")


def photos(count: int):
    """(name, JPEG bytes, scene) of the 12 MP photos."""
    from glowtemp.render.heldout import MAKERS, held_out_camera, maker_sensors
    from glowtemp.render.heldout import SCENE_KINDS
    from glowtemp.render.synthetic import encode_jpeg, render_photo
    from glowtemp.render.synthetic_camera import CAMERAS

    rendered = render_photo(1273.15, camera=CAMERAS["Nikon 5100 (NPL)"], size=(4000, 3000), seed=2, iso=1600)
    yield "12mp-spy-hole", encode_jpeg(rendered), "other"
    for k in range(count - 1):
        maker = MAKERS[k % len(MAKERS)]
        camera = held_out_camera(maker_sensors(maker)[0], "phone", seed=300 + k)
        kind = ("kiln", "steel")[k % 2]
        scene, (low, high) = SCENE_KINDS[kind]
        rendered = render_photo(1023.15 + 100 * k, scene=scene, size=(4000, 3000), emissivity=(low + high) / 2,
                                seed=400 + k, tripod=True, **camera)
        yield f"12mp-{maker}-{750 + 100 * k}C", encode_jpeg(rendered, quality=90), kind


def shown(reading) -> dict:
    result = reading.to_dict()
    return {**{key: result[key] for key in SHOWN}, "warnings": [w["code"] for w in result["warnings"]]}


def scaled_region(region, factor: int):
    from glowtemp.images.region import Circle, Rectangle

    if isinstance(region, Circle):
        return Circle(round(region.cx / factor), round(region.cy / factor), max(1, round(region.radius / factor)))
    return Rectangle(region.x // factor, region.y // factor, max(1, region.width // factor),
                     max(1, region.height // factor))


def dct_scaled(data: bytes, factor: int) -> np.ndarray:
    with Image.open(io.BytesIO(data)) as image:
        image.draft("RGB", (image.width // factor, image.height // factor))
        return np.asarray(image.convert("RGB"))


def block_means(codes: np.ndarray, factor: int) -> np.ndarray:
    height, width = (side // factor * factor for side in codes.shape[:2])
    blocks = codes[:height, :width].reshape(height // factor, factor, width // factor, factor, 3)
    return np.rint(blocks.mean(axis=(1, 3))).astype(codes.dtype)


def main(argv=None):
    from glowtemp.images.photo import load_photo
    from glowtemp.estimation.reading import find_region, measure

    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--photos", type=int, default=6)
    args = parser.parse_args(argv)
    variants = {f"DCT 1/{f}": (lambda d, p, f=f: dct_scaled(d, f), f) for f in (2, 4, 8)}
    variants.update({f"blocks {f}x{f}": (lambda d, p, f=f: block_means(p.codes, f), f) for f in (2, 8)})
    differing = {name: 0 for name in variants}
    shifts = {name: [] for name in variants}
    measured = 0
    for name, data, scene in photos(args.photos):
        full = load_photo(data)
        region = find_region(full)
        reference = measure(full, region, scene=scene)
        measured += 1
        print(f"{name}: {reference.to_dict()['temperature_c']} °C, band {reference.to_dict()['interval_95_c']}")
        for variant, (reduce, factor) in variants.items():
            codes = reduce(data, full)
            codes.flags.writeable = False
            reading = measure(replace(full, codes=codes), scaled_region(region, factor), scene=scene)
            same = shown(reading) == shown(reference)
            differing[variant] += not same
            shift = (reading.estimate.temperature_k or np.nan) - (reference.estimate.temperature_k or np.nan)
            ratio = reading.statistics.mean_linear / reference.statistics.mean_linear - 1
            shifts[variant].append(abs(shift))
            print(f"  {variant:12s} {'same' if same else 'DIFFERS'}  central {shift:+7.2f} K  "
                  f"mean R, G, B {ratio[0]:+.2%} {ratio[1]:+.2%} {ratio[2]:+.2%}")
    print(f"\n{measured} photos; readings that differ from full scale after rounding (target 0):")
    for variant in variants:
        print(f"  {variant:12s} {differing[variant]:3d} of {measured}   median |shift| {np.nanmedian(shifts[variant]):.2f} K")


if __name__ == "__main__":
    sys.exit(main())
