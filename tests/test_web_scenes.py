"""What is photographed (the scene kind) through the web: sent with an upload, taken from the
firing, kept by a stored reading when it is measured again, and shown on the firing page with
the magnet test.

The photo is a rendered bar of oxidised steel (emissivity 0.85) at 800 °C through a camera of
measured sensitivities, with its exposure data in EXIF, so the brightness channel joins colour
and the scene's emissivity prior changes the answer. The expected values are what
:func:`glowtemp.estimation.reading.measure` gives for the same bytes and scene: the web shell adds nothing.
"""

from __future__ import annotations

import io

import pytest

from glowtemp.images.photo import load_photo
from glowtemp.estimation.reading import measure
from glowtemp.images.region import parse_region
from glowtemp.estimation.tilemap import temperature_map, with_map

from test_web_api import WEB_ONLY_KEYS, post_photo, stored_name

STEEL_C = 800.0
FIRING_KEYS = WEB_ONLY_KEYS | {"firing_id", "taken_at", "reference_c", "cone", "cone_state", "magnet", "note"}


@pytest.fixture(scope="module")
def steel_jpeg() -> bytes:
    """A bar of oxidised steel at 800 °C (invented scene), exposure data in EXIF."""
    from glowtemp.render.synthetic import encode_jpeg, render_photo
    from glowtemp.render.synthetic_camera import CAMERAS

    camera = CAMERAS["Nikon 5100 (NPL)"]  # colour-science's NPL-measured camera sensitivities
    return encode_jpeg(render_photo(STEEL_C + 273.15, camera=camera, scene="bar", size=(240, 160), emissivity=0.85,
                                    seed=7))  # fmt: skip


def core_result(data: bytes, scene: str, region=None) -> dict:
    return measure(load_photo(data), region, photo_name=stored_name(data), scene=scene).to_dict()


def web_part(body: dict, keys=WEB_ONLY_KEYS) -> dict:
    return {k: v for k, v in body.items() if k not in keys}


def stored_result(app, reading_id: int) -> dict:
    return app.extensions["glowtemp"]["logbook"].get_reading(reading_id)["result"]


def upload_into(client, firing_id: int, data: bytes, **fields):
    return client.post(f"/api/firings/{firing_id}/readings", data={"photo": (io.BytesIO(data), "bar.jpg"), **fields},
                       content_type="multipart/form-data")  # fmt: skip


def test_the_scene_sent_with_an_upload_is_the_one_measured(web_app, web_client, steel_jpeg):
    as_steel, as_other = core_result(steel_jpeg, "steel"), core_result(steel_jpeg, "other")
    assert "brightness" in as_steel["channels"] and as_steel["interval_95_c"] != as_other["interval_95_c"]
    body = post_photo(web_client, steel_jpeg, scene="steel").get_json()
    assert web_part(body) == as_steel and stored_result(web_app, body["id"]) == as_steel
    assert (body["scene"], body["emissivity"]) == ("steel", [0.7, 0.95])  # the steel scene's bounds
    unsaid = post_photo(web_client, steel_jpeg).get_json()  # no scene: the wide prior
    assert web_part(unsaid) == as_other


def test_a_firing_measures_as_its_scene_and_a_patch_changes_it(web_app, web_client, steel_jpeg):
    firing = web_client.post("/api/firings", json={"name": "Forge day", "kind": "forging"}).get_json()
    assert firing["scene"] == "steel"  # forging photographs hot steel (common practice)
    body = upload_into(web_client, firing["id"], steel_jpeg).get_json()
    assert web_part(body, FIRING_KEYS) == core_result(steel_jpeg, "steel") == stored_result(web_app, body["id"])
    patched = web_client.patch(f"/api/firings/{firing['id']}", json={"scene": "kiln"})
    assert patched.status_code == 200 and patched.get_json()["scene"] == "kiln"
    again = upload_into(web_client, firing["id"], steel_jpeg, upload_id="a" * 32).get_json()
    assert web_part(again, FIRING_KEYS) == core_result(steel_jpeg, "kiln")
    told = upload_into(web_client, firing["id"], steel_jpeg, scene="other").get_json()  # sent: it wins
    assert web_part(told, FIRING_KEYS) == core_result(steel_jpeg, "other")


def test_measuring_a_stored_reading_again_keeps_its_scene_unless_a_new_one_is_sent(web_app, web_client, steel_jpeg):
    reading_id = post_photo(web_client, steel_jpeg, scene="steel").get_json()["id"]
    region_text = stored_result(web_app, reading_id)["region"]["text"]
    moved = region_text.rsplit(",", 1)[0] + "," + str(int(region_text.rsplit(",", 1)[1]) - 2)
    kept = web_client.post(f"/api/readings/{reading_id}/region", json={"region": moved}).get_json()
    assert web_part(kept) == core_result(steel_jpeg, "steel", parse_region(moved))
    changed = web_client.post(f"/api/readings/{reading_id}/region", data={"region": moved, "scene": "kiln"}).get_json()
    assert web_part(changed) == core_result(steel_jpeg, "kiln", parse_region(moved))
    assert stored_result(web_app, reading_id) == web_part(changed)


