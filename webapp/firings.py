"""Firings on the web: the list, a firing's page with its curve and readings, and their JSON API.

Pages (plain HTML forms, so they work without scripts and with gloves on):

- ``GET /firings/`` the list and a form to start a firing; ``POST /firings/`` starts one.
- ``GET /firings/<id>`` the curve, the climb rates, the readings, a form to take a new reading
  straight into the firing, and forms to edit the firing or add trusted values to a reading.
- ``POST /firings/<id>/edit``, ``/readings``, ``/readings/<rid>/edit``, ``/readings/<rid>/delete``,
  ``/profile`` (a camera profile from the firing's trusted readings, in one step);
  ``GET`` and ``POST /firings/<id>/delete`` (a confirmation page, then the deletion).

JSON API:

- ``GET /api/firings``, ``POST /api/firings`` (JSON or form fields of a firing).
- ``GET /api/firings/<id>`` (the firing, its readings and climb rates), ``PATCH`` (JSON of the
  fields to change), ``DELETE``.
- A firing's ``scene`` (``kiln``, ``steel`` or ``other``: what its photos show, the brightness
  channel's emissivity prior) is sent on ``POST`` and ``PATCH`` like its other fields; a new
  firing without one gets the scene its kind suggests (kilns: ``kiln``; forging and heat
  treatment: ``steel``), and a changed kind keeps the scene. An unknown scene answers 400.
- ``POST /api/firings/<id>/readings``: multipart as ``POST /api/readings`` (``photo``, optional
  ``region``/``circle``, ``profile``, ``scene``, by default the firing's) plus ``reference_c``
  (or ``reference_f``), ``cone``, ``cone_state``, ``magnet`` (``let go``: plain carbon steel
  stopped attracting a magnet, about 770 °C), ``note``, ``taken_at``, and
  ``upload_id``/``captured_at`` as there (a retried upload id answers 200 with the reading
  already stored); ``PATCH /api/firings/<id>/readings/<rid>`` edits trusted values (``magnet``
  null clears it).
- ``GET /api/firings/<id>/export.csv`` and ``export.zip``.

Errors answer in plain words (JSON under /api/); nothing is stored when a request fails.
"""

from __future__ import annotations

import io
from datetime import datetime

from flask import Blueprint, current_app, jsonify, redirect, render_template, request, send_file, url_for

from .access import TOKEN_FIELD
from .errors import ApiError
from .inline_svg import presentation_attributes
from .json_body import json_object
from .uploads import take_upload

blueprint = Blueprint("firings", __name__)

RATE_WINDOWS_H = (1.0, 2.0)
READINGS_SHOWN = 30  # newest first; "show all" lists the rest


def _log():
    return current_app.extensions["glowtemp"]["logbook"]


def _firing(firing_id: int) -> dict:
    firing = _log().get_firing(firing_id)
    if firing is None:
        raise ApiError(f"There is no firing number {firing_id}.", 404)
    return firing


def _reading_in(firing_id: int, reading_id: int) -> dict:
    reading = _log().get_reading(reading_id)
    if reading is None or reading["firing_id"] != firing_id:
        raise ApiError(f"Firing {firing_id} has no reading number {reading_id}.", 404)
    return reading


def _logbook_call(call, *args, **kwargs):
    """Run a firing-log call; its refusals become 400 answers in the same words."""
    from glowtemp.firinglog.logbook import LogbookError

    try:
        return call(*args, **kwargs)
    except LogbookError as error:
        raise ApiError(str(error)) from None


def _fields() -> dict:
    """Request fields from a JSON object or a form; empty form fields count as not given."""
    if request.is_json:
        return json_object('{"name": "Cone 6 glaze"}')
    return {key: value for key, value in request.form.items() if value.strip() and key != TOKEN_FIELD}


FIRING_FIELDS = ("name", "kiln", "kind", "scene", "target_c", "target_cone", "started_at", "notes", "status")
TRUSTED_FIELDS = ("reference_c", "reference_f", "cone", "cone_state", "magnet", "note", "taken_at")


def _firing_fields(fields: dict, every_field: bool) -> dict:
    """The firing fields of a request; a page's edit form sends them all, blanks clearing them."""
    if "target_f" in fields and fields["target_f"] not in (None, ""):
        fields = {**fields, "target_c": _celsius_from_f(fields["target_f"], "target temperature")}
    chosen = {name: fields.get(name) for name in FIRING_FIELDS if name in fields or every_field}
    if every_field:
        needed = ("name", "kind", "scene", "status", "started_at")  # a blank box here means "leave as it is"
        chosen = {name: value for name, value in chosen.items() if name not in needed or value}
    return chosen


