"""Temperature maps through the web API: made from the stored photo, stored with the reading,
drawn as a CSP-safe SVG image, and refused in plain words.

The photo is a rendered bar whose free (right) end is 350 °C hotter than where it enters the
frame (conftest): the rendered temperature field is the truth the tiles are checked against.
"""

from __future__ import annotations

import re
import xml.etree.ElementTree as ElementTree

import pytest
from conftest import BAR_COOL_END_C, tile_truth_c

from glowtemp.images.photo import load_photo
from glowtemp.estimation.reading import measure
from glowtemp.images.region import parse_region
from glowtemp.estimation.tilemap import temperature_map, with_map

from test_web_api import WEB_ONLY_KEYS, post_photo, stored_name

MAP_KEYS = WEB_ONLY_KEYS | {"map_url"}


@pytest.fixture
def bar_reading(web_client, hot_bar):
    """The bar uploaded through the API: its JSON answer."""
    _, data = hot_bar
    response = post_photo(web_client, data, name="bar.jpg")
    assert response.status_code == 201
    return response.get_json()


def stored_result(app, reading_id):
    return app.extensions["glowtemp"]["logbook"].get_reading(reading_id)["result"]


def test_the_map_is_the_core_s_map_of_the_stored_region_and_is_stored(web_app, web_client, hot_bar, bar_reading):
    rendered, data = hot_bar
    response = web_client.post(f"/api/readings/{bar_reading['id']}/map", json={})
    assert response.status_code == 200
    body = response.get_json()
    # The web shell adds nothing to the core's answer: the reading and map measure() and
    # temperature_map() give for the same bytes and region.
    photo = load_photo(data)
    region = parse_region(bar_reading["region"]["text"])
    reading = measure(photo, photo_name=stored_name(data))
    expected = with_map(reading, temperature_map(photo, region)).to_dict()
    assert {k: v for k, v in body.items() if k not in MAP_KEYS} == expected
    assert body["region"]["found"] is True  # still the area the glow finder chose
    assert body["map_url"] == f"/api/readings/{bar_reading['id']}/map.svg"
    assert stored_result(web_app, bar_reading["id"]) == expected


def test_the_hottest_tile_is_at_the_bar_s_hot_end_and_its_band_holds_the_truth(web_client, hot_bar, bar_reading):
    rendered, _ = hot_bar
    record = web_client.post(f"/api/readings/{bar_reading['id']}/map").get_json()["temperature_map"]
    hot, cool = record["hottest"], record["coolest"]
    # The bar is rendered hotter towards its free end on the right (conftest).
    assert hot["column"] == record["columns"] - 1 and cool["column"] == 0
    for tile in (hot, cool):
        low, high = tile["interval_95_c"]
        assert low <= tile_truth_c(rendered, tile) <= high  # the rendered truth of the tile's pixels
    assert hot["interval_95_c"][0] > BAR_COOL_END_C and hot["temperature_c"] > cool["temperature_c"]


def test_a_region_sent_with_the_request_is_mapped(web_client, bar_reading):
    region = bar_reading["region"]
    half = f"{region['x']},{region['y']},{region['width'] // 2},{region['height']}"
    body = web_client.post(f"/api/readings/{bar_reading['id']}/map", data={"region": half}).get_json()
    assert body["region"]["text"] == half and body["region"]["found"] is False
    tiles = body["temperature_map"]["tiles"]
    assert max(t["x"] + t["width"] for t in tiles) == region["x"] + region["width"] // 2


def test_the_picture_is_an_svg_image_without_styles_in_either_unit(web_client, bar_reading):
    url = web_client.post(f"/api/readings/{bar_reading['id']}/map").get_json()["map_url"]
    for unit in ("C", "F", "f"):
        response = web_client.get(f"{url}?unit={unit}")
        assert response.status_code == 200 and response.mimetype == "image/svg+xml"
        svg = response.get_data(as_text=True)
        root = ElementTree.fromstring(svg)  # well-formed XML (W3C SVG 1.1)
        assert root.tag == "{http://www.w3.org/2000/svg}svg"
        # A strict CSP ignores style attributes and elements (CSP Level 3): there are none.
        assert not re.search(r"<style|\sstyle=", svg)
        assert f"estimated temperature (°{unit.upper()})" in svg
    assert "script-src 'self'" in response.headers["Content-Security-Policy"]
    assert response.headers["X-Content-Type-Options"] == "nosniff"


