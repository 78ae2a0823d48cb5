"""The JSON API used by the measuring page and by scripts.

- ``POST /api/readings``: multipart ``photo`` (a JPEG, PNG, TIFF, HEIC or DNG file), optional ``region``
  (``X,Y,W,H`` or ``circle:CX,CY,R``) or ``circle`` (``CX,CY,R``), optional ``profile`` (a
  stored camera profile's name), optional ``scene`` (what is photographed: ``kiln``, a kiln's
  inside through a spy hole; ``steel``, hot oxidised steel; ``other``, the default: the
  emissivity prior of the brightness channel; any other value answers 400 naming these).
  Measures, stores the photo and the reading in the firing
  log, answers 201 with the reading's JSON form (as ``glowtemp measure --json``) plus ``id``,
  ``image`` {width, height} and ``preview_url``. Optional ``upload_id`` (made by the page once
  per photo): sent again, it answers 200 with the reading already stored, never a second one;
  optional ``captured_at`` (ISO 8601): when the page got the photo, the time taken when the
  photo carries no EXIF time (:mod:`glowtemp.web.uploads`).
- ``POST /api/readings/<id>/region``: the same fields as JSON or a form, without ``photo``;
  measures the stored photo again and replaces the stored result. Without ``scene`` it is
  measured as the scene its stored result names (else its firing's).
- ``GET /api/readings/<id>/preview``: the stored photo, upright, reduced and in sRGB, as a JPEG
  (a raw photo brought to a display brightness: :mod:`glowtemp.web.preview`).
- ``GET /api/scale``: blackbody colours along a temperature scale, for painting.
- ``GET /api/profiles``: the stored camera profiles, for the picker (``?unit=f``: labels in °F).

A reading's temperature map (``/api/readings/<id>/map``) is in :mod:`glowtemp.web.maps`.

Errors answer ``{"error": message}`` with a 4xx status; nothing is stored when a request fails.
"""

from __future__ import annotations

import io

from flask import Blueprint, current_app, jsonify, request, send_file, url_for

from .access import TOKEN_FIELD
from .errors import ApiError
from .json_body import json_object
from .uploads import measure_photo, profile_from, region_from, scene_from, stored_photo, stored_scene, take_upload

blueprint = Blueprint("api", __name__, url_prefix="/api")

PREVIEW_LONG_SIDE_PX = 1600
SCALE_FROM_C, SCALE_TO_C, SCALE_STEP_C = 400, 1600, 25
TICKS_C = (400, 800, 1200, 1600)
TICKS_F = (800, 1600, 2400)


def _services():
    return current_app.extensions["glowtemp"]


def request_fields() -> dict:
    """The request's text fields, from a JSON body or a form."""
    if request.is_json:
        body = json_object('{"region": "10,10,50,50"}')
        return {key: "" if value is None else str(value) for key, value in body.items()}
    return {key: value for key, value in request.form.items() if key != TOKEN_FIELD}


def reading_answer(result: dict, reading_id: int, photo, status: int, **extra):
    """The reading's JSON form with its id, the photo's size and the preview's address (and ``extra``)."""
    body = {
        **result,
        "id": reading_id,
        "image": {"width": photo.width, "height": photo.height},
        "preview_url": url_for("api.preview", reading_id=reading_id),
        **extra,
    }
    return jsonify(body), status


@blueprint.post("/readings")
def create_reading():
    fields = request_fields()
    taken = take_upload(fields)
    return reading_answer(taken.result, taken.reading_id, taken.photo, 201 if taken.created else 200,
                          upload_id=fields.get("upload_id") or None)  # fmt: skip


def stored_record(reading_id: int) -> dict:
    """The stored reading; 404 when there is no such reading."""
    stored = _services()["logbook"].get_reading(reading_id)
    if stored is None:
        raise ApiError(f"There is no reading number {reading_id}.", 404)
    return stored


def stored_reading(reading_id: int):
    """The stored reading and its decoded photo; 404 when there is no such reading."""
    stored = stored_record(reading_id)
    return stored, stored_photo(stored["photo_key"])


@blueprint.post("/readings/<int:reading_id>/region")
def measure_region(reading_id: int):
    fields = request_fields()
    region, profile = region_from(fields), profile_from(fields)
    if region is None:
        raise ApiError("Send the new region as 'region' (X,Y,W,H or circle:CX,CY,R) or 'circle' (CX,CY,R).")
    stored = stored_record(reading_id)
    scene = scene_from(fields, stored_scene(stored))
    photo = stored_photo(stored["photo_key"])
    result = measure_photo(photo, region, profile, stored["photo_name"], scene)
    _services()["logbook"].update_reading_result(reading_id, result)
    return reading_answer(result, reading_id, photo, 200)


@blueprint.get("/readings/<int:reading_id>/preview")
def preview(reading_id: int):
    from .preview import preview_jpeg

    _, photo = stored_reading(reading_id)
    return send_file(io.BytesIO(preview_jpeg(photo, PREVIEW_LONG_SIDE_PX)), mimetype="image/jpeg")


@blueprint.get("/scale")
def scale():
    """Blackbody display colours from the core, every 25 °C, with tick marks in °C and °F."""
    from glowtemp.physics.locus import blackbody_swatch_hex
    from glowtemp.estimation.scales import celsius_to_kelvin, fahrenheit_to_celsius

    stops = [
        {"temperature_c": t, "hex": blackbody_swatch_hex(celsius_to_kelvin(t))}
        for t in range(SCALE_FROM_C, SCALE_TO_C + 1, SCALE_STEP_C)
    ]
    ticks = {
        "c": [{"temperature_c": t, "label": t} for t in TICKS_C],
        "f": [{"temperature_c": round(fahrenheit_to_celsius(t), 1), "label": t} for t in TICKS_F],
    }
    response = jsonify(from_c=SCALE_FROM_C, to_c=SCALE_TO_C, stops=stops, ticks=ticks)
    response.cache_control.max_age = 86400
    return response


@blueprint.get("/profiles")
def profiles():
    """Stored camera profiles, each with a label for the picker; ``?unit=f`` gives the span of
    its pairs in °F (the page asks in the unit it shows)."""
    from glowtemp.estimation.profile_store import list_profiles
    from glowtemp.estimation.scales import celsius_to_fahrenheit

    fahrenheit = request.args.get("unit") == "f"
    listed = []
    for summary in list_profiles(current_app.config["DATA_DIR"]):
        low, high = summary["span_c"]
        if fahrenheit:
            low, high = celsius_to_fahrenheit(low), celsius_to_fahrenheit(high)
        camera = summary.get("camera_model") or "camera not recorded"
        label = f"{summary['name']}: {camera}, {summary['pairs']} pairs, {low:.0f}–{high:.0f} °{'F' if fahrenheit else 'C'}"
        listed.append({**summary, "label": label})
    return jsonify(profiles=listed)
