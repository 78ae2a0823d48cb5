"""Temperatures in the trade's terms: units, rounding to what the band supports, heat colours.

The heat-colour names are the smith's and potter's traditional words for glow seen in a dim
shop. They are approximate, depend on the light and the eye, and are given for orientation
only (common practice; the boundaries are from memory and vary between sources).
"""

from __future__ import annotations

import math

ABSOLUTE_ZERO_C = -273.15

# (lowest °C, name): common practice, approximate, from memory.
HEAT_COLOURS = (
    (-math.inf, "no visible glow"),
    (480.0, "faint red"),
    (550.0, "dull red"),
    (650.0, "dark cherry red"),
    (750.0, "cherry red"),
    (850.0, "bright red-orange"),
    (900.0, "orange"),
    (1000.0, "yellow-orange"),
    (1050.0, "yellow"),
    (1150.0, "pale yellow"),
    (1250.0, "near white"),
)

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
    """Traditional heat-colour name of glow at a temperature (common practice, approximate).

    >>> heat_colour_name(800.0)
    'cherry red'
    """
    name = HEAT_COLOURS[0][1]
    for lowest_c, colour_name in HEAT_COLOURS:
        if temperature_c >= lowest_c:
            name = colour_name
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
