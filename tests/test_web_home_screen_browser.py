"""The page on a phone's home screen and its smaller parts, in headless Chromium at 390 x 844:
the web app manifest and its icons, the tips that open, and profile labels in the unit shown."""

from __future__ import annotations

import io
import json
import urllib.request

import numpy as np
from PIL import Image

from glowtemp.estimation.profile_store import list_profiles

# W3C Web Application Manifest, "icon masks": a maskable icon's safe zone is the circle of
# radius 40 % of the icon's size at its centre; outside it the picture may be cut away.
SAFE_ZONE_RADIUS = 0.40


def fetched(url: str) -> tuple[str, bytes]:
    with urllib.request.urlopen(url, timeout=10) as answer:
        return answer.headers.get_content_type(), answer.read()


def test_chromium_reads_the_manifest_and_can_put_the_page_on_the_home_screen(own_live_server, browser_page):
    base, _ = own_live_server
    page = browser_page
    page.goto(base)
    session = page.context.new_cdp_session(page)
    manifest = session.send("Page.getAppManifest")
    assert manifest["url"] == f"{base}/static/manifest.webmanifest"
    assert manifest["errors"] == []
    errors = session.send("Page.getInstallabilityErrors")["installabilityErrors"]
    # The test's browser context is a throw-away (incognito) profile, where nothing installs;
    # every other check (manifest, icons, start address, display) must pass.
    assert [e["errorId"] for e in errors if e["errorId"] != "in-incognito"] == []
    session.detach()
    data = json.loads(manifest["data"])
    assert data["display"] == "standalone" and data["start_url"] == "/"

    for icon in data["icons"]:
        kind, body = fetched(f"{base}/static/{icon['src']}")
        assert kind == icon["type"]
        if kind == "image/png":
            picture = Image.open(io.BytesIO(body))
            assert f"{picture.width}x{picture.height}" == icon["sizes"]
    (maskable,) = [icon for icon in data["icons"] if icon.get("purpose") == "maskable"]
    pixels = np.asarray(Image.open(io.BytesIO(fetched(f"{base}/static/{maskable['src']}")[1])).convert("RGBA"), float)
    size = pixels.shape[0]
    assert (pixels[..., 3] == 255).all()  # full bleed: nothing transparent for the phone's mask to show
    y, x = np.mgrid[0:size, 0:size] + 0.5
    outside = np.hypot(x - size / 2, y - size / 2) > SAFE_ZONE_RADIUS * size
    background = pixels[0, 0]
    assert np.abs(pixels[outside] - background).max() < 1  # the disc and ring stay in the safe zone


def test_the_collapsed_tips_show_that_they_open(own_live_server, browser_page, artifacts):
    base, _ = own_live_server
    page = browser_page
    page.goto(base)
    summary = page.locator("details.tips summary")
    marker = "(summary) => getComputedStyle(summary, '::before').content"
    assert summary.evaluate(marker) == '"▸"'
    box = summary.bounding_box()
    assert box["height"] >= 48  # a target for a thumb
    assert page.locator("details.tips li").first.is_hidden()
    summary.click()
    assert summary.evaluate(marker) == '"▾"'
    assert page.locator("details.tips li").first.is_visible()
    page.screenshot(path=str(artifacts / "tips-open.png"))


def test_profile_labels_follow_the_unit_shown(own_live_server, browser_page):
    base, app = own_live_server
    write_demo_profile(app.config["DATA_DIR"])
    (summary,) = list_profiles(app.config["DATA_DIR"])
    low_c, high_c = summary["span_c"]
    low_f, high_f = low_c * 9 / 5 + 32, high_c * 9 / 5 + 32  # NIST SP 811 B.9
    page = browser_page
    page.goto(base)
    option = page.locator("#profile-before option").nth(1)
    assert option.text_content().endswith(f"{low_c:.0f}–{high_c:.0f} °C")
    page.evaluate("() => localStorage.setItem('glowtemp.unit', 'f')")
    page.reload()
    page.wait_for_function("() => document.querySelector('#profile-before').options[1]?.text.endsWith('°F')")
    assert option.text_content().endswith(f"{low_f:.0f}–{high_f:.0f} °F")
    assert page.locator("#profile-after option").nth(1).text_content() == option.text_content()
    assert page.locator("#profile-before option").count() == 2  # relabelled, not listed twice


def write_demo_profile(data_dir) -> None:
    """A camera profile fitted from three demo photos and their rendered temperatures (truth.csv)."""
    import csv

    from conftest import DEMO_IMAGES

    from glowtemp.estimation.profile_store import fit_from_csv

    names = ("alder_lane_1000_760C.jpg", "alder_lane_1100_870C.jpg", "alder_lane_1500_1240C.jpg")
    truth = {row["file"]: row["true_c"] for row in csv.DictReader(open(DEMO_IMAGES / "truth.csv"))}
    pairs = data_dir / "pairs.csv"
    pairs.write_text("photo,reference_c\n" + "".join(f"{DEMO_IMAGES / name},{truth[name]}\n" for name in names))
    fit_from_csv("kiln phone", pairs, data_dir)
