"""Upload-to-result time of the web page on a 12-megapixel JPEG, against `glowtemp measure`.

In one session: renders a 12 MP spy-hole photo (invented scene, ISO 1600 so sensor noise gives
the JPEG a phone-like size), starts `glowtemp serve` on loopback in its own process, then
alternates

- `glowtemp measure --json PHOTO` in a fresh process (what the command costs a user), and
- the measuring page in headless Debian chromium: from the file input's change event to the
  first frame after the result card appears (upload, decode, measure, store, render);

and prints medians. Also prints the bare HTTP round trip of POST /api/readings from Python and
the main screen's page weight before any photo (every response the page loads).

Targets: web <= 1.5x the command; main screen < 200 KB.

Run: python bench/web.py [--runs N]
"""

from __future__ import annotations

import argparse
import statistics
import subprocess
import sys
import tempfile
import time
import urllib.request
import uuid
from pathlib import Path

from common import fresh_copy, render_12mp_photo, start_server

CHROMIUM = "/usr/bin/chromium"
CHROMIUM_ARGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync", "--no-first-run"]
PHONE_VIEWPORT = {"width": 390, "height": 844}
PAGE_BUDGET_BYTES = 200 * 1024
TARGET_RATIO = 1.5

# Record the change event, the first frame after the result card is shown, and when the photo
# under the outline is decoded for display (bench only).
STOPWATCH = """() => {
  window.stopwatch = {};
  document.addEventListener("change", () => { window.stopwatch.start = performance.now(); }, true);
  const card = document.getElementById("result");
  new MutationObserver(() => {
    if (!card.hidden && window.stopwatch.start && !window.stopwatch.shown) {
      window.stopwatch.shown = true;
      requestAnimationFrame(() => setTimeout(() => { window.stopwatch.end = performance.now(); }));
      document.getElementById("photo").decode().then(() => { window.stopwatch.photo = performance.now(); });
    }
  }).observe(card, { attributes: true, attributeFilter: ["hidden"] });
}"""


def time_command(photo: Path) -> float:
    started = time.perf_counter()
    subprocess.run([sys.executable, "-m", "glowtemp.shell.cli", "measure", "--json", str(photo)],
                   check=True, stdout=subprocess.DEVNULL)
    return time.perf_counter() - started


def time_http_post(url: str, photo: Path) -> float:
    boundary = uuid.uuid4().hex
    body = (f"--{boundary}\r\nContent-Disposition: form-data; name=\"photo\"; filename=\"{photo.name}\"\r\n"
            "Content-Type: image/jpeg\r\n\r\n").encode() + photo.read_bytes() + f"\r\n--{boundary}--\r\n".encode()
    request = urllib.request.Request(url + "/api/readings", data=body, method="POST",
                                     headers={"Content-Type": f"multipart/form-data; boundary={boundary}"})
    started = time.perf_counter()
    with urllib.request.urlopen(request, timeout=60) as response:
        response.read()
    return time.perf_counter() - started


def page_weight(browser, url: str) -> dict:
    """Bytes of every response the main screen loads, by path."""
    page = browser.new_page(viewport=PHONE_VIEWPORT)
    sizes = {}
    page.on("response", lambda r: sizes.__setitem__(r.url.replace(url, ""), len(r.body())))
    page.goto(url + "/", wait_until="networkidle")
    page.close()
    return sizes


def time_page(page, url: str, photo: Path) -> tuple[float, float]:
    """Seconds from the change event to the result on screen, and to the photo decoded."""
    page.goto(url + "/", wait_until="networkidle")
    page.evaluate(STOPWATCH)
    page.set_input_files("#file-input", str(photo))
    page.wait_for_function("() => window.stopwatch.end && window.stopwatch.photo", timeout=60_000)
    watch = page.evaluate("window.stopwatch")
    return (watch["end"] - watch["start"]) / 1000, (watch["photo"] - watch["start"]) / 1000


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=5)
    args = parser.parse_args(argv)
    from playwright.sync_api import sync_playwright

    with tempfile.TemporaryDirectory() as folder:
        photo = Path(folder) / "spy_hole_12mp.jpg"
        render_12mp_photo(photo)
        server, url = start_server(Path(folder) / "data")
        try:
            with sync_playwright() as playwright:
                browser = playwright.chromium.launch(executable_path=CHROMIUM, headless=True, args=CHROMIUM_ARGS)
                sizes = page_weight(browser, url)
                page = browser.new_page(viewport=PHONE_VIEWPORT)
                first_web, _ = time_page(page, url, fresh_copy(photo, 0))  # the server's first photo: lazy imports
                timings = {"glowtemp measure (fresh process)": [], "web page, change to result": [],
                           "web page, change to photo decoded": [], "HTTP POST /api/readings only": []}
                for run in range(1, args.runs + 1):
                    timings["glowtemp measure (fresh process)"].append(time_command(fresh_copy(photo, run)))
                    result_s, photo_s = time_page(page, url, fresh_copy(photo, run))
                    timings["web page, change to result"].append(result_s)
                    timings["web page, change to photo decoded"].append(photo_s)
                    timings["HTTP POST /api/readings only"].append(
                        time_http_post(url, fresh_copy(photo, args.runs + run)))
                browser.close()
        finally:
            server.terminate()
            server.wait(timeout=10)
        size_mb = photo.stat().st_size / 1e6

    print(f"12-megapixel JPEG ({size_mb:.1f} MB), loopback, {args.runs} runs each, medians:")
    medians = {name: statistics.median(values) for name, values in timings.items()}
    for name, value in medians.items():
        print(f"  {name:36s} {value:6.3f} s   (min {min(timings[name]):.3f}, max {max(timings[name]):.3f})")
    print(f"  first photo after the server starts      {first_web:6.3f} s")
    ratio = medians["web page, change to result"] / medians["glowtemp measure (fresh process)"]
    print(f"  web / command: {ratio:.2f}x   target <= {TARGET_RATIO}x")
    total = sum(sizes.values())
    print(f"Main screen before a photo: {total / 1024:.1f} KB in {len(sizes)} responses   target < {PAGE_BUDGET_BYTES // 1024} KB")
    for name, size in sorted(sizes.items(), key=lambda item: -item[1]):
        print(f"  {size / 1024:7.1f} KB  {name}")


if __name__ == "__main__":
    main()
