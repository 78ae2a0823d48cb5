"""Load on `glowtemp serve`: 200 uploads of 12-megapixel JPEGs from 4 concurrent clients on loopback.

With ``--photo png16`` the clients send instead one 49-megapixel 16-bit PNG (7000 x 7000, an
invented glowing disc on a dark ground, about 300 KB since it is flat), the case that bounds
the server's memory per upload (glowtemp.web.decode_gate); run it with ``--uploads 8``.

Renders two 12 MP spy-hole photos (invented scenes at 1000 and 1150 °C, ISO 1600 so sensor noise
gives the JPEGs a phone-like size) with glowtemp.synthetic, starts `glowtemp serve` in its own
process on 127.0.0.1 with a fresh data folder, and has 4 client threads post the photos to
POST /api/readings in turn until 200 uploads are done. Prints throughput, median and
95th-percentile latency, errors (target: none), the peak memory of the server process (VmHWM
from /proc/PID/status, the high-water mark of its resident set) and checks afterwards that the
log holds every reading with its own photo.

Also printed: the server's resident memory once the uploads are answered (VmRSS), what it
keeps holding.

Run: python bench/load.py [--uploads N] [--clients N] [--photo jpeg|png16]
"""

from __future__ import annotations

import argparse
import hashlib
import json
import statistics
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
    from glowtemp.scales import celsius_to_kelvin
    from glowtemp.synthetic import encode_jpeg, render_photo
    from glowtemp.synthetic_camera import CAMERAS

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


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--uploads", type=int, default=200)
    parser.add_argument("--clients", type=int, default=4)
    parser.add_argument("--photo", choices=("jpeg", "png16"), default="jpeg")
    args = parser.parse_args()

    started = time.perf_counter()
    photos = render_photos() if args.photo == "jpeg" else big_png16()
    suffix = ".jpg" if args.photo == "jpeg" else ".png"
    bodies = [multipart(photo) for photo in photos]
    digests = [hashlib.sha256(photo).hexdigest() for photo in photos]
    print(f"made {len(photos)} {args.photo} photo(s) "
          f"({', '.join(f'{len(p) / 1e6:.2f} MB' for p in photos)}) in {time.perf_counter() - started:.1f} s")  # fmt: skip

    with tempfile.TemporaryDirectory() as folder:
        server, base = start_server(Path(folder))
        next_upload, lock = iter(range(args.uploads)), threading.Lock()
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
            clients = [threading.Thread(target=client) for _ in range(args.clients)]
            for thread in clients:
                thread.start()
            for thread in clients:
                thread.join()
            elapsed = time.perf_counter() - begun
            peak_mb, after_mb = memory_mb(server.pid), memory_mb(server.pid, "VmRSS")
        finally:
            server.terminate()
            server.wait(timeout=30)

        from glowtemp.logbook import Logbook

        latencies = sorted(seconds for _, status, seconds, _ in results if status == 201)
        errors = [(number, status, answer.get("error")) for number, status, _, answer in results if status != 201]
        mixed = 0
        with Logbook(Path(folder)) as log:
            for number, status, _, answer in results:
                if status == 201:
                    stored = log.get_reading(answer["id"])
                    mixed += stored["photo_key"] != digests[number % len(photos)] + suffix
            stored_count = log._read("SELECT COUNT(*) FROM readings")[0][0]

    print(f"{args.uploads} uploads from {args.clients} concurrent clients on loopback in {elapsed:.1f} s")
    print(f"  throughput   {args.uploads / elapsed:.2f} uploads/s ({args.uploads * sum(map(len, photos)) / len(photos) / elapsed / 1e6:.1f} MB/s)")
    if latencies:
        p95 = latencies[min(len(latencies) - 1, int(round(0.95 * len(latencies))) - 1)]
        print(f"  latency      median {statistics.median(latencies):.2f} s, 95th percentile {p95:.2f} s, max {latencies[-1]:.2f} s")
    print(f"  errors       {len(errors)} (target: none)")
    for number, status, message in errors[:5]:
        print(f"    upload {number}: HTTP {status}: {message}")
    print(f"  stored       {stored_count} readings, {mixed} with another upload's photo (target: {args.uploads}, 0)")
    print(f"  peak memory  {peak_mb:.0f} MB resident in the server process (VmHWM)")
    print(f"  held after   {after_mb:.0f} MB resident once every upload was answered (VmRSS)")


if __name__ == "__main__":
    main()
