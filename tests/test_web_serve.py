"""`glowtemp serve`: a real waitress process that prints where to open the page."""

from __future__ import annotations

import re
import subprocess
import sys
import urllib.request

from conftest import DEMO_IMAGES

from glowtemp.cli import build_parser
from glowtemp.logbook import Logbook
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
    command = [sys.executable, "-m", "glowtemp.cli", "serve", "--port", "0", "--data", str(tmp_path),
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
