"""The JSON API through Flask's test client: readings, re-measuring a region, the scale, errors."""

from __future__ import annotations

import hashlib
import io

import pytest
from conftest import LEFT_HALF_C, TWO_HALVES_SIZE

from glowtemp.firinglog.logbook import Logbook
from glowtemp.images.photo import load_photo
from glowtemp.estimation.reading import measure
from glowtemp.images.region import parse_region

WIDTH, HEIGHT = TWO_HALVES_SIZE
LEFT_BOX = f"10,20,{WIDTH // 2 - 30},{HEIGHT - 40}"  # well inside the 900 °C half
RIGHT_BOX = f"{WIDTH // 2 + 20},20,{WIDTH // 2 - 30},{HEIGHT - 40}"  # inside the 1200 °C half
WEB_ONLY_KEYS = {"id", "image", "preview_url", "upload_id"}


def stored_name(data: bytes, suffix=".jpg") -> str:
    """The name the server keeps an upload under: from its SHA-256 (FIPS 180-4), never the client's."""
    return f"photo-{hashlib.sha256(data).hexdigest()[:12]}{suffix}"


def post_photo(client, data: bytes, name="glow.jpg", **fields):
    return client.post("/api/readings", data={"photo": (io.BytesIO(data), name), **fields})


def stored_state(app):
    """(number of readings, photo files) in the app's data folder."""
    logbook: Logbook = app.extensions["glowtemp"]["logbook"]
    count = logbook._read("SELECT COUNT(*) FROM readings")[0][0]
    photos = sorted(p.name for p in (app.config["DATA_DIR"] / "photos").glob("*") if p.is_file())
    return count, photos


def test_upload_answers_the_core_reading_plus_id(web_client, two_halves_jpeg):
    response = post_photo(web_client, two_halves_jpeg)
    assert response.status_code == 201
    body = response.get_json()
    # The web shell must not change the core's answer: same keys and values as measure() gives
    # for the same bytes (the form `glowtemp measure --json` prints).
    expected = measure(load_photo(two_halves_jpeg), photo_name=stored_name(two_halves_jpeg)).to_dict()
    assert {k: v for k, v in body.items() if k not in WEB_ONLY_KEYS} == expected
    assert body["image"] == {"width": WIDTH, "height": HEIGHT}
    assert isinstance(body["id"], int)


def test_upload_stores_the_photo_bytes_and_the_reading(web_app, web_client, two_halves_jpeg):
    body = post_photo(web_client, two_halves_jpeg).get_json()
    logbook = web_app.extensions["glowtemp"]["logbook"]
    stored = logbook.get_reading(body["id"])
    assert stored["photo_name"] == stored_name(two_halves_jpeg)  # the client's "glow.jpg" is not kept
    assert stored["result"]["temperature_c"] == body["temperature_c"]
    # The store is content addressed: SHA-256 of the upload (FIPS 180-4).
    key = stored["photo_key"]
    assert key == hashlib.sha256(two_halves_jpeg).hexdigest() + ".jpg"
    assert logbook.photo_path(key).read_bytes() == two_halves_jpeg


def test_hand_drawn_rectangle_and_circle_are_used(web_client, two_halves_jpeg):
    body = post_photo(web_client, two_halves_jpeg, region=LEFT_BOX).get_json()
    assert body["region"]["text"] == LEFT_BOX and body["region"]["found"] is False
    circle = post_photo(web_client, two_halves_jpeg, circle="80,120,40").get_json()
    assert circle["region"] == {"kind": "circle", "cx": 80, "cy": 120, "radius": 40,
                                "text": "circle:80,120,40", "found": False}


def test_region_endpoint_remeasures_and_replaces_the_stored_result(web_app, web_client, two_halves_jpeg):
    reading_id = post_photo(web_client, two_halves_jpeg).get_json()["id"]
    cool = web_client.post(f"/api/readings/{reading_id}/region", json={"region": LEFT_BOX})
    hot = web_client.post(f"/api/readings/{reading_id}/region", data={"region": RIGHT_BOX})
    assert cool.status_code == hot.status_code == 200
    cool, hot = cool.get_json(), hot.get_json()
    # The scene's right half is rendered 300 °C hotter than its left half (conftest).
    assert hot["temperature_c"] > cool["temperature_c"]
    assert cool["interval_95_c"][0] <= LEFT_HALF_C <= cool["interval_95_c"][1]
    assert hot["interval_95_c"][0] > LEFT_HALF_C  # the two halves are told apart
    direct = measure(load_photo(two_halves_jpeg), parse_region(RIGHT_BOX), photo_name=stored_name(two_halves_jpeg)).to_dict()
    assert {k: v for k, v in hot.items() if k not in WEB_ONLY_KEYS} == direct
    stored = web_app.extensions["glowtemp"]["logbook"].get_reading(reading_id)
    assert stored["result"] == direct
    assert hot["id"] == reading_id


def test_region_endpoint_decodes_the_stored_photo_when_not_in_memory(web_app, web_client, two_halves_jpeg):
    reading_id = post_photo(web_client, two_halves_jpeg).get_json()["id"]
    web_app.extensions["glowtemp"]["photos"]._photos.clear()
    response = web_client.post(f"/api/readings/{reading_id}/region", json={"circle": "60,120,30"})
    assert response.status_code == 200
    assert response.get_json()["region"]["kind"] == "circle"


