"""Security headers on every answer, pages without inline script or style, no listing of the photo store."""

from __future__ import annotations

import io
import re

import pytest

from glowtemp.web.headers import CONTENT_SECURITY_POLICY


@pytest.fixture
def filled_client(web_app, web_client, two_halves_jpeg):
    """A client of an app with one firing holding one reading (so every page has content)."""
    firing_id = web_client.post("/api/firings", json={"name": "Glaze"}).get_json()["id"]
    answer = web_client.post(f"/api/firings/{firing_id}/readings", data={"photo": (io.BytesIO(two_halves_jpeg), "a.jpg")})
    assert answer.status_code == 201
    return web_client, firing_id, answer.get_json()["id"]


def pages(firing_id: int) -> list[str]:
    return ["/", "/safety", "/firings/", f"/firings/{firing_id}", f"/firings/{firing_id}?unit=f",
            f"/firings/{firing_id}/delete", "/no-such-page"]  # fmt: skip


def directives(policy: str) -> dict[str, list[str]]:
    """A CSP header as {directive: sources} (W3C CSP Level 3, section 2.2 serialized policy)."""
    parsed = {}
    for part in policy.split(";"):
        name, *values = part.split()
        parsed[name] = values
    return parsed


def test_the_policy_allows_no_inline_code_and_no_framing():
    policy = directives(CONTENT_SECURITY_POLICY)
    for name in ("script-src", "style-src", "default-src"):
        assert policy[name] == ["'self'"], name  # no 'unsafe-inline', no 'unsafe-eval', no other hosts
    assert policy["frame-ancestors"] == ["'none'"] and policy["object-src"] == ["'none'"]
    assert policy["form-action"] == ["'self'"] and policy["base-uri"] == ["'none'"]


def test_every_page_and_api_answer_carries_the_headers(filled_client):
    client, firing_id, reading_id = filled_client
    addresses = pages(firing_id) + ["/api/scale", "/api/profiles", f"/api/firings/{firing_id}",
                                    f"/api/readings/{reading_id}/preview", f"/api/firings/{firing_id}/export.csv"]  # fmt: skip
    for address in addresses:
        answer = client.get(address)
        assert answer.headers["Content-Security-Policy"] == CONTENT_SECURITY_POLICY, address
        assert answer.headers["Cache-Control"] == "no-store", address  # private: never cached (RFC 9111 5.2.2.5)
        assert answer.headers["X-Content-Type-Options"] == "nosniff", address
        assert answer.headers["Referrer-Policy"] == "same-origin", address
        assert answer.headers["X-Frame-Options"] == "DENY", address
    refused = client.post("/api/readings", data={})
    assert refused.status_code == 400 and refused.headers["Cache-Control"] == "no-store"


def test_static_files_may_be_cached_but_are_not_sniffed(web_client):
    answer = web_client.get("/static/measure.js")
    assert answer.status_code == 200 and "no-store" not in answer.headers.get("Cache-Control", "")
    assert answer.headers["X-Content-Type-Options"] == "nosniff"


INLINE_SCRIPT = re.compile(r"<script(?![^>]*\bsrc=)[^>]*>", re.I)
INLINE_HANDLER = re.compile(r"<[^>]+\son[a-z]+=", re.I)
STYLE_ATTRIBUTE = re.compile(r"<[^>]+\sstyle=", re.I)
STYLE_ELEMENT = re.compile(r"<style\b", re.I)


def test_pages_hold_no_inline_script_or_style(filled_client, tmp_path):
    client, firing_id, _ = filled_client
    from glowtemp.web import create_app

    pairing = create_app({"DATA_DIR": tmp_path / "paired", "PAIRING": True}).test_client().get("/pair")
    texts = {address: client.get(address).get_data(as_text=True) for address in pages(firing_id)}
    texts["/pair"] = pairing.get_data(as_text=True)
    assert "<svg" in texts[f"/firings/{firing_id}"]  # the chart is drawn into the page
    for address, text in texts.items():
        for pattern in (INLINE_SCRIPT, INLINE_HANDLER, STYLE_ATTRIBUTE, STYLE_ELEMENT):
            assert not pattern.search(text), (address, pattern.pattern, pattern.search(text))


@pytest.mark.parametrize(
    "address",
    ["/photos/", "/static/", "/static/photos/", "/static/../photos/", "/api/readings/", "/data/", "/glowtemp.sqlite3",
     "/static/..%2fphotos/"],
)  # fmt: skip
def test_the_photo_store_is_never_listed_or_served_as_files(filled_client, web_app, address):
    client, _, _ = filled_client
    answer = client.get(address)
    assert answer.status_code == 404, address
    (key,) = web_app.extensions["glowtemp"]["logbook"].photos.keys()
    assert key not in answer.get_data(as_text=True)
    assert client.get(f"/static/{key}").status_code == 404
    assert client.get(f"/photos/{key}").status_code == 404
