"""The measuring page in a real headless Chromium at a phone-sized viewport (390 x 844).

Each test drives the page as a person would (pick a photo, drag the outline, tap a unit) and
saves screenshots to test-artifacts/. The expected numbers come from the API's own answer for
the same request, so the tests check what the page shows against what the core computed.
"""

from __future__ import annotations

import re

from conftest import DEMO_IMAGES, PHONE_VIEWPORT

DEMO_PHOTO = DEMO_IMAGES / "alder_lane_1100_870C.jpg"  # a spy hole at 870 °C (truth.csv)
WAIT_MS = 20_000


def upload(page, live_server, path):
    """Open the page, choose ``path`` as the photo; returns the API's JSON answer."""
    page.goto(live_server + "/")
    with page.expect_response(lambda r: r.url.endswith("/api/readings")) as answer:
        page.set_input_files("#file-input", str(path))
    page.wait_for_selector("#result:not([hidden])", timeout=WAIT_MS)
    return answer.value.json()


def shown_value(page) -> str:
    return re.sub(r"\s+", " ", page.inner_text("#reading-value")).strip()


def recorded_answers(page, part: str) -> list:
    """JSON answers to the page's requests whose URL holds ``part``, read here as they pass: the
    browser may drop a body once the page has moved on, so reading it afterwards can fail."""
    answers = []

    def relay(route):
        response = route.fetch()
        answers.append(response.json())
        route.fulfill(response=response)

    page.route(lambda url: part in url, relay)
    return answers


def drawn_at(page, region) -> None:
    """Wait until the outline is drawn where an answer's region lies (photo pixels), so that a
    pointer aimed at it lands on it."""
    corner = ("cx", region["cx"]) if region["kind"] == "circle" else ("x", region["x"])
    page.wait_for_function(
        "([name, value]) => document.querySelector('#overlay .shape').getAttribute(name) === String(value)",
        arg=list(corner))


def touch_drag(page, start, end, steps=8):
    """A one-finger drag through the DevTools protocol's touch events."""
    session = page.context.new_cdp_session(page)
    send = lambda kind, points: session.send("Input.dispatchTouchEvent", {"type": kind, "touchPoints": points})  # noqa: E731
    send("touchStart", [{"x": start[0], "y": start[1]}])
    for step in range(1, steps + 1):
        x = start[0] + (end[0] - start[0]) * step / steps
        y = start[1] + (end[1] - start[1]) * step / steps
        send("touchMove", [{"x": x, "y": y}])
    send("touchEnd", [])
    session.detach()


def test_page_fits_the_phone_and_offers_the_camera(live_server, browser_page, artifacts):
    page = browser_page
    page.goto(live_server + "/")
    camera = page.locator("#camera-input")
    assert camera.get_attribute("capture") == "environment" and camera.get_attribute("accept") == "image/*"
    box = page.locator("label[for=camera-input]").bounding_box()
    assert box["height"] >= 56 and box["width"] >= 300  # a big target for a gloved thumb
    assert page.evaluate("document.documentElement.scrollWidth") <= PHONE_VIEWPORT["width"]
    page.screenshot(path=artifacts / "web-01-start.png")