def test_moving_the_region_drops_the_map_it_no_longer_fits(web_app, web_client, bar_reading):
    reading_id = bar_reading["id"]
    web_client.post(f"/api/readings/{reading_id}/map")
    moved = web_client.post(f"/api/readings/{reading_id}/region", json={"circle": "60,100,20"}).get_json()
    assert "temperature_map" not in moved and "temperature_map" not in stored_result(web_app, reading_id)
    response = web_client.get(f"/api/readings/{reading_id}/map.svg")
    assert response.status_code == 404 and "no temperature map yet" in response.get_json()["error"]


# --- errors: JSON with a message and a 4xx status, the stored reading unchanged ---------------


@pytest.mark.parametrize(
    "fields, status, words",
    [
        ({"region": "10,10,-5,20"}, 400, "positive width"),
        ({"region": "9000,10,10,10"}, 400, "outside"),
        ({"region": "10,10,20,20", "circle": "5,5,5"}, 400, "not both"),
        ({"profile": "no such camera"}, 400, "no camera profile called"),
    ],
)
def test_bad_map_requests_are_refused_and_change_nothing(web_app, web_client, bar_reading, fields, status, words):
    before = stored_result(web_app, bar_reading["id"])
    response = web_client.post(f"/api/readings/{bar_reading['id']}/map", json=fields)
    assert response.status_code == status and words in response.get_json()["error"]
    assert stored_result(web_app, bar_reading["id"]) == before


def test_unknown_readings_bad_units_and_bodies_are_refused(web_client, bar_reading):
    assert "4242" in web_client.post("/api/readings/4242/map").get_json()["error"]
    assert web_client.get("/api/readings/4242/map.svg").status_code == 404
    url = f"/api/readings/{bar_reading['id']}/map"
    response = web_client.post(url, data="[1]", content_type="application/json")
    assert response.status_code == 400 and "json object" in response.get_json()["error"].lower()
    web_client.post(url)
    response = web_client.get(f"{url}.svg?unit=K")
    assert response.status_code == 400 and "C or F" in response.get_json()["error"]
    assert web_client.post(f"{url}.svg").status_code == 405


def test_a_map_whose_profile_was_fitted_again_is_not_drawn(web_app, web_client):
    import csv

    from conftest import DEMO_IMAGES

    from glowtemp.estimation.profile_store import fit_from_csv

    names = ("alder_lane_0900_650C.jpg", "alder_lane_1000_760C.jpg", "alder_lane_1500_1240C.jpg")
    truth = {row["file"]: row["true_c"] for row in csv.DictReader(open(DEMO_IMAGES / "truth.csv"))}
    pairs = web_app.config["DATA_DIR"] / "pairs.csv"

    def fit(shift_c):
        pairs.write_text("photo,reference_c\n" + "".join(f"{DEMO_IMAGES / n},{float(truth[n]) + shift_c}\n" for n in names))
        fit_from_csv("kiln phone", pairs, web_app.config["DATA_DIR"])

    fit(0.0)
    # The 870 °C spy-hole photo is not one of the pairs; its tiles all see the rendered 870 °C.
    body = post_photo(web_client, (DEMO_IMAGES / "alder_lane_1100_870C.jpg").read_bytes(), profile="kiln phone").get_json()
    made = web_client.post(f"/api/readings/{body['id']}/map", json={"profile": "kiln phone"}).get_json()
    assert made["profile"] == "kiln phone" and made["temperature_map"]["usable_tiles"] >= 4
    tiles = [t for t in made["temperature_map"]["tiles"] if t.get("interval_95_c")]
    assert tiles and all(t["interval_95_c"][0] <= 870 <= t["interval_95_c"][1] for t in tiles)
    assert web_client.get(made["map_url"]).status_code == 200
    fit(60.0)  # the same name, other trusted values: the stored map's numbers no longer follow
    response = web_client.get(made["map_url"])
    assert response.status_code == 409 and "make the map again" in response.get_json()["error"]
