"""Request limits beyond Flask's own.

- Flask refuses a request larger than ``MAX_CONTENT_LENGTH`` and a form text field larger than
  ``MAX_FORM_MEMORY_SIZE`` (both 413). A JSON body would otherwise be read whole up to the photo
  limit, so any request that is not a multipart upload is held to ``MAX_FORM_MEMORY_SIZE`` too.
- A multipart form may hold at most ``MAX_FORM_PARTS`` parts (a reading's form needs a photo and
  a few fields). They are counted as the body is read, by its boundary delimiters (RFC 7578,
  RFC 2046 section 5.1.1), so a body of many tiny parts is refused for its parts, in those words.
- Numbers in addresses (``/firings/<int:firing_id>``) stop at SQLite's largest row id, so a
  longer number is simply an address that does not exist (404).
"""

from __future__ import annotations

from flask import current_app, request
from werkzeug.exceptions import RequestEntityTooLarge
from werkzeug.routing import IntegerConverter

LARGEST_ROW_ID = 2**63 - 1  # SQLite INTEGER PRIMARY KEY (sqlite.org/autoinc.html)


class TooManyParts(RequestEntityTooLarge):
    """A multipart form with more parts than ``MAX_FORM_PARTS``."""


class PartCounter:
    """A request body stream that counts multipart delimiters ("--" + boundary) as it is read and
    raises :class:`TooManyParts` past ``most_parts`` (n parts carry n + 1 delimiters)."""

    def __init__(self, stream, boundary: bytes, most_parts: int):
        self._stream = stream
        self._delimiter = b"--" + boundary
        self._most = most_parts + 1
        self._seen = 0
        self._tail = b""

    def read(self, size: int = -1) -> bytes:
        data = self._stream.read(size)
        joined = self._tail + data
        self._seen += joined.count(self._delimiter)
        if self._seen > self._most:
            raise TooManyParts()
        cut = len(joined) - (len(self._delimiter) - 1)  # keep what could start a split delimiter
        last = joined.rfind(self._delimiter)
        if last >= 0:
            cut = max(cut, last + len(self._delimiter))  # but never one already counted
        self._tail = joined[max(cut, 0):]
        return data

    def readline(self, size: int = -1) -> bytes:
        return self.read(size)  # werkzeug's multipart reader reads in chunks; never lines


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

    @app.before_request
    def count_the_parts_of_a_form():
        boundary = request.mimetype_params.get("boundary")
        if request.mimetype == "multipart/form-data" and boundary:
            stream = request.environ["wsgi.input"]
            request.environ["wsgi.input"] = PartCounter(stream, boundary.encode("latin-1"), app.config["MAX_FORM_PARTS"])
