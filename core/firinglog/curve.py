"""A firing's curve as numbers: elapsed time, estimates with bands, trusted values, climb rates.

Pure functions of the firing log's dicts (:mod:`glowtemp.firinglog.logbook`); drawing lives in
:mod:`glowtemp.firinglog.curve_chart`. Climb rates use the estimated temperature only, never a mix
of estimates and thermocouple values, so a camera's offset does not show up as a jump.

Each climb rate carries a band: the readings' 68 % half-widths, taken as standard
uncertainties, propagated through the rate by the law of propagation of uncertainty for
uncorrelated inputs. This is cautious: much of a reading's band is a camera term that all
readings of one firing share, and a shared error cancels in a difference. For the rate over
the last hours the band is the larger of that propagated one and the fit's own standard error
of the slope (from the scatter about the line), so a curve that bends within the window does
not get a falsely narrow band either.

References
----------
- NIST/SEMATECH e-Handbook of Statistical Methods, section 4.1.4.1, "Linear Least Squares
  Regression" (the slope used for the rate over the last hours).
- JCGM 100:2008 (GUM), Evaluation of measurement data, section 5.1.2 (law of propagation of
  uncertainty, uncorrelated input quantities).
- N. R. Draper and H. Smith, Applied Regression Analysis, 3rd ed. (1998), section 1.4
  (standard error of the slope of a straight-line fit).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import datetime

SECONDS_PER_HOUR = 3600.0


@dataclass(frozen=True)
class CurvePoint:
    """One reading placed on the curve; temperatures in °C, None where the reading has none."""

    reading_id: int
    hours: float
    temperature_c: float | None
    band68_c: tuple[float, float] | None
    band95_c: tuple[float, float] | None
    upper_bound_c: float | None
    reference_c: float | None
    cone: str | None
    cone_state: str | None
    cone_c: float | None
    magnet_c: float | None = None  # iron's Curie point where the magnet let go, else None


def elapsed_hours(start: str, moment: str) -> float:
    """Hours from ``start`` to ``moment`` (ISO 8601 texts with offsets).

    >>> elapsed_hours("2024-03-01T08:00:00+00:00", "2024-03-01T10:30:00+01:00")
    1.5
    """
    return (datetime.fromisoformat(moment) - datetime.fromisoformat(start)).total_seconds() / SECONDS_PER_HOUR


def curve_start(firing: dict, readings: list[dict]) -> str:
    """Where elapsed time counts from: the firing's start, or its first photo when that is earlier
    (a camera clock set wrong, or photos added to a firing started later)."""
    times = [firing["started_at"]] + [r["taken_at"] for r in readings]
    return min(times, key=datetime.fromisoformat)


def curve_points(firing: dict, readings: list[dict], cone_temperatures_c: dict[str, float]) -> list[CurvePoint]:
    """The firing's readings (as from ``Logbook.readings_in``) as curve points, by time.

    Hours count from :func:`curve_start`.

    ``cone_temperatures_c`` maps cone names to their approximate bending temperature
    (:func:`glowtemp.estimation.cones.cone_table`); a cone missing from it gets no height on the chart.
    A reading whose magnet let go is placed at iron's Curie point
    (:data:`glowtemp.estimation.profile.CURIE_POINT_IRON_C`), approximate for alloyed steels.
    """
    from .logbook_fields import MAGNET_LET_GO
    from ..estimation.profile import CURIE_POINT_IRON_C

    start = curve_start(firing, readings)
    points = [
        CurvePoint(
            reading_id=r["id"],
            hours=elapsed_hours(start, r["taken_at"]),
            temperature_c=r["temperature_c"],
            band68_c=None if r["interval_68_c"] is None else tuple(r["interval_68_c"]),
            band95_c=None if r["interval_95_c"] is None else tuple(r["interval_95_c"]),
            upper_bound_c=r["upper_bound_c"],
            reference_c=r["reference_c"],
            cone=r["cone"],
            cone_state=r["cone_state"],
            cone_c=cone_temperatures_c.get(r["cone"]) if r["cone"] else None,
            magnet_c=CURIE_POINT_IRON_C if r.get("magnet") == MAGNET_LET_GO else None,
        )
        for r in readings
    ]
    return sorted(points, key=lambda p: (p.hours, p.reading_id))


def firing_target_c(firing: dict, cone_temperatures_c: dict[str, float]) -> tuple[float | None, str | None]:
    """The firing's target in °C and what it is: a temperature, or a cone's approximate one."""
    if firing.get("target_c") is not None:
        return firing["target_c"], "target"
    cone = firing.get("target_cone")
    if cone and cone in cone_temperatures_c:
        return cone_temperatures_c[cone], f"target cone {cone} (approximate)"
    return None, None


def climb_rates_c_per_h(hours: list[float], temperatures_c: list[float]) -> list[float | None]:
    """Rate of climb between consecutive readings, in °C per hour (negative while cooling).

    One value per pair of neighbours; None where two readings share the same time.

    >>> climb_rates_c_per_h([0.0, 0.5, 2.0], [100.0, 160.0, 310.0])
    [120.0, 100.0]
    """
    rates = []
    for (h0, t0), (h1, t1) in zip(zip(hours, temperatures_c), zip(hours[1:], temperatures_c[1:])):
        rates.append(None if h1 == h0 else (t1 - t0) / (h1 - h0))
    return rates


def recent_climb_rate_c_per_h(hours: list[float], temperatures_c: list[float], window_h: float = 1.0) -> float | None:
    """Rate over the last ``window_h`` hours: the least-squares slope of the readings in it, °C/h.

    The readings taken within ``window_h`` of the last one count; None with fewer than two of
    them or when they all share one time. With exactly two it is their plain climb rate.

    >>> recent_climb_rate_c_per_h([0.0, 1.5, 2.0], [100.0, 310.0, 330.0], window_h=1.0)
    40.0
    """
    if not hours:
        return None
    last = hours[-1]
    window = [(h, t) for h, t in zip(hours, temperatures_c) if h >= last - window_h]
    if len(window) < 2:
        return None
    mean_h = sum(h for h, _ in window) / len(window)
    mean_t = sum(t for _, t in window) / len(window)
    spread = sum((h - mean_h) ** 2 for h, _ in window)
    if spread == 0:
        return None
    return sum((h - mean_h) * (t - mean_t) for h, t in window) / spread


def step_rate_band_c_per_h(hours: tuple[float, float], sigmas_c: tuple[float, float]) -> float | None:
    """Standard uncertainty of the climb rate between two readings, °C/h (GUM 5.1.2).

    ``sigmas_c`` are the readings' standard uncertainties (their 68 % half-widths).

    >>> round(step_rate_band_c_per_h((0.0, 0.5), (30.0, 40.0)), 6)
    100.0
    """
    (h0, h1), (s0, s1) = hours, sigmas_c
    return None if h1 == h0 else math.hypot(s0, s1) / abs(h1 - h0)


def recent_climb_rate_band_c_per_h(
    hours: list[float], temperatures_c: list[float], sigmas_c: list[float], window_h: float = 1.0
) -> float | None:
    """Standard uncertainty of :func:`recent_climb_rate_c_per_h`, °C/h.

    The larger of the readings' uncertainties propagated through the least-squares slope
    (a weighted sum of the temperatures, weights (h - mean h) / Shh) and, with three readings
    or more, the slope's standard error from the scatter about the line, s / sqrt(Shh).

    >>> round(recent_climb_rate_band_c_per_h([0.0, 0.5, 1.0], [100.0, 160.0, 200.0], [1.0, 1.0, 1.0]), 2)
    11.55
    """
    if not hours:
        return None
    last = hours[-1]
    window = [(h, t, s) for h, t, s in zip(hours, temperatures_c, sigmas_c) if h >= last - window_h]
    if len(window) < 2 or any(s is None for _, _, s in window):
        return None
    mean_h = sum(h for h, _, _ in window) / len(window)
    spread = sum((h - mean_h) ** 2 for h, _, _ in window)
    if spread == 0:
        return None
    propagated = math.sqrt(sum(((h - mean_h) / spread) ** 2 * s**2 for h, _, s in window))
    if len(window) < 3:
        return propagated
    slope = recent_climb_rate_c_per_h([h for h, _, _ in window], [t for _, t, _ in window], window_h)
    mean_t = sum(t for _, t, _ in window) / len(window)
    residuals = [t - (mean_t + slope * (h - mean_h)) for h, t, _ in window]
    scatter = math.sqrt(sum(r**2 for r in residuals) / (len(window) - 2) / spread)
    return max(propagated, scatter)


def band_sigma_c(point: CurvePoint) -> float | None:
    """A reading's standard uncertainty in °C: half the width of its 68 % band."""
    return None if point.band68_c is None else (point.band68_c[1] - point.band68_c[0]) / 2


