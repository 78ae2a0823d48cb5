"""Exactly once: a photo sent again with its upload id (a retry after a lost answer, or two
copies at once) is stored as one reading; the time taken comes from EXIF, else `captured_at`."""

from __future__ import annotations

import io
import threading
from datetime import datetime

import pytest
from conftest import multipart, post, rendered_jpegs, start_glowtemp_serve
from PIL import Image

from glowtemp.firinglog.logbook import Logbook, UploadConflict
from glowtemp.firinglog.photo_store import photo_key
from glowtemp.estimation.scales import celsius_to_kelvin
from glowtemp.render.synthetic import encode_jpeg, render_photo
from glowtemp.render.synthetic_camera import ideal_camera

UPLOAD_ID = "a1b2c3d4e5f60718293a4b5c6d7e8f90"
ROUNDS = 4  # pairs of concurrent copies, each pair with its own upload id


def upload(client, url, jpeg, **fields):
    return client.post(url, data={"photo": (io.BytesIO(jpeg), "spy.jpg"), **fields}, content_type="multipart/form-data")


def reading_count(app) -> int:
    return app.extensions["glowtemp"]["logbook"]._read("SELECT COUNT(*) FROM readings")[0][0]


@pytest.fixture
def firing_id(web_client):
    return web_client.post("/api/firings", json={"name": "Shed kiln"}).get_json()["id"]


def timed_jpeg(taken_at: datetime | None) -> bytes:
    """A small 1000 °C spy-hole photo (invented scene) with EXIF DateTimeOriginal ``taken_at``, or none."""
    rendered = render_photo(celsius_to_kelvin(1000.0), camera=ideal_camera(), size=(160, 120), taken_at=taken_at)
    data = encode_jpeg(rendered)
    if taken_at is None:
        out = io.BytesIO()
        Image.open(io.BytesIO(data)).save(out, "JPEG", quality=92)  # re-encoded: no EXIF at all
        data = out.getvalue()
    return data


def test_a_retry_after_a_lost_answer_gets_the_stored_reading(web_app, web_client, firing_id):
    (photo,) = rendered_jpegs(1)
    url = f"/api/firings/{firing_id}/readings"
    first = upload(web_client, url, photo, upload_id=UPLOAD_ID, reference_c="1000")
    again = upload(web_client, url, photo, upload_id=UPLOAD_ID, reference_c="1000")
    assert (first.status_code, again.status_code) == (201, 200)
    assert again.get_json()["id"] == first.get_json()["id"]
    assert again.get_json()["upload_id"] == UPLOAD_ID
    assert again.get_json()["temperature_c"] == first.get_json()["temperature_c"]
    assert reading_count(web_app) == 1
    assert len(web_app.extensions["glowtemp"]["logbook"].photos.keys()) == 1


def test_the_measuring_pages_upload_is_stored_once_too(web_app, web_client):
    (photo,) = rendered_jpegs(1)
    first = upload(web_client, "/api/readings", photo, upload_id=UPLOAD_ID)
    again = upload(web_client, "/api/readings", photo, upload_id=UPLOAD_ID)
    assert (first.status_code, again.status_code) == (201, 200)
    assert again.get_json()["id"] == first.get_json()["id"]
    assert again.get_json()["image"] == first.get_json()["image"]
    assert reading_count(web_app) == 1


def test_without_an_upload_id_each_upload_is_its_own_reading(web_app, web_client):
    (photo,) = rendered_jpegs(1)
    assert upload(web_client, "/api/readings", photo).status_code == 201
    assert upload(web_client, "/api/readings", photo).status_code == 201
    assert reading_count(web_app) == 2


def test_an_upload_id_reused_for_another_photo_or_firing_is_refused(web_app, web_client, firing_id):
    one, other = rendered_jpegs(2)
    url = f"/api/firings/{firing_id}/readings"
    assert upload(web_client, url, one, upload_id=UPLOAD_ID).status_code == 201
    photos_before = web_app.extensions["glowtemp"]["logbook"].photos.keys()

    answer = upload(web_client, url, other, upload_id=UPLOAD_ID)
    assert answer.status_code == 409 and "another photo" in answer.get_json()["error"]
    second_firing = web_client.post("/api/firings", json={"name": "Forge"}).get_json()["id"]
    answer = upload(web_client, f"/api/firings/{second_firing}/readings", one, upload_id=UPLOAD_ID)
    assert answer.status_code == 409 and f"firing {firing_id}" in answer.get_json()["error"]
    answer = upload(web_client, "/api/readings", one, upload_id=UPLOAD_ID)
    assert answer.status_code == 409

    assert reading_count(web_app) == 1  # nothing stored by the refusals
    assert web_app.extensions["glowtemp"]["logbook"].photos.keys() == photos_before


