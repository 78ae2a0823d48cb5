"""Who may use the server, and requests that other sites cannot forge.

Two modes, chosen by the ``PAIRING`` setting:

- **This computer only** (``glowtemp serve``, the default): the server listens on loopback and
  no pairing is asked for. The ``Host`` a request names must be a loopback name, so a web page
  elsewhere cannot reach the server through a DNS name that points at 127.0.0.1 (DNS rebinding).
- **Pairing** (``glowtemp serve --lan``): every page and API call needs the session cookie of a
  paired device; without it the API answers 401 and a page sends the browser to ``/pair``. A
  device pairs by sending the one-time code the server prints (:mod:`glowtemp.web.pairing`)
  and gets a long-lived ``HttpOnly``, ``SameSite=Lax`` cookie holding a random secret whose
  digest the firing log keeps (:mod:`glowtemp.firinglog.sessions`). Style sheets and scripts, which hold
  nothing private, are served to anyone, so the pairing page can use them.

In both modes a state-changing request (POST, PUT, PATCH, DELETE) that a browser says came
from another site (its ``Origin``, else ``Sec-Fetch-Site``, else ``Referer``) is refused with
403; scripts such as curl send none of these and are let through in the first mode. With
pairing, such a request must also carry the session's form token: in the ``X-CSRF-Token``
header (the page's scripts read it from ``<meta name="csrf-token">``) or in the
``csrf_token`` field of a plain form. The token is an HMAC-SHA256 of a fixed label keyed by the
session secret (RFC 2104), so it needs no storage and changes with the session.

References
----------
- OWASP Cross-Site Request Forgery Prevention Cheat Sheet: synchronizer token pattern, and
  verifying the origin with standard headers.
- RFC 6454 (the Origin header), RFC 6265bis (SameSite cookies), W3C Fetch Metadata
  Request Headers (Sec-Fetch-Site).
"""

from __future__ import annotations

import hashlib
import hmac
import ipaddress
import re
from urllib.parse import urlsplit, urlunsplit

from flask import Blueprint, current_app, g, jsonify, redirect, render_template, request, url_for
from markupsafe import Markup, escape

from .errors import ApiError
from .pairing import PairingLocked

blueprint = Blueprint("access", __name__)

SESSION_COOKIE = "glowtemp_session"
SESSION_DAYS = 365
TOKEN_HEADER = "X-CSRF-Token"
TOKEN_FIELD = "csrf_token"
LONGEST_NEXT = 2000  # characters of the address to go back to after pairing
STATE_CHANGING = frozenset({"POST", "PUT", "PATCH", "DELETE"})
OPEN_ENDPOINTS = frozenset({"static", "access.pair", "access.pair_device"})  # reachable unpaired
NOT_PAIRED = (
    "This device is not paired with glowtemp yet: open the pairing address that glowtemp serve "
    "prints (or scan its QR code)."
)


def form_token(secret: str) -> str:
    """The CSRF token of the session with ``secret`` (HMAC-SHA256, RFC 2104), hex."""
    return hmac.new(secret.encode("utf-8"), b"glowtemp form token", hashlib.sha256).hexdigest()


def pairing_on() -> bool:
    return bool(current_app.config.get("PAIRING"))


def _services() -> dict:
    return current_app.extensions["glowtemp"]


def is_loopback_name(host: str | None) -> bool:
    """Whether a host name or address means this computer (localhost, 127.0.0.0/8, ::1).

    >>> is_loopback_name("127.0.0.1"), is_loopback_name("localhost"), is_loopback_name("192.168.1.9")
    (True, True, False)
    """
    if not host:
        return False
    if host.lower() == "localhost" or host.lower().endswith(".localhost"):
        return True
    try:
        return ipaddress.ip_address(host.strip("[]")).is_loopback
    except ValueError:
        return False


def _own_origin() -> str:
    return f"{request.scheme}://{request.host}".lower()


def from_another_site() -> bool:
    """Whether the browser says this request came from a page of another origin."""
    origin = request.headers.get("Origin")
    if origin is not None:
        return origin.lower() != _own_origin()  # includes "null" (sandboxed or privacy-hidden)
    site = request.headers.get("Sec-Fetch-Site")
    if site is not None:
        return site not in ("same-origin", "none")
    referer = request.headers.get("Referer")
    if referer:
        parts = urlsplit(referer)
        return f"{parts.scheme}://{parts.netloc}".lower() != _own_origin()
    return False


def _session_secret() -> str | None:
    """The request's session secret if it belongs to a paired device."""
    secret = request.cookies.get(SESSION_COOKIE)
    return secret if _services()["sessions"].is_paired(secret) else None


def csrf_token() -> str:
    """This request's form token ('' without pairing, where none is needed)."""
    secret = g.get("session_secret")
    return form_token(secret) if secret else ""


