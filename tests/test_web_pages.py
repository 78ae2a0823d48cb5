"""The HTML pages through Flask's test client: measuring page, safety page, error pages, weight."""

from __future__ import annotations

import re

MAIN_SCREEN_BUDGET_BYTES = 200 * 1024  # the page-weight limit before the photo


def test_measuring_page_offers_the_camera_and_a_file(web_client):
    page = web_client.get("/").get_data(as_text=True)
    # HTML Media Capture (W3C): capture="environment" asks for the rear camera.
    assert re.search(r'<input id="camera-input" type="file" accept="image/\*" capture="environment">', page)
    assert re.search(r'<input id="file-input" type="file" accept="image/\*[^"]*">', page)
    assert 'lang="en"' in page and 'name="viewport"' in page
    assert "/safety" in page


def test_every_file_input_has_a_label(web_client):
    page = web_client.get("/").get_data(as_text=True)
    for input_id in re.findall(r'<input id="([^"]+)" type="file"', page):
        assert f'for="{input_id}"' in page


def test_safety_page_covers_the_cautions(web_client):
    page = web_client.get("/safety").get_data(as_text=True).lower()
    for words in ("infrared", "burns", "keep the phone back", "carbon monoxide", "reduction", "shut",
                  "heat-treat", "local fire and building codes", "calibrated"):
        assert words in page, words


def test_unknown_page_is_a_plain_page(web_client):
    response = web_client.get("/no-such-page")
    assert response.status_code == 404
    assert response.mimetype == "text/html" and "nothing at this address" in response.get_data(as_text=True)


def test_main_screen_weighs_under_the_budget(web_client):
    page = web_client.get("/")
    total = len(page.data)
    assets = re.findall(r'(?:src|href)="(/static/[^"]+)"', page.get_data(as_text=True))
    assert {"/static/glow.css", "/static/measure.js"} <= set(assets)
    for asset in assets:
        response = web_client.get(asset)
        assert response.status_code == 200, asset
        total += len(response.data)
    for module in ("region.js", "result.js", "send_queue.js", "waiting_list.js", "exif_time.js"):  # imported by measure.js
        total += len(web_client.get(f"/static/{module}").data)
    total += len(web_client.get("/api/scale").data)
    assert total < MAIN_SCREEN_BUDGET_BYTES
