"""What is photographed, chosen in a real headless Chromium at phone size (390 x 844): the
measuring page's scene picker is sent with the photo, remembered, and the result names its
channels and the emissivity range the brightness channel took; a photo kept while the server
cannot be reached carries its scene; the firing page offers the magnet test.

The photo is a rendered bar of oxidised steel with its exposure data in EXIF
(:func:`glowtemp.render.synthetic.render_photo`, scene "bar"). What the page should show is what
:func:`glowtemp.estimation.reading.measure` gives for the same bytes and scene.
"""

from __future__ import annotations

import json
import re
import urllib.parse
import urllib.request

import pytest
from conftest import PHONE_VIEWPORT

from glowtemp.images.photo import load_photo
from glowtemp.estimation.reading import measure

WAIT_MS = 20_000
STEEL_C = 780.0  # just above iron's Curie point: dull cherry red, where colour alone gives a ceiling


@pytest.fixture(scope="module")
def steel_photo(tmp_path_factory):
    """(path, bytes) of a bar of oxidised steel (emissivity 0.85) at 780 °C (invented scene)."""
    from glowtemp.render.synthetic import encode_jpeg, render_photo
    from glowtemp.render.synthetic_camera import CAMERAS

    camera = CAMERAS["Nikon 5100 (NPL)"]  # colour-science's NPL-measured camera sensitivities
    data = encode_jpeg(render_photo(STEEL_C + 273.15, camera=camera, scene="bar", size=(320, 200), emissivity=0.85,
                                    seed=11))  # fmt: skip
    path = tmp_path_factory.mktemp("steel") / "bar.jpg"
    path.write_bytes(data)
    return path, data


def kept_scenes(page) -> list[str]:
    """The scene of each photo kept in the page's send queue (IndexedDB)."""
    return page.evaluate("""() => new Promise((resolve) => {
        const open = indexedDB.open("glowtemp", 1);
        open.onsuccess = () => {
            const request = open.result.transaction("waiting").objectStore("waiting").getAll();
            request.onsuccess = () => resolve(request.result.map((entry) => entry.scene));
        };
    })""")


def channel_line(reading: dict, words: str) -> str:
    low, high = reading["emissivity"]
    return f"{reading['channels_text'][0].upper()}{reading['channels_text'][1:]} · emissivity {low:g}-{high:g}, {words}"


def test_picking_hot_steel_is_sent_remembered_and_shown_with_its_emissivity(live_server, browser_page, artifacts,
                                                                           steel_photo):  # fmt: skip
    path, data = steel_photo
    page = browser_page
    page.goto(live_server + "/")
    assert page.is_checked("input[name=scene][value=other]")  # nothing chosen yet: the wide prior
    page.get_by_label("Hot steel").check()
    with page.expect_response(lambda r: r.url.endswith("/api/readings")) as answered:
        page.set_input_files("#file-input", str(path))
    page.wait_for_selector("#result:not([hidden])", timeout=WAIT_MS)
    reading = answered.value.json()  # measured as the scene the page sent
    expected = measure(load_photo(data), photo_name=reading["photo"], scene="steel").to_dict()
    assert {k: reading[k] for k in expected} == expected
    assert expected["channels"] == ["colour", "brightness"] and expected["emissivity"] == [0.7, 0.95]
    shown = page.inner_text("#channels")
    assert shown == channel_line(expected, "hot steel")  # e.g. "From colour and brightness · emissivity 0.7-0.95, hot steel"
    assert page.input_value("#scene-after") == "steel"
    # Small print right under the band, on the phone's width.
    bands, line = page.locator("#bands").bounding_box(), page.locator("#channels").bounding_box()
    assert 0 <= line["y"] - (bands["y"] + bands["height"]) < 40
    assert page.evaluate("document.documentElement.scrollWidth") <= PHONE_VIEWPORT["width"]
    page.locator("#result").screenshot(path=str(artifacts / "scene-01-steel-result.png"))
    page.screenshot(path=str(artifacts / "scene-01-steel-full.png"), full_page=True)

    # Measured again as a kiln's inside: the re-measure carries the new scene, which is remembered.
    with page.expect_response(lambda r: r.url.endswith("/region")) as again:
        page.select_option("#scene-after", "kiln")
    as_kiln = again.value.json()
    assert json.loads(again.value.request.post_data)["scene"] == "kiln" and as_kiln["scene"] == "kiln"
    page.wait_for_function("() => document.getElementById('channels').textContent.includes('kiln')")
    assert page.inner_text("#channels") == channel_line(as_kiln, "kiln")
    page.reload()
    assert page.is_checked("input[name=scene][value=kiln]")  # localStorage, like the unit
    page.screenshot(path=str(artifacts / "scene-02-picker.png"))


