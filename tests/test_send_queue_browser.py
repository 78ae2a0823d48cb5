"""The send queue in headless Chromium at phone size: photos taken while the browser is offline
are kept in IndexedDB, listed, sent when the server answers again and stored exactly once, at
the time they were taken (fixtures from tests/conftest.py)."""

from __future__ import annotations

import base64
import io
import json
import re
import struct
import urllib.request
from datetime import date, datetime, time

import pytest
from PIL import Image

from glowtemp.estimation.scales import celsius_to_kelvin
from glowtemp.render.synthetic import encode_jpeg, render_photo
from glowtemp.render.synthetic_camera import ideal_camera

TODAY = date.today()
EARLY, LATE = datetime.combine(TODAY, time(14, 5)), datetime.combine(TODAY, time(14, 35))


@pytest.fixture
def queue_server(own_live_server):
    """(URL, firing log) of a server with a data folder of its own."""
    base, app = own_live_server
    return base, app.extensions["glowtemp"]["logbook"]


def spy_hole_photo(folder, name: str, taken_at: datetime, celsius: float = 1000.0):
    """A small spy-hole JPEG (invented scene) whose EXIF DateTimeOriginal is ``taken_at``."""
    rendered = render_photo(celsius_to_kelvin(celsius), camera=ideal_camera(), size=(160, 120), taken_at=taken_at)
    path = folder / name
    path.write_bytes(encode_jpeg(rendered))
    return path


def new_firing(base: str, **fields) -> int:
    request = urllib.request.Request(f"{base}/api/firings", data=json.dumps({"name": "Shed kiln", **fields}).encode(),
                                     headers={"Content-Type": "application/json"}, method="POST")  # fmt: skip
    with urllib.request.urlopen(request, timeout=10) as answer:
        return json.loads(answer.read())["id"]


def readings_of(base: str, firing_id: int) -> list[dict]:
    """The firing's readings as the server has them (asked from Python, not the browser)."""
    with urllib.request.urlopen(f"{base}/api/firings/{firing_id}", timeout=10) as answer:
        return json.loads(answer.read())["readings"]


def local(text: str) -> datetime:
    return datetime.fromisoformat(text).astimezone().replace(tzinfo=None)


def kept_in_browser(page) -> int:
    return page.evaluate("""() => new Promise((resolve) => {
        const open = indexedDB.open("glowtemp", 1);
        open.onsuccess = () => {
            const request = open.result.transaction("waiting").objectStore("waiting").count();
            request.onsuccess = () => resolve(request.result);
        };
    })""")


def take_offline(page, photo, thermocouple_c: str = ""):
    """Offline: take a photo with the camera button and press "Measure and add"."""
    page.set_input_files("#reading-camera", str(photo))
    if thermocouple_c:
        page.fill("#reference", thermocouple_c)
    page.click("#reading-submit")
    page.wait_for_selector("#reading-status:has-text('kept on this device')")


def test_a_photo_taken_offline_is_kept_through_the_page_closing_and_stored_once(queue_server, browser_page, tmp_path, artifacts):
    base, _ = queue_server
    page = browser_page
    firing_id = new_firing(base)
    page.goto(f"{base}/firings/{firing_id}")
    page.context.set_offline(True)
    take_offline(page, spy_hole_photo(tmp_path, "spy.jpg", EARLY), thermocouple_c="1000")
    assert page.text_content("#waiting-title") == "1 photo waiting to send, taken 14:05"
    assert "into Shed kiln · thermocouple 1000 °C" in page.text_content("#waiting-list")
    assert page.input_value("#reference") == ""  # kept with the photo, the form is free again
    page.screenshot(path=str(artifacts / "waiting-to-send.png"), full_page=True)
    assert readings_of(base, firing_id) == []

    page.goto("about:blank")  # the firing's page is gone while the device is offline
    page.context.set_offline(False)
    page.goto(f"{base}/firings/{firing_id}")
    page.wait_for_selector("article.reading")  # sent on load, then the page shows it
    page.wait_for_load_state()
    (reading,) = readings_of(base, firing_id)
    assert local(reading["taken_at"]) == EARLY  # the photo's EXIF time, not when it arrived
    assert reading["reference_c"] == 1000 and re.fullmatch(r"[0-9a-f]{32}", reading["upload_id"])
    card = page.locator("article.reading")
    assert card.count() == 1 and "Thermocouple 1000 °C" in card.text_content()
    assert f"{TODAY:%Y-%m-%d} 14:05" in card.locator("h3").text_content()
    assert page.locator("#waiting").is_hidden() and kept_in_browser(page) == 0

    page.reload()
    assert page.locator("article.reading").count() == 1 and len(readings_of(base, firing_id)) == 1


