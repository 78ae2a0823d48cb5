"""Accuracy of glowtemp on rendered photos: uncalibrated, and calibrated with camera profiles.

Photos are rendered through each benchmark camera (colour-science's two NPL-measured cameras
and parametric ones) at 650-1350 °C, daylight white balance, sRGB, exposure set so red does
not clip, with fresh noise per photo, then encoded as JPEG and measured like any user photo.

Uncalibrated targets: median absolute error <= 50 °C; the 95 % interval holds the truth in at
least 90 % of cases. Calibrated (profile from 3 pairs at 800, 1050 and 1300 °C with type K
class 2 reference errors): median absolute error <= 10 °C inside the pairs' span, 95 %
coverage >= 90 %, and honest widening outside the span. The calibrated section also compares
the kept ratio-pyrometer law with the reciprocal correction 1/T = a + b / T_estimate.

Run: python bench/accuracy.py [--quick]
"""

from __future__ import annotations

import argparse
import sys
import time

import numpy as np

from glowtemp.photo import load_photo
from glowtemp.profile import Pair, fit_profile, pair_green_ratio, thermocouple_sigma_c
from glowtemp.profile_store import camera_settings
from glowtemp.reading import measure
from glowtemp.synthetic import encode_jpeg, render_photo
from glowtemp.synthetic_camera import CAMERAS, parametric_camera

# A phone-like Bayer sensor behind an IR-cut filter: peaks and widths (standard deviations) are
# typical values from memory, not a measured camera.
PHONE_LIKE = parametric_camera("Parametric phone-like", (605, 535, 460), (38, 36, 30))
BENCH_CAMERAS = {**CAMERAS, PHONE_LIKE.name: PHONE_LIKE}
STRESS_CAMERAS = {"Parametric narrow-band"}  # red filter cut early: deliberately extreme

TEMPERATURES_C = list(range(650, 1351, 50))
PAIR_TEMPERATURES_C = (800.0, 1050.0, 1300.0)
SIZE = (320, 240)


def shoot(camera, temperature_c, seed):
    """Render, encode and decode one photo; returns the decoded photo."""
    rendered = render_photo(temperature_c + 273.15, camera=camera, size=SIZE, seed=seed)
    return load_photo(encode_jpeg(rendered))


def summarise(outcomes):
    """outcomes: list of (truth_c, centre_c or None, low95_c, high95_c)."""
    errors = [c - t for t, c, lo, hi in outcomes if c is not None]
    covered = [lo <= t <= hi for t, c, lo, hi in outcomes if lo is not None]
    median = float(np.median(np.abs(errors))) if errors else float("nan")
    coverage = float(np.mean(covered)) if covered else float("nan")
    return median, coverage, len(outcomes)


def outcome(truth_c, estimate):
    if estimate.interval_95_k is None:
        return (truth_c, None, None, None)
    low, high = (t - 273.15 for t in estimate.interval_95_k)
    centre = None if estimate.temperature_k is None else estimate.temperature_k - 273.15
    return (truth_c, centre, low, high)


def cell(result) -> str:
    truth, centre, low, high = result
    if low is None:
        return "   refused  "
    hit = "ok" if low <= truth <= high else "XX"
    if centre is None or high - low > 900:
        return f" <{high:5.0f} {hit}  "
    return f"{centre - truth:+5.0f} {hit} ±{(high - low) / 2:3.0f}"


def uncalibrated(seeds):
    print("\n== Uncalibrated: error of the estimate (°C), whether the 95 % interval holds the truth, its half-width")
    print("   ('<X' = colour gives only a ceiling X)")
    names = list(BENCH_CAMERAS)
    print(f"{'true °C':>8} | " + " | ".join(f"{n[:17]:^17}" for n in names))
    results = {n: [] for n in names}
    for temperature_c in TEMPERATURES_C:
        row = []
        for name in names:
            for seed in seeds:
                photo = shoot(BENCH_CAMERAS[name], temperature_c, seed)
                result = outcome(temperature_c, measure(photo).estimate)
                results[name].append(result)
            row.append(cell(result))
        print(f"{temperature_c:8.0f} | " + " | ".join(f"{c:^17}" for c in row))
    for name in names:
        median, coverage, n = summarise(results[name])
        print(f"  {name:28s} median |error| {median:5.1f} °C, 95 % coverage {coverage:5.0%} (n={n})")
    typical = [r for name, rs in results.items() if name not in STRESS_CAMERAS for r in rs]
    everything = [r for rs in results.values() for r in rs]
    for label, group in (("TYPICAL CAMERAS", typical), ("ALL, WITH STRESS CASE", everything)):
        median, coverage, n = summarise(group)
        print(f"  {label:28s} median |error| {median:5.1f} °C, 95 % coverage {coverage:5.0%} (n={n})"
              "   targets: <= 50 °C, >= 90 %")


