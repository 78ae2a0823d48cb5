"""Temperatures in the trade's terms: units, rounding to what the band supports, heat colours.

The heat-colour names are the traditional words of smiths, potters and heat-treaters for glow
seen in a dim shop, here as H. M. Howe published them (1900), printed in C. R. Darling,
Pyrometry, 2nd ed. (1920), chapter VI (public domain). Names are loose: they depend on the
light and the eye, and other published tables put the same names 100-150 °C apart, so they are
for orientation only, and the result says so beside the name.
"""

from __future__ import annotations

import math

ABSOLUTE_ZERO_C = -273.15

# (from °C, to °C, name) as H. M. Howe (1900) gives them, in C. R. Darling, Pyrometry, 2nd ed.
# (1920), ch. VI. A single temperature names the heat from there up to the next entry; a range
# names its own span, and the gap after it up to the next entry is ours, named by both.
HOWE_HEAT_COLOURS = (
    (470.0, 470.0, "lowest red visible in the dark"),
    (475.0, 475.0, "lowest red visible in daylight"),
    (550.0, 625.0, "dull red"),
    (700.0, 700.0, "full cherry red"),
    (850.0, 850.0, "light red"),
    (950.0, 1000.0, "full yellow"),
    (1050.0, 1050.0, "light yellow"),
    (1150.0, 1150.0, "white"),
)
BELOW_THE_TABLE = "no visible glow"  # ours: below the table's lowest visible red
NAMES_ARE_LOOSE = "Heat-colour names are loose: published tables disagree by 100–150\u00a0°C."

ROUNDING_STEPS_C = (1, 2, 5, 10, 20, 50, 100)


def kelvin_to_celsius(temperature_k: float) -> float:
    """K to °C (SI Brochure, 9th ed., 2.3.1)."""
    return temperature_k + ABSOLUTE_ZERO_C


def celsius_to_kelvin(temperature_c: float) -> float:
    """°C to K (SI Brochure, 9th ed., 2.3.1)."""
    return temperature_c - ABSOLUTE_ZERO_C


def celsius_to_fahrenheit(temperature_c: float) -> float:
    """°C to °F: t_F = 9/5 t_C + 32 (NIST SP 811, appendix B.9).

    >>> celsius_to_fahrenheit(1000.0)
    1832.0
    """
    return temperature_c * 9 / 5 + 32


def fahrenheit_to_celsius(temperature_f: float) -> float:
    """°F to °C, the inverse of :func:`celsius_to_fahrenheit` (NIST SP 811, appendix B.9)."""
    return (temperature_f - 32) * 5 / 9


def heat_colour_name(temperature_c: float) -> str:
    """Traditional heat-colour name of glow at a temperature, after Howe's table (see above).

    >>> heat_colour_name(800.0), heat_colour_name(660.0)
    ('full cherry red', 'between dull red and full cherry red')
    """
    name = BELOW_THE_TABLE
    for index, (from_c, to_c, table_name) in enumerate(HOWE_HEAT_COLOURS):
        if temperature_c < from_c:
            break
        name = table_name
        following = HOWE_HEAT_COLOURS[index + 1:index + 2]
        if to_c > from_c and temperature_c > to_c and following:
            name = f"between {table_name} and {following[0][2]}"
    return name


def rounding_step(half_width: float) -> int:
    """The coarsest of 1, 2, 5, 10, 20, 50, 100 no larger than half the 68 % half-width.

    So that a shown value never carries more digits than its band supports.

    >>> rounding_step(30.0), rounding_step(3.0), rounding_step(400.0)
    (10, 1, 100)
    """
    allowed = [step for step in ROUNDING_STEPS_C if step <= max(half_width, 0.0) / 2]
    return allowed[-1] if allowed else 1


def round_to(value: float, step: int) -> int:
    """Round to a multiple of ``step`` (half away from zero)."""
    return int(math.copysign(math.floor(abs(value) / step + 0.5) * step, value))
