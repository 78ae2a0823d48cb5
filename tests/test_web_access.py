"""Who may use the server: pairing, sessions, the wrong-code lock-out, CSRF, and the loopback mode.

Every route of the app is enumerated from its url_map, so a route added later is covered too.
"""

from __future__ import annotations

import re
import sqlite3

import pytest
from flask.testing import FlaskClient

from glowtemp.shell.cli import main
from glowtemp.web import create_app
from glowtemp.web.access import OPEN_ENDPOINTS, SESSION_COOKIE, TOKEN_HEADER
from glowtemp.web.pairing import WRONG_TRIES, PairingCodes

PHONE = "192.168.1.50"  # client addresses on an invented studio network (RFC 1918)
OTHER_PHONE = "192.168.1.51"
HOST = "192.168.1.20:8000"  # the server as the phones reach it
STATE_CHANGING = {"POST", "PUT", "PATCH", "DELETE"}


@pytest.fixture
def paired_app(tmp_path):
    return create_app({"DATA_DIR": tmp_path / "data", "TESTING": True, "PAIRING": True})


class LanClient(FlaskClient):
    """A test client that reaches the server as a phone on the network would."""

    def open(self, *args, **kwargs):
        kwargs.setdefault("base_url", f"http://{HOST}")
        return super().open(*args, **kwargs)

    def session_cookie(self):
        return self.get_cookie(SESSION_COOKIE, domain=HOST.split(":")[0])


def lan_client(app, address=PHONE) -> LanClient:
    client = LanClient(app, app.response_class, use_cookies=True)
    client.environ_base["REMOTE_ADDR"] = address
    return client


def pair(app, client) -> str:
    """Pair ``client`` with the current code; returns the page's form token."""
    code = app.extensions["glowtemp"]["pairing"].code
    answer = client.post("/pair", data={"code": code, "next": "/"})
    assert answer.status_code == 303 and answer.headers["Location"] == "/"
    page = client.get("/").get_data(as_text=True)
    return re.search(r'<meta name="csrf-token" content="([0-9a-f]+)">', page).group(1)


def every_route(app):
    """(endpoint, method, url) for every rule of the app, with sample values for its arguments."""
    with app.test_request_context():
        from flask import url_for

        for rule in app.url_map.iter_rules():
            values = {name: "glow.css" if name == "filename" else 1 for name in rule.arguments}
            url = url_for(rule.endpoint, **values)
            for method in sorted(rule.methods - {"HEAD", "OPTIONS"}):
                yield rule.endpoint, method, url


def test_only_the_pairing_page_and_static_files_are_open(paired_app):
    endpoints = {endpoint for endpoint, _, _ in every_route(paired_app)}
    assert OPEN_ENDPOINTS == {"static", "access.pair", "access.pair_device"}
    assert OPEN_ENDPOINTS <= endpoints
    assert len(endpoints) > 20  # the whole app is enumerated, not a few routes


def test_without_a_session_every_route_is_refused(paired_app):
    client = lan_client(paired_app)
    checked = 0
    for endpoint, method, url in every_route(paired_app):
        if endpoint in OPEN_ENDPOINTS:
            continue
        answer = client.open(url, method=method)
        if url.startswith("/api/"):
            assert answer.status_code == 401, (method, url)
            assert "not paired" in answer.get_json()["error"], (method, url)
        else:
            assert answer.status_code == 303, (method, url)
            assert answer.headers["Location"].startswith("/pair?next="), (method, url)
        checked += 1
    assert checked > 20
    assert paired_app.extensions["glowtemp"]["logbook"].list_firings() == []  # nothing was changed


def test_unknown_addresses_need_a_session_too(paired_app):
    client = lan_client(paired_app)
    assert client.get("/api/no-such-thing").status_code == 401
    assert client.get("/no-such-page").status_code == 303


