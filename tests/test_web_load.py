"""The real `glowtemp serve` under load on loopback: concurrent uploads, and a kill -9 mid-upload."""

from __future__ import annotations

import hashlib
import json
import os
import signal
import socket
import threading
import urllib.request
from concurrent.futures import ThreadPoolExecutor
from urllib.parse import urlsplit

from conftest import multipart, post, rendered_jpegs, start_glowtemp_serve

from glowtemp.firinglog.logbook import Logbook
from glowtemp.images.photo import load_photo
from glowtemp.firinglog.photo_store import TEMPORARY_PREFIX, photo_key
from glowtemp.estimation.reading import measure

UPLOADS = 20
CLIENT_THREADS = 5
WEB_ONLY_KEYS = {"id", "image", "preview_url", "upload_id"}


def stored_name(data: bytes) -> str:
    return f"photo-{hashlib.sha256(data).hexdigest()[:12]}.jpg"  # SHA-256, FIPS 180-4


def stop(process) -> None:
    process.terminate()
    process.wait(timeout=20)


def test_twenty_concurrent_uploads_are_all_stored_and_none_mixed_up(tmp_path):
    photos = rendered_jpegs(UPLOADS)
    assert len({hashlib.sha256(p).digest() for p in photos}) == UPLOADS
    process, base = start_glowtemp_serve(tmp_path)
    try:
        def upload(data: bytes):
            return post(base + "/api/readings", *multipart({}, data))

        with ThreadPoolExecutor(CLIENT_THREADS) as pool:
            answers = list(pool.map(upload, photos))
    finally:
        stop(process)
    assert [status for status, _ in answers] == [201] * UPLOADS
    assert len({body["id"] for _, body in answers}) == UPLOADS
    with Logbook(tmp_path) as log:
        for data, (_, body) in zip(photos, answers):
            # Each answer is the core's reading of the very photo that was sent ...
            expected = measure(load_photo(data), photo_name=stored_name(data)).to_dict()
            assert {k: v for k, v in body.items() if k not in WEB_ONLY_KEYS} == expected
            # ... and its row holds that photo's bytes and that result.
            stored = log.get_reading(body["id"])
            assert stored["photo_key"] == hashlib.sha256(data).hexdigest() + ".jpg"
            assert log.photo_path(stored["photo_key"]).read_bytes() == data
            assert stored["result"] == expected
        assert len(log.photos.keys()) == UPLOADS
    temperatures = [body["temperature_c"] for _, body in answers]
    assert temperatures == sorted(temperatures)  # rendered 20 °C apart, and still in order


def half_sent_upload(base: str, body: bytes, content_type: str) -> socket.socket:
    """Open an upload and send its headers and half its body, leaving the server waiting mid-upload."""
    address = urlsplit(base)
    connection = socket.create_connection((address.hostname, address.port), timeout=10)
    head = (f"POST /api/firings/1/readings HTTP/1.1\r\nHost: {address.netloc}\r\nContent-Type: {content_type}\r\n"
            f"Content-Length: {len(body)}\r\n\r\n").encode()  # fmt: skip
    connection.sendall(head + body[: len(body) // 2])
    return connection


def test_kill_9_mid_upload_then_restart_serves_everything_saved_before(tmp_path):
    photos = rendered_jpegs(UPLOADS) * 2
    process, base = start_glowtemp_serve(tmp_path)
    saved, stop_uploading = [], threading.Event()
    firing = post(base + "/api/firings", json.dumps({"name": "Under fire"}).encode(), "application/json")[1]

    def keep_uploading(offset: int):
        for data in photos[offset::2]:
            if stop_uploading.is_set():
                return
            try:
                status, body = post(base + f"/api/firings/{firing['id']}/readings", *multipart({"note": "kept"}, data))
            except OSError:
                return  # the server died under this request
            if status == 201:
                saved.append((body["id"], hashlib.sha256(data).hexdigest() + ".jpg"))

    uploaders = [threading.Thread(target=keep_uploading, args=(n,)) for n in range(2)]
    for thread in uploaders:
        thread.start()
    while len(saved) < 6:
        threading.Event().wait(0.02)
    pending = half_sent_upload(base, *multipart({}, photos[-1]))
    threading.Event().wait(0.1)
    os.kill(process.pid, signal.SIGKILL)  # mid-upload: one request half-sent, others in flight
    process.wait(timeout=10)
    stop_uploading.set()
    for thread in uploaders:
        thread.join(timeout=30)
    pending.close()
    assert process.returncode == -signal.SIGKILL

    restarted, base = start_glowtemp_serve(tmp_path)
    try:
        with urllib.request.urlopen(base + f"/api/firings/{firing['id']}", timeout=30) as answer:
            served = {r["id"]: r for r in json.loads(answer.read())["readings"]}
        for reading_id, key in saved:  # everything answered 201 before the kill is served again
            assert reading_id in served and served[reading_id]["note"] == "kept"
            with urllib.request.urlopen(base + f"/api/readings/{reading_id}/preview", timeout=30) as preview:
                assert preview.status == 200 and preview.headers["Content-Type"] == "image/jpeg"
    finally:
        stop(restarted)
    with Logbook(tmp_path) as log:
        log.check_database()  # SQLite quick_check
        assert log.missing_photos() == []
        rows = {r["id"]: r for r in log.readings_in(firing["id"])}
        for reading_id, key in saved:
            assert rows[reading_id]["photo_key"] == key
        for key in log.photos.keys():  # every stored photo is whole: its SHA-256 is its name
            assert photo_key(log.photo_path(key).read_bytes(), ".jpg") == key
        assert not [p for p in log.photos.folder.iterdir() if p.name.startswith(TEMPORARY_PREFIX)]
        assert len(rows) >= len(saved)  # at most the requests cut short went unanswered


def test_a_second_server_on_the_same_data_folder_refuses_and_names_the_first(tmp_path):
    import subprocess
    import sys

    first, base = start_glowtemp_serve(tmp_path)
    try:
        second = subprocess.run([sys.executable, "-m", "glowtemp.shell.cli", "serve", "--port", "0", "--data", str(tmp_path)],
                                capture_output=True, text=True, timeout=60, stdin=subprocess.DEVNULL)  # fmt: skip
        assert second.returncode == 1
        assert f"Another glowtemp serve (process {first.pid}, serving {base}/)" in second.stderr
        assert "Open " not in second.stdout
        with urllib.request.urlopen(base + "/api/firings", timeout=30) as answer:  # the first goes on
            assert answer.status == 200
    finally:
        stop(first)
    again, _ = start_glowtemp_serve(tmp_path)  # the lock went with the first server
    stop(again)
