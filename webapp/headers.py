"""Security headers on every answer.

- ``Content-Security-Policy``: scripts, styles, fonts and fetches from this server only, no
  inline script or style (the templates keep theirs in static/, the firing chart's SVG uses
  presentation attributes), images also from ``blob:`` (the photo just taken) and ``data:``,
  no plugins, no ``<base>`` changes, forms post only here, and no framing by any page
  (``frame-ancestors 'none'``, with ``X-Frame-Options: DENY`` for older browsers).
- ``Cache-Control: no-store`` on everything but the static files: pages, API answers and photo
  previews are private and must not stay in a shared or back-button cache.
- ``X-Content-Type-Options: nosniff`` (a photo is never run as a script or page) and
  ``Referrer-Policy: same-origin`` (addresses, which may carry a pairing code, never leave).

References
----------
- W3C Content Security Policy Level 3; RFC 9111 section 5.2 (Cache-Control: no-store);
  WHATWG Fetch (X-Content-Type-Options); W3C Referrer Policy; RFC 7034 (X-Frame-Options).
"""

from __future__ import annotations

from flask import request

CONTENT_SECURITY_POLICY = "; ".join(
    (
        "default-src 'self'",
        "script-src 'self'",
        "style-src 'self'",
        "img-src 'self' blob: data:",
        "connect-src 'self'",
        "object-src 'none'",
        "base-uri 'none'",
        "form-action 'self'",
        "frame-ancestors 'none'",
    )
)
FIXED_HEADERS = {
    "Content-Security-Policy": CONTENT_SECURITY_POLICY,
    "X-Content-Type-Options": "nosniff",
    "Referrer-Policy": "same-origin",
    "X-Frame-Options": "DENY",
}


def secure(response):
    """Add the headers to one answer (an ``after_request`` function)."""
    response.headers.update(FIXED_HEADERS)
    if request.endpoint != "static":
        response.headers["Cache-Control"] = "no-store"
        response.headers.pop("Expires", None)
        response.headers.pop("ETag", None)
        response.headers.pop("Last-Modified", None)
    return response


def register(app) -> None:
    app.after_request(secure)