def _celsius_from_f(value, what: str) -> float:
    from glowtemp.firinglog.logbook_fields import shown
    from glowtemp.estimation.scales import fahrenheit_to_celsius

    try:
        if isinstance(value, bool):
            raise TypeError("true and false are not temperatures")
        return fahrenheit_to_celsius(float(value))
    except (TypeError, ValueError, OverflowError):
        raise ApiError(f"The {what} must be a number of °F; got {shown(value)}.") from None


def _trusted_fields(fields: dict) -> dict:
    """Trusted values of a request: reference_c or reference_f, cone, cone_state, magnet, note, taken_at."""
    names = ("reference_c", "cone", "cone_state", "magnet", "note", "taken_at")
    trusted = {name: fields[name] for name in names if name in fields}
    if fields.get("reference_f") not in (None, ""):
        if "reference_c" in fields:
            raise ApiError("Send the thermocouple reading in °C or in °F, not both.")
        trusted["reference_c"] = _celsius_from_f(fields["reference_f"], "thermocouple reading")
    return trusted


def _page_reference(fields: dict) -> dict:
    """The page's thermocouple box (``reference`` with ``reference_unit`` c or f) as API fields."""
    fields = {k: v for k, v in fields.items() if k not in ("reference", "reference_unit")}
    value = request.form.get("reference", "").strip()
    if value:
        unit = request.form.get("reference_unit", "c")
        fields["reference_f" if unit == "f" else "reference_c"] = value
    return fields


def _rates(points) -> dict:
    from glowtemp.firinglog.curve import rate_summary

    return rate_summary(points, RATE_WINDOWS_H)


def _points(firing: dict, readings: list[dict]):
    from glowtemp.estimation.cones import cone_table
    from glowtemp.firinglog.curve import curve_points

    return curve_points(firing, readings, cone_table(_log().data_dir)[0])


def _reading_json(reading: dict) -> dict:
    return {
        **reading["result"],
        "id": reading["id"],
        "firing_id": reading["firing_id"],
        "taken_at": reading["taken_at"],
        "reference_c": reading["reference_c"],
        "cone": reading["cone"],
        "cone_state": reading["cone_state"],
        "magnet": reading["magnet"],
        "note": reading["note"],
        "upload_id": reading["upload_id"],
        "preview_url": url_for("api.preview", reading_id=reading["id"]),
    }


# Measuring an upload into a firing


def _take_into(firing_id: int, fields: dict):
    """Measure the uploaded photo into the firing, with the request's trusted values."""
    _firing(firing_id)
    return take_upload(fields, firing_id=firing_id, trusted=_trusted_fields(fields))


def _profiles() -> list[dict]:
    from glowtemp.estimation.profile_store import list_profiles

    return list_profiles(_log().data_dir)


# Pages


def _unit() -> str:
    return "f" if request.args.get("unit") == "f" else "c"


def _back_to_firing(firing_id: int, reading_id: int | None = None):
    """Back to the firing's page as it was shown (unit, all readings), at the reading if given."""
    anchor = f"reading-{reading_id}" if reading_id else None
    every = "1" if request.args.get("all") else None
    return redirect(url_for("firings.firing_page", firing_id=firing_id, unit=_unit(), all=every, _anchor=anchor), 303)


@blueprint.get("/firings/")
def index():
    from glowtemp.firinglog.logbook_fields import FIRING_KINDS

    return render_template("firings/list.html", firings=_log().list_firings(), kinds=FIRING_KINDS, unit=_unit())


@blueprint.post("/firings/")
def create_page():
    firing_id = _create_firing(_fields())
    return redirect(url_for("firings.firing_page", firing_id=firing_id), 303)


@blueprint.get("/firings/<int:firing_id>")
def firing_page(firing_id: int):
    from glowtemp.firinglog.curve_chart import firing_chart_svg
    from glowtemp.firinglog.curve import firing_target_c
    from glowtemp.estimation.cones import cone_table
    from glowtemp.firinglog.logbook_fields import CONE_STATES, FIRING_KINDS, MAGNET_LET_GO
    from glowtemp.firinglog.logbook_pairs import calibration_pairs
    from glowtemp.estimation.profile import CURIE_POINT_IRON_C

    firing = _firing(firing_id)
    readings = _log().readings_in(firing_id)
    points = _points(firing, readings)
    unit = _unit()
    target_c, target_label = firing_target_c(firing, cone_table(_log().data_dir)[0])
    chart = presentation_attributes(firing_chart_svg(points, target_c, target_label, unit.upper()))
    hours = {p.reading_id: p.hours for p in points}
    newest_first = list(reversed(readings))
    show_all = bool(request.args.get("all"))
    return render_template(
        "firings/firing.html",
        firing=firing,
        readings=newest_first if show_all else newest_first[:READINGS_SHOWN],
        reading_count=len(readings),
        show_all="1" if show_all else None,
        hours=hours,
        chart=chart,
        rates=_rates(points),
        unit=unit,
        kinds=FIRING_KINDS,
        cone_states=CONE_STATES,
        magnet_let_go=MAGNET_LET_GO,
        curie_c=CURIE_POINT_IRON_C,
        profiles=_profiles(),
        pair_count=len(calibration_pairs(readings)),
    )


