"""A firing as CSV: one row per reading, units in the column names, formula-looking cells defused.

Spreadsheets run a cell that starts with ``=``, ``+``, ``-``, ``@``, a tab or a carriage
return as a formula. Following the OWASP guidance on CSV injection, such text cells get a
leading apostrophe (shown by spreadsheets as plain text), and every text cell is quoted;
numbers, including plain negative ones such as ``-12.5``, stay numbers. ``elapsed_h`` counts
from the start of the firing's curve (:func:`glowtemp.firinglog.curve.curve_start`). ``magnet`` is the
trusted "let go" of plain carbon steel; ``scene``, ``emissivity_low``/``emissivity_high`` and
``channels`` say what the reading was measured as and what set its band.

References
----------
- OWASP, "CSV Injection" (community page): the characters listed above and the apostrophe.
- RFC 4180, "Common Format and MIME Type for Comma-Separated Values (CSV) Files", 2005.
"""

from __future__ import annotations

import csv
import io
import re

from .curve import curve_start, elapsed_hours

FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")
PLAIN_NUMBER = re.compile(r"-?\d+(\.\d+)?", re.ASCII)  # digits 0-9 only: "-١٢" is text to a spreadsheet

COLUMNS = (
    "reading_id", "taken_at", "elapsed_h", "photo_name", "photo_sha256", "status",
    "estimate_c", "band68_low_c", "band68_high_c", "band95_low_c", "band95_high_c", "upper_bound_c",
    "estimate_f", "glow_name", "reference_c", "cone", "cone_state", "magnet", "note", "region", "profile",
    "scene", "emissivity_low", "emissivity_high", "channels", "warnings",
)  # fmt: skip


def neutralise_cell(value):
    """A cell that a spreadsheet will not run as a formula.

    >>> neutralise_cell("=HYPERLINK(1)"), neutralise_cell("-12.5"), neutralise_cell(-3)
    ("'=HYPERLINK(1)", '-12.5', -3)
    """
    if isinstance(value, str) and value.startswith(FORMULA_STARTS) and not PLAIN_NUMBER.fullmatch(value):
        return "'" + value
    return value


def _band(reading, key, index):
    band = reading[key]
    return None if band is None else band[index]


def reading_row(start: str, reading: dict) -> list:
    """One reading as the CSV's cells (before neutralising); hours count from ``start``."""
    result = reading["result"]
    emissivity = result.get("emissivity") or (None, None)
    return [
        reading["id"],
        reading["taken_at"],
        round(elapsed_hours(start, reading["taken_at"]), 3),
        reading["photo_name"],
        reading["photo_key"].partition(".")[0],
        reading["status"],
        reading["temperature_c"],
        _band(reading, "interval_68_c", 0),
        _band(reading, "interval_68_c", 1),
        _band(reading, "interval_95_c", 0),
        _band(reading, "interval_95_c", 1),
        reading["upper_bound_c"],
        result.get("temperature_f"),
        result.get("glow_name"),
        reading["reference_c"],
        reading["cone"],
        reading["cone_state"],
        reading.get("magnet"),
        reading["note"],
        reading["region_text"],
        reading["profile"],
        result.get("scene"),
        emissivity[0],
        emissivity[1],
        " ".join(result.get("channels") or []),
        " ".join(w.get("code", "") for w in result.get("warnings") or []),
    ]


def firing_csv(firing: dict, readings: list[dict]) -> str:
    """The firing's readings (by time) as CSV text with a header row."""
    out = io.StringIO()
    writer = csv.writer(out, quoting=csv.QUOTE_NONNUMERIC, lineterminator="\r\n")
    writer.writerow(COLUMNS)
    start = curve_start(firing, readings)
    for reading in readings:
        writer.writerow([neutralise_cell("" if cell is None else cell) for cell in reading_row(start, reading)])
    return out.getvalue()