def test_preview_is_an_upright_reduced_jpeg(web_client, two_halves_jpeg):
    from PIL import Image

    body = post_photo(web_client, two_halves_jpeg).get_json()
    response = web_client.get(body["preview_url"])
    assert response.status_code == 200 and response.mimetype == "image/jpeg"
    with Image.open(io.BytesIO(response.data)) as preview:
        assert preview.format == "JPEG" and preview.size == (WIDTH, HEIGHT)


def test_scale_stops_are_the_core_blackbody_colours(web_client):
    from glowtemp.physics.locus import blackbody_swatch_hex

    scale = web_client.get("/api/scale").get_json()
    temperatures = [stop["temperature_c"] for stop in scale["stops"]]
    assert temperatures[0] == scale["from_c"] and temperatures[-1] == scale["to_c"]
    for stop in scale["stops"]:
        assert stop["hex"] == blackbody_swatch_hex(stop["temperature_c"] + 273.15)  # SI Brochure 2.3.1
    # Glow turns from red through orange to yellow as it heats (Wien's law moves the peak to
    # shorter wavelengths), so the normalised swatch's green never falls with temperature.
    greens = [int(stop["hex"][3:5], 16) for stop in scale["stops"]]
    assert greens == sorted(greens) and greens[-1] > greens[0]


def test_scale_fahrenheit_ticks_sit_at_their_celsius_temperatures(web_client):
    ticks = web_client.get("/api/scale").get_json()["ticks"]
    for tick in ticks["f"]:
        assert tick["temperature_c"] * 9 / 5 + 32 == pytest.approx(tick["label"], abs=0.2)  # NIST SP 811 B.9
    assert [t["label"] for t in ticks["c"]] == [t["temperature_c"] for t in ticks["c"]]


# --- errors: JSON with a message and a 4xx status, nothing stored -------------------------


def assert_refused(response, status, words, app):
    assert response.status_code == status
    body = response.get_json()
    assert words.lower() in body["error"].lower()
    assert "Traceback" not in response.get_data(as_text=True)
    assert stored_state(app) == (0, [])


def test_missing_photo_field(web_app, web_client):
    response = web_client.post("/api/readings", data={"region": LEFT_BOX})
    assert_refused(response, 400, "named 'photo'", web_app)


def test_empty_photo_file(web_app, web_client):
    assert_refused(post_photo(web_client, b""), 400, "empty", web_app)


def test_a_file_that_is_not_a_photo(web_app, web_client):
    response = post_photo(web_client, b"these are not the pixels you are looking for" * 20, name="notes.jpg")
    assert_refused(response, 422, "", web_app)
    assert len(response.get_json()["error"]) > 10


