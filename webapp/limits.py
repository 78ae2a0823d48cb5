"""Request limits beyond Flask's own.

- Flask refuses a request larger than ``MAX_CONTENT_LENGTH`` and a form text field larger than
  ``MAX_FORM_MEMORY_SIZE`` (both 413). A JSON body would otherwise be read whole up to the photo
  limit, so any request that is not a multipart upload is held to ``MAX_FORM_MEMORY_SIZE`` too.
- Numbers in addresses (``/firings/<int:firing_id>``) stop at SQLite's largest row id, so a
  longer number is simply an address that does not exist (404).
"""

from __future__ import annotations

from flask import current_app, request
from werkzeug.exceptions import RequestEntityTooLarge
from werkzeug.routing import IntegerConverter

LARGEST_ROW_ID = 2**63 - 1  # SQLite INTEGER PRIMARY KEY (sqlite.org/autoinc.html)


class RowNumberConverter(IntegerConverter):
    """``<int:...>`` in addresses: a non-negative whole number no larger than a row id can be."""

    def __init__(self, map, fixed_digits=0, min=None, max=LARGEST_ROW_ID, signed=False):
        super().__init__(map, fixed_digits=fixed_digits, min=min, max=max, signed=signed)


def too_large_for_text() -> bool:
    """Whether this request, carrying no file, is larger than the text limit."""
    if request.mimetype == "multipart/form-data":
        return False
    return (request.content_length or 0) > current_app.config["MAX_FORM_MEMORY_SIZE"]


def register(app) -> None:
    """Install the checks; call before any blueprint is registered (for the address numbers)."""
    app.url_map.converters["int"] = RowNumberConverter

    @app.before_request
    def hold_text_requests_to_the_text_limit():
        if too_large_for_text():
            raise RequestEntityTooLarge()
