"""Raw DNG against JPEG from the same rendered captures: accuracy by temperature, 550-1350 °C.

Each capture is rendered once through a benchmark camera (colour-science's two NPL-measured
cameras and parametric ones): the JPEG as the phone saves it (daylight white balance, sRGB,
8 bits) and the DNG from the same exposure (Bayer mosaic, 12-bit linear, the camera's colour
matrices). Both are decoded and measured like any user photo, uncalibrated and with a camera
profile fitted on three pairs (800, 1050 and 1300 °C, type K class 2 reference errors). Raw
profiles are fitted on the raw photos' own green/red (raw and JPEG need separate profiles).

The first section also sizes the raw camera term (glowtemp.estimation.estimate.RAW_UNCALIBRATED): noise-free
raw green/red against the ideal one, fitted as offset + gain x ideal per camera.

Run: python bench/raw_vs_jpeg.py [--quick]
"""

from __future__ import annotations

import argparse
import sys
import time

import numpy as np

from glowtemp.physics.colourspaces import SRGB
from glowtemp.images.photo import load_photo
from glowtemp.estimation.profile import Pair, fit_ratio_map, ideal_green_ratio, pair_green_ratio, thermocouple_sigma_c
from glowtemp.estimation.estimate import uncalibrated_term
from glowtemp.images.raw import RAW_SPACE
from glowtemp.estimation.reading import measure
from glowtemp.images.region import Rectangle
from glowtemp.images.sampling import region_statistics
from glowtemp.estimation.scales import celsius_to_kelvin
from glowtemp.render.synthetic import encode_jpeg, render_photo
from glowtemp.render.synthetic_camera import CAMERAS, parametric_camera
from glowtemp.render.synthetic_raw import encode_dng, render_raw

PHONE_LIKE = parametric_camera("Parametric phone-like", (605, 535, 460), (38, 36, 30))  # as bench/accuracy.py
BENCH_CAMERAS = {**CAMERAS, PHONE_LIKE.name: PHONE_LIKE}
STRESS_CAMERAS = {"Parametric narrow-band"}
TEMPERATURES_C = list(range(550, 1351, 50))
PAIR_TEMPERATURES_C = (800.0, 1050.0, 1300.0)
SIZE = (320, 240)


def shoot(camera, temperature_c, seed):
    """One capture as (JPEG photo, DNG photo), same scene and exposure (on a tripod, so dull
    glow gets a long exposure at low ISO rather than a dark frame)."""
    jpeg = render_photo(temperature_c + 273.15, camera=camera, size=SIZE, seed=seed, tripod=True)
    raw = render_raw(temperature_c + 273.15, camera=camera, size=SIZE, seed=seed + 7919,
                     exposure_time_s=jpeg.exposure_time_s, f_number=jpeg.f_number, iso=jpeg.iso)
    return load_photo(encode_jpeg(jpeg)), load_photo(encode_dng(raw))


def outcome(truth_c, estimate):
    """(truth, centre or None, 95 % low, 95 % high) in °C; low None when refused."""
    if estimate.interval_95_k is None:
        return truth_c, None, None, None
    low, high = (t - 273.15 for t in estimate.interval_95_k)
    centre = None if estimate.status != "ok" else estimate.temperature_k - 273.15
    return truth_c, centre, low, high


def summary(results) -> str:
    errors = [abs(c - t) for t, c, lo, hi in results if c is not None]
    hits = [lo <= t <= hi for t, c, lo, hi in results if lo is not None]
    widths = [(hi - lo) / 2 for t, c, lo, hi in results if c is not None]
    if not errors:
        return f"no estimate {len(errors):3d}/{len(results):<3d}"
    return f"{np.median(errors):6.0f} {np.mean(hits):5.0%} ±{np.median(widths):4.0f} {len(errors):3d}/{len(results):<3d}"


