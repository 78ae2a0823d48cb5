"""Benchmark: a firing with 500 readings — page and curve render, export and import times.

Targets: the firing's page and its curve each under 0.5 s; export and import each under 5 s.
Every reading has its own photo (a rendered demo JPEG made unique by a trailing comment),
and a result measured from that photo with the temperatures shifted along a firing schedule.

Run: python3 bench/logbook.py [READINGS]
"""

from __future__ import annotations

import statistics
import sys
import tempfile
import time
from datetime import datetime, timedelta, timezone
from pathlib import Path

from glowtemp.firinglog.bundle import import_bundle, write_bundle
from glowtemp.firinglog.curve_chart import draw_firing
from glowtemp.firinglog.logbook import Logbook
from glowtemp.firinglog.logbook_csv import firing_csv
from glowtemp.images.photo import load_photo
from glowtemp.estimation.reading import measure
from glowtemp.web import create_app

DEMO_PHOTO = Path(__file__).resolve().parent.parent / "demo_images" / "alder_lane_1100_870C.jpg"
START = datetime(2024, 3, 9, 6, 0, tzinfo=timezone.utc)


def timed(call, repeats: int = 1) -> tuple[float, object]:
    """Median wall time in seconds over ``repeats`` runs, and the last result."""
    times, result = [], None
    for _ in range(repeats):
        started = time.perf_counter()
        result = call()
        times.append(time.perf_counter() - started)
    return statistics.median(times), result


def shifted(result: dict, temperature_c: int) -> dict:
    """The measured result moved to another temperature (bands kept at the same widths)."""
    offset = temperature_c - result["temperature_c"]
    return {
        **result,
        "temperature_c": temperature_c,
        "interval_68_c": [t + offset for t in result["interval_68_c"]],
        "interval_95_c": [t + offset for t in result["interval_95_c"]],
    }


def fill(log: Logbook, count: int) -> int:
    photo_bytes = DEMO_PHOTO.read_bytes()
    measured = measure(load_photo(photo_bytes), photo_name=DEMO_PHOTO.name).to_dict()
    firing_id = log.create_firing(name="Bench: 500-reading firing (invented)", target_cone="6", started_at=START)
    for n in range(count):
        hours = n * 12 / count  # a 12-hour firing
        temperature_c = round(600 + 55 * hours)
        key = log.store_photo(photo_bytes + f"reading {n}".encode(), ".jpg")
        log.add_reading(
            photo_key=key, photo_name=f"spy-{n:03d}.jpg", result=shifted(measured, temperature_c),
            taken_at=START + timedelta(hours=hours), firing_id=firing_id,
            reference_c=temperature_c - 8 if n % 10 == 0 else None,
            cone="6" if n == count - 1 else None, cone_state="bent" if n == count - 1 else None,
        )  # fmt: skip
    return firing_id


def main(count: int = 500) -> None:
    with tempfile.TemporaryDirectory() as folder:
        folder = Path(folder)
        app = create_app({"DATA_DIR": folder / "data", "TESTING": True})
        log = app.extensions["glowtemp"]["logbook"]
        fill_s, firing_id = timed(lambda: fill(log, count))
        photos_mb = sum(log.photo_path(k).stat().st_size for k in log.photos.keys()) / 2**20
        print(f"firing with {count} readings, {photos_mb:.0f} MB of photos, stored in {fill_s:.1f} s")

        client = app.test_client()
        cold_s, _ = timed(lambda: client.get(f"/firings/{firing_id}"))  # includes importing matplotlib
        page_s, answer = timed(lambda: client.get(f"/firings/{firing_id}"), repeats=5)
        assert answer.status_code == 200
        every_s, every = timed(lambda: client.get(f"/firings/{firing_id}?all=1"), repeats=3)
        svg_s, svg = timed(lambda: draw_firing(log, firing_id), repeats=5)
        png_s, _ = timed(lambda: draw_firing(log, firing_id, image_format="png"), repeats=3)
        api_s, _ = timed(lambda: client.get(f"/api/firings/{firing_id}"), repeats=5)
        print(f"firing page:    {page_s:.3f} s median of 5 ({len(answer.data) / 1024:.0f} KB; first request {cold_s:.3f} s)  target < 0.5 s")
        print(f"page, all {count}: {every_s:.3f} s median of 3 ({len(every.data) / 1024:.0f} KB)")
        print(f"curve SVG:      {svg_s:.3f} s median of 5 ({len(svg) / 1024:.0f} KB)  target < 0.5 s")
        print(f"curve PNG:      {png_s:.3f} s median of 3")
        print(f"firing JSON:    {api_s:.3f} s median of 5")

        csv_s, text = timed(lambda: firing_csv(log.get_firing(firing_id), log.readings_in(firing_id)), repeats=3)
        bundle = folder / "firing.zip"
        export_s, _ = timed(lambda: write_bundle(log, firing_id, bundle))
        print(f"export CSV:     {csv_s:.3f} s ({len(text) / 1024:.0f} KB)")
        print(f"export zip:     {export_s:.2f} s ({bundle.stat().st_size / 2**20:.0f} MB)  target < 5 s")
        with Logbook(folder / "restored") as other:
            import_s, restored = timed(lambda: import_bundle(other, bundle))
            assert len(other.readings_in(restored)) == count
        print(f"import zip:     {import_s:.2f} s (into an empty log)  target < 5 s")
        log.close()


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 500)
