"""Load on `glowtemp serve`: 200 uploads of 12-megapixel JPEGs from 4 concurrent clients on loopback.

With ``--photo png16`` the clients send instead one 49-megapixel 16-bit PNG (7000 x 7000, an
invented glowing disc on a dark ground, about 300 KB since it is flat), the case that bounds
the server's memory per upload (glowtemp.web.decode_gate); run it with ``--uploads 8``.

Renders two 12 MP spy-hole photos (invented scenes at 1000 and 1150 °C, ISO 1600 so sensor noise
gives the JPEGs a phone-like size) with glowtemp.render.synthetic, starts `glowtemp serve` in its own
process on 127.0.0.1 with a fresh data folder, and has 4 client threads post the photos to
POST /api/readings in turn until 200 uploads are done. Prints throughput, median and
95th-percentile latency, errors (target: none), the peak memory of the server process (VmHWM
from /proc/PID/status, the high-water mark of its resident set) and checks afterwards that the
log holds every reading with its own photo.

Also printed: the server's resident memory once the uploads are answered (VmRSS), what it
keeps holding.

With ``--compare-with PYTHON`` the same load also runs against the server of another glowtemp
install (a checkout of an older version with its own virtual environment), in alternating
rounds of ``--uploads`` each (``--rounds``, default 2), and the two are printed side by side.

Run: python bench/load.py [--uploads N] [--clients N] [--photo jpeg|png16] [--compare-with PYTHON]
"""

from __future__ import annotations

import argparse
import hashlib
import json
import statistics
import sys
import tempfile
import threading
import time
import urllib.error
import urllib.request
import uuid
from pathlib import Path

from common import start_server

PHOTO_SIZE = (4000, 3000)  # 12 megapixels
PHOTO_TEMPERATURES_C = (1000.0, 1150.0)
REQUEST_TIMEOUT_S = 300


def render_photos() -> list[bytes]:
    from glowtemp.estimation.scales import celsius_to_kelvin
    from glowtemp.render.synthetic import encode_jpeg, render_photo
    from glowtemp.render.synthetic_camera import CAMERAS

    camera = CAMERAS["Nikon 5100 (NPL)"]
    return [encode_jpeg(render_photo(celsius_to_kelvin(t), camera=camera, size=PHOTO_SIZE, seed=n, iso=1600))
            for n, t in enumerate(PHOTO_TEMPERATURES_C)]  # fmt: skip