def estimate_series(points: list[CurvePoint]) -> tuple[list[float], list[float]]:
    """Hours and estimated °C of the points that have an estimate."""
    usable = [p for p in points if p.temperature_c is not None]
    return [p.hours for p in usable], [p.temperature_c for p in usable]


def rate_summary(points: list[CurvePoint], windows_h=(1.0, 2.0)) -> dict:
    """The latest climb rate between readings and the rates over the last hours, in °C/h, each
    with its band (``..._plus_minus_c_per_h``: one standard uncertainty, the 68 % half-width;
    None where a reading has no band)."""
    usable = [p for p in points if p.temperature_c is not None]
    hours, temperatures = estimate_series(points)
    sigmas = [band_sigma_c(p) for p in usable]
    steps = [
        (rate, (h0, h1), (s0, s1))
        for rate, h0, h1, s0, s1 in zip(climb_rates_c_per_h(hours, temperatures), hours, hours[1:], sigmas, sigmas[1:])
        if rate is not None
    ]
    last_band = None
    if steps and None not in steps[-1][2]:
        last_band = step_rate_band_c_per_h(steps[-1][1], steps[-1][2])
    return {
        "last_step_c_per_h": steps[-1][0] if steps else None,
        "last_step_plus_minus_c_per_h": last_band,
        "over_last_hours_c_per_h": {window: recent_climb_rate_c_per_h(hours, temperatures, window) for window in windows_h},
        "over_last_hours_plus_minus_c_per_h": {
            window: recent_climb_rate_band_c_per_h(hours, temperatures, sigmas, window) for window in windows_h
        },
    }
