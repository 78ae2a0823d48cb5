"""What a firing and a reading may hold: the allowed values, checked with plain-word errors.

Cones are those of the cone table in use (:mod:`glowtemp.estimation.cones`). A firing's scene kind (what
is photographed, which sets the emissivity prior of the brightness channel) is one of
:data:`glowtemp.estimation.brightness.SCENES`; a firing not told one gets the scene its kind of work
suggests (:data:`SCENE_BY_KIND`). A reading's magnet value records the smith's test that plain
carbon steel stopped attracting a magnet (:data:`MAGNET_LET_GO`). Times are kept as ISO 8601 text in UTC (``2024-03-01T18:30:00+00:00``),
so they sort as text and carry their offset; a time without an offset is read as the
machine's local time.
"""

from __future__ import annotations

import math
import re
from datetime import datetime, timezone

from ..estimation.cones import normalise_cone
from ..estimation.scales import ABSOLUTE_ZERO_C

FIRING_KINDS = ("bisque", "glaze", "glass", "forging", "heat treatment", "other")
FIRING_STATUSES = ("open", "closed")
CONE_STATES = ("standing", "bent")
# The scene a kind of work photographs, unless the firing is told another: kilns are seen
# through a spy hole, forging and heat treatment are hot steel (common practice).
SCENE_BY_KIND = {"bisque": "kiln", "glaze": "kiln", "glass": "kiln", "forging": "steel", "heat treatment": "steel",
                 "other": "other"}  # fmt: skip
MAGNET_LET_GO = "let go"  # the one magnet value: it stopped attracting the steel
LOWEST_C = ABSOLUTE_ZERO_C
HIGHEST_C = 3000.0  # far above any kiln or forge; guards against typing mistakes
LONGEST_NAME = 200
LONGEST_NOTE = 5000
UPLOAD_ID_PATTERN = re.compile(r"[A-Za-z0-9_-]{16,64}")
# Times a firing can have happened at: wide, yet far from the ends of Python's calendar (years
# 1 and 9999), where turning a time to UTC or to local time would overflow.
EARLIEST = datetime(1900, 1, 1, tzinfo=timezone.utc)
LATEST = datetime(3000, 1, 1, tzinfo=timezone.utc)
SHOWN_CHARACTERS = 40  # of a refused value, in a message


class LogbookError(ValueError):
    """A request the firing log cannot carry out, with the reason in plain words."""


def shown(value) -> str:
    """A refused value as a message shows it: its repr, cut short (a 400-digit number is not repeated).

    >>> shown("hot"), shown(10**100)[:12]
    ("'hot'", '100000000000')
    """
    text = repr(value)
    return text if len(text) <= SHOWN_CHARACTERS else text[: SHOWN_CHARACTERS - 1] + "…"


def utc_now() -> str:
    return datetime.now(timezone.utc).isoformat(timespec="seconds")


def time_text(value, what: str = "time") -> str:
    """A datetime or ISO 8601 text as UTC ISO 8601 text to the second.

    >>> time_text("2024-03-01T20:30:00+02:00")
    '2024-03-01T18:30:00+00:00'
    """
    if isinstance(value, str):
        try:
            value = datetime.fromisoformat(value.strip())
        except ValueError:
            raise LogbookError(
                f"The {what} must be a date and time like 2024-03-01T18:30 or "
                f"2024-03-01T18:30:00+01:00; got {shown(value)}."
            ) from None
    if not isinstance(value, datetime):
        raise LogbookError(f"The {what} must be a date and time; got {shown(value)}.")
    try:
        utc = value.astimezone(timezone.utc)
    except (OverflowError, ValueError):
        utc = None
    if utc is None or not EARLIEST <= utc < LATEST:
        raise LogbookError(
            f"The {what} must lie between the years {EARLIEST.year} and {LATEST.year - 1}; got {shown(value.isoformat())}."
        )
    return utc.isoformat(timespec="seconds")