def test_a_photo_kept_while_the_server_is_away_carries_its_scene(own_live_server, browser_page, steel_photo):
    base, app = own_live_server
    path, data = steel_photo
    page = browser_page
    page.goto(base + "/")
    page.get_by_label("Hot steel").check()
    page.route("**/api/readings", lambda route: route.abort("connectionrefused"))
    page.set_input_files("#camera-input", str(path))
    page.wait_for_selector("#waiting:not([hidden])", timeout=WAIT_MS)
    assert "measure only · hot steel" in page.text_content("#waiting-list")
    assert kept_scenes(page) == ["steel"]
    page.get_by_label("Something else").check()  # chosen after the photo was kept: not its scene
    page.unroute("**/api/readings")
    with page.expect_response(lambda r: r.url.endswith("/api/readings")) as answered:
        page.click("#waiting-list .send-now")
    page.wait_for_selector("#waiting", state="hidden", timeout=WAIT_MS)
    assert answered.value.status == 201 and answered.value.json()["scene"] == "steel"
    (stored,) = app.extensions["glowtemp"]["logbook"]._read("SELECT result_json FROM readings")
    assert json.loads(stored[0]) == measure(load_photo(data), photo_name=json.loads(stored[0])["photo"], scene="steel").to_dict()


def test_the_firing_page_offers_the_magnet_test_and_marks_it_on_the_curve(live_server, browser_page, artifacts,
                                                                         steel_photo):  # fmt: skip
    path, _ = steel_photo
    request = urllib.request.Request(f"{live_server}/api/firings", method="POST",
                                     data=json.dumps({"name": "Blade quench", "kind": "heat treatment"}).encode(),
                                     headers={"Content-Type": "application/json"})  # fmt: skip
    with urllib.request.urlopen(request, timeout=10) as answer:
        firing_id = json.loads(answer.read())["id"]
    page = browser_page
    page.goto(f"{live_server}/firings/{firing_id}")
    assert "photographing hot steel" in page.inner_text("#firing-scene")
    magnet = page.get_by_label(re.compile(r"Magnet let go \(plain carbon steel, about 770 °C; approximate, alloy steels differ\)"))
    assert magnet.bounding_box()["height"] >= 24
    page.set_input_files("#reading-camera", str(path))
    magnet.check()
    page.click("#reading-submit")
    page.wait_for_selector("article.reading .magnet", timeout=WAIT_MS)
    card = page.locator("article.reading")
    assert "Magnet let go" in card.inner_text() and "emissivity 0.7-0.95, hot steel" in card.inner_text()
    with urllib.request.urlopen(f"{live_server}/api/firings/{firing_id}", timeout=10) as answer:
        (reading,) = json.loads(answer.read())["readings"]
    assert reading["magnet"] == "let go" and reading["scene"] == "steel"
    assert page.locator("#curve svg #magnet-let-go").count() == 1
    assert page.evaluate("document.documentElement.scrollWidth") <= PHONE_VIEWPORT["width"]
    page.locator("#curve").screenshot(path=str(artifacts / "scene-03-magnet-curve.png"))
    page.screenshot(path=str(artifacts / "scene-03-firing.png"), full_page=True)
    assert urllib.parse.urlsplit(page.url).path == f"/firings/{firing_id}"