def test_upload_shows_the_reading_band_scale_and_swatches(live_server, browser_page, artifacts, tmp_path):
    page = browser_page
    reading = upload(page, live_server, DEMO_PHOTO)
    assert reading["status"] == "ok"
    assert shown_value(page) == f"{reading['temperature_c']}°C"
    bands = page.inner_text("#bands")
    low68, high68 = reading["interval_68_c"]
    low95, high95 = reading["interval_95_c"]
    assert f"{low68} – {high68} °C" in bands and f"{low95} – {high95} °C" in bands
    assert reading["glow_name"] in page.inner_text("#glow-name")
    # Beside the name: heat-colour names are loose (published tables differ by 100-150 °C).
    assert page.locator("#glow-name-note").is_visible() and "loose" in page.inner_text("#glow-name-note")
    # The band sits on the scale where its temperatures are.
    scale = page.locator("#scale").bounding_box()
    band = page.locator("#scale .band68").bounding_box()
    fraction = lambda t: (t - 400) / (1600 - 400)  # noqa: E731  (the scale's span, api.py)
    assert abs(band["x"] - (scale["x"] + fraction(low68) * scale["width"])) < 3
    assert abs(band["x"] + band["width"] - (scale["x"] + fraction(high68) * scale["width"])) < 3
    colours = page.evaluate("""() => [getComputedStyle(document.getElementById('region-patch')).backgroundColor,
                                      getComputedStyle(document.getElementById('estimate-patch')).backgroundColor]""")
    as_rgb = lambda h: f"rgb({int(h[1:3], 16)}, {int(h[3:5], 16)}, {int(h[5:7], 16)})"  # noqa: E731
    assert colours == [as_rgb(reading["region_colour_hex"]), as_rgb(reading["estimate_colour_hex"])]
    assert page.locator("#progress").is_hidden()
    assert reading["notice"] in page.inner_text("#notice")
    assert page.evaluate("document.documentElement.scrollWidth") <= PHONE_VIEWPORT["width"]
    page.screenshot(path=artifacts / "web-02-reading.png")
    page.screenshot(path=artifacts / "web-02-reading-full.png", full_page=True)


def test_progress_shows_while_the_photo_is_on_its_way(live_server, browser_page):
    page = browser_page
    page.goto(live_server + "/")
    held = []
    page.route("**/api/readings", lambda route: held.append(route))
    page.set_input_files("#file-input", str(DEMO_PHOTO))
    page.wait_for_selector("#progress:not([hidden])")
    while not held:  # the request is held back until the test lets it go
        page.wait_for_timeout(20)
    assert re.match(r"(Sending the photo|Reading the colour)", page.inner_text("#progress-text"))
    assert page.locator("#result").is_hidden()
    held[0].continue_()
    page.wait_for_selector("#result:not([hidden])", timeout=WAIT_MS)
    assert page.locator("#progress").is_hidden()


def test_dragging_the_region_measures_again(live_server, browser_page, artifacts, tmp_path, two_halves_jpeg):
    page = browser_page
    photo = tmp_path / "two-halves.jpg"
    photo.write_bytes(two_halves_jpeg)
    first = upload(page, live_server, photo)
    page.locator("#photo-section").scroll_into_view_if_needed()
    overlay = page.locator("#overlay").bounding_box()
    shape = page.locator("#overlay .shape").bounding_box()
    centre_x, centre_y = shape["x"] + shape["width"] / 2, shape["y"] + shape["height"] / 2
    # The finder chose the hotter right half; drag the outline onto the cooler left half.
    assert centre_x > overlay["x"] + overlay["width"] / 2
    answers = recorded_answers(page, "/region")
    with page.expect_response(lambda r: "/region" in r.url):
        page.mouse.move(centre_x, centre_y)
        page.mouse.down()
        page.mouse.move(overlay["x"] + overlay["width"] * 0.25, centre_y, steps=8)
        page.mouse.up()
    moved = answers[-1]
    # an arrow function, not a bare expression: Playwright evaluates expressions with eval,
    # which the page's Content-Security-Policy refuses whenever the first check is false
    page.wait_for_function("() => document.getElementById('region-status').textContent.includes('again')")
    assert moved["temperature_c"] < first["temperature_c"]
    assert shown_value(page) == f"{moved['temperature_c']}°C"
    page.screenshot(path=artifacts / "web-03-region-moved.png", full_page=True)

    # Drag it back with a finger (touch events, as a phone sends them): the hotter half reads
    # hotter again. The finger goes down on the outline where the answer drew it.
    drawn_at(page, moved["region"])
    shape = page.locator("#overlay .shape").bounding_box()
    start = (shape["x"] + shape["width"] / 2, shape["y"] + shape["height"] / 2)
    end = (overlay["x"] + overlay["width"] * 0.75, start[1] + 40)  # down a little, as a thumb moves
    with page.expect_response(lambda r: "/region" in r.url):
        touch_drag(page, start, end)
    back = answers[-1]
    assert page.url.startswith(live_server)  # still on the page: the swipe did not go back
    assert back["temperature_c"] > moved["temperature_c"]
    moved = back

    # Resize with the round handle: the region sent grows.
    drawn_at(page, moved["region"])
    handle = page.locator("#overlay .handle-ring").bounding_box()
    hx, hy = handle["x"] + handle["width"] / 2, handle["y"] + handle["height"] / 2
    with page.expect_response(lambda r: "/region" in r.url):
        page.mouse.move(hx, hy)
        page.mouse.down()
        page.mouse.move(hx + 25, hy + 25, steps=5)
        page.mouse.up()
    grown = answers[-1]["region"]
    before = moved["region"]
    size = lambda r: r.get("radius") or r["width"] * r["height"]  # noqa: E731
    assert grown["kind"] == before["kind"] and size(grown) > size(before)