def test_with_a_session_every_route_answers(paired_app):
    client = lan_client(paired_app)
    token = pair(paired_app, client)
    paired_app.extensions["glowtemp"]["logbook"].create_firing(name="Bisque")  # firing 1 exists
    for endpoint, method, url in every_route(paired_app):
        headers = {TOKEN_HEADER: token} if method in STATE_CHANGING else {}
        answer = client.open(url, method=method, headers=headers)
        assert answer.status_code not in (401, 403, 429, 500), (method, url, answer.status_code)
        assert not answer.headers.get("Location", "").startswith("/pair"), (method, url)
        # The firing is deleted by DELETE /api/firings/1 along the way; make it again for the rest.
        if not paired_app.extensions["glowtemp"]["logbook"].get_firing(1):
            paired_app.extensions["glowtemp"]["logbook"].restore_firing(
                {"name": "Bisque", "kind": "bisque", "started_at": "2024-01-01T08:00", "status": "open",
                 "created_at": "2024-01-01T08:00"}, [])  # fmt: skip


def test_the_session_cookie_is_http_only_same_site_and_long_lived(paired_app):
    client = lan_client(paired_app)
    code = paired_app.extensions["glowtemp"]["pairing"].code
    cookie = client.post("/pair", data={"code": code}).headers["Set-Cookie"]
    assert cookie.startswith(SESSION_COOKIE + "=")
    assert "HttpOnly" in cookie and "SameSite=Lax" in cookie and "Path=/" in cookie
    max_age = int(re.search(r"Max-Age=(\d+)", cookie).group(1))
    assert max_age >= 180 * 86400  # long-lived: a phone stays paired for months


def test_the_database_keeps_only_a_digest_of_the_secret(paired_app):
    client = lan_client(paired_app)
    pair(paired_app, client)
    secret = client.session_cookie().value
    database = paired_app.extensions["glowtemp"]["logbook"].database_path
    with sqlite3.connect(database) as db:
        (digest,) = db.execute("SELECT secret_sha256 FROM sessions").fetchone()
    import hashlib

    assert digest == hashlib.sha256(secret.encode()).hexdigest()  # FIPS 180-4
    assert secret.encode() not in database.read_bytes()


def test_a_code_pairs_one_device_and_a_new_code_follows(paired_app):
    announced = []
    pairing = paired_app.extensions["glowtemp"]["pairing"]
    pairing.on_new_code = announced.append
    first = pairing.code
    pair(paired_app, lan_client(paired_app))
    assert announced == [pairing.code] and pairing.code != first
    second = lan_client(paired_app, OTHER_PHONE)
    assert second.post("/pair", data={"code": first}).status_code == 403  # used up
    assert second.post("/pair", data={"code": f" {pairing.code[:4]} - {pairing.code[4:]} "}).status_code == 303


def test_wrong_codes_lock_the_address_out_for_a_while(paired_app):
    now = [1000.0]
    pairing = PairingCodes(clock=lambda: now[0])
    paired_app.extensions["glowtemp"]["pairing"] = pairing
    guesser = lan_client(paired_app)
    wrong = "0" * 8 if pairing.code != "0" * 8 else "1" * 8
    for attempt in range(WRONG_TRIES):
        answer = guesser.post("/pair", data={"code": wrong})
        assert answer.status_code == 403 and "not the code" in answer.get_data(as_text=True)
        assert guesser.session_cookie() is None
    locked = guesser.post("/pair", data={"code": pairing.code})  # even the right code now
    assert locked.status_code == 429 and int(locked.headers["Retry-After"]) > 60
    assert "Too many wrong codes" in locked.get_data(as_text=True) and guesser.session_cookie() is None
    assert lan_client(paired_app, OTHER_PHONE).post("/pair", data={"code": pairing.code}).status_code == 303
    now[0] += pairing.lockout_s + 1
    assert guesser.post("/pair", data={"code": pairing.code}).status_code == 303


def test_after_pairing_the_browser_goes_back_but_never_to_another_site(paired_app):
    client = lan_client(paired_app)
    assert client.get("/firings/?unit=f").headers["Location"] == "/pair?next=/firings/?unit%3Df"
    code = paired_app.extensions["glowtemp"]["pairing"].code
    assert client.post("/pair", data={"code": code, "next": "//elsewhere.example/"}).headers["Location"] == "/"


