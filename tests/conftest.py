"""Shared fixtures for the web tests: the app, its test client, test photos, a live server
and a headless Chromium page.

The browser fixtures drive Debian's ``chromium`` through Playwright (never a downloaded
browser). When chromium is missing they fail with a message saying how to install it: browser
tests never skip.
"""

from __future__ import annotations

import functools
import shutil
import threading
from pathlib import Path

import numpy as np
import pytest

CHROMIUM = "/usr/bin/chromium"
PHONE_VIEWPORT = {"width": 390, "height": 844}
CHROMIUM_ARGS = [
    "--no-sandbox",
    "--disable-gpu",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--no-first-run",
]
ARTIFACTS = Path(__file__).resolve().parent.parent / "test-artifacts"
DEMO_IMAGES = Path(__file__).resolve().parent.parent / "demo_images"

# Two glowing halves of a rendered photo (ideal CIE observer camera, daylight white balance):
# 900 °C on the left, 1200 °C on the right (invented test scene).
LEFT_HALF_C, RIGHT_HALF_C = 900.0, 1200.0
TWO_HALVES_SIZE = (320, 240)


@pytest.fixture(scope="session")
def two_halves_jpeg() -> bytes:
    """A small JPEG whose left half glows at 900 °C and right half at 1200 °C."""
    from glowtemp.estimation.scales import celsius_to_kelvin
    from glowtemp.render.synthetic import encode_jpeg, render_photo
    from glowtemp.render.synthetic_camera import ideal_camera

    left_k, right_k = celsius_to_kelvin(LEFT_HALF_C), celsius_to_kelvin(RIGHT_HALF_C)
    rendered = render_photo(
        lambda x, y: np.where(x < 0.5, left_k, right_k),
        camera=ideal_camera(),
        scene="uniform",
        size=TWO_HALVES_SIZE,
    )
    return encode_jpeg(rendered)


# A round bar glowing from 1000 °C where it enters the frame to 1350 °C at its free end, which
# lies at 68 % of the width (glowtemp.render.synthetic_scenes.BAR_END), rendered through the ideal CIE
# observer camera with unit white-balance gains, so the photo records CIE XYZ colours (invented
# test scene).
BAR_COOL_END_C, BAR_HOT_END_C, BAR_END = 1000.0, 1350.0, 0.68
HOT_BAR_SIZE = (320, 200)


@pytest.fixture(scope="session")
def hot_bar():
    """(rendered photo, its JPEG bytes) of the bar whose right end is hottest."""
    from glowtemp.estimation.scales import celsius_to_kelvin
    from glowtemp.render.synthetic import encode_jpeg, render_photo
    from glowtemp.render.synthetic_camera import ideal_camera

    def field(x, y):
        return celsius_to_kelvin(BAR_COOL_END_C + (BAR_HOT_END_C - BAR_COOL_END_C) * np.clip(x / BAR_END, 0, 1))

    rendered = render_photo(field, camera=ideal_camera(), white_balance=(1.0, 1.0, 1.0), scene="bar",
                            size=HOT_BAR_SIZE, seed=4)  # fmt: skip
    return rendered, encode_jpeg(rendered)


def tile_truth_c(rendered, tile: dict) -> float:
    """The rendered temperature of a map tile's glowing pixels, mean in °C."""
    x, y = tile["x"], tile["y"]
    return float(np.nanmean(rendered.truth_k[y : y + tile["height"], x : x + tile["width"]])) - 273.15


@pytest.fixture(scope="session")
def dark_jpeg() -> bytes:
    """A plain dark-grey JPEG with nothing glowing in it."""
    import io

    from PIL import Image

    out = io.BytesIO()
    Image.new("RGB", (64, 48), (30, 30, 30)).save(out, "JPEG")
    return out.getvalue()


@pytest.fixture
def web_app(tmp_path):
    from glowtemp.web import create_app

    return create_app({"DATA_DIR": tmp_path / "data", "TESTING": True})


@pytest.fixture
def web_client(web_app):
    return web_app.test_client()


@pytest.fixture(scope="session")
def live_server(tmp_path_factory):
    """The app on a real waitress server on a free port of 127.0.0.1, in a thread; yields its URL."""
    from waitress.server import create_server

    from glowtemp.web import create_app

    app = create_app({"DATA_DIR": tmp_path_factory.mktemp("live-data")})
    server = create_server(app, host="127.0.0.1", port=0, threads=4)
    thread = threading.Thread(target=server.run, daemon=True)
    thread.start()
    yield f"http://127.0.0.1:{server.effective_port}"
    server.close()
    thread.join(timeout=5)


@pytest.fixture
def own_live_server(tmp_path):
    """The app with a data folder of its own on waitress on 127.0.0.1; yields (URL, the app)."""
    from waitress.server import create_server

    from glowtemp.web import create_app

    app = create_app({"DATA_DIR": tmp_path / "own-data"})
    server = create_server(app, host="127.0.0.1", port=0, threads=4)
    thread = threading.Thread(target=server.run, daemon=True)
    thread.start()
    yield f"http://127.0.0.1:{server.effective_port}", app
    server.close()
    thread.join(timeout=5)