def big_png16() -> list[bytes]:
    """One 7000 x 7000 16-bit RGB PNG (libpng through imagecodecs) of an invented glowing disc."""
    import imagecodecs
    import numpy as np

    side = 7000
    codes = np.full((side, side, 3), 1200, np.uint16)
    rows, columns = np.ogrid[:side, :side]
    codes[(rows - side // 2) ** 2 + (columns - side // 2) ** 2 < (side // 6) ** 2] = (52000, 21000, 2500)
    return [imagecodecs.png_encode(codes, level=9)]


def memory_mb(pid: int, field: str = "VmHWM") -> float:
    """The process's peak (VmHWM) or current (VmRSS) resident set, proc(5), in MB."""
    for line in Path(f"/proc/{pid}/status").read_text().splitlines():
        if line.startswith(field + ":"):
            return int(line.split()[1]) / 1024
    return float("nan")


def multipart(photo: bytes) -> tuple[bytes, str]:
    boundary = uuid.uuid4().hex
    head = (f'--{boundary}\r\nContent-Disposition: form-data; name="photo"; filename="load.jpg"\r\n'
            "Content-Type: image/jpeg\r\n\r\n").encode()  # fmt: skip
    return head + photo + f"\r\n--{boundary}--\r\n".encode(), f"multipart/form-data; boundary={boundary}"


def upload(url: str, body: bytes, content_type: str) -> tuple[int, dict]:
    request = urllib.request.Request(url, data=body, headers={"Content-Type": content_type}, method="POST")
    try:
        with urllib.request.urlopen(request, timeout=REQUEST_TIMEOUT_S) as answer:
            return answer.status, json.loads(answer.read())
    except urllib.error.HTTPError as error:
        return error.code, {"error": error.read().decode(errors="replace")}
    except OSError as error:
        return 0, {"error": str(error)}


def run_load(python: str, bodies, digests, suffix: str, uploads: int, clients: int) -> dict:
    """One server of the install ``python`` runs, a fresh data folder, ``uploads`` uploads from
    ``clients`` threads; what was measured."""
    with tempfile.TemporaryDirectory() as folder:
        server, base = start_server(Path(folder), python=python)
        next_upload, lock = iter(range(uploads)), threading.Lock()
        results = []  # (upload number, status, seconds, body)

        def client():
            while True:
                with lock:
                    number = next(next_upload, None)
                if number is None:
                    return
                body, content_type = bodies[number % len(bodies)]
                begun = time.perf_counter()
                status, answer = upload(base + "/api/readings", body, content_type)
                with lock:
                    results.append((number, status, time.perf_counter() - begun, answer))

        try:
            begun = time.perf_counter()
            threads = [threading.Thread(target=client) for _ in range(clients)]
            for thread in threads:
                thread.start()
            for thread in threads:
                thread.join()
            elapsed = time.perf_counter() - begun
            peak_mb, after_mb = memory_mb(server.pid), memory_mb(server.pid, "VmRSS")
        finally:
            server.terminate()
            server.wait(timeout=30)

        from glowtemp.firinglog.logbook import Logbook

        mixed = 0
        with Logbook(Path(folder)) as log:  # read with this install's code: the schema is shared
            for number, status, _, answer in results:
                if status == 201:
                    stored = log.get_reading(answer["id"])
                    mixed += stored["photo_key"] != digests[number % len(digests)] + suffix
            stored_count = log._read("SELECT COUNT(*) FROM readings")[0][0]
    latencies = sorted(seconds for _, status, seconds, _ in results if status == 201)
    return {
        "elapsed": elapsed, "latencies": latencies, "peak_mb": peak_mb, "after_mb": after_mb,
        "errors": [(number, status, answer.get("error")) for number, status, _, answer in results if status != 201],
        "stored": stored_count, "mixed": mixed,
    }


def report(name: str, found: dict, uploads: int, clients: int, mean_bytes: float) -> None:
    print(f"{name}: {uploads} uploads from {clients} concurrent clients on loopback in {found['elapsed']:.1f} s")
    print(f"  throughput   {uploads / found['elapsed']:.2f} uploads/s ({uploads * mean_bytes / found['elapsed'] / 1e6:.1f} MB/s)")
    latencies = found["latencies"]
    if latencies:
        p95 = latencies[min(len(latencies) - 1, int(round(0.95 * len(latencies))) - 1)]
        print(f"  latency      median {statistics.median(latencies):.2f} s, 95th percentile {p95:.2f} s, max {latencies[-1]:.2f} s")
    print(f"  errors       {len(found['errors'])} (target: none)")
    for number, status, message in found["errors"][:5]:
        print(f"    upload {number}: HTTP {status}: {message}")
    print(f"  stored       {found['stored']} readings, {found['mixed']} with another upload's photo (target: {uploads}, 0)")
    print(f"  peak memory  {found['peak_mb']:.0f} MB resident in the server process (VmHWM)")
    print(f"  held after   {found['after_mb']:.0f} MB resident once every upload was answered (VmRSS)")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--uploads", type=int, default=200)
    parser.add_argument("--clients", type=int, default=4)
    parser.add_argument("--photo", choices=("jpeg", "png16"), default="jpeg")
    parser.add_argument("--compare-with", metavar="PYTHON", help="interpreter of another glowtemp install")
    parser.add_argument("--rounds", type=int, default=2, help="alternated rounds with --compare-with (default 2)")
    args = parser.parse_args()

    started = time.perf_counter()
    photos = render_photos() if args.photo == "jpeg" else big_png16()
    suffix = ".jpg" if args.photo == "jpeg" else ".png"
    bodies = [multipart(photo) for photo in photos]
    digests = [hashlib.sha256(photo).hexdigest() for photo in photos]
    mean_bytes = sum(map(len, photos)) / len(photos)
    print(f"made {len(photos)} {args.photo} photo(s) "
          f"({', '.join(f'{len(p) / 1e6:.2f} MB' for p in photos)}) in {time.perf_counter() - started:.1f} s")  # fmt: skip

    if not args.compare_with:
        found = run_load(sys.executable, bodies, digests, suffix, args.uploads, args.clients)
        report("glowtemp serve", found, args.uploads, args.clients, mean_bytes)
        return
    installs = {"other install": args.compare_with, "this install": sys.executable}
    runs = {name: [] for name in installs}
    for round_number in range(1, args.rounds + 1):
        for name, python in installs.items():
            found = run_load(python, bodies, digests, suffix, args.uploads, args.clients)
            runs[name].append(found)
            print(f"round {round_number}, {name}: {args.uploads / found['elapsed']:.2f} uploads/s, "
                  f"median latency {statistics.median(found['latencies'] or [float('nan')]):.2f} s, "
                  f"{len(found['errors'])} errors, {found['stored']} stored ({found['mixed']} with another "
                  f"upload's photo), peak {found['peak_mb']:.0f} MB")
    print(f"\nside by side, best round of {args.rounds} (the least disturbed by other work):")
    print(f"  {'':14s} {'uploads/s':>10} {'median s':>9} {'p95 s':>7} {'errors':>7} {'peak MB':>8}")
    for name, found_runs in runs.items():
        best = min(found_runs, key=lambda found: found["elapsed"])
        latencies = best["latencies"] or [float("nan")]
        p95 = latencies[min(len(latencies) - 1, max(0, int(round(0.95 * len(latencies))) - 1))]
        print(f"  {name:14s} {args.uploads / best['elapsed']:10.2f} {statistics.median(latencies):9.2f} {p95:7.2f} "
              f"{sum(len(f['errors']) for f in found_runs):7d} {max(f['peak_mb'] for f in found_runs):8.0f}")


if __name__ == "__main__":
    main()
