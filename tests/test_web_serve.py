"""`glowtemp serve`: a real waitress process that prints where to open the page."""

from __future__ import annotations

import re
import subprocess
import sys
import urllib.request

import pytest

from conftest import DEMO_IMAGES

from glowtemp.shell.cli import build_parser
from glowtemp.firinglog.logbook import Logbook
from glowtemp.web.server import addresses_to_open


def test_serve_options_and_defaults():
    args = build_parser().parse_args(["serve"])
    assert (args.host, args.port, args.data, args.demo) == ("127.0.0.1", 8000, None, None)
    args = build_parser().parse_args(["serve", "--host", "0.0.0.0", "--port", "8123", "--data", "d"])
    assert (args.host, args.port, args.data) == ("0.0.0.0", 8123, "d")


def test_every_interface_lists_this_machine_first():
    urls = addresses_to_open("0.0.0.0", 8000)
    assert urls[0] == "http://127.0.0.1:8000/"
    assert all(re.fullmatch(r"http://[0-9.]+:8000/", url) for url in urls)
    assert addresses_to_open("::1", 8000) == ["http://[::1]:8000/"]  # RFC 3986 3.2.2 brackets


def test_serve_prints_the_address_and_answers_there(tmp_path):
    command = [sys.executable, "-m", "glowtemp.shell.cli", "serve", "--port", "0", "--data", str(tmp_path),
               "--demo", str(DEMO_IMAGES)]
    process = subprocess.Popen(command, stdout=subprocess.PIPE, stderr=subprocess.STDOUT, text=True)
    try:
        lines = []
        for line in process.stdout:
            lines.append(line)
            if line.startswith("Open "):
                break
        url = lines[-1].split()[-1]
        assert re.fullmatch(r"http://127\.0\.0\.1:\d+/", url), lines
        with urllib.request.urlopen(url, timeout=10) as response:
            assert response.status == 200
            assert "waitress" in response.headers.get("Server", "")
            assert 'capture="environment"' in response.read().decode()
    finally:
        process.terminate()
        process.wait(timeout=10)
    assert any("demo firing" in line for line in lines)
    with Logbook(tmp_path) as log:
        assert len(log.list_firings()) == 1


def read_until_qr_ends(stream) -> list[str]:
    """Lines of `glowtemp serve --pair` up to the end of its QR code (its last, half-drawn row)."""
    lines = []
    for line in stream:
        lines.append(line.rstrip("\n"))
        if lines[-1] and set(lines[-1]) == {"▀"}:
            return lines
    raise AssertionError(f"no QR code printed: {lines}")


def qr_image(rows: list[str]):
    """The terminal's half-block QR code as a picture: each character is two modules, one above the other."""
    from PIL import Image

    halves = {"█": (255, 255), "▀": (255, 0), "▄": (0, 255), " ": (0, 0)}  # light modules are drawn
    pixels = [[halves[ch][half] for ch in row] for row in rows for half in (0, 1)]
    image = Image.new("L", (len(pixels[0]), len(pixels)))
    image.putdata([value for line in pixels for value in line])
    return image.resize((image.width * 8, image.height * 8), Image.NEAREST)


def test_serve_pair_prints_a_code_and_a_qr_code_that_pair_a_device(tmp_path):
    import http.cookiejar
    import urllib.error
    import urllib.parse

    import zxingcpp

    command = [sys.executable, "-m", "glowtemp.shell.cli", "serve", "--port", "0", "--pair", "--data", str(tmp_path)]
    process = subprocess.Popen(command, stdout=subprocess.PIPE, stderr=subprocess.STDOUT, text=True)
    try:
        lines = read_until_qr_ends(process.stdout)
        base = next(line.split()[-1] for line in lines if line.startswith("Open "))
        pairing_url = next(line.split()[-1] for line in lines if "/pair?code=" in line)
        code = re.search(r"Pairing code (\d{4}-\d{4})", "\n".join(lines)).group(1).replace("-", "")
        assert pairing_url == f"{base}pair?code={code}"
        # An independent decoder (ZXing, ISO/IEC 18004) reads the printed QR code as the pairing address.
        qr_rows = [line for line in lines if line and set(line) <= set("█▀▄ ")]
        (decoded,) = zxingcpp.read_barcodes(qr_image(qr_rows))
        assert decoded.text == pairing_url

        with pytest.raises(urllib.error.HTTPError) as unpaired:
            urllib.request.urlopen(base + "api/profiles", timeout=10)
        assert unpaired.value.code == 401

        jar = http.cookiejar.CookieJar()
        phone = urllib.request.build_opener(urllib.request.HTTPCookieProcessor(jar))
        assert f'value="{code}"' in phone.open(pairing_url, timeout=10).read().decode()
        form = urllib.parse.urlencode({"code": code, "next": "/"}).encode()
        with phone.open(base + "pair", data=form, timeout=10) as answer:  # follows the 303 to the page
            assert answer.status == 200 and 'capture="environment"' in answer.read().decode()
        assert [cookie.name for cookie in jar] == ["glowtemp_session"]
        assert phone.open(base + "api/profiles", timeout=10).status == 200
        fresh = read_until_qr_ends(process.stdout)  # the used code is replaced and shown again
        assert code not in "\n".join(fresh) and any("Pairing code" in line for line in fresh)
    finally:
        process.terminate()
        process.wait(timeout=10)


def test_lan_and_pair_options(monkeypatch, capsys):
    args = build_parser().parse_args(["serve", "--lan", "--pair", "--max-upload-mb", "8", "--max-megapixels", "24"])
    assert (args.lan, args.pair, args.max_upload_mb, args.max_megapixels) == (True, True, 8.0, 24.0)
    with pytest.raises(SystemExit):
        build_parser().parse_args(["serve", "--lan", "--host", "0.0.0.0"])  # one or the other
    capsys.readouterr()

    import glowtemp.web.server
    from glowtemp.shell.cli import main

    monkeypatch.setattr(glowtemp.web.server, "lan_address", lambda: None)  # a computer on no network
    assert main(["serve", "--lan"]) == 1
    assert "no address on a local network" in capsys.readouterr().err


def test_every_address_but_loopback_asks_devices_to_pair():
    from glowtemp.web.server import needs_pairing

    assert [needs_pairing(h) for h in ("127.0.0.1", "localhost", "::1")] == [False] * 3
    assert [needs_pairing(h) for h in ("0.0.0.0", "192.168.1.20", "::")] == [True] * 3