def raw_camera_term():
    print("== Raw green/red vs ideal (noise-free), fitted as offset + gain x ideal, per camera")
    moments = []
    for name, camera in BENCH_CAMERAS.items():
        ideal, recorded = [], []
        for temperature_c in range(500, 1451, 50):
            raw = render_raw(temperature_c + 273.15, camera=camera, scene="uniform", size=(32, 32), noise=False,
                             tripod=True)
            stats = region_statistics(load_photo(encode_dng(raw)), Rectangle(4, 4, 8, 8))
            recorded.append(stats.mean_linear[1] / stats.mean_linear[0])
            ideal.append(ideal_green_ratio(celsius_to_kelvin(temperature_c), RAW_SPACE)[0])
        gain, offset = np.polyfit(ideal, recorded, 1)
        scatter = np.max(np.abs(np.array(recorded) - offset - gain * np.array(ideal)))
        print(f"  {name:28s} offset {offset:+.4f}  gain {gain:.4f}  largest residual {scatter:.4f}")
        if name not in STRESS_CAMERAS:
            moments.append((offset, gain - 1.0))
    moments = np.array(moments)
    second = moments.T @ moments / len(moments)
    sigma_o, sigma_g = np.sqrt(np.diag(second))
    print(f"  typical cameras, about (0, 1): offset sigma {sigma_o:.3f}, gain sigma {sigma_g:.3f}, "
          f"correlation {second[0, 1] / (sigma_o * sigma_g):+.2f}")


def make_profiles(camera, seed_base):
    """Camera terms fitted on three pairs: (jpeg term, raw term)."""
    rng = np.random.default_rng(seed_base)
    jpeg_pairs, raw_pairs = [], []
    for k, temperature_c in enumerate(PAIR_TEMPERATURES_C):
        jpeg, raw = shoot(camera, temperature_c, seed_base + k)
        tolerance = thermocouple_sigma_c(temperature_c) * np.sqrt(3)
        reference = temperature_c + rng.uniform(-tolerance, tolerance)
        for photo, pairs in ((jpeg, jpeg_pairs), (raw, raw_pairs)):
            stats = measure(photo, camera=uncalibrated_term(photo)).statistics
            ratio, sigma = pair_green_ratio(stats.mean_linear, stats.standard_error)
            pairs.append(Pair(f"pair-{temperature_c:.0f}", ratio, sigma, reference, thermocouple_sigma_c(reference)))
    ends = celsius_to_kelvin(np.array([min(PAIR_TEMPERATURES_C), max(PAIR_TEMPERATURES_C)]))
    terms = []
    for pairs, space in ((jpeg_pairs, SRGB), (raw_pairs, RAW_SPACE)):
        span = tuple(float(v) for v in ideal_green_ratio(ends, space)[0])
        terms.append(fit_ratio_map(pairs, space).camera_term(span))
    return terms


def table(seeds):
    names = list(BENCH_CAMERAS)
    profiles = {name: make_profiles(BENCH_CAMERAS[name], 3000 + 10 * i) for i, name in enumerate(names)}
    kinds = ("JPEG", "raw", "JPEG+profile", "raw+profile")
    by_temperature = {t: {k: [] for k in kinds} for t in TEMPERATURES_C}
    for temperature_c in TEMPERATURES_C:
        for name in names:
            if name in STRESS_CAMERAS:
                continue
            for seed in seeds:
                jpeg, raw = shoot(BENCH_CAMERAS[name], temperature_c, 100 * seed + temperature_c)
                jpeg_term, raw_term = profiles[name]
                runs = {"JPEG": (jpeg, uncalibrated_term(jpeg)), "raw": (raw, uncalibrated_term(raw)),
                        "JPEG+profile": (jpeg, jpeg_term), "raw+profile": (raw, raw_term)}  # fmt: skip
                for kind, (photo, term) in runs.items():
                    by_temperature[temperature_c][kind].append(outcome(temperature_c, measure(photo, camera=term).estimate))
    print("\n== Typical cameras (the narrow-band stress camera left out): per temperature and kind,")
    print("   median |error| °C of central estimates, 95 % coverage, median 95 % half-width, estimates/photos")
    print(f"{'true °C':>13} | " + " | ".join(f"{k:^24}" for k in kinds))
    for temperature_c, row in by_temperature.items():
        print(f"{temperature_c:13.0f} | " + " | ".join(f"{summary(row[k]):>24}" for k in kinds))
    for label, low, high in (("below 800 °C", 0, 799), ("800 °C and up", 800, 9999)):
        cells = [summary([r for t, row in by_temperature.items() if low <= t <= high for r in row[k]]) for k in kinds]
        print(f"{label:>13} | " + " | ".join(f"{c:>24}" for c in cells))


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="one capture per cell instead of two")
    args = parser.parse_args(argv)
    started = time.perf_counter()
    raw_camera_term()
    table([1] if args.quick else [1, 2])
    print(f"\n(bench/raw_vs_jpeg took {time.perf_counter() - started:.0f} s)")


if __name__ == "__main__":
    sys.exit(main())