def test_a_truncated_jpeg(web_app, web_client, two_halves_jpeg):
    response = post_photo(web_client, two_halves_jpeg[: len(two_halves_jpeg) // 3])
    assert_refused(response, 422, "", web_app)


@pytest.mark.parametrize(
    "fields, words",
    [
        ({"region": "10,10,-5,20"}, "positive width"),
        ({"region": "ten,10,5,20"}, "whole numbers"),
        ({"circle": "50,50"}, "3 whole numbers"),
        ({"region": "5000,5000,10,10"}, "outside"),
        ({"region": LEFT_BOX, "circle": "50,50,10"}, "not both"),
    ],
)
def test_bad_regions_are_refused(web_app, web_client, two_halves_jpeg, fields, words):
    assert_refused(post_photo(web_client, two_halves_jpeg, **fields), 400, words, web_app)


def test_no_glow_found_asks_for_a_drawn_region(web_app, web_client, dark_jpeg):
    response = post_photo(web_client, dark_jpeg)
    assert_refused(response, 422, "draw the region", web_app)
    assert response.get_json()["draw_region"] is True


def test_unknown_reading(web_client):
    response = web_client.post("/api/readings/4242/region", json={"region": LEFT_BOX})
    assert response.status_code == 404
    assert "4242" in response.get_json()["error"]
    assert web_client.get("/api/readings/4242/preview").status_code == 404


def test_reading_id_that_is_not_a_number(web_client):
    response = web_client.post("/api/readings/abc/region", json={"region": LEFT_BOX})
    assert response.status_code == 404 and "error" in response.get_json()


def test_region_endpoint_refuses_bad_input_and_keeps_the_stored_result(web_app, web_client, two_halves_jpeg):
    first = post_photo(web_client, two_halves_jpeg).get_json()
    url = f"/api/readings/{first['id']}/region"
    logbook = web_app.extensions["glowtemp"]["logbook"]
    for body, words in [({}, "send the new region"), ({"region": "1,2,3"}, "4 whole numbers"),
                        ({"region": "9000,10,10,10"}, "outside")]:
        response = web_client.post(url, json=body)
        assert response.status_code == 400 and words in response.get_json()["error"].lower()
    response = web_client.post(url, data="[1, 2]", content_type="application/json")
    assert response.status_code == 400 and "json object" in response.get_json()["error"].lower()
    assert logbook.get_reading(first["id"])["result"]["region"] == first["region"]


def test_upload_too_large(tmp_path, two_halves_jpeg):
    from glowtemp.web import create_app

    app = create_app({"DATA_DIR": tmp_path, "MAX_CONTENT_LENGTH": 1024 * 1024})
    too_large = two_halves_jpeg * (1024 * 1024 // len(two_halves_jpeg) + 1)  # just over 1 MB
    response = post_photo(app.test_client(), too_large)
    assert response.status_code == 413 and "larger than 1 MB" in response.get_json()["error"]


def test_wrong_method_and_unknown_address_answer_json(web_client):
    response = web_client.get("/api/readings")
    assert response.status_code == 405 and "error" in response.get_json()
    response = web_client.get("/api/no-such-thing")
    assert response.status_code == 404 and "error" in response.get_json()


def test_unexpected_failure_answers_plain_words_without_details(web_client, two_halves_jpeg, monkeypatch):
    import glowtemp.estimation.reading

    def broken(*args, **kwargs):
        raise RuntimeError("secret internal detail")

    monkeypatch.setattr(glowtemp.estimation.reading, "measure", broken)
    response = post_photo(web_client, two_halves_jpeg)
    assert response.status_code == 500
    text = response.get_data(as_text=True)
    assert "secret internal detail" not in text and "Traceback" not in text
    assert "went wrong" in response.get_json()["error"]


# --- camera profiles -------------------------------------------------------------------------

# Demo photos rendered with a plain sRGB tone curve, with the temperature they were rendered at (truth.csv).
PROFILE_PHOTOS = ("alder_lane_0900_650C.jpg", "alder_lane_1000_760C.jpg", "alder_lane_1500_1240C.jpg")


@pytest.fixture
def profiled_app(web_app):
    import csv

    from conftest import DEMO_IMAGES

    from glowtemp.estimation.profile_store import fit_from_csv

    truth = {row["file"]: row["true_c"] for row in csv.DictReader(open(DEMO_IMAGES / "truth.csv"))}
    pairs = web_app.config["DATA_DIR"] / "pairs.csv"
    pairs.write_text("photo,reference_c\n" + "".join(f"{DEMO_IMAGES / name},{truth[name]}\n" for name in PROFILE_PHOTOS))
    fit_from_csv("kiln phone", pairs, web_app.config["DATA_DIR"])
    return web_app


def test_profiles_are_listed_with_a_label(profiled_app):
    listed = profiled_app.test_client().get("/api/profiles").get_json()["profiles"]
    assert [p["name"] for p in listed] == ["kiln phone"]
    assert listed[0]["pairs"] == len(PROFILE_PHOTOS)
    assert "kiln phone" in listed[0]["label"] and "3 pairs" in listed[0]["label"]


def test_profile_labels_give_the_span_of_the_pairs_in_the_unit_asked(profiled_app):
    client = profiled_app.test_client()
    (in_c,) = client.get("/api/profiles").get_json()["profiles"]
    (in_f,) = client.get("/api/profiles?unit=f").get_json()["profiles"]
    low_c, high_c = in_c["span_c"]
    assert in_c["label"].endswith(f"{low_c:.0f}–{high_c:.0f} °C")
    low_f, high_f = low_c * 9 / 5 + 32, high_c * 9 / 5 + 32  # NIST SP 811 B.9
    assert in_f["label"].endswith(f"{low_f:.0f}–{high_f:.0f} °F") and "°C" not in in_f["label"]
    assert in_f["span_c"] == in_c["span_c"]  # the data stay in °C


def test_no_profiles_listed_in_an_empty_data_folder(web_client):
    assert web_client.get("/api/profiles").get_json() == {"profiles": []}


def test_a_chosen_profile_is_applied_on_upload_and_on_region(profiled_app):
    from conftest import DEMO_IMAGES

    from glowtemp.estimation.profile_store import load_profile

    client = profiled_app.test_client()
    data = (DEMO_IMAGES / "alder_lane_1100_870C.jpg").read_bytes()
    body = post_photo(client, data, profile="kiln phone").get_json()
    profile = load_profile(profiled_app.config["DATA_DIR"], "kiln phone")
    expected = measure(load_photo(data), photo_name=stored_name(data), profile=profile).to_dict()
    assert {k: v for k, v in body.items() if k not in WEB_ONLY_KEYS} == expected
    assert body["profile"] == "kiln phone"
    # This photo is not one of the profile's pairs; its rendered truth is 870 °C (truth.csv).
    assert body["interval_95_c"][0] <= 870 <= body["interval_95_c"][1]
    assert abs(body["temperature_c"] - 870) <= 25
    again = client.post(f"/api/readings/{body['id']}/region",
                        json={"region": body["region"]["text"], "profile": ""}).get_json()
    assert again["profile"] is None


def test_unknown_profile_is_refused(web_app, web_client, two_halves_jpeg):
    response = post_photo(web_client, two_halves_jpeg, profile="no such camera")
    assert_refused(response, 400, "no camera profile called", web_app)
