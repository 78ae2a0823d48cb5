"""Hostile and broken input, one named case a row: each gets a clear 4xx answer in plain words,
no traceback, nothing stored, and the server goes on serving."""

from __future__ import annotations

import io
import struct
import zlib
from dataclasses import dataclass, field

import pytest
from PIL import Image

KB = 1024


def png(width: int, height: int, mode="RGB", colour=(200, 60, 5)) -> bytes:
    out = io.BytesIO()
    Image.new(mode, (width, height), colour if mode == "RGB" else 0).save(out, "PNG")
    return out.getvalue()


def png_claiming(width: int, height: int) -> bytes:
    """A small PNG whose header claims ``width`` x ``height`` (a decompression bomb's header).

    The IHDR chunk is rewritten with its CRC-32 recomputed (PNG, ISO/IEC 15948:2004, 5.3 and 11.2.2)."""
    data = bytearray(png(16, 16))
    ihdr = 8  # after the PNG signature
    data[ihdr + 8: ihdr + 16] = struct.pack(">II", width, height)
    crc = zlib.crc32(bytes(data[ihdr + 4: ihdr + 8 + 13]))
    data[ihdr + 8 + 13: ihdr + 8 + 17] = struct.pack(">I", crc)
    return bytes(data)


def gif() -> bytes:
    out = io.BytesIO()
    Image.new("RGB", (32, 32), (200, 60, 5)).save(out, "GIF")
    return out.getvalue()


@dataclass
class Case:
    """One bad request: where it goes, its form fields and photo, and the answer expected."""

    name: str
    status: int
    words: str
    photo: bytes | None = b"GOOD"  # GOOD: the good test photo
    fields: dict = field(default_factory=dict)
    into_firing: bool = False
    filename: str = "glow.jpg"


