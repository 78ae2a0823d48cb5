"""Errors in plain words: JSON ``{"error": message}`` under /api/, a short page elsewhere.

Nothing a visitor sees carries a traceback; unexpected failures are logged on the server.
"""

from __future__ import annotations

from flask import jsonify, render_template, request
from werkzeug.exceptions import HTTPException, InternalServerError

from glowtemp.firinglog.storage import StorageError

PLAIN_WORDS = {
    400: "The request could not be understood.",
    404: "There is nothing at this address.",
    405: "This address does not accept that kind of request.",
    413: "The upload is too large.",
    500: "Something went wrong on the server; the photo was not measured.",
}


class ApiError(Exception):
    """A request the API refuses, with an HTTP status and a message for people."""

    def __init__(self, message: str, status: int = 400, **details):
        super().__init__(message)
        self.message = message
        self.status = status
        self.details = details  # extra JSON keys, e.g. draw_region=True


def _wants_json() -> bool:
    return request.path.startswith("/api/")


def _reply(message: str, status: int, **details):
    if _wants_json():
        return jsonify(error=message, **details), status
    return render_template("error.html", message=message, status=status), status


def upload_too_large(limit_bytes: int) -> str:
    return f"The upload is larger than {_size(limit_bytes)}; send a smaller photo."


def _too_large_message(error, config) -> str:
    """Which limit a 413 request broke: the parts of a form, the whole upload's, or a text field's."""
    from .limits import TooManyParts

    if isinstance(error, TooManyParts):
        return (f"The form has more than {config['MAX_FORM_PARTS']} parts; a reading needs one photo "
                "and a few fields. Send fewer files or fields.")  # fmt: skip
    length = request.content_length
    if (length is None and request.mimetype == "multipart/form-data") or (length or 0) > config["MAX_CONTENT_LENGTH"]:
        return upload_too_large(config["MAX_CONTENT_LENGTH"])
    return f"A text field or the request body is larger than {_size(config['MAX_FORM_MEMORY_SIZE'])}; shorten it."


def _size(size_bytes: int) -> str:
    """A size limit in MB or KB (binary multiples), without a misleading 0.

    >>> _size(64 * 1024 * 1024), _size(1536 * 1024), _size(256 * 1024)
    ('64 MB', '1.5 MB', '256 KB')
    """
    if size_bytes >= 1024 * 1024:
        return f"{round(size_bytes / (1024 * 1024), 1):g} MB"
    return f"{max(1, round(size_bytes / 1024))} KB"


def register(app) -> None:
    @app.errorhandler(ApiError)
    def api_error(error: ApiError):
        return _reply(error.message, error.status, **error.details)

    @app.errorhandler(StorageError)
    def storage_error(error: StorageError):
        app.logger.error("storage failure on %s: %s", request.path, error.__cause__)
        return _reply(str(error), 507 if error.full else 503)  # RFC 4918 11.5: Insufficient Storage

    @app.errorhandler(HTTPException)
    def http_error(error: HTTPException):
        status = error.code or 500
        if status == 413:
            return _reply(_too_large_message(error, app.config), 413)
        return _reply(PLAIN_WORDS.get(status, error.name + "."), status)

    @app.errorhandler(Exception)
    def unexpected(error: Exception):
        app.logger.exception("unexpected error on %s", request.path)
        return _reply(PLAIN_WORDS[500], InternalServerError.code)