def make_pairs(camera, seed_base):
    rng = np.random.default_rng(seed_base)
    pairs = []
    for k, temperature_c in enumerate(PAIR_TEMPERATURES_C):
        photo = shoot(camera, temperature_c, seed_base + k)
        reading = measure(photo)
        tolerance = thermocouple_sigma_c(temperature_c) * np.sqrt(3)
        reference = temperature_c + rng.uniform(-tolerance, tolerance)
        ratio, sigma = pair_green_ratio(reading.statistics.mean_linear, reading.statistics.standard_error)
        pairs.append((Pair(f"pair-{temperature_c:.0f}", ratio, sigma, reference, thermocouple_sigma_c(reference)),
                      reading.estimate.temperature_k, photo))
    return pairs


def log_ratio_law(pairs):
    """Alternative model: the ratio-pyrometer law ln(G/R) = p + q / T (Wien approximation)."""
    x = np.array([1.0 / (pair.reference_c + 273.15) for pair, _, _ in pairs])
    y = np.log([pair.green_ratio for pair, _, _ in pairs])
    q, p = np.polyfit(x, y, 1)
    return lambda green_ratio: q / (np.log(green_ratio) - p) if green_ratio > 0 else None


def reciprocal_correction(pairs):
    """The alternative model: 1/T_true = a + b / T_estimate, least squares on the pairs."""
    x = np.array([1.0 / est for _, est, _ in pairs])
    y = np.array([1.0 / (pair.reference_c + 273.15) for pair, _, _ in pairs])
    b, a = np.polyfit(x, y, 1)
    return lambda estimate_k: 1.0 / (a + b / estimate_k)


def calibrated(seeds):
    print("\n== Calibrated: profile from 3 pairs at 800, 1050, 1300 °C; error (°C), 95 % hit, half-width")
    names = list(BENCH_CAMERAS)
    print(f"{'true °C':>8} | " + " | ".join(f"{n[:17]:^17}" for n in names))
    profiles, corrections, laws = {}, {}, {}
    for index, name in enumerate(names):
        pairs = make_pairs(BENCH_CAMERAS[name], 1000 + 10 * index)
        first = pairs[0][2]
        profiles[name] = fit_profile(name, [p for p, _, _ in pairs], first.space, camera_settings(first), "bench")
        corrections[name] = reciprocal_correction(pairs)
        laws[name] = log_ratio_law(pairs)
    inside, outside, all_results = [], [], []
    alternatives = {"affine map (kept)": ([], []), "reciprocal 1/T = a + b/T_est": ([], []),
                    "ln(G/R) = p + q/T": ([], [])}
    low_span, high_span = min(PAIR_TEMPERATURES_C), max(PAIR_TEMPERATURES_C)
    for temperature_c in TEMPERATURES_C:
        row = []
        for name in names:
            for seed in seeds:
                photo = shoot(BENCH_CAMERAS[name], temperature_c, 5000 + seed)
                reading = measure(photo, profile=profiles[name])
                result = outcome(temperature_c, reading.estimate)
                (inside if low_span <= temperature_c <= high_span else outside).append(result)
                all_results.append(result)
                span = 0 if low_span <= temperature_c <= high_span else 1
                plain = measure(photo)
                if result[1] is not None:
                    alternatives["affine map (kept)"][span].append(result[1] - temperature_c)
                if plain.estimate.temperature_k is not None:
                    alternatives["reciprocal 1/T = a + b/T_est"][span].append(
                        corrections[name](plain.estimate.temperature_k) - 273.15 - temperature_c)
                stats = plain.statistics
                green = stats.mean_linear[1] / stats.mean_linear[0]
                law = laws[name](green)
                if law is not None and np.isfinite(law) and law > 0:
                    alternatives["ln(G/R) = p + q/T"][span].append(law - 273.15 - temperature_c)
            row.append(cell(result))
        print(f"{temperature_c:8.0f} | " + " | ".join(f"{c:^17}" for c in row))
    for label, group in (("inside the span", inside), ("outside the span", outside)):
        median, coverage, n = summarise(group)
        widths = [hi - lo for _, _, lo, hi in group if lo is not None]
        print(f"  {label:18s} median |error| {median:5.1f} °C, 95 % coverage {coverage:5.0%}, "
              f"mean 95 % width {np.mean(widths):5.0f} °C (n={n})")
    print("  targets inside the span: <= 10 °C, >= 90 %; outside: coverage kept by wider bands")
    print("  model comparison, median |error| (°C) inside / outside the span, all cameras:")
    for label, (inner, outer) in alternatives.items():
        print(f"    {label:30s} {np.median(np.abs(inner)):6.1f} / {np.median(np.abs(outer)):6.1f}"
              f"   (n={len(inner)}/{len(outer)})")
    return summarise(inside)


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="one photo per cell instead of two")
    args = parser.parse_args(argv)
    seeds = [1] if args.quick else [1, 2]
    started = time.perf_counter()
    uncalibrated(seeds)
    calibrated(seeds)
    print(f"\n(bench/accuracy took {time.perf_counter() - started:.0f} s)")


if __name__ == "__main__":
    sys.exit(main())
