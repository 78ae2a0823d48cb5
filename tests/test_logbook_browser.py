"""In headless Chromium at phone size: start a firing, add two demo photos with thermocouple
values, and see the curve with its climb rate (fixtures from tests/conftest.py)."""

import math
import re
from datetime import datetime
from pathlib import Path

from glowtemp.estimation.scales import round_to, rounding_step

DEMO_IMAGES = Path(__file__).resolve().parent.parent / "demo_images"

FIRST, SECOND = "alder_lane_1000_760C.jpg", "alder_lane_1100_870C.jpg"


def add_reading(page, photo_name: str, thermocouple_c: str):
    page.set_input_files("#reading-file", str(DEMO_IMAGES / photo_name))
    assert photo_name in page.text_content("#chosen-photo")
    page.fill("#reference", thermocouple_c)
    with page.expect_navigation():
        page.click("#reading-submit")
    assert re.search(r"#reading-\d+$", page.url)


def test_firing_with_two_readings_and_its_curve(live_server, browser_page, artifacts):
    page = browser_page
    page.goto(f"{live_server}/firings/")
    page.fill("#name", "Browser test firing")
    page.select_option("#kind", "glaze")
    page.fill("#target-cone", "6")
    with page.expect_navigation():
        page.click("text=Start the firing")
    assert page.text_content("h1") == "Browser test firing"
    firing_id = int(re.search(r"/firings/(\d+)", page.url).group(1))

    add_reading(page, FIRST, "755")
    add_reading(page, SECOND, "865")

    cards = page.locator("article.reading")
    assert cards.count() == 2
    assert "Thermocouple 865 °C" in cards.nth(0).text_content()  # newest first
    assert "Thermocouple 755 °C" in cards.nth(1).text_content()

    curve = page.locator("#curve svg")
    assert curve.is_visible()
    box = curve.bounding_box()
    assert box["width"] <= 390 and box["height"] > 200  # fits the phone's width, tall enough to read
    labels = curve.locator("text").all_text_contents()
    assert "thermocouple" in labels and "estimate" in labels and "target cone 6 (approximate)" in labels

    # The page's climb rate and its band match those worked out from the API's readings: the rate
    # between them, and their 68 % half-widths propagated (GUM 5.1.2), rounded as the band allows.
    readings = page.request.get(f"{live_server}/api/firings/{firing_id}").json()["readings"]
    (a, b) = readings
    hours = (datetime.fromisoformat(b["taken_at"]) - datetime.fromisoformat(a["taken_at"])).total_seconds() / 3600
    expected = (b["temperature_c"] - a["temperature_c"]) / hours
    half_widths = [(r["interval_68_c"][1] - r["interval_68_c"][0]) / 2 for r in (a, b)]
    band = math.hypot(*half_widths) / hours
    step = rounding_step(band)
    shown = f"last step {round_to(expected, step):+d} ± {max(step, round_to(band, step))} °C/h"
    assert shown in page.text_content(".rates").replace("\n", " ").replace("  ", " ")

    page.locator("#curve").scroll_into_view_if_needed()
    page.screenshot(path=str(artifacts / "firing-curve.png"), full_page=True)

    page.click("a[data-unit=f]")
    page.wait_for_url(re.compile(r"unit=f"))
    assert "temperature (°F)" in page.locator("#curve svg text").all_text_contents()
