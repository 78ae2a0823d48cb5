"""How long a photo that waited in the send queue takes to be stored once the phone is back.

In one session: renders a 12 MP spy-hole photo (invented scene, ISO 1600 noise for a phone-like
size), starts `glowtemp serve` on loopback in its own process and a firing in it, then for each
run, in headless Debian chromium at phone size with the browser context set offline:

- takes the photo on the firing's page ("Take a photo", then "Measure and add"): the page keeps
  it in IndexedDB and says it waits to send; timed from the click to that message;
- **back online, page open**: the browser's online event sends it; timed from going online to
  the reading in the firing log (polled from Python every 10 ms) and to the page showing it;
- **back online, page opened again**: the page was closed while offline (about:blank); timed
  from opening the firing's page to the reading in the log and on the page.

Prints medians, with the upload-and-measure request alone (its timing as the browser saw it)
beside them, so the queue's own cost shows as the difference.

Run: python bench/offline.py [--runs N]
"""

from __future__ import annotations

import argparse
import json
import statistics
import tempfile
import time
import urllib.request
from pathlib import Path

from common import fresh_copy, render_12mp_photo, start_server
from web import CHROMIUM, CHROMIUM_ARGS, PHONE_VIEWPORT

POLL_S = 0.01
LIMIT_S = 120.0



def api(url: str, body: dict | None = None) -> dict:
    data = None if body is None else json.dumps(body).encode()
    request = urllib.request.Request(url, data=data, headers={"Content-Type": "application/json"},
                                     method="GET" if body is None else "POST")  # fmt: skip
    with urllib.request.urlopen(request, timeout=30) as answer:
        return json.loads(answer.read())


def wait_for_readings(url: str, firing_id: int, count: int, started: float) -> float:
    """Seconds from ``started`` until the firing holds ``count`` readings on the server."""
    while time.perf_counter() - started < LIMIT_S:
        if len(api(f"{url}/api/firings/{firing_id}")["readings"]) >= count:
            return time.perf_counter() - started
        time.sleep(POLL_S)
    raise SystemExit(f"the queued photo was not stored within {LIMIT_S:.0f} s")


def queue_offline(page, url: str, firing_id: int, photo: Path) -> float:
    """Offline on the firing's page: take the photo and add it; seconds until it is kept."""
    page.goto(f"{url}/firings/{firing_id}", wait_until="networkidle")
    page.context.set_offline(True)
    page.set_input_files("#reading-camera", str(photo))
    started = time.perf_counter()
    page.click("#reading-submit")
    page.wait_for_selector("#reading-status:has-text('kept on this device')", timeout=LIMIT_S * 1000)
    return time.perf_counter() - started


def shown(page, count: int) -> None:
    page.wait_for_function(f"() => document.querySelectorAll('article.reading').length >= {count}",
                           timeout=LIMIT_S * 1000)  # fmt: skip


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=5)
    args = parser.parse_args(argv)
    from playwright.sync_api import sync_playwright

    timings = {name: [] for name in (
        "click to kept on the phone (offline)",
        "page open: online to stored in the log",
        "page open: online to shown on the page",
        "page opened again: open to stored",
        "page opened again: open to shown",
        "upload and measure request alone",
    )}  # fmt: skip
    with tempfile.TemporaryDirectory() as folder:
        photo = Path(folder) / "spy_hole_12mp.jpg"
        render_12mp_photo(photo)
        server, url = start_server(Path(folder) / "data")
        try:
            firing_id = api(f"{url}/api/firings", {"name": "Bench: shed kiln (invented)"})["id"]
            with sync_playwright() as playwright:
                browser = playwright.chromium.launch(executable_path=CHROMIUM, headless=True, args=CHROMIUM_ARGS)
                context = browser.new_context(viewport=PHONE_VIEWPORT)
                page = context.new_page()
                uploads_s = timings["upload and measure request alone"]
                page.on("requestfinished", lambda request: uploads_s.append(request.timing["responseEnd"] / 1000)
                        if request.method == "POST" and request.url.endswith("/readings") else None)  # fmt: skip
                stored = 0
                for run in range(1, args.runs + 1):
                    timings["click to kept on the phone (offline)"].append(
                        queue_offline(page, url, firing_id, fresh_copy(photo, 2 * run)))
                    started = time.perf_counter()
                    context.set_offline(False)
                    stored += 1
                    timings["page open: online to stored in the log"].append(
                        wait_for_readings(url, firing_id, stored, started))
                    shown(page, stored)
                    timings["page open: online to shown on the page"].append(time.perf_counter() - started)

                    queue_offline(page, url, firing_id, fresh_copy(photo, 2 * run + 1))
                    page.goto("about:blank")
                    context.set_offline(False)
                    started = time.perf_counter()
                    page.goto(f"{url}/firings/{firing_id}", wait_until="commit")
                    stored += 1
                    timings["page opened again: open to stored"].append(
                        wait_for_readings(url, firing_id, stored, started))
                    shown(page, stored)
                    timings["page opened again: open to shown"].append(time.perf_counter() - started)
                browser.close()
            readings = api(f"{url}/api/firings/{firing_id}")["readings"]
        finally:
            server.terminate()
            server.wait(timeout=10)
        size_mb = photo.stat().st_size / 1e6

    print(f"A queued 12-megapixel JPEG ({size_mb:.1f} MB), loopback, {args.runs} runs each, medians:")
    for name, values in timings.items():
        print(f"  {name:42s} {statistics.median(values):6.3f} s   (min {min(values):.3f}, max {max(values):.3f})")
    uploads = {r["upload_id"] for r in readings}
    print(f"Readings stored: {len(readings)} for {2 * args.runs} photos taken offline, "
          f"{len(uploads)} distinct upload ids")  # fmt: skip


if __name__ == "__main__":
    main()