def text(value, what: str, longest: int = LONGEST_NAME, required: bool = False) -> str | None:
    """Stripped text, or None when empty and not required."""
    if value is None or (isinstance(value, str) and not value.strip()):
        if required:
            raise LogbookError(f"A {what} is needed.")
        return None
    if not isinstance(value, str):
        raise LogbookError(f"The {what} must be text; got {shown(value)}.")
    value = value.strip()
    if len(value) > longest:
        raise LogbookError(f"The {what} is {len(value)} characters long; at most {longest} fit.")
    try:
        value.encode("utf-8")
    except UnicodeEncodeError:  # a lone surrogate (U+D800-U+DFFF) is no character (RFC 3629)
        raise LogbookError(f"The {what} holds a lone surrogate, which is not a character; type it again.") from None
    return value


def temperature_c(value, what: str) -> float | None:
    """A temperature in °C as a float, or None."""
    if value is None or (isinstance(value, str) and not value.strip()):
        return None
    if isinstance(value, bool):
        raise LogbookError(f"The {what} must be a number of °C; got {shown(value)}.")
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise LogbookError(f"The {what} must be a number of °C; got {shown(value)}.") from None
    except OverflowError:  # an integer beyond a float's range
        number = math.inf
    if not math.isfinite(number) or not LOWEST_C <= number <= HIGHEST_C:
        raise LogbookError(f"The {what} must lie between {LOWEST_C} and {HIGHEST_C:g} °C; got {shown(value)}.")
    return number


def cone(value, known_cones, what: str = "cone") -> str | None:
    """A cone name in the cone table's form (see :func:`glowtemp.estimation.cones.normalise_cone`), or None.

    >>> cone(" cone 06 ", {"06", "6"})
    '06'
    """
    value = text(value, what, longest=12)
    if value is None:
        return None
    name = normalise_cone(value)
    if name not in known_cones:
        raise LogbookError(
            f"The {what} {value!r} is not in the cone table; write it like 06, 6 or 5.5 "
            f"(a cones.csv in the data folder can add cones)."
        )
    return name


def upload_id(value) -> str | None:
    """A client-made upload id (16 to 64 letters, digits, ``-`` or ``_``), or None when not given.

    >>> upload_id("3f2a9c81d0b54e6f8a7c6b5d4e3f2a1b")
    '3f2a9c81d0b54e6f8a7c6b5d4e3f2a1b'
    """
    if value is None or value == "":
        return None
    if not isinstance(value, str) or not UPLOAD_ID_PATTERN.fullmatch(value):
        shown = repr(value) if len(repr(value)) <= 80 else f"{len(str(value))} characters"
        raise LogbookError(
            f"An upload id is 16 to 64 letters, digits, '-' or '_', made once by the page for each photo; got {shown}."
        )
    return value


def choice(value, allowed: tuple, what: str) -> str:
    if not isinstance(value, str) or value not in allowed:
        raise LogbookError(f"The {what} must be one of {', '.join(allowed)}; got {shown(value)}.")
    return value


def scene_for_kind(kind) -> str:
    """The scene a kind of work photographs (:data:`SCENE_BY_KIND`); "other" for an unknown kind.

    >>> scene_for_kind("forging"), scene_for_kind("glaze")
    ('steel', 'kiln')
    """
    return SCENE_BY_KIND.get(kind, "other") if isinstance(kind, str) else "other"


def scene(value, what: str = "scene (what is photographed)") -> str:
    """A scene kind of :data:`glowtemp.estimation.brightness.SCENES`, refused naming the allowed ones.

    >>> scene("steel")
    'steel'
    """
    from ..estimation.brightness import SCENES  # numpy is loaded only where a scene is checked

    return choice(value, tuple(SCENES), what)


def magnet(value) -> str | None:
    """:data:`MAGNET_LET_GO` (any case, spaces around allowed), or None when not given.

    >>> magnet(" Let go "), magnet("")
    ('let go', None)
    """
    if value is None or (isinstance(value, str) and not value.strip()):
        return None
    if not isinstance(value, str) or value.strip().lower() != MAGNET_LET_GO:
        raise LogbookError(
            f"The magnet value is {MAGNET_LET_GO!r} (plain carbon steel stopped attracting a magnet) or empty; "
            f"got {shown(value)}."
        )
    return MAGNET_LET_GO