def test_shape_switch_and_keyboard_move_measure_again(live_server, browser_page, tmp_path, two_halves_jpeg):
    page = browser_page
    photo = tmp_path / "two-halves.jpg"
    photo.write_bytes(two_halves_jpeg)
    first = upload(page, live_server, photo)
    other = "circle" if first["region"]["kind"] == "rectangle" else "rectangle"
    with page.expect_response(lambda r: "/region" in r.url) as answer:
        page.click(f"[data-shape={other}]")
    switched = answer.value.json()["region"]
    assert switched["kind"] == other
    page.focus("#overlay g")
    with page.expect_response(lambda r: "/region" in r.url) as answer:
        for _ in range(5):
            page.keyboard.press("ArrowLeft")
    moved = answer.value.json()["region"]
    assert moved["kind"] == other
    key = "cx" if other == "circle" else "x"
    assert moved[key] < switched[key]  # arrow keys moved it left, then it was measured once


def test_units_switch_and_the_choice_is_remembered(live_server, browser_page, artifacts):
    page = browser_page
    reading = upload(page, live_server, DEMO_PHOTO)
    page.click("[data-unit=f]")
    assert shown_value(page) == f"{reading['temperature_f']}°F"
    low, high = reading["interval_68_f"]
    assert f"{low} – {high} °F" in page.inner_text("#bands")
    assert "°F" in page.inner_text("#scale .ticks")
    page.screenshot(path=artifacts / "web-04-fahrenheit.png")
    page.reload()
    assert page.get_attribute("[data-unit=f]", "aria-pressed") == "true"
    upload(page, live_server, DEMO_PHOTO)
    assert shown_value(page).endswith("°F")
    page.click("[data-unit=c]")
    assert shown_value(page) == f"{reading['temperature_c']}°C"


def test_a_ceiling_is_shown_as_below_about(live_server, browser_page, artifacts, tmp_path):
    # A 600 °C glow saved without EXIF: no exposure data, so colour alone, and in sRGB that gives
    # only a ceiling (colour-science puts the blackbody's linear green below zero there).
    from PIL import Image

    from glowtemp.render.synthetic import render_photo
    from glowtemp.render.synthetic_camera import CAMERAS

    rendered = render_photo(873.15, camera=CAMERAS["Nikon 5100 (NPL)"], size=(320, 240), tripod=True)
    bare = tmp_path / "no-exif-600.jpg"
    Image.fromarray(rendered.codes).save(bare, "JPEG", quality=92)
    page = browser_page
    reading = upload(page, live_server, bare)
    assert reading["status"] == "upper-bound"
    assert shown_value(page) == f"below about {reading['upper_bound_c']}°C"
    codes = page.eval_on_selector_all("#warnings li", "items => items.map(i => i.dataset.code)")
    assert codes == [w["code"] for w in reading["warnings"]]
    assert all(page.locator("#warnings .fix").all_inner_texts())
    page.screenshot(path=artifacts / "web-05-ceiling.png", full_page=True)