def good_photo_with_tail_cut(photo: bytes) -> bytes:
    return photo[: len(photo) // 3]


CASES = [
    # The photo itself
    Case("no photo field at all", 400, "named 'photo'", photo=None),
    Case("zero-byte photo", 400, "empty", photo=b""),
    Case("plain text named .jpg", 422, "not an image", photo=b"kiln log: 09:00 650 C\n" * 40),
    Case("an HTML page posing as a photo", 422, "not an image",
         photo=b"<!doctype html><script>alert(1)</script>" * 20, filename="x.jpg"),
    Case("a PDF", 422, "not an image", photo=b"%PDF-1.7\n%\xe2\xe3\xcf\xd3\n1 0 obj\n<<>>\nendobj\n" * 30),
    Case("truncated JPEG", 422, "", photo=b"CUT"),
    Case("JPEG with a damaged header", 422, "", photo=b"DAMAGED"),
    Case("GIF, a format that is not a photo", 422, "GIF", photo=gif()),
    Case("image smaller than 8 x 8", 422, "at least", photo=png(4, 4)),
    Case("120-megapixel 1-bit PNG of 15 KB", 422, "megapixels", photo=png(12000, 10000, mode="1")),
    Case("PNG header claiming 100000 x 100000", 422, "too large", photo=png_claiming(100_000, 100_000)),
    # Regions
    Case("region outside the photo", 400, "outside", fields={"region": "5000,5000,10,10"}),
    Case("region of zero width", 400, "positive width", fields={"region": "10,10,0,20"}),
    Case("region with a negative size", 400, "positive width", fields={"region": "10,10,-5,20"}),
    Case("region left of the photo", 400, "left of or above", fields={"region": "-10,10,5,20"}),
    Case("region that is not numbers", 400, "whole numbers", fields={"region": "ten,10,5,20"}),
    Case("region with fractions", 400, "whole pixel", fields={"region": "10.5,10,5,20"}),
    Case("region of NaN", 400, "whole pixel", fields={"region": "nan,10,5,20"}),
    Case("region of huge numbers", 400, "within", fields={"region": "0,0,1e300,1e300"}),
    Case("circle with a huge radius", 400, "within", fields={"circle": "10,10,99999999999999999999"}),
    Case("circle of zero radius", 400, "positive radius", fields={"circle": "10,10,0"}),
    Case("circle with two numbers", 400, "3 whole numbers", fields={"circle": "50,50"}),
    Case("region in Arabic-Indic digits", 400, "whole numbers", fields={"region": "١٠,٢٠,٣٠,٤٠"}),
    Case("circle in full-width digits", 400, "whole numbers", fields={"circle": "１０,１０,５"}),
    Case("region with underscores in numbers", 400, "whole numbers", fields={"region": "1_0,10,5,20"}),
    Case("region and circle both", 400, "not both", fields={"region": "1,1,5,5", "circle": "5,5,3"}),
    Case("region text of 60 KB", 400, "", fields={"region": "1," * 30_000}),
    # Profiles and firings
    Case("unknown camera profile", 400, "no camera profile called", fields={"profile": "no such camera"}),
    Case("profile name reaching out of the folder", 400, "profile name", fields={"profile": "../../etc/passwd"}),
    Case("note of 6000 characters", 400, "at most 5000", fields={"note": "n" * 6000}, into_firing=True),
    Case("text field beyond the form limit", 413, "text field", fields={"note": "n" * (300 * KB)}, into_firing=True),
    Case("thermocouple value that is not a number", 400, "number of °C", fields={"reference_c": "hot"}, into_firing=True),
    Case("thermocouple value of infinity", 400, "between", fields={"reference_c": "inf"}, into_firing=True),
    Case("a cone not in the table", 400, "cone table", fields={"cone": "99"}, into_firing=True),
    Case("time that is not a time", 400, "date and time", fields={"taken_at": "noon"}, into_firing=True),
    # What is photographed, and the magnet test
    Case("unknown scene", 400, "one of kiln, steel, other", fields={"scene": "volcano"}),
    Case("scene in another case", 400, "one of kiln, steel, other", fields={"scene": "Kiln"}),
    Case("unknown scene into a firing", 400, "one of kiln, steel, other", fields={"scene": "forge"}, into_firing=True),
    Case("scene of 10 KB", 400, "one of kiln, steel, other", fields={"scene": "s" * (10 * KB)}),
    Case("magnet with a bad value", 400, "'let go'", fields={"magnet": "stuck fast"}, into_firing=True),
    Case("magnet as a number", 400, "'let go'", fields={"magnet": "770"}, into_firing=True),
    # Sending again (the page's send queue)
    Case("upload id of SQL", 400, "upload id", fields={"upload_id": "x'; DROP TABLE readings; --"}),
    Case("upload id of 10 KB", 400, "upload id", fields={"upload_id": "a" * (10 * KB)}),
    Case("upload id with a path in it", 400, "upload id", fields={"upload_id": "../../photos/0123456789abcdef"}),
    Case("captured_at that is not a time", 400, "captured_at", fields={"captured_at": "when the kiln was hot"},
         into_firing=True),
]


def stored_state(app):
    log = app.extensions["glowtemp"]["logbook"]
    readings = log._read("SELECT COUNT(*) FROM readings")[0][0]
    photos = sorted(p.name for p in log.photos.folder.iterdir())
    return readings, photos


@pytest.fixture
def firing_id(web_client):
    return web_client.post("/api/firings", json={"name": "Target"}).get_json()["id"]


@pytest.mark.filterwarnings("ignore::PIL.Image.DecompressionBombWarning")  # the bomb cases, refused
@pytest.mark.parametrize("case", CASES, ids=[case.name for case in CASES])
def test_bad_upload_is_refused_plainly_and_stores_nothing(web_app, web_client, firing_id, two_halves_jpeg, case):
    photo = {b"GOOD": two_halves_jpeg, b"CUT": good_photo_with_tail_cut(two_halves_jpeg),
             b"DAMAGED": two_halves_jpeg[:2] + b"\x00" * 40 + two_halves_jpeg[42:]}.get(case.photo, case.photo)  # fmt: skip
    data = dict(case.fields)
    if photo is not None:
        data["photo"] = (io.BytesIO(photo), case.filename)
    url = f"/api/firings/{firing_id}/readings" if case.into_firing else "/api/readings"
    answer = web_client.post(url, data=data, content_type="multipart/form-data")
    assert answer.status_code == case.status, answer.get_json()
    message = answer.get_json()["error"]
    assert case.words.lower() in message.lower()
    assert 10 < len(message) < 600  # a sentence for people, not a dump of the input
    assert "Traceback" not in answer.get_data(as_text=True)
    assert stored_state(web_app) == (0, [])
    # Still serving: a good photo goes through at once.
    good = web_client.post(url, data={"photo": (io.BytesIO(two_halves_jpeg), "ok.jpg")}, content_type="multipart/form-data")
    assert good.status_code == 201


@pytest.mark.parametrize(
    "name, method, url, body, status, words",
    [
        ("unknown firing", "post", "/api/firings/999/readings", None, 404, "no firing number 999"),
        ("firing number that is not a number", "get", "/api/firings/abc", None, 404, "nothing at this address"),
        ("huge firing number", "get", "/api/firings/99999999999999999999999", None, 404, ""),
        ("unknown reading", "post", "/api/readings/4242/region", {"region": "1,1,5,5"}, 404, "no reading number 4242"),
        ("firing name of 300 characters", "post", "/api/firings", {"name": "n" * 300}, 400, "at most 200"),
        ("firing without a name", "post", "/api/firings", {"kind": "glaze"}, 400, "name is needed"),
        ("firing of an unknown kind", "post", "/api/firings", {"name": "x", "kind": "microwave"}, 400, "must be one of"),
        ("firing with an unknown field", "post", "/api/firings", {"name": "x", "colour": "red"}, 400, "not colour"),
        ("JSON body that is a list", "post", "/api/firings", [1, 2], 400, "json object"),
        ("JSON body of 300 KB", "post", "/api/firings", {"name": "x", "notes": "n" * (300 * KB)}, 413, "body"),
        ("target of 10000 °C", "post", "/api/firings", {"name": "x", "target_c": 10000}, 400, "between"),
        ("firing of an unknown scene", "post", "/api/firings", {"name": "x", "scene": "lava"}, 400, "kiln, steel, other"),
        ("firing with a scene that is a list", "post", "/api/firings", {"name": "x", "scene": ["kiln"]}, 400, "kiln, steel, other"),
    ],
)
def test_bad_request_elsewhere_is_refused_plainly(web_app, web_client, name, method, url, body, status, words):
    kwargs = {} if body is None else {"json": body}
    if method == "post" and url.endswith("/readings") and body is None:
        kwargs = {"data": {"note": "x"}, "content_type": "multipart/form-data"}
    answer = getattr(web_client, method)(url, **kwargs)
    assert answer.status_code == status, answer.get_json()
    assert words.lower() in answer.get_json()["error"].lower()
    assert "Traceback" not in answer.get_data(as_text=True)
    assert web_app.extensions["glowtemp"]["logbook"].list_firings() == []
    assert web_client.get("/api/profiles").status_code == 200


def test_upload_beyond_the_size_limit_is_413(tmp_path, two_halves_jpeg):
    from glowtemp.web import create_app

    app = create_app({"DATA_DIR": tmp_path, "MAX_CONTENT_LENGTH": 256 * KB})
    answer = app.test_client().post("/api/readings", data={"photo": (io.BytesIO(b"\xff\xd8" + b"\0" * 300 * KB), "a.jpg")})
    assert answer.status_code == 413 and "larger than 0 MB" not in answer.get_json()["error"]
    assert "send a smaller photo" in answer.get_json()["error"]
    assert stored_state(app) == (0, [])


def test_the_pixel_limit_is_configurable(tmp_path, two_halves_jpeg):
    from glowtemp.web import create_app

    app = create_app({"DATA_DIR": tmp_path, "MAX_PHOTO_PIXELS": 10_000})  # the test photo has 76 800
    answer = app.test_client().post("/api/readings", data={"photo": (io.BytesIO(two_halves_jpeg), "a.jpg")})
    assert answer.status_code == 422 and "0.01 megapixels" in answer.get_json()["error"]


def test_the_client_file_name_is_never_kept(web_app, web_client, two_halves_jpeg):
    hostile = '../../<script>alert("x")</script>\r\n=HYPERLINK("x").jpg'
    answer = web_client.post("/api/readings", data={"photo": (io.BytesIO(two_halves_jpeg), hostile)})
    assert answer.status_code == 201
    body = answer.get_json()
    stored = web_app.extensions["glowtemp"]["logbook"].get_reading(body["id"])
    assert stored["photo_name"] == body["photo"] and body["photo"].startswith("photo-")
    assert "script" not in str(stored) and ".." not in stored["photo_name"]
    assert [p.name for p in web_app.extensions["glowtemp"]["logbook"].photos.folder.iterdir()] == [stored["photo_key"]]


def test_a_photo_of_megabytes_with_line_breaks_in_its_bytes_is_not_a_long_text_field(web_client, two_halves_jpeg):
    # Data after a JPEG's end-of-image marker is ignored by decoders (ITU-T T.81 B.2.1); bytes full
    # of CR LF and dashes make the multipart reader keep back possible boundary starts as it reads.
    import os

    tail = b"".join(b"\r\n--" + os.urandom(500) for _ in range(4000))  # about 2 MB
    answer = web_client.post("/api/readings", data={"photo": (io.BytesIO(two_halves_jpeg + tail), "big.jpg")})
    assert answer.status_code == 201, answer.get_json()


# Where the browser goes after pairing: only a path on this server, whatever "next" holds.
# Browsers drop tabs and line breaks from addresses and read "\" as "/" (WHATWG URL Standard,
# basic URL parser), so "/<TAB>/evil.example" would mean "//evil.example", another site.
NEXT_CASES = [
    ("tab between slashes", "/\t/evil.example"),
    ("line break between slashes", "/\n/x"),
    ("carriage return", "/\r/evil.example"),
    ("two slashes", "//evil.example/"),
    ("backslash", "/\\evil.example"),
    ("a scheme", "https://evil.example/"),
    ("javascript scheme", "javascript:alert(1)"),
    ("a space before the slashes", " //evil.example"),
    ("a relative path", "evil.example"),
    ("percent-escaped slash then a slash", "/%2f/evil.example"),
]


@pytest.fixture
def paired_web_app(tmp_path):
    from glowtemp.web import create_app

    return create_app({"DATA_DIR": tmp_path / "paired", "TESTING": True, "PAIRING": True})


def _location_is_same_site(location: str) -> bool:
    from urllib.parse import urlsplit

    parts = urlsplit(location)
    return (not parts.scheme and not parts.netloc and location.startswith("/") and not location.startswith("//")
            and all(" " < ch < "\x7f" and ch != "\\" for ch in location))  # fmt: skip


@pytest.mark.parametrize("name, target", NEXT_CASES, ids=[name for name, _ in NEXT_CASES])
def test_after_pairing_next_never_leads_to_another_site(paired_web_app, name, target):
    from urllib.parse import quote

    pairing = paired_web_app.extensions["glowtemp"]["pairing"]
    client = paired_web_app.test_client()
    client.environ_base["REMOTE_ADDR"] = "127.0.0.2"
    shown = client.get("/pair?next=" + quote(target, safe=""))
    assert shown.status_code == 200, name
    import html
    import re

    kept = re.search(r'name="next" value="([^"]*)"', shown.get_data(as_text=True)).group(1)
    assert _location_is_same_site(html.unescape(kept)), kept
    answer = client.post("/pair", data={"code": pairing.code, "next": target})
    assert answer.status_code == 303, name
    assert _location_is_same_site(answer.headers["Location"]), answer.headers["Location"]
    # Once paired, /pair sends the browser on at once: the same rule holds there.
    again = client.get("/pair?next=" + quote(target, safe=""))
    assert again.status_code == 303 and _location_is_same_site(again.headers["Location"])


def test_a_same_site_next_with_a_query_is_kept(paired_web_app):
    pairing = paired_web_app.extensions["glowtemp"]["pairing"]
    client = paired_web_app.test_client()
    answer = client.post("/pair", data={"code": pairing.code, "next": "/firings/?unit=f"})
    assert answer.headers["Location"] == "/firings/?unit=f"


# Text that matplotlib would read as mathtext between dollar signs (matplotlib documentation,
# "Writing mathematical expressions"): names are drawn as typed, and the pages still answer.
DOLLAR_NAMES = [
    ("two prices", "$5 or $6 glaze", "$6$"),
    ("an unclosed mathtext group", "test $^{$ glaze", "$^{6$"),
    ("a bad mathtext command", r"$\frac{$ kiln", r"$\x{$"),
]


@pytest.mark.parametrize("name, text, cone", DOLLAR_NAMES, ids=[name for name, _, _ in DOLLAR_NAMES])
def test_dollar_signs_in_firing_and_cone_names_are_drawn_literally(tmp_path, two_halves_jpeg, name, text, cone):
    from glowtemp.shell.cli import main
    from glowtemp.web import create_app

    data = tmp_path / "data"
    data.mkdir()
    (data / "cones.csv").write_text(f'cone,temperature_c\n"{cone}",1100\n', encoding="utf-8")
    app = create_app({"DATA_DIR": data, "TESTING": True})
    client = app.test_client()
    firing = client.post("/api/firings", json={"name": text, "target_cone": cone}).get_json()["id"]
    taken = client.post(f"/api/firings/{firing}/readings", data={"photo": (io.BytesIO(two_halves_jpeg), "a.jpg"),
                        "cone": cone, "cone_state": "bent"})  # fmt: skip
    assert taken.status_code == 201, taken.get_json()
    page = client.get(f"/firings/{firing}")
    assert page.status_code == 200
    text_of_page = page.get_data(as_text=True)
    chart = text_of_page[text_of_page.index("<svg"): text_of_page.index("</svg>")]
    assert f"cone {cone}".replace("&", "&amp;") in chart  # the label as typed, one text element
    curve = tmp_path / "curve.png"
    assert main(["export", str(firing), "--curve", str(curve), "--data", str(data)]) == 0
    assert curve.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


# Photos that are measured but must say what is wrong with them.
def cut_with_end_marker(photo: bytes) -> bytes:
    """A third of a JPEG with its end-of-image marker put back (ITU-T T.81 B.2.1: EOI is FFD9)."""
    return photo[: len(photo) // 3] + b"\xff\xd9"


WARNED_CASES = [
    ("JPEG cut to a third with its end marker appended", cut_with_end_marker, "incomplete-image"),
]


@pytest.mark.parametrize("name, damage, code", WARNED_CASES, ids=[name for name, _, _ in WARNED_CASES])
def test_a_damaged_photo_that_still_decodes_carries_a_warning(web_client, two_halves_jpeg, name, damage, code):
    answer = web_client.post("/api/readings", data={"photo": (io.BytesIO(damage(two_halves_jpeg)), "a.jpg"),
                                                    "region": "0,0,100,100"})  # fmt: skip
    assert answer.status_code == 201, answer.get_json()
    assert code in [warning["code"] for warning in answer.get_json()["warnings"]]
    whole = web_client.post("/api/readings", data={"photo": (io.BytesIO(two_halves_jpeg), "b.jpg")})
    assert code not in [warning["code"] for warning in whole.get_json()["warnings"]]


# JSON bodies that once reached a traceback: each a 400 in plain words, the firing unchanged.
FOUR_HUNDRED_DIGITS = "9" * 400
JSON_CASES = [
    ("PATCH with a reserved key firing_id", "patch", "/api/firings/{id}", '{"firing_id": 1}', "firing_id"),
    ("PATCH with a reserved key self", "patch", "/api/firings/{id}", '{"self": 1}', "self"),
    ("PATCH with an unknown key", "patch", "/api/firings/{id}", '{"colour": "red", "name": "x"}', "colour"),
    ("400-digit target_c", "post", "/api/firings", '{"name": "x", "target_c": %s}' % FOUR_HUNDRED_DIGITS, "digits"),
    ("400-digit target_f", "post", "/api/firings", '{"name": "x", "target_f": %s}' % FOUR_HUNDRED_DIGITS, "digits"),
    ("400-digit target_f as text", "post", "/api/firings", '{"name": "x", "target_f": "%s"}' % FOUR_HUNDRED_DIGITS, "between"),
    ("400-digit reference_c", "patch", "/api/firings/{id}/readings/{rid}", '{"reference_c": %s}' % FOUR_HUNDRED_DIGITS, "digits"),
    ("400-digit reference_c as text", "patch", "/api/firings/{id}/readings/{rid}",
     '{"reference_c": "%s"}' % FOUR_HUNDRED_DIGITS, "between"),
    ("started_at at the calendar's start", "patch", "/api/firings/{id}", '{"started_at": "0001-01-01T00:00:00+01:00"}', "years"),
    ("started_at at the calendar's end", "post", "/api/firings", '{"name": "x", "started_at": "9999-12-31T23:59:59-01:00"}', "years"),
    ("taken_at at the calendar's start", "patch", "/api/firings/{id}/readings/{rid}", '{"taken_at": "0001-01-01T00:00:00+01:00"}', "years"),
    ("taken_at at the calendar's end", "patch", "/api/firings/{id}/readings/{rid}", '{"taken_at": "9999-12-31T23:59:59-01:00"}', "years"),
    ("a lone surrogate in a new firing's name", "post", "/api/firings", '{"name": "\\ud800"}', "surrogate"),
    ("a lone surrogate in a changed name", "patch", "/api/firings/{id}", '{"name": "kiln \\udfff"}', "surrogate"),
    ("a lone surrogate in a key", "patch", "/api/firings/{id}", '{"\\ud800": 1}', "surrogate"),
    ("a lone surrogate in a note", "patch", "/api/firings/{id}/readings/{rid}", '{"note": "\\ud800"}', "surrogate"),
    ("50,000 nested [", "post", "/api/firings", "[" * 50_000, "nests"),
    ("50,000 nested [ in a PATCH", "patch", "/api/firings/{id}", '{"name": ' + "[" * 50_000, "nests"),
    ("NaN as a temperature", "post", "/api/firings", '{"name": "x", "target_c": NaN}', "not a json number"),
    ("true as a temperature in °F", "post", "/api/firings", '{"name": "x", "target_f": true}', "number of °F"),
    ("not UTF-8", "post", "/api/firings", b'{"name": "\xff\xfe"}', "utf-8"),
    ("a region as 50,000 nested [", "post", "/api/readings/{rid}/region", "[" * 50_000, "nests"),
    ("PATCH with an unknown scene", "patch", "/api/firings/{id}", '{"scene": "forge"}', "kiln, steel, other"),
    ("PATCH with a scene of null", "patch", "/api/firings/{id}", '{"scene": null}', "kiln, steel, other"),
    ("PATCH with an empty scene", "patch", "/api/firings/{id}", '{"scene": ""}', "kiln, steel, other"),
    ("magnet with a bad value", "patch", "/api/firings/{id}/readings/{rid}", '{"magnet": "stuck"}', "let go"),
    ("magnet as true", "patch", "/api/firings/{id}/readings/{rid}", '{"magnet": true}', "let go"),
    ("magnet as a list", "patch", "/api/firings/{id}/readings/{rid}", '{"magnet": ["let go"]}', "let go"),
    ("re-measure with an unknown scene", "post", "/api/readings/{rid}/region", '{"region": "10,10,50,50", "scene": "x"}',
     "kiln, steel, other"),
    ("map with an unknown scene", "post", "/api/readings/{rid}/map", '{"scene": "lava"}', "kiln, steel, other"),
]


@pytest.mark.parametrize("name, method, url, body, words", JSON_CASES, ids=[case[0] for case in JSON_CASES])
def test_bad_json_is_refused_plainly_and_changes_nothing(web_app, web_client, two_halves_jpeg, name, method, url, body, words):
    firing = web_client.post("/api/firings", json={"name": "Kept", "target_c": 1222}).get_json()["id"]
    reading = web_client.post(f"/api/firings/{firing}/readings", data={"photo": (io.BytesIO(two_halves_jpeg), "a.jpg"),
                              "reference_c": "1200"}).get_json()["id"]  # fmt: skip
    before = web_client.get(f"/api/firings/{firing}").get_json()
    answer = getattr(web_client, method)(url.format(id=firing, rid=reading), data=body, content_type="application/json")
    assert answer.status_code == 400, (answer.status_code, answer.get_data(as_text=True)[:300])
    message = answer.get_json()["error"]
    assert words.lower() in message.lower() and 10 < len(message) < 600
    assert web_client.get(f"/api/firings/{firing}").get_json() == before
    assert len(web_app.extensions["glowtemp"]["logbook"].list_firings()) == 1


def test_many_addresses_cannot_share_the_guessing_of_one_code(paired_web_app):
    from glowtemp.web.pairing import CODE_WRONG_TRIES, WRONG_TRIES, PairingCodes

    now = [1000.0]
    printed = []
    pairing = PairingCodes(on_new_code=printed.append, clock=lambda: now[0])
    paired_web_app.extensions["glowtemp"]["pairing"] = pairing
    first = pairing.code
    wrong = "0" * 8 if first != "0" * 8 else "1" * 8
    sent = 0
    for number in range(2, 100):  # many loopback addresses, each staying under its own limit
        client = paired_web_app.test_client()
        client.environ_base["REMOTE_ADDR"] = f"127.0.0.{number}"
        for _ in range(WRONG_TRIES - 1):
            if sent == CODE_WRONG_TRIES:
                break
            assert client.post("/pair", data={"code": wrong}).status_code == 403
            sent += 1
        if sent == CODE_WRONG_TRIES:
            break
    assert printed == [pairing.code] and pairing.code != first  # retired, and a new code printed
    late = paired_web_app.test_client()
    late.environ_base["REMOTE_ADDR"] = "127.0.1.1"  # a fresh address, with the old code
    answer = late.post("/pair", data={"code": first})
    assert answer.status_code == 429 and "new code" in answer.get_data(as_text=True)
    assert late.post("/pair", data={"code": pairing.code}).status_code == 429  # everyone waits
    now[0] += pairing.retired_pause_s + 1
    assert late.post("/pair", data={"code": first}).status_code == 403  # the old code is gone
    assert late.post("/pair", data={"code": pairing.code}).status_code == 303


# Size limits, each named in its own words, also where waitress itself refuses.
def many_parts_body(parts: int, boundary: str = "glowtempboundary") -> bytes:
    """A multipart/form-data body (RFC 7578) of ``parts`` tiny file parts."""
    piece = (f"--{boundary}\r\nContent-Disposition: form-data; name=\"photo\"; filename=\"p.jpg\"\r\n"
             f"Content-Type: image/jpeg\r\n\r\nx\r\n")  # fmt: skip
    return (piece * parts + f"--{boundary}--\r\n").encode("ascii")


@pytest.mark.parametrize("parts", [101, 1500])
def test_a_form_of_many_parts_is_refused_for_its_parts(web_app, web_client, parts):
    body = many_parts_body(parts)
    answer = web_client.post("/api/readings", data=body, content_type="multipart/form-data; boundary=glowtempboundary")
    assert answer.status_code == 413
    message = answer.get_json()["error"]
    assert "more than 100 parts" in message and "text field" not in message
    assert stored_state(web_app) == (0, [])


def test_a_form_of_a_few_parts_split_across_reads_is_counted_right():
    from glowtemp.web.limits import PartCounter, TooManyParts

    body = many_parts_body(100)
    for chunk in (1, 7, 64 * KB):  # a delimiter may be split between any two reads
        stream = PartCounter(io.BytesIO(body), b"glowtempboundary", most_parts=100)
        while stream.read(chunk):
            pass
        with pytest.raises(TooManyParts):
            stream = PartCounter(io.BytesIO(many_parts_body(101)), b"glowtempboundary", most_parts=100)
            while stream.read(chunk):
                pass


def test_waitress_refuses_an_oversized_upload_in_the_apps_json_words(tmp_path):
    import json
    import socket
    import threading

    from glowtemp.web import create_app
    from glowtemp.web.server import build_server

    app = create_app({"DATA_DIR": tmp_path / "data"})
    server = build_server(app, "127.0.0.1", 0)
    thread = threading.Thread(target=server.run, daemon=True)
    thread.start()
    try:
        size = 70 * 1024 * 1024  # beyond the 64 MB limit and waitress's slack of 1 MB
        with socket.create_connection(("127.0.0.1", server.effective_port), timeout=20) as connection:
            connection.sendall((f"POST /api/readings HTTP/1.1\r\nHost: 127.0.0.1\r\nContent-Length: {size}\r\n"
                                "Content-Type: multipart/form-data; boundary=b\r\n\r\n").encode("ascii"))  # fmt: skip
            reply = b""
            while not reply.endswith(b"}") and (chunk := connection.recv(65536)):
                reply += chunk
        head, _, body = reply.partition(b"\r\n\r\n")
        assert head.startswith(b"HTTP/1.1 413") and b"application/json" in head
        assert json.loads(body)["error"] == "The upload is larger than 64 MB; send a smaller photo."
    finally:
        server.trigger.pull_trigger(server.close)  # closed by its own loop, which then ends
        thread.join(timeout=30)


# A full disk or a read-only data folder: 507 or 503 in plain words, nothing stored. Tests run
# as root, for whom permission bits do not hold, so the failure is made at the write itself: the
# OSError a full or read-only file system gives (errno ENOSPC, EROFS; POSIX <errno.h>), or
# SQLite's own limits (PRAGMA max_page_count gives SQLITE_FULL, PRAGMA query_only gives
# SQLITE_READONLY; sqlite.org pragma.html).
def photo_writes_fail(code):
    def breaking(monkeypatch, app):
        import errno
        import os

        def failing_fsync(descriptor):
            raise OSError(getattr(errno, code), os.strerror(getattr(errno, code)))

        monkeypatch.setattr(os, "fsync", failing_fsync)

    return breaking


def database_full(monkeypatch, app):
    db = app.extensions["glowtemp"]["logbook"]._db
    db.execute("VACUUM")  # no free pages left for the new row to use
    db.execute(f"PRAGMA max_page_count = {db.execute('PRAGMA page_count').fetchone()[0]}")


def database_read_only(monkeypatch, app):
    app.extensions["glowtemp"]["logbook"]._db.execute("PRAGMA query_only = 1")


STORAGE_CASES = [
    ("disk full while a photo is written", photo_writes_fail("ENOSPC"), "reading", 507, "is full"),
    ("read-only folder while a photo is written", photo_writes_fail("EROFS"), "reading", 503, "read-only"),
    ("disk full while the log grows", database_full, "firing", 507, "is full"),
    ("read-only log database", database_read_only, "firing", 503, "read-only"),
    ("read-only log database under an upload", database_read_only, "reading", 503, "read-only"),
]


@pytest.mark.parametrize("name, breaking, what, status, words", STORAGE_CASES, ids=[case[0] for case in STORAGE_CASES])
def test_storage_failures_answer_507_or_503_and_store_nothing(web_app, web_client, monkeypatch, two_halves_jpeg,
                                                              name, breaking, what, status, words):  # fmt: skip
    breaking(monkeypatch, web_app)
    if what == "reading":
        answer = web_client.post("/api/readings", data={"photo": (io.BytesIO(two_halves_jpeg), "a.jpg")})
    else:
        answer = web_client.post("/api/firings", json={"name": "Full", "notes": "n" * 5000})  # > one 4 KB page
    monkeypatch.undo()
    assert answer.status_code == status, answer.get_json()
    message = answer.get_json()["error"]
    assert words in message and str(web_app.config["DATA_DIR"]) in message and "not measured" not in message
    assert stored_state(web_app) == (0, []) and web_app.extensions["glowtemp"]["logbook"].list_firings() == []


def fail_writes_under(monkeypatch, folder, code="EROFS"):
    """Every open for writing and every mkdir under ``folder`` fails as a read-only mount would."""
    import errno
    import os

    real_open, real_mkdir = os.open, os.mkdir
    writing = os.O_WRONLY | os.O_RDWR | os.O_CREAT

    def failing_open(path, flags, *args, **kwargs):
        if str(path).startswith(str(folder)) and flags & writing:
            raise OSError(getattr(errno, code), os.strerror(getattr(errno, code)), str(path))
        return real_open(path, flags, *args, **kwargs)

    def failing_mkdir(path, *args, **kwargs):
        if str(path).startswith(str(folder)) and not os.path.isdir(path):
            raise OSError(getattr(errno, code), os.strerror(getattr(errno, code)), str(path))
        return real_mkdir(path, *args, **kwargs)

    monkeypatch.setattr(os, "open", failing_open)
    monkeypatch.setattr(os, "mkdir", failing_mkdir)


@pytest.mark.parametrize("holds_a_log", [False, True], ids=["an empty read-only folder", "a read-only folder holding a log"])
def test_serve_refuses_a_read_only_data_folder_in_its_words(tmp_path, monkeypatch, capsys, holds_a_log):
    from glowtemp.shell.cli import main
    from glowtemp.firinglog.logbook import Logbook
    from glowtemp.web import server

    data = tmp_path / "data"
    data.mkdir()
    if holds_a_log:
        Logbook(data).close()

    def no_serving(*args, **kwargs):
        raise AssertionError("glowtemp serve started on a read-only folder")

    monkeypatch.setattr(server, "build_server", no_serving)
    fail_writes_under(monkeypatch, data)
    assert main(["serve", "--port", "0", "--data", str(data)]) == 1
    err = capsys.readouterr().err
    assert f"The data folder {data} is read-only" in err and "cannot serve on" not in err


# Memory per upload: decodes share a budget sized by the pixel limit (one photo of that many
# pixels at 16 bits), and the cache keeps no photo larger than its byte limit.
def png16_photo(width: int, height: int) -> bytes:
    """A 16-bit RGB PNG (libpng through imagecodecs) of an invented glowing disc on a dark ground."""
    import imagecodecs
    import numpy as np

    codes = np.full((height, width, 3), 1200, np.uint16)
    rows, columns = np.ogrid[:height, :width]
    codes[(rows - height // 2) ** 2 + (columns - width // 2) ** 2 < (min(width, height) // 4) ** 2] = (52000, 21000, 2500)
    return imagecodecs.png_encode(codes)


def test_concurrent_16_bit_decodes_at_the_pixel_limit_run_one_at_a_time(tmp_path, monkeypatch):
    import threading

    from glowtemp.web import create_app, uploads

    pixels = 400 * 300
    app = create_app({"DATA_DIR": tmp_path / "data", "MAX_PHOTO_PIXELS": pixels})
    photo = png16_photo(400, 300)  # at the limit: 6 bytes a pixel fill the whole budget
    real_decode, overlaps, meeting = uploads.decode, [], threading.Barrier(2, timeout=0.5)

    def decode_that_looks_for_company(data):
        try:
            meeting.wait()  # returns only if a second decode is running at the same time
            overlaps.append(True)
        except threading.BrokenBarrierError:
            meeting.reset()
        return real_decode(data)

    monkeypatch.setattr(uploads, "decode", decode_that_looks_for_company)

    def send():
        answer = app.test_client().post("/api/readings", data={"photo": (io.BytesIO(photo), "big.png")})
        assert answer.status_code == 201, answer.get_json()

    clients = [threading.Thread(target=send) for _ in range(4)]
    for thread in clients:
        thread.start()
    for thread in clients:
        thread.join(timeout=120)
    assert overlaps == [] and app.extensions["glowtemp"]["decodes"].reserved_bytes == 0
    assert stored_state(app)[0] == 4


def test_small_photos_still_decode_side_by_side():
    import threading

    from glowtemp.web.decode_gate import DecodeGate

    gate = DecodeGate.for_pixel_limit(50_000_000)
    inside = threading.Barrier(4, timeout=10)

    def decode_a_12_mp_jpeg():
        with gate.admit(12_000_000 * 3):
            inside.wait()  # all four are inside the gate together

    threads = [threading.Thread(target=decode_a_12_mp_jpeg) for _ in range(4)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join(timeout=20)
    assert not inside.broken and gate.reserved_bytes == 0


def test_the_photo_cache_keeps_no_photo_beyond_its_byte_limit():
    from glowtemp.images.photo import load_photo
    from glowtemp.web.photo_cache import PhotoCache

    small, large = load_photo(png16_photo(64, 48)), load_photo(png16_photo(400, 300))
    cache = PhotoCache(size=2, bytes_kept=large.codes.nbytes - 1)
    cache.put("small", small)
    cache.put("large", large)
    assert cache.get("large") is None and cache.get("small") is small