def csrf_field() -> Markup:
    """A hidden form field with the form token, for plain HTML forms ('' without pairing)."""
    token = csrf_token()
    return Markup(f'<input type="hidden" name="{TOKEN_FIELD}" value="{escape(token)}">') if token else Markup("")


def _token_sent() -> str:
    return request.headers.get(TOKEN_HEADER) or request.form.get(TOKEN_FIELD) or ""


def _not_paired():
    if request.path.startswith("/api/"):
        return jsonify(error=NOT_PAIRED, pair_url=url_for("access.pair")), 401
    target = request.full_path.rstrip("?") if request.method == "GET" else "/"
    return redirect(url_for("access.pair", next=target), 303)


def guard():
    """Runs before every request: the checks described at the top of this module."""
    if not pairing_on() and not is_loopback_name(urlsplit("//" + request.host).hostname):
        raise ApiError("This glowtemp server answers only on this computer's own address (127.0.0.1).", 403)
    if request.method in STATE_CHANGING and from_another_site():
        raise ApiError("Refused: this request came from a page of another site.", 403)
    if not pairing_on() or request.endpoint in OPEN_ENDPOINTS:
        return None
    secret = _session_secret()
    if secret is None:
        return _not_paired()
    g.session_secret = secret
    if request.method in STATE_CHANGING and not hmac.compare_digest(_token_sent().encode(), form_token(secret).encode()):
        raise ApiError("Refused: the form token is missing or out of date; reload the page and try again.", 403)
    return None


# What a same-site path may hold, unescaped: RFC 3986's unreserved and sub-delims characters,
# ":", "@", "/", "?" and "%" (of percent-escapes). No spaces, control characters or backslashes,
# which browsers drop or turn into "/" (WHATWG URL) and so could make "/\t/x" mean "//x".
PATH_CHARACTERS = re.compile(r"[A-Za-z0-9\-._~!$&'()*+,;=:@/?%]*")


def _safe_next(target: str | None) -> str:
    """A path on this server to go to after pairing, rebuilt from its parsed parts; anything else
    (another site, a scheme, odd characters) means the measuring page."""
    home = url_for("measuring.index")
    if not target or len(target) > LONGEST_NEXT or not PATH_CHARACTERS.fullmatch(target):
        return home
    parts = urlsplit(target)
    if parts.scheme or parts.netloc or not parts.path.startswith("/") or parts.path.startswith("//"):
        return home
    return urlunsplit(("", "", parts.path, parts.query, ""))


@blueprint.get("/pair")
def pair():
    """The pairing page: a box for the code, filled in when the QR code's address carries it."""
    target = _safe_next(request.args.get("next"))
    if not pairing_on() or _session_secret() is not None:
        return redirect(target, 303)
    return render_template("pair.html", code=request.args.get("code", ""), next=target, problem=None)


@blueprint.post("/pair")
def pair_device():
    """Check the code; a right one pairs this device with a long-lived session cookie."""
    target = _safe_next(request.form.get("next"))
    if not pairing_on() or _session_secret() is not None:
        return redirect(target, 303)
    pairing = _services()["pairing"]
    address = request.remote_addr or "unknown"
    try:
        paired = pairing.attempt(address, request.form.get("code", ""))
    except PairingLocked as locked:
        minutes = max(1, round(locked.retry_after_s / 60))
        wait = f"Try again in about {minutes} minute{'s' * (minutes != 1)}"
        problem = (f"Too many wrong codes were sent to this server, so its code was replaced: {wait}, "
                   "with the new code that glowtemp serve shows." if locked.everyone
                   else f"Too many wrong codes from this device. {wait}.")  # fmt: skip
        page = render_template("pair.html", code="", next=target, problem=problem)
        return page, 429, {"Retry-After": str(int(locked.retry_after_s) + 1)}
    if not paired:
        left = pairing.tries_left(address)
        problem = (f"That is not the code glowtemp serve shows now. {left} more tr{'ies' if left != 1 else 'y'} "
                   "before this device has to wait.")  # fmt: skip
        return render_template("pair.html", code="", next=target, problem=problem), 403
    secret = _services()["sessions"].pair(paired_from=address)
    response = redirect(target, 303)
    response.set_cookie(
        SESSION_COOKIE, secret, max_age=SESSION_DAYS * 86400, httponly=True, samesite="Lax",
        secure=request.is_secure, path="/",
    )  # fmt: skip
    return response


def register(app) -> None:
    """Install the checks and the template helpers ``csrf_token()`` and ``csrf_field()``."""
    app.register_blueprint(blueprint)
    app.before_request(guard)

    @app.context_processor
    def form_tokens():
        return {"csrf_token": csrf_token, "csrf_field": csrf_field}