def test_state_changes_need_the_form_token(paired_app):
    client = lan_client(paired_app)
    token = pair(paired_app, client)
    log = paired_app.extensions["glowtemp"]["logbook"]
    refused = client.post("/api/firings", json={"name": "Glaze"})
    assert refused.status_code == 403 and "form token" in refused.get_json()["error"]
    assert client.post("/api/firings", json={"name": "Glaze"}, headers={TOKEN_HEADER: "0" * 64}).status_code == 403
    assert client.post("/firings/", data={"name": "Glaze"}).status_code == 403  # a plain form without its field
    assert log.list_firings() == []
    assert client.post("/api/firings", json={"name": "Glaze"}, headers={TOKEN_HEADER: token}).status_code == 201
    assert client.post("/firings/", data={"name": "Bisque", "csrf_token": token}).status_code == 303
    assert sorted(f["name"] for f in log.list_firings()) == ["Bisque", "Glaze"]
    # Pages carry the token in their forms' hidden fields.
    page = client.get("/firings/").get_data(as_text=True)
    assert f'<input type="hidden" name="csrf_token" value="{token}">' in page


def test_a_foreign_origin_is_refused_even_with_the_token(paired_app):
    client = lan_client(paired_app)
    token = pair(paired_app, client)
    answer = client.post("/api/firings", json={"name": "Glaze"},
                         headers={TOKEN_HEADER: token, "Origin": "http://elsewhere.example"})  # fmt: skip
    assert answer.status_code == 403 and "another site" in answer.get_json()["error"]
    same = client.post("/api/firings", json={"name": "Glaze"}, headers={TOKEN_HEADER: token, "Origin": f"http://{HOST}"})
    assert same.status_code == 201


def test_revoking_unpairs_every_device(paired_app, capsys):
    client = lan_client(paired_app)
    pair(paired_app, client)
    assert client.get("/api/profiles").status_code == 200
    assert main(["sessions", "list", "--data", str(paired_app.config["DATA_DIR"])]) == 0
    assert PHONE in capsys.readouterr().out
    assert main(["sessions", "revoke", "--data", str(paired_app.config["DATA_DIR"])]) == 0
    assert "unpaired 1 device" in capsys.readouterr().out
    assert client.get("/api/profiles").status_code == 401  # the running app sees it at once
    assert client.get("/").status_code == 303


# --- this computer only (no pairing) ---------------------------------------------------------------


@pytest.mark.parametrize(
    "headers, refused",
    [
        ({"Origin": "http://elsewhere.example"}, True),  # a page of another site posting here
        ({"Origin": "null"}, True),  # a sandboxed frame or a privacy-hidden origin
        ({"Sec-Fetch-Site": "cross-site"}, True),  # Fetch Metadata of a cross-site request
        ({"Referer": "http://elsewhere.example/page"}, True),  # only a Referer, from elsewhere
        ({"Origin": "http://localhost"}, False),  # the page itself (the test client's host)
        ({"Sec-Fetch-Site": "same-origin"}, False),
        ({}, False),  # a script such as curl: no browser headers at all
    ],
)
def test_loopback_refuses_state_changes_from_other_sites(web_app, web_client, headers, refused):
    answer = web_client.post("/api/firings", json={"name": "Glaze"}, headers=headers)
    assert answer.status_code == (403 if refused else 201)
    assert len(web_app.extensions["glowtemp"]["logbook"].list_firings()) == (0 if refused else 1)


def test_loopback_needs_no_pairing_and_no_token(web_client):
    assert web_client.get("/").status_code == 200
    assert web_client.post("/api/firings", json={"name": "Glaze"}).status_code == 201
    assert web_client.get("/pair").status_code == 303  # nothing to pair


@pytest.mark.parametrize("host, allowed", [("127.0.0.1:8000", True), ("localhost:8000", True), ("[::1]:8000", True),
                                           ("glow.example:8000", False), ("192.168.1.20:8000", False)])  # fmt: skip
def test_loopback_answers_only_to_its_own_names(web_app, host, allowed):
    # A web page whose DNS name is made to point at 127.0.0.1 (DNS rebinding) names itself in Host.
    answer = web_app.test_client().get("/api/profiles", headers={"Host": host})
    assert answer.status_code == (200 if allowed else 403)