def test_the_map_is_made_and_drawn_as_the_firing_s_scene(web_app, web_client, steel_jpeg):
    firing_id = web_client.post("/api/firings", json={"name": "Hardening", "kind": "heat treatment"}).get_json()["id"]
    reading_id = upload_into(web_client, firing_id, steel_jpeg).get_json()["id"]
    made = web_client.post(f"/api/readings/{reading_id}/map", json={})
    assert made.status_code == 200
    photo = load_photo(steel_jpeg)
    reading = measure(photo, photo_name=stored_name(steel_jpeg), scene="steel")
    expected = with_map(reading, temperature_map(photo, reading.region, scene="steel")).to_dict()
    assert stored_result(web_app, reading_id) == expected
    assert web_client.get(made.get_json()["map_url"]).status_code == 200  # its tiles measure the same again


@pytest.mark.parametrize(
    "method, url, body",
    [
        ("post", "/api/readings/{rid}/region", {"region": "10,10,40,40", "scene": "lava"}),
        ("post", "/api/readings/{rid}/map", {"scene": "lava"}),
        ("patch", "/api/firings/{fid}", {"scene": "lava"}),
        ("post", "/api/firings", {"name": "x", "scene": "lava"}),
    ],
)
def test_an_unknown_scene_is_refused_naming_the_allowed_ones(web_app, web_client, steel_jpeg, method, url, body):
    firing_id = web_client.post("/api/firings", json={"name": "Kept"}).get_json()["id"]
    reading_id = upload_into(web_client, firing_id, steel_jpeg).get_json()["id"]
    before = web_client.get(f"/api/firings/{firing_id}").get_json()
    answer = getattr(web_client, method)(url.format(rid=reading_id, fid=firing_id), json=body)
    assert answer.status_code == 400 and "kiln, steel, other" in answer.get_json()["error"]
    assert web_client.get(f"/api/firings/{firing_id}").get_json() == before
    assert len(web_client.get("/api/firings").get_json()["firings"]) == 1


def test_the_firing_page_shows_the_scene_the_channels_and_the_magnet(web_client, steel_jpeg):
    firing_id = web_client.post("/api/firings", json={"name": "Blade", "kind": "heat treatment"}).get_json()["id"]
    reading = upload_into(web_client, firing_id, steel_jpeg, magnet="let go").get_json()
    assert reading["magnet"] == "let go"
    page = web_client.get(f"/firings/{firing_id}").get_data(as_text=True)
    assert "photographing hot steel" in page
    assert f"{reading['channels_text'][0].upper()}{reading['channels_text'][1:]}" in page
    assert "emissivity 0.7-0.95, hot steel" in page
    # Iron's Curie point, 770 °C (CRC Handbook), and 1418 °F (NIST SP 811, B.9) on the °F page.
    assert "Magnet let go <span class=\"muted\">(plain carbon steel, about 770 °C; approximate, alloy steels differ)" in page
    assert "about 1418 °F" in web_client.get(f"/firings/{firing_id}?unit=f").get_data(as_text=True)
    assert "magnet let go (about 770 °C)" in page  # the curve's legend


def test_the_page_forms_choose_the_scene_and_tick_the_magnet(web_app, web_client, steel_jpeg):
    made = web_client.post("/firings/", data={"name": "Slumping", "kind": "glass", "scene": ""})
    firing_id = int(made.headers["Location"].rsplit("/", 1)[1])
    log = web_app.extensions["glowtemp"]["logbook"]
    assert log.get_firing(firing_id)["scene"] == "kiln"  # as its kind suggests
    web_client.post(f"/firings/{firing_id}/edit", data={"name": "Slumping", "kind": "glass", "scene": "other"})
    assert log.get_firing(firing_id)["scene"] == "other"
    web_client.post(f"/firings/{firing_id}/readings", data={"photo": (io.BytesIO(steel_jpeg), "a.jpg"), "magnet": "let go"},
                    content_type="multipart/form-data")  # fmt: skip
    (reading,) = log.readings_in(firing_id)
    assert reading["magnet"] == "let go" and reading["result"] == core_result(steel_jpeg, "other")
    web_client.post(f"/firings/{firing_id}/readings/{reading['id']}/edit", data={"note": "unticked"})
    assert log.get_reading(reading["id"])["magnet"] is None  # an unticked box clears it
