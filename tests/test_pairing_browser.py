"""In headless Chromium at phone size, against a server that asks devices to pair: the QR code's
address pairs the phone, and then the page's scripts and plain forms work with the form token
(fixtures from tests/conftest.py)."""

from __future__ import annotations

import re

from conftest import DEMO_IMAGES

DEMO_PHOTO = DEMO_IMAGES / "alder_lane_1100_870C.jpg"
WAIT_MS = 20_000


def test_a_phone_pairs_then_measures_and_keeps_a_firing(paired_live_server, browser_page, artifacts):
    base, pairing = paired_live_server
    page = browser_page
    page.goto(base + "/firings/")
    assert page.url == base + "/pair?next=/firings/"  # not paired yet: sent to the pairing page
    page.goto(f"{base}/pair?code={pairing.code}&next=/")  # the address the QR code carries
    assert page.input_value("#code") == pairing.code
    page.screenshot(path=artifacts / "pair-01-code.png")
    with page.expect_navigation():
        page.click("#pair-submit")
    assert page.url == base + "/"
    cookie = next(c for c in page.context.cookies() if c["name"] == "glowtemp_session")
    assert cookie["httpOnly"] and cookie["sameSite"] == "Lax"

    # The measuring page's scripts send the form token with the upload and the region requests.
    with page.expect_response(lambda r: r.url.endswith("/api/readings")) as answer:
        page.set_input_files("#file-input", str(DEMO_PHOTO))
    assert answer.value.status == 201
    page.wait_for_selector("#result:not([hidden])", timeout=WAIT_MS)
    with page.expect_response(lambda r: "/region" in r.url) as moved:
        page.focus("#overlay g")
        for _ in range(3):
            page.keyboard.press("ArrowLeft")
    assert moved.value.status == 200

    # Plain forms carry the token in a hidden field: start a firing, add a reading to it.
    page.goto(base + "/firings/")
    page.fill("#name", "Paired phone firing")
    with page.expect_navigation():
        page.click("text=Start the firing")
    assert page.text_content("h1") == "Paired phone firing"
    page.set_input_files("#reading-file", str(DEMO_PHOTO))
    page.fill("#reference", "865")
    with page.expect_navigation():
        page.click("#reading-submit")
    assert re.search(r"#reading-\d+$", page.url)
    assert "Thermocouple 865 °C" in page.text_content("article.reading")
    page.screenshot(path=artifacts / "pair-02-firing.png")


def test_a_wrong_code_is_refused_and_counted(paired_live_server, browser_page):
    base, pairing = paired_live_server
    page = browser_page
    page.goto(base + "/pair")
    wrong = "12345678" if pairing.code != "12345678" else "87654321"
    page.fill("#code", wrong)
    with page.expect_navigation():
        page.click("#pair-submit")
    problem = page.text_content("#pair-problem")
    assert "not the code" in problem and f"{pairing.wrong_tries - 1} more tries" in problem
    assert not [c for c in page.context.cookies() if c["name"] == "glowtemp_session"]