@blueprint.post("/firings/<int:firing_id>/edit")
def edit_page(firing_id: int):
    _firing(firing_id)
    _logbook_call(_log().update_firing, firing_id, **_firing_fields(dict(request.form), every_field=True))
    return _back_to_firing(firing_id)


@blueprint.post("/firings/<int:firing_id>/readings")
def add_reading_page(firing_id: int):
    taken = _take_into(firing_id, _page_reference(_fields()))
    return _back_to_firing(firing_id, taken.reading_id)


@blueprint.post("/firings/<int:firing_id>/readings/<int:reading_id>/edit")
def edit_reading_page(firing_id: int, reading_id: int):
    _reading_in(firing_id, reading_id)
    form = _page_reference({k: v.strip() for k, v in request.form.items()})
    trusted = _trusted_fields(form)
    trusted.setdefault("reference_c", None)  # an emptied box clears the value
    for name in ("cone", "cone_state", "magnet", "note"):  # an unticked magnet box clears it
        trusted[name] = form.get(name) or None
    if not form.get("taken_at"):
        trusted.pop("taken_at", None)
    _logbook_call(_log().update_reading, reading_id, **trusted)
    return _back_to_firing(firing_id, reading_id)


@blueprint.post("/firings/<int:firing_id>/readings/<int:reading_id>/delete")
def delete_reading_page(firing_id: int, reading_id: int):
    _reading_in(firing_id, reading_id)
    if request.form.get("confirm") != "yes":
        raise ApiError("Tick 'Yes, delete this reading' to confirm; nothing was deleted.")
    _logbook_call(_log().delete_reading, reading_id)
    return _back_to_firing(firing_id)


@blueprint.post("/firings/<int:firing_id>/profile")
def make_profile_page(firing_id: int):
    from glowtemp.firinglog.logbook_pairs import fit_profile_from_firing
    from glowtemp.estimation.profile import ProfileError

    firing = _firing(firing_id)
    try:
        profile = fit_profile_from_firing(_log(), firing_id, request.form.get("name", "").strip())
    except ProfileError as error:
        raise ApiError(f"No profile was made: {error}") from None
    return render_template("firings/profile.html", firing=firing, profile=profile.to_dict(), unit=_unit())


@blueprint.get("/firings/<int:firing_id>/delete")
def confirm_delete_page(firing_id: int):
    return render_template("firings/delete.html", firing=_firing(firing_id))


@blueprint.post("/firings/<int:firing_id>/delete")
def delete_page(firing_id: int):
    _firing(firing_id)
    _logbook_call(_log().delete_firing, firing_id)
    return redirect(url_for("firings.index"), 303)


# JSON API


@blueprint.get("/api/firings")
def api_list():
    return jsonify(firings=_log().list_firings())


def _create_firing(fields: dict) -> int:
    allowed = set(FIRING_FIELDS) - {"status"} | {"target_f"}
    unknown = sorted(set(fields) - allowed)
    if unknown:
        raise ApiError(f"A new firing takes {', '.join(sorted(allowed))}; not {', '.join(unknown)}.")
    return _logbook_call(_log().create_firing, **{"name": None, **_firing_fields(fields, every_field=False)})


@blueprint.post("/api/firings")
def api_create():
    firing_id = _create_firing(_fields())
    return jsonify(_log().get_firing(firing_id)), 201


@blueprint.get("/api/firings/<int:firing_id>")
def api_get(firing_id: int):
    firing = _firing(firing_id)
    readings = _log().readings_in(firing_id)
    rates = _rates(_points(firing, readings))
    for key in ("over_last_hours_c_per_h", "over_last_hours_plus_minus_c_per_h"):
        rates[key] = {f"{h:g}": r for h, r in rates[key].items()}
    return jsonify(firing=firing, readings=[_reading_json(r) for r in readings], rates=rates)


