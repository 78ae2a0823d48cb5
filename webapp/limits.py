"""Request size limits beyond Flask's own: a request without a file is held to the text limit.

Flask refuses a request larger than ``MAX_CONTENT_LENGTH`` and a form text field larger than
``MAX_FORM_MEMORY_SIZE`` (both 413). A JSON body would otherwise be read whole up to the photo
limit, so any request that is not a multipart upload is held to ``MAX_FORM_MEMORY_SIZE`` too.
"""

from __future__ import annotations

from flask import current_app, request
from werkzeug.exceptions import RequestEntityTooLarge


def too_large_for_text() -> bool:
    """Whether this request, carrying no file, is larger than the text limit."""
    if request.mimetype == "multipart/form-data":
        return False
    return (request.content_length or 0) > current_app.config["MAX_FORM_MEMORY_SIZE"]


def register(app) -> None:
    @app.before_request
    def hold_text_requests_to_the_text_limit():
        if too_large_for_text():
            raise RequestEntityTooLarge()
