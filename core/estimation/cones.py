"""Witness cones as reference values: an approximate cone-to-temperature table.

A pyrometric cone bends when it has absorbed enough heat work (time at temperature), so its
"temperature" depends on the heating rate. The shipped table is approximate and from memory
(about 60 °C per hour final rate); users should replace it with their supplier's chart by
saving ``cones.csv`` (columns ``cone,temperature_c``) in the data folder. Cone references
therefore count with a wider uncertainty than thermocouple readings.
"""

from __future__ import annotations

import csv
import io
from pathlib import Path

# 1-sigma of a cone reference: the bend's shift with heating rate plus reading how far it bent.
# From memory, not measured (cone charts list a cone's bend some 20-30 °C apart for slow and
# fast final rates; common practice reads the bend by eye).
CONE_SIGMA_C = 15.0
USER_TABLE_NAME = "cones.csv"


class ConeError(ValueError):
    """An unknown cone or an unreadable cone table, in plain words."""


def normalise_cone(name: str) -> str:
    """Canonical cone name: '6', '06', '5.5', '05.5' (accepts 'cone 6', '5 1/2', '05½')."""
    text = str(name).strip().lower().removeprefix("cone").strip()
    text = text.replace("½", ".5").replace(" 1/2", ".5").replace(",", ".")
    return text


def _parse_table(text: str, source: str) -> dict[str, float]:
    rows = [line for line in text.splitlines() if line.strip() and not line.lstrip().startswith("#")]
    reader = csv.DictReader(io.StringIO("\n".join(rows)))
    if not reader.fieldnames or {"cone", "temperature_c"} - set(reader.fieldnames):
        raise ConeError(f"The cone table {source} needs the columns cone,temperature_c.")
    table = {}
    for number, row in enumerate(reader, start=2):
        try:
            table[normalise_cone(row["cone"])] = float(row["temperature_c"])
        except (TypeError, ValueError):
            raise ConeError(f"The cone table {source}, line {number}: temperature is not a number.") from None
    return table


def cone_table(data_dir: Path | None = None) -> tuple[dict[str, float], str]:
    """The cone table in use and where it came from ("your cones.csv" or "approximate table")."""
    if data_dir is not None and (Path(data_dir) / USER_TABLE_NAME).is_file():
        path = Path(data_dir) / USER_TABLE_NAME
        return _parse_table(path.read_text(encoding="utf-8"), str(path)), "your cones.csv"
    text = (Path(__file__).parent.parent / "data" / "cones_approx.csv").read_text(encoding="utf-8")
    return _parse_table(text, "shipped with glowtemp"), "approximate table (from memory, ~60 °C/h)"


def cone_temperature_c(cone: str, data_dir: Path | None = None) -> float:
    """Approximate bending temperature of a cone.

    >>> cone_temperature_c("cone 6")
    1222.0
    """
    table, source = cone_table(data_dir)
    key = normalise_cone(cone)
    if key not in table:
        raise ConeError(f"Cone {cone!r} is not in the {source}.")
    return table[key]