@pytest.mark.parametrize("bad", ["short", "a" * 65, "has spaces in it ok?", "../../../../etc/passwd00"])
def test_a_malformed_upload_id_is_refused_in_plain_words(web_app, web_client, bad):
    (photo,) = rendered_jpegs(1)
    answer = upload(web_client, "/api/readings", photo, upload_id=bad)
    assert answer.status_code == 400 and "upload id is 16 to 64" in answer.get_json()["error"]
    assert reading_count(web_app) == 0


def test_the_exif_time_wins_over_captured_at_and_arrival(web_app, web_client, firing_id):
    # EXIF DateTimeOriginal is the camera's local time without a zone (CIPA DC-008): the log
    # reads it as this computer's local time, as glowtemp firing from-photos does.
    exif_time = datetime(2024, 5, 4, 14, 5, 0)
    answer = upload(web_client, f"/api/firings/{firing_id}/readings", timed_jpeg(exif_time),
                    captured_at="2024-05-04T18:00:00+00:00")  # fmt: skip
    assert answer.status_code == 201
    assert datetime.fromisoformat(answer.get_json()["taken_at"]) == exif_time.astimezone()


def test_captured_at_is_the_time_of_a_photo_without_exif(web_app, web_client, firing_id):
    answer = upload(web_client, f"/api/firings/{firing_id}/readings", timed_jpeg(None),
                    captured_at="2024-05-04T14:35:00+02:00")  # fmt: skip
    assert answer.status_code == 201
    assert answer.get_json()["taken_at"] == "2024-05-04T12:35:00+00:00"


def test_a_bad_captured_at_is_refused_and_nothing_stored(web_app, web_client, firing_id):
    answer = upload(web_client, f"/api/firings/{firing_id}/readings", timed_jpeg(None), captured_at="yesterday")
    assert answer.status_code == 400 and "captured_at" in answer.get_json()["error"]
    assert reading_count(web_app) == 0


def test_two_connections_storing_one_upload_id_at_once_make_one_row(tmp_path):
    """Two Logbook objects are two SQLite connections, as two server processes would have."""
    (photo,) = rendered_jpegs(1)
    with Logbook(tmp_path) as log:
        key = log.store_photo(photo, ".jpg")
    logs = [Logbook(tmp_path), Logbook(tmp_path)]
    start = threading.Barrier(len(logs))
    outcomes = []

    def store(log):
        start.wait()
        outcomes.append(log.add_uploaded_reading(UPLOAD_ID, photo_key=key, photo_name="spy.jpg",
                                                 result={"status": "ok", "temperature_c": 1000},
                                                 taken_at="2024-05-04T12:00:00+00:00"))  # fmt: skip

    threads = [threading.Thread(target=store, args=(log,)) for log in logs]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join(timeout=30)
    for log in logs:
        log.close()
    assert len({reading_id for reading_id, _ in outcomes}) == 1
    assert sorted(created for _, created in outcomes) == [False, True]
    with Logbook(tmp_path) as log:
        assert log._read("SELECT COUNT(*) FROM readings")[0][0] == 1
        with pytest.raises(UploadConflict):
            other = log.store_photo(b"another photo", ".jpg")
            log.add_uploaded_reading(UPLOAD_ID, photo_key=other, photo_name="x.jpg", result={"status": "ok"},
                                     taken_at="2024-05-04T12:00:00+00:00")  # fmt: skip


def test_the_same_upload_id_sent_twice_at_once_to_glowtemp_serve_is_one_reading(tmp_path):
    photos = rendered_jpegs(ROUNDS)
    process, base = start_glowtemp_serve(tmp_path)
    try:
        status, firing = post(base + "/api/firings", b'{"name": "Shed kiln"}', "application/json")
        assert status == 201
        url = f"{base}/api/firings/{firing['id']}/readings"
        answers = []
        for round_number, photo in enumerate(photos):
            upload_id = f"{round_number:02d}" + UPLOAD_ID[2:]
            body, content_type = multipart({"upload_id": upload_id}, photo)
            start = threading.Barrier(2)

            def send():
                start.wait()
                answers.append((upload_id, *post(url, body, content_type)))

            copies = [threading.Thread(target=send) for _ in range(2)]
            for copy in copies:
                copy.start()
            for copy in copies:
                copy.join(timeout=60)
    finally:
        process.terminate()
        process.wait(timeout=20)
    assert len(answers) == 2 * ROUNDS
    assert all(status in (200, 201) for _, status, _ in answers), answers
    by_upload, statuses = {}, {}
    for upload_id, status, body in answers:
        by_upload.setdefault(upload_id, set()).add(body["id"])
        statuses.setdefault(upload_id, []).append(status)
    assert all(len(ids) == 1 for ids in by_upload.values())  # both copies got the same reading
    assert all(sorted(s) == [200, 201] for s in statuses.values())  # made by one, found by the other
    with Logbook(tmp_path) as log:
        readings = log.readings_in(firing["id"])
        assert len(readings) == ROUNDS
        assert sorted(r["upload_id"] for r in readings) == sorted(by_upload)
        assert sorted(r["photo_key"] for r in readings) == sorted(photo_key(p, ".jpg") for p in photos)