@pytest.fixture
def paired_live_server(tmp_path):
    """The app asking every device to pair, on waitress on 127.0.0.1; yields (URL, its pairing codes)."""
    from waitress.server import create_server

    from glowtemp.web import create_app

    app = create_app({"DATA_DIR": tmp_path / "paired-data", "PAIRING": True})
    server = create_server(app, host="127.0.0.1", port=0, threads=4)
    thread = threading.Thread(target=server.run, daemon=True)
    thread.start()
    yield f"http://127.0.0.1:{server.effective_port}", app.extensions["glowtemp"]["pairing"]
    server.close()
    thread.join(timeout=5)


@pytest.fixture(scope="session")
def chromium_browser():
    """Headless Debian chromium (Playwright gives each launch a fresh, temporary profile)."""
    if shutil.which("chromium") is None or not Path(CHROMIUM).exists():
        pytest.fail(
            f"The browser tests need Debian's chromium at {CHROMIUM}: run `apt-get install -y chromium`.",
            pytrace=False,
        )
    from playwright.sync_api import sync_playwright

    with sync_playwright() as playwright:
        browser = playwright.chromium.launch(executable_path=CHROMIUM, headless=True, args=CHROMIUM_ARGS)
        yield browser
        browser.close()


@pytest.fixture
def browser_page(chromium_browser):
    """A phone-sized page in its own context (empty local storage); JavaScript errors and anything
    the Content-Security-Policy blocks fail the test."""
    context = chromium_browser.new_context(viewport=PHONE_VIEWPORT, device_scale_factor=2, has_touch=True)
    page = context.new_page()
    errors = []
    page.on("pageerror", lambda error: errors.append(str(error)))
    page.on("console", lambda message: errors.append(message.text) if "Content Security Policy" in message.text else None)
    yield page
    context.close()
    assert not errors, f"JavaScript errors on the page: {errors}"


@pytest.fixture(scope="session")
def artifacts() -> Path:
    """Where screenshots go (git-ignored)."""
    ARTIFACTS.mkdir(exist_ok=True)
    return ARTIFACTS


# --- a real `glowtemp serve` process and plain HTTP uploads to it ---------------------------


def start_glowtemp_serve(data_dir: Path, *options: str):
    """Start `glowtemp serve --port 0` on loopback; returns (process, base URL without a slash)."""
    import subprocess
    import sys

    command = [sys.executable, "-m", "glowtemp.shell.cli", "serve", "--port", "0", "--data", str(data_dir), *options]
    process = subprocess.Popen(command, stdout=subprocess.PIPE, stderr=subprocess.STDOUT, text=True)
    seen = []
    for line in process.stdout:
        seen.append(line)
        if line.startswith("Open "):
            return process, line.split()[-1].rstrip("/")
    process.wait(timeout=10)
    raise AssertionError(f"glowtemp serve did not start: {''.join(seen)}")


def multipart(fields: dict, photo: bytes, filename: str = "photo.jpg") -> tuple[bytes, str]:
    """A multipart/form-data body (RFC 7578) with text fields and one file named 'photo'."""
    import uuid

    boundary = uuid.uuid4().hex
    parts = [f'--{boundary}\r\nContent-Disposition: form-data; name="{name}"\r\n\r\n{value}\r\n'.encode()
             for name, value in fields.items()]  # fmt: skip
    parts.append(f'--{boundary}\r\nContent-Disposition: form-data; name="photo"; filename="{filename}"\r\n'
                 "Content-Type: image/jpeg\r\n\r\n".encode() + photo + b"\r\n")  # fmt: skip
    return b"".join(parts) + f"--{boundary}--\r\n".encode(), f"multipart/form-data; boundary={boundary}"


def post(url: str, body: bytes, content_type: str, timeout: float = 60) -> tuple[int, dict]:
    """POST and return (status, JSON answer), for error answers too."""
    import json
    import urllib.error
    import urllib.request

    request = urllib.request.Request(url, data=body, headers={"Content-Type": content_type}, method="POST")
    try:
        with urllib.request.urlopen(request, timeout=timeout) as answer:
            return answer.status, json.loads(answer.read())
    except urllib.error.HTTPError as error:
        return error.code, json.loads(error.read() or b"{}")


@functools.lru_cache(maxsize=4)
def rendered_jpegs(count: int, size=(160, 120)) -> tuple[bytes, ...]:
    """``count`` different small JPEGs of spy-hole scenes from 950 °C up in 20 °C steps (invented)."""
    from glowtemp.estimation.scales import celsius_to_kelvin
    from glowtemp.render.synthetic import encode_jpeg, render_photo
    from glowtemp.render.synthetic_camera import ideal_camera

    return tuple(encode_jpeg(render_photo(celsius_to_kelvin(950.0 + 20 * n), camera=ideal_camera(), size=size, seed=n))
                 for n in range(count))  # fmt: skip