def test_a_lost_answer_then_a_retry_stores_one_reading(queue_server, browser_page, tmp_path):
    base, _ = queue_server
    page = browser_page
    firing_id = new_firing(base)
    page.goto(f"{base}/firings/{firing_id}")
    first_answers = []

    def lose_the_first_answer(route):
        if first_answers:
            route.continue_()
            return
        first_answers.append(route.fetch().status)  # the server stores the reading ...
        route.abort("connectionreset")  # ... and its answer never reaches the page

    page.route(f"**/api/firings/{firing_id}/readings", lose_the_first_answer)
    take_offline(page, spy_hole_photo(tmp_path, "spy.jpg", EARLY))
    assert first_answers == [201] and len(readings_of(base, firing_id)) == 1
    assert page.text_content("#waiting-title") == "1 photo waiting to send, taken 14:05"

    with page.expect_response(f"**/api/firings/{firing_id}/readings") as retry:
        page.click("#waiting-list button.send-now")
    assert retry.value.status == 200  # the reading already stored, not a new one
    page.wait_for_selector("article.reading")
    page.wait_for_load_state()
    assert len(readings_of(base, firing_id)) == 1 and page.locator("article.reading").count() == 1
    assert kept_in_browser(page) == 0


def test_waiting_photos_are_listed_by_time_and_one_is_discarded(queue_server, browser_page, tmp_path):
    base, log = queue_server
    page = browser_page
    firing_id = new_firing(base)
    late = spy_hole_photo(tmp_path, "late.jpg", LATE, celsius=1050.0)
    early = spy_hole_photo(tmp_path, "early.jpg", EARLY)
    page.goto(f"{base}/firings/{firing_id}")
    page.context.set_offline(True)
    page.set_input_files("#reading-file", [str(late), str(early)])  # two saved photos at once
    assert page.text_content("#chosen-photo") == "2 photos: late.jpg, early.jpg"
    page.click("#reading-submit")
    page.wait_for_selector("#reading-status:has-text('2 photos are kept on this device')")
    assert page.text_content("#waiting-title") == "2 photos waiting to send, taken 14:05 and 14:35"
    items = page.locator("#waiting-list li")
    assert [items.nth(n).locator(".waiting-when").text_content() for n in range(2)] == [
        "Taken 14:05 (camera clock)", "Taken 14:35 (camera clock)"]  # fmt: skip

    later = page.locator("#waiting-list li", has_text="Taken 14:35")
    later.locator("button.discard").click()
    later.locator("button.discard-yes").click()
    page.wait_for_selector("#waiting-title:text-is('1 photo waiting to send, taken 14:05')")
    assert "14:35 was discarded" in page.text_content("#waiting-status")
    assert kept_in_browser(page) == 1

    page.goto("about:blank")
    page.context.set_offline(False)
    page.goto(f"{base}/firings/{firing_id}")
    page.wait_for_selector("article.reading")
    (reading,) = readings_of(base, firing_id)
    assert local(reading["taken_at"]) == EARLY
    assert log._read("SELECT COUNT(*) FROM readings")[0][0] == 1  # the discarded photo never arrived


def test_several_photos_refuse_one_thermocouple_value(queue_server, browser_page, tmp_path):
    base, _ = queue_server
    page = browser_page
    firing_id = new_firing(base)
    page.goto(f"{base}/firings/{firing_id}")
    photos = [str(spy_hole_photo(tmp_path, f"{n}.jpg", EARLY)) for n in range(2)]
    page.set_input_files("#reading-file", photos)
    page.fill("#reference", "1000")
    page.click("#reading-submit")
    assert "belong to one photo" in page.text_content("#reading-status")
    assert readings_of(base, firing_id) == [] and kept_in_browser(page) == 0


def test_readings_sent_late_take_their_place_by_the_time_taken(queue_server, browser_page, tmp_path):
    base, _ = queue_server
    page = browser_page
    firing_id = new_firing(base, started_at=datetime.combine(TODAY, time(14, 0)).astimezone().isoformat())
    page.goto(f"{base}/firings/{firing_id}")
    page.set_input_files("#reading-camera", str(spy_hole_photo(tmp_path, "late.jpg", LATE, celsius=1050.0)))
    with page.expect_navigation():
        page.click("#reading-submit")  # online: stored at once
    page.wait_for_selector("article.reading")
    page.context.set_offline(True)
    take_offline(page, spy_hole_photo(tmp_path, "early.jpg", EARLY))  # taken earlier, arrives later
    with page.expect_navigation():
        page.context.set_offline(False)  # back online: sent by itself, then shown
    page.wait_for_function("() => document.querySelectorAll('article.reading').length === 2")
    headings = page.locator("article.reading h3").all_text_contents()
    assert [h.split(" · ")[0][-5:] for h in headings] == ["14:35", "14:05"]  # newest taken first
    assert [h.split(" · ")[1] for h in headings] == ["0.58 h", "0.08 h"]  # hours from the 14:00 start
    assert [local(r["taken_at"]) for r in readings_of(base, firing_id)] == [EARLY, LATE]


