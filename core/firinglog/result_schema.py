"""The declared shape of a reading's result, the JSON form of :meth:`glowtemp.estimation.reading.Reading.to_dict`.

Every result the firing log stores is checked against :data:`RESULT_FIELDS` first: what the
API measures, and what a bundle brings (:mod:`glowtemp.firinglog.bundle`), so a result the pages, the
curve and the CSV cannot show (a temperature as text, a band of one number, an overflowing
number, a lone surrogate) is refused with its field named instead of breaking a page later.
``status`` is required; other fields are checked when present, and further keys (such as a
temperature map) must be plain JSON values.
"""

from __future__ import annotations

import math
import re

from .json_text import has_lone_surrogate

STATUS_WORD = re.compile(r"[a-z][a-z-]{0,39}", re.ASCII)  # "ok", "upper-bound", "not-glow", ...
HOTTEST_SHOWN = 20_000.0  # °C, °F or K: beyond the hottest glow any table models
HEX_COLOUR = re.compile(r"#[0-9a-f]{6}", re.ASCII | re.IGNORECASE)
LONGEST_TEXT = 5000
CHANNELS = ("colour", "brightness")  # what a temperature can be read from (glowtemp.estimation.estimate)


class ResultError(ValueError):
    """A result that does not have the declared shape; the message names the field."""


def _number(value, name: str, lowest: float = -HOTTEST_SHOWN) -> None:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise ResultError(f"its {name} must be a number or null, not {type(value).__name__}")
    try:
        number = float(value)
    except OverflowError:
        number = math.inf
    if not (math.isfinite(number) and lowest <= number <= HOTTEST_SHOWN):
        raise ResultError(f"its {name} must lie between {lowest:g} and {HOTTEST_SHOWN:g}")


def temperature(value, name: str) -> None:
    _number(value, name)


def positive(value, name: str) -> None:
    _number(value, name, lowest=0.0)


def band(value, name: str) -> None:
    if not isinstance(value, list) or len(value) != 2:
        raise ResultError(f"its {name} must be a list of two numbers (low, high) or null")
    for end in value:
        _number(end, name)
    if value[0] > value[1]:
        raise ResultError(f"its {name} must run from low to high")


def count(value, name: str) -> None:
    if isinstance(value, bool) or not isinstance(value, int) or not 0 <= value < 2**53:
        raise ResultError(f"its {name} must be a whole number of pixels")


def text(value, name: str) -> None:
    if not isinstance(value, str) or len(value) > LONGEST_TEXT:
        raise ResultError(f"its {name} must be text of at most {LONGEST_TEXT} characters or null")


def colour(value, name: str) -> None:
    if not isinstance(value, str) or not HEX_COLOUR.fullmatch(value):
        raise ResultError(f"its {name} must be a colour such as #ff8800 or null")


def status(value, name: str) -> None:
    if not isinstance(value, str) or not STATUS_WORD.fullmatch(value):
        raise ResultError(f"its {name} must be a status word such as ok or upper-bound")


def warnings(value, name: str) -> None:
    if not isinstance(value, list):
        raise ResultError(f"its {name} must be a list")
    for warning in value:
        if not isinstance(warning, dict) or not all(isinstance(warning.get(k), str) for k in ("code", "message", "fix")):
            raise ResultError(f"each of its {name} must have a code, a message and a fix as text")


def scene(value, name: str) -> None:
    from ..estimation.brightness import SCENES

    if not isinstance(value, str) or value not in SCENES:
        raise ResultError(f"its {name} must be one of {', '.join(SCENES)}")


def emissivity(value, name: str) -> None:
    if not isinstance(value, list) or len(value) != 2:
        raise ResultError(f"its {name} must be a list of two numbers (low, high) or null")
    for end in value:
        if isinstance(end, bool) or not isinstance(end, (int, float)) or not 0 < end <= 1:
            raise ResultError(f"its {name} must hold numbers above 0 and at most 1")
    if value[0] > value[1]:
        raise ResultError(f"its {name} must run from low to high")


def channels(value, name: str) -> None:
    if not isinstance(value, list) or not all(isinstance(c, str) and c in CHANNELS for c in value):
        raise ResultError(f"its {name} must be a list of {' or '.join(CHANNELS)}")
    if len(set(value)) != len(value):
        raise ResultError(f"its {name} must name each channel once")


def record(value, name: str) -> None:
    if not isinstance(value, dict):
        raise ResultError(f"its {name} must be an object or null")


def region(value, name: str) -> None:
    record(value, name)
    if "text" in value and value["text"] is not None:
        text(value["text"], f"{name} text")


# Field: check, for the keys of Reading.to_dict(). Null is allowed for every field but status.
RESULT_FIELDS = {
    "photo": text, "status": status,
    "temperature_c": temperature, "interval_68_c": band, "interval_95_c": band,
    "upper_bound_c": temperature, "resolution_c": positive,
    "temperature_f": temperature, "interval_68_f": band, "interval_95_f": band,
    "upper_bound_f": temperature, "resolution_f": positive, "temperature_k": positive,
    "glow_name": text, "estimate_colour_hex": colour, "region_colour_hex": colour, "warnings": warnings,
    "pixels_used": count, "pixels_clipped": count, "pixels_dark": count, "pixels_outlier": count,
    "pixels_total": count, "region": region, "colour_space": text, "colour_space_source": text,
    "camera": record, "profile": text, "notice": text,
    "scene": scene, "emissivity": emissivity, "channels": channels, "channels_text": text,
}  # fmt: skip


def check_result(result) -> None:
    """Raise :class:`ResultError` naming the first field of ``result`` that breaks the declared shape."""
    if not isinstance(result, dict) or "status" not in result:
        raise ResultError("it must be the measured reading's JSON form (with a status)")
    if has_lone_surrogate(result):
        raise ResultError("it holds text with a lone surrogate, which is not a character")
    for name, check in RESULT_FIELDS.items():
        value = result.get(name)
        if value is not None or name == "status":
            check(value, name)