def test_no_glow_found_lets_the_user_place_the_region(live_server, browser_page, artifacts, tmp_path, dark_jpeg):
    page = browser_page
    photo = tmp_path / "dark.jpg"
    photo.write_bytes(dark_jpeg)
    page.goto(live_server + "/")
    page.set_input_files("#file-input", str(photo))
    page.wait_for_selector("#measure-drawn:not([hidden])", timeout=WAIT_MS)
    assert "draw the region" in page.inner_text("#problem")
    with page.expect_response(lambda r: r.url.endswith("/api/readings")) as answer:
        page.click("#measure-drawn")
    page.wait_for_selector("#result:not([hidden])", timeout=WAIT_MS)
    reading = answer.value.json()
    assert reading["region"]["found"] is False and reading["temperature_c"] is None
    assert page.locator("#warnings li").count() == len(reading["warnings"]) > 0
    page.screenshot(path=artifacts / "web-06-drawn-region.png", full_page=True)


def test_safety_page_opens_from_the_result(live_server, browser_page, artifacts):
    page = browser_page
    upload(page, live_server, DEMO_PHOTO)
    page.click("#safety-line a")
    page.wait_for_url(live_server + "/safety")
    assert page.inner_text("h1") == "Working safely around glow"
    assert "carbon monoxide" in page.inner_text("main")
    page.screenshot(path=artifacts / "web-07-safety.png", full_page=True)


def contrast_ratio(first: str, second: str) -> float:
    """WCAG 2.1 contrast ratio of two CSS rgb() colours (relative luminance, section 1.4.3)."""

    def luminance(css: str) -> float:
        channels = [int(v) / 255 for v in re.findall(r"\d+", css)[:3]]
        linear = [c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055) ** 2.4 for c in channels]
        return 0.2126 * linear[0] + 0.7152 * linear[1] + 0.0722 * linear[2]

    high, low = sorted((luminance(first), luminance(second)), reverse=True)
    return (high + 0.05) / (low + 0.05)


COLOURS = """() => {
  const css = (selector, property) => getComputedStyle(document.querySelector(selector))[property];
  return {page: css("html", "backgroundColor"), text: css("html", "color"),
          card: css("#result", "backgroundColor"), muted: css("#reading-kicker", "color"),
          action: css("label[for=camera-input]", "backgroundColor"), actionText: css("label[for=camera-input]", "color")};
}"""


def check_contrast(colours):
    # WCAG 2.1: 7:1 for body text (AAA, 1.4.6) suits sunlight and a dim studio; 4.5:1 (AA) elsewhere.
    assert contrast_ratio(colours["text"], colours["page"]) >= 7
    assert contrast_ratio(colours["text"], colours["card"]) >= 7
    assert contrast_ratio(colours["muted"], colours["card"]) >= 4.5
    assert contrast_ratio(colours["actionText"], colours["action"]) >= 7


def test_both_views_have_strong_contrast_and_sunlight_is_remembered(live_server, browser_page, artifacts):
    page = browser_page
    upload(page, live_server, DEMO_PHOTO)
    studio = page.evaluate(COLOURS)
    check_contrast(studio)
    page.click("#theme-switch")
    assert page.get_attribute("html", "data-theme") == "light"
    page.reload()
    assert page.get_attribute("html", "data-theme") == "light"
    upload(page, live_server, DEMO_PHOTO)
    sunlight = page.evaluate(COLOURS)
    assert sunlight["page"] != studio["page"]
    check_contrast(sunlight)
    page.screenshot(path=artifacts / "web-08-sunlight.png", full_page=True)


