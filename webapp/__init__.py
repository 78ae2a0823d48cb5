"""The glowtemp web app: a Flask application factory and one blueprint per area.

Areas: ``measuring`` (the phone page that takes a photo and shows the reading), ``api`` (the
JSON calls the page and scripts use), ``maps`` (a reading's temperature map), ``pages``
(safety notes), ``firings`` (the firing log) and ``access`` (pairing a device). Every request
passes the checks of :mod:`.access` and :mod:`.limits`; every answer gets the headers of
:mod:`.headers`. Other areas register their own blueprint in :func:`create_app`; an area whose
endpoint is listed in ``NAV_AREAS`` appears in the top bar of ``templates/base.html``.
"""

from __future__ import annotations

from flask import Flask, current_app

# (endpoint, label) of the areas shown in the top bar, in order, when they are registered.
NAV_AREAS = (
    ("measuring.index", "Measure"),
    ("firings.index", "Firings"),
    ("pages.safety", "Safety"),
)

MAX_UPLOAD_BYTES = 64 * 1024 * 1024  # a 50 MP JPEG is about 25 MB; RAW-sized TIFFs fit too
MAX_PHOTO_PIXELS = 50_000_000  # checked from the file's header before decoding (decompression bombs)
# Any one text field of a form, and a whole JSON or plain form body. Werkzeug's multipart reader
# also holds a file's bytes to this limit while it reads them in 64 KiB chunks, keeping back a
# few bytes that could start a boundary, so the limit must be well above 64 KiB.
MAX_FIELD_BYTES = 256 * 1024
MAX_FORM_PARTS = 100  # parts of one multipart form: a photo and a few text fields need far fewer


def create_app(config: dict | None = None) -> Flask:
    """Build the app. ``config`` may set ``DATA_DIR`` (the glowtemp data folder) and Flask keys.

    Without ``DATA_DIR`` the per-user data folder of :func:`glowtemp.firinglog.datadir.data_dir` is used.
    ``PAIRING`` True asks every device to pair first (:mod:`glowtemp.web.access`).
    Input limits: ``MAX_CONTENT_LENGTH`` (bytes of a whole request, 413 beyond),
    ``MAX_PHOTO_PIXELS`` (422 beyond), ``MAX_FORM_MEMORY_SIZE`` (bytes of one text field,
    and of a request without a file; 413 beyond) and ``MAX_FORM_PARTS`` (parts of a form; 413).
    """
    from glowtemp.firinglog.datadir import data_dir

    app = Flask(__name__)
    app.config.update(
        MAX_CONTENT_LENGTH=MAX_UPLOAD_BYTES,
        MAX_PHOTO_PIXELS=MAX_PHOTO_PIXELS,
        MAX_FORM_MEMORY_SIZE=MAX_FIELD_BYTES,
        MAX_FORM_PARTS=MAX_FORM_PARTS,
        DATA_DIR=None,
    )
    app.config.update(config or {})
    app.config["DATA_DIR"] = data_dir(app.config["DATA_DIR"])

    from glowtemp.firinglog.logbook import Logbook
    from glowtemp.firinglog.sessions import SessionStore

    from . import access, api, errors, firings, headers, limits, maps, measuring, pages
    from .decode_gate import DecodeGate
    from .pairing import PairingCodes
    from .photo_cache import PhotoCache
    from .scenes import SCENE_WORDS, emissivity_text

    logbook = Logbook(app.config["DATA_DIR"])
    app.extensions["glowtemp"] = {
        "logbook": logbook,
        "photos": PhotoCache(),
        "decodes": DecodeGate.for_pixel_limit(app.config["MAX_PHOTO_PIXELS"]),
        "sessions": SessionStore(logbook.database_path),
        "pairing": PairingCodes() if app.config.get("PAIRING") else None,
    }
    limits.register(app)
    access.register(app)
    app.register_blueprint(measuring.blueprint)
    app.register_blueprint(api.blueprint)
    app.register_blueprint(maps.blueprint)
    app.register_blueprint(pages.blueprint)
    app.register_blueprint(firings.blueprint)
    errors.register(app)
    headers.register(app)

    @app.context_processor
    def shared_words():
        return {"nav_links": nav_links, "scene_words": SCENE_WORDS, "emissivity_text": emissivity_text}

    return app


def nav_links() -> list[tuple[str, str]]:
    """The top-bar areas whose endpoints exist in the running app."""
    return [(endpoint, label) for endpoint, label in NAV_AREAS if endpoint in current_app.view_functions]