def test_the_measuring_page_shows_a_photo_sent_once_it_is_online(queue_server, browser_page, tmp_path):
    base, log = queue_server
    page = browser_page
    page.goto(base)
    page.context.set_offline(True)
    page.set_input_files("#camera-input", str(spy_hole_photo(tmp_path, "spy.jpg", EARLY)))
    page.wait_for_selector("#problem:has-text('Not measured yet')")
    assert "kept on this device" in page.text_content("#problem")
    assert page.text_content("#waiting-title") == "1 photo waiting to send, taken 14:05"
    page.context.set_offline(False)  # the browser's online event sends it
    page.wait_for_selector("#result:not([hidden])")
    assert "°C" in page.text_content("#reading-value")
    assert page.locator("#waiting").is_hidden()
    (row,) = log._read("SELECT taken_at, firing_id, upload_id FROM readings")
    assert local(row["taken_at"]) == EARLY and row["firing_id"] is None and row["upload_id"]


# --- the page's own EXIF reader against Pillow's ---------------------------------------------


def hand_made_exif_jpeg(taken: str, order: str) -> bytes:
    """A JPEG whose APP1 holds a TIFF block in byte order ``order`` ("II" Intel, "MM" Motorola)
    with IFD0 -> Exif IFD -> DateTimeOriginal, laid out by hand after CIPA DC-008 and TIFF 6.0."""
    ifd0_at, exif_at, text_at = 8, 26, 44
    e = "<" if order == "II" else ">"
    tiff = order.encode() + struct.pack(e + "HI", 42, ifd0_at)
    tiff += struct.pack(e + "H", 1) + struct.pack(e + "HHII", 0x8769, 4, 1, exif_at) + struct.pack(e + "I", 0)
    tiff += struct.pack(e + "H", 1) + struct.pack(e + "HHII", 0x9003, 2, 20, text_at) + struct.pack(e + "I", 0)
    tiff += taken.encode("ascii") + b"\0"
    app1 = b"Exif\0\0" + tiff
    out = io.BytesIO()
    Image.new("RGB", (16, 16), (200, 60, 10)).save(out, "JPEG")
    plain = out.getvalue()
    return plain[:2] + b"\xff\xe1" + struct.pack(">H", len(app1) + 2) + app1 + plain[2:]


def page_exif_time(page, data: bytes):
    return page.evaluate(
        """async (encoded) => {
            const { exifTakenAt } = await import("/static/exif_time.js");
            const bytes = Uint8Array.from(atob(encoded), (c) => c.charCodeAt(0));
            const taken = exifTakenAt(bytes.buffer);
            return taken && [taken.getFullYear(), taken.getMonth() + 1, taken.getDate(),
                             taken.getHours(), taken.getMinutes(), taken.getSeconds()];
        }""",
        base64.b64encode(data).decode(),
    )


def pillow_exif_time(data: bytes):
    """DateTimeOriginal as Pillow reads it (tag 0x9003 of the Exif IFD, 0x8769)."""
    text = Image.open(io.BytesIO(data)).getexif().get_ifd(0x8769).get(0x9003)
    return None if text is None else list(datetime.strptime(text, "%Y:%m:%d %H:%M:%S").timetuple()[:6])


def test_the_pages_exif_reader_agrees_with_pillow(queue_server, browser_page, tmp_path):
    base, _ = queue_server
    page = browser_page
    page.goto(base)
    rendered = spy_hole_photo(tmp_path, "spy.jpg", datetime(2023, 11, 30, 23, 59, 58)).read_bytes()
    photos = [rendered, hand_made_exif_jpeg("2024:02:29 06:07:08", "II"), hand_made_exif_jpeg("2024:07:01 18:30:00", "MM")]
    for data in photos:
        assert pillow_exif_time(data) is not None
        assert page_exif_time(page, data) == pillow_exif_time(data)
    no_exif = io.BytesIO()
    Image.open(io.BytesIO(rendered)).save(no_exif, "JPEG")
    assert pillow_exif_time(no_exif.getvalue()) is None and page_exif_time(page, no_exif.getvalue()) is None
    unknown = hand_made_exif_jpeg("0000:00:00 00:00:00", "II")  # an unknown time (CIPA DC-008)
    assert page_exif_time(page, unknown) is None
    assert page_exif_time(page, photos[1][:60]) is None  # cut inside the Exif block: no time, no error
    assert page_exif_time(page, b"not a photo at all") is None
