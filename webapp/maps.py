"""Temperature maps of a stored reading: where in the measured area the glow is hotter.

- ``POST /api/readings/<id>/map``: optional ``region`` (``X,Y,W,H`` or ``circle:CX,CY,R``) or
  ``circle``, ``profile`` and ``scene``, as JSON or a form (the same fields as ``/region``).
  Measures the stored photo again in that region (the stored reading's region when none is
  sent) as that scene (the stored reading's scene when none is sent) and cuts
  the region into tiles, each measured on its own with its own band
  (:func:`glowtemp.estimation.tilemap.temperature_map`). The reading is stored with its map under
  ``temperature_map`` and answered with ``id``, ``image``, ``preview_url`` and ``map_url``.
- ``GET /api/readings/<id>/map.svg?unit=C|F``: the stored map drawn over the photo with a
  legend in °C or °F (:func:`glowtemp.estimation.tilemap_chart.draw_map`), an SVG image whose styles are
  presentation attributes (:mod:`.inline_svg`), so it holds nothing the page's
  Content-Security-Policy refuses. The tiles are measured again from the stored map's region
  and the reading's profile and scene and must give the stored numbers; otherwise (the profile was
  fitted again since) it answers 409 and asks for a new map.

Moving the region or changing the profile (``/region``) stores a reading without a map, since
its map would no longer fit. Errors answer ``{"error": message}`` with a 4xx status.
"""

from __future__ import annotations

from dataclasses import replace

from flask import Blueprint, Response, current_app, request, url_for

from .api import reading_answer, request_fields, stored_reading, stored_record
from .errors import ApiError
from .uploads import measure_reading, profile_from, region_from, scene_from, stored_photo, stored_scene

blueprint = Blueprint("maps", __name__, url_prefix="/api")

UNITS = ("C", "F")


def _tile_map(photo, region, profile, scene: str):
    """The map of ``region``, each tile measured as :func:`glowtemp.estimation.reading.measure` would."""
    from glowtemp.images.region import RegionError
    from glowtemp.estimation.tilemap import temperature_map

    try:
        return temperature_map(photo, region, profile=profile, scene=scene)
    except RegionError as error:
        raise ApiError(str(error)) from None


def _stored_region(result: dict):
    from glowtemp.images.region import parse_region

    return parse_region(result["region"]["text"])


@blueprint.post("/readings/<int:reading_id>/map")
def make_map(reading_id: int):
    from glowtemp.estimation.tilemap import with_map

    fields = request_fields()
    region, profile = region_from(fields), profile_from(fields)
    stored = stored_record(reading_id)
    scene = scene_from(fields, stored_scene(stored))
    photo = stored_photo(stored["photo_key"])
    kept = stored["result"]["region"]
    region = region or _stored_region(stored["result"])
    reading = measure_reading(photo, region, profile, stored["photo_name"], scene)
    if kept["found"] and region.to_text() == kept["text"]:
        reading = replace(reading, region_found=True)  # still the area the glow finder chose
    result = with_map(reading, _tile_map(photo, reading.region, profile, scene)).to_dict()
    current_app.extensions["glowtemp"]["logbook"].update_reading_result(reading_id, result)
    return reading_answer(result, reading_id, photo, 200, map_url=url_for("maps.picture", reading_id=reading_id))


def _tile_numbers(record: dict) -> list[dict]:
    """What the picture shows of each tile: everything but its warning codes."""
    return [{key: value for key, value in tile.items() if key != "warnings"} for tile in record["tiles"]]


@blueprint.get("/readings/<int:reading_id>/map.svg")
def picture(reading_id: int):
    from glowtemp.estimation.tilemap_chart import draw_map

    from .inline_svg import presentation_attributes

    unit = request.args.get("unit", "C").strip().upper()
    if unit not in UNITS:
        raise ApiError(f"The map's unit is C or F (for example ?unit=F); got {request.args.get('unit')!r}.")
    stored, photo = stored_reading(reading_id)
    record = stored["result"].get("temperature_map")
    if record is None:
        raise ApiError(f"Reading {reading_id} has no temperature map yet; make one first with POST "
                       f"/api/readings/{reading_id}/map.", 404)  # fmt: skip
    profile = profile_from({"profile": stored["result"].get("profile") or ""})
    tile_map = _tile_map(photo, _stored_region(record), profile, stored_scene(stored))
    if _tile_numbers(tile_map.to_dict()) != _tile_numbers(record):
        raise ApiError(f"The temperature map of reading {reading_id} no longer matches its camera profile, "
                       "which has changed since; make the map again.", 409)  # fmt: skip
    drawn = draw_map(photo, tile_map, unit=unit, image_format="svg").decode("utf-8")
    return Response(presentation_attributes(drawn), mimetype="image/svg+xml")