def test_a_raw_photo_is_measured_and_shown_in_its_glow_colour(live_server, browser_page, artifacts, tmp_path):
    from test_web_formats import blackbody_display_codes, dng_photo

    page = browser_page
    photo = tmp_path / "spy-hole.dng"
    photo.write_bytes(dng_photo(1000.0, scene="uniform"))
    reading = upload(page, live_server, photo)
    assert reading["colour_space"] == "Linear ROMM RGB (camera raw)" and reading["status"] == "ok"
    assert shown_value(page) == f"{reading['temperature_c']}°C"
    # Chromium cannot decode a DNG, so the page falls back to the server's preview.
    page.wait_for_function(
        "() => document.getElementById('photo').src.endsWith('/preview') && document.getElementById('photo').complete"
    )
    shown = page.evaluate("""() => {
      const img = document.getElementById('photo');
      const canvas = document.createElement('canvas');
      canvas.width = img.naturalWidth; canvas.height = img.naturalHeight;
      const context = canvas.getContext('2d');
      context.drawImage(img, 0, 0);
      return [img.naturalWidth, Array.from(context.getImageData(canvas.width / 2, canvas.height / 2, 1, 1).data)];
    }""")
    width, (red, green, blue, _) = shown
    assert width == reading["image"]["width"]
    expected = blackbody_display_codes(1000.0)  # colour-science: Planck's law, CIE 1931, sRGB
    assert abs(red - expected[0]) <= 20 and abs(green - expected[1]) <= 20 and blue <= 20
    page.locator("#photo-section").scroll_into_view_if_needed()
    page.screenshot(path=artifacts / "web-09-raw-photo.png")


def test_the_map_shows_the_bar_s_hot_end_with_its_band(live_server, browser_page, artifacts, tmp_path, hot_bar):
    from conftest import tile_truth_c

    page = browser_page
    rendered, data = hot_bar
    photo = tmp_path / "bar.jpg"
    photo.write_bytes(data)
    upload(page, live_server, photo)
    button = page.locator("#map-make")
    button.scroll_into_view_if_needed()
    box = button.bounding_box()
    assert box["height"] >= 56 and box["width"] >= 300  # a big target for a gloved thumb
    page.screenshot(path=artifacts / "web-10-map-offered.png")
    with page.expect_response(lambda r: r.url.endswith("/map")) as answer:
        button.click()
    made = answer.value.json()
    record, record_id = made["temperature_map"], made["id"]
    page.wait_for_function("() => { const p = document.getElementById('map-picture');"
                           " return !p.hidden && p.complete && p.naturalWidth > 0; }", timeout=WAIT_MS)
    hot = record["hottest"]
    # The bar is rendered hottest at its free end on the right (conftest); the hottest patch is
    # there and its band holds the rendered temperature of its pixels.
    assert hot["column"] == record["columns"] - 1
    low, high = hot["interval_95_c"]
    assert low <= tile_truth_c(rendered, hot) <= high
    hottest = re.sub(r"\s+", " ", page.inner_text("#map-extremes [data-tile=hottest]"))
    assert f"{hot['temperature_c']} °C" in hottest and f"95 % band {low} – {high} °C" in hottest
    assert "right" in hottest
    cool = record["coolest"]
    assert f"{cool['temperature_c']} °C" in page.inner_text("#map-extremes [data-tile=coolest]")
    assert page.evaluate("document.documentElement.scrollWidth") <= PHONE_VIEWPORT["width"]
    assert page.get_attribute("#map-full", "href").endswith(f"/api/readings/{record_id}/map.svg?unit=C")
    page.locator("#map-section").scroll_into_view_if_needed()
    page.screenshot(path=artifacts / "web-10-map.png")
    page.screenshot(path=artifacts / "web-10-map-full.png", full_page=True)

    # In °F the patches show the core's °F values (rounded to their own step), and the
    # picture is drawn again with a °F legend.
    with page.expect_response(lambda r: "map.svg?unit=F" in r.url) as picture:
        page.click("[data-unit=f]")
    assert picture.value.ok
    low_f, high_f = hot["interval_95_f"]
    hottest = re.sub(r"\s+", " ", page.inner_text("#map-extremes [data-tile=hottest]"))
    assert f"{hot['temperature_f']} °F" in hottest and f"95 % band {low_f} – {high_f} °F" in hottest

    # Moving the area puts the map away until it is asked for again.
    page.focus("#overlay g")
    with page.expect_response(lambda r: "/region" in r.url):
        page.keyboard.press("ArrowLeft")
    assert page.locator("#map-shown").is_hidden() and page.locator("#map-make").is_visible()
    assert "map it again" in page.inner_text("#map-status")