@blueprint.patch("/api/firings/<int:firing_id>")
def api_update(firing_id: int):
    _firing(firing_id)
    if not request.is_json:
        raise ApiError('Send the changes as a JSON object such as {"status": "closed"}.')
    fields = _fields()
    allowed = set(FIRING_FIELDS) | {"target_f"}
    unknown = sorted(set(fields) - allowed)
    if unknown:
        raise ApiError(f"A firing has no field {', '.join(unknown)}; its fields are {', '.join(sorted(allowed))}.")
    return jsonify(_logbook_call(_log().update_firing, firing_id, **_firing_fields(fields, every_field=False)))


@blueprint.delete("/api/firings/<int:firing_id>")
def api_delete(firing_id: int):
    _firing(firing_id)
    _logbook_call(_log().delete_firing, firing_id)
    return "", 204


@blueprint.post("/api/firings/<int:firing_id>/readings")
def api_add_reading(firing_id: int):
    taken = _take_into(firing_id, _fields())
    photo = taken.photo
    body = {**_reading_json(_log().get_reading(taken.reading_id)), "image": {"width": photo.width, "height": photo.height}}
    return jsonify(body), 201 if taken.created else 200


@blueprint.patch("/api/firings/<int:firing_id>/readings/<int:reading_id>")
def api_update_reading(firing_id: int, reading_id: int):
    _reading_in(firing_id, reading_id)
    if not request.is_json:
        raise ApiError('Send the trusted values as a JSON object such as {"reference_c": 1182}.')
    fields = _fields()
    unknown = sorted(set(fields) - set(TRUSTED_FIELDS))
    if unknown:
        raise ApiError(f"A reading's trusted values are {', '.join(TRUSTED_FIELDS)}; {', '.join(unknown)} cannot be changed.")
    trusted = _trusted_fields(fields)
    return jsonify(_reading_json(_logbook_call(_log().update_reading, reading_id, **trusted)))


@blueprint.get("/api/firings/<int:firing_id>/export.csv")
def api_export_csv(firing_id: int):
    from glowtemp.firinglog.logbook_csv import firing_csv

    firing = _firing(firing_id)
    text = firing_csv(firing, _log().readings_in(firing_id))
    return send_file(io.BytesIO(text.encode("utf-8")), mimetype="text/csv", as_attachment=True,
                     download_name=f"firing-{firing_id}.csv")  # fmt: skip


@blueprint.get("/api/firings/<int:firing_id>/export.zip")
def api_export_zip(firing_id: int):
    from glowtemp.firinglog.bundle import write_bundle

    _firing(firing_id)
    out = io.BytesIO()
    write_bundle(_log(), firing_id, out)
    out.seek(0)
    return send_file(out, mimetype="application/zip", as_attachment=True, download_name=f"firing-{firing_id}.zip")


# Showing times and temperatures


@blueprint.app_template_filter("local_time")
def local_time(text: str | None, form: str = "%Y-%m-%d %H:%M") -> str:
    """An ISO 8601 time shown in the server's local time zone (the studio's clock)."""
    return "" if not text else datetime.fromisoformat(text).astimezone().strftime(form)


@blueprint.app_template_filter("in_unit")
def in_unit(temperature_c, unit: str = "c") -> str:
    """A °C value as a plain number in the chosen unit (for form boxes), '' for none."""
    from glowtemp.estimation.scales import celsius_to_fahrenheit

    if temperature_c is None:
        return ""
    value = celsius_to_fahrenheit(temperature_c) if unit == "f" else temperature_c
    return f"{value:.0f}" if abs(value - round(value)) < 0.05 else f"{value:.1f}"


@blueprint.app_template_filter("degrees")
def degrees(temperature_c, unit: str = "c") -> str:
    """A °C value shown in the chosen unit, without more digits than it carries."""
    return "" if temperature_c is None else f"{in_unit(temperature_c, unit)} °{unit.upper()}"


@blueprint.app_template_filter("climb")
def climb(rate_c_per_h, unit: str = "c", plus_minus_c_per_h=None) -> str:
    """A climb rate and its 68 % band in the chosen unit per hour, with its sign, both rounded to
    a step the band supports (:func:`glowtemp.estimation.scales.rounding_step`): "+100 ± 40 °C/h"."""
    from glowtemp.estimation.scales import round_to, rounding_step

    if rate_c_per_h is None:
        return "–"
    per_degree_c = 9 / 5 if unit == "f" else 1  # a temperature difference: no 32 °F offset
    value, symbol = rate_c_per_h * per_degree_c, f"°{unit.upper()}/h"
    if plus_minus_c_per_h is None:
        return f"{value:+.0f} {symbol} (band unknown)"
    band = plus_minus_c_per_h * per_degree_c
    step = rounding_step(band)
    value, band = round(value, 6), round(band, 6)  # a rate of 29.9999999 from clock arithmetic is 30
    return f"{round_to(value, step):+d} ± {max(step, round_to(band, step))} {symbol}"
