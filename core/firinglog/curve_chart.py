"""The firing curve drawn with matplotlib (Agg, no display): SVG for the web page, PNG for the CLI.

Upper panel: the estimated temperature with its 95 % band (light) and 68 % band (darker),
ceilings for readings whose colour gives only an upper bound, thermocouple values as
diamonds, witness cones as triangles at their approximate bending temperature (filled when
bent, hollow when standing) labelled with their cone, readings whose magnet let go as a
horseshoe (a marker drawn here, :func:`horseshoe_marker`) at iron's Curie point, labelled, and
the target as a dashed line.
Lower panel: the climb rate between consecutive estimates, as steps, shaded over its band
(one standard uncertainty either side, the 68 % band, propagated from the readings' own
bands as :func:`glowtemp.firinglog.curve.step_rate_band_c_per_h` does after GUM 5.1.2).

matplotlib is imported when a chart is drawn, so nothing else pays its start-up time. Only
the object-oriented API is used (no pyplot state), and drawing is serialised by the lock
that every chart shares (:data:`glowtemp.estimation.tilemap_chart.DRAWING_LOCK`): matplotlib's text and
font caches are shared between threads.
"""

from __future__ import annotations

import io
import math
from dataclasses import dataclass

from ..estimation.cones import cone_table
from .curve import (
    CurvePoint,
    band_sigma_c,
    climb_rates_c_per_h,
    curve_points,
    estimate_series,
    firing_target_c,
    step_rate_band_c_per_h,
)
from ..estimation.scales import celsius_to_fahrenheit
from ..estimation.tilemap_chart import DRAWING_LOCK, LITERAL_TEXT

ESTIMATE_COLOUR = "#8c3b12"
BAND95_COLOUR = "#f4c59b"
BAND68_COLOUR = "#e9995a"
THERMOCOUPLE_COLOUR = "#24507a"
CONE_COLOUR = "#2e6b3f"
MAGNET_COLOUR = "#6b2d5c"
MAGNET_GID = "magnet-let-go"  # the markers' id in the SVG
TARGET_COLOUR = "#6a6a6a"
RATE_COLOUR = "#5c4d3d"
RATE_BAND_COLOUR = "#d8c8b4"
RATE_BAND_GID = "climb-band"  # the band's id in the SVG
FIGURE_SIZE_IN = (7.0, 5.2)  # the PNG, for a screen or paper
WEB_FIGURE_SIZE_IN = (4.6, 5.0)  # the SVG, sized so its text stays readable on a phone


@dataclass(frozen=True)
class ClimbStep:
    """The climb between two consecutive estimates: hours, rate and its 68 % half-width, °C/h.

    ``rate_c_per_h`` is None where both readings share one time; ``plus_minus_c_per_h`` is None
    there and where a reading has no band.
    """

    start_h: float
    end_h: float
    rate_c_per_h: float | None
    plus_minus_c_per_h: float | None


def climb_steps(points: list[CurvePoint]) -> list[ClimbStep]:
    """The steps the lower panel draws, one per pair of consecutive estimates.

    >>> def point(hours, t, u):
    ...     return CurvePoint(0, hours, t, (t - u, t + u), None, None, None, None, None, None)
    >>> climb_steps([point(0.0, 900.0, 30.0), point(0.5, 960.0, 40.0)])
    [ClimbStep(start_h=0.0, end_h=0.5, rate_c_per_h=120.0, plus_minus_c_per_h=100.0)]
    """
    usable = [p for p in points if p.temperature_c is not None]
    hours, temperatures_c = estimate_series(points)
    steps = []
    for rate, p0, p1 in zip(climb_rates_c_per_h(hours, temperatures_c), usable, usable[1:]):
        sigmas = (band_sigma_c(p0), band_sigma_c(p1))
        band = None if rate is None or None in sigmas else step_rate_band_c_per_h((p0.hours, p1.hours), sigmas)
        steps.append(ClimbStep(p0.hours, p1.hours, rate, band))
    return steps


def _draw_climb(axes, steps: list[ClimbStep], rate_scale: float) -> None:
    """Steps of the climb rate with their band shaded around them (a gap where a step has none,
    and where two readings share one time)."""
    edges = [steps[0].start_h] + [step.end_h for step in steps]
    rates = [math.nan if step.rate_c_per_h is None else step.rate_c_per_h * rate_scale for step in steps]
    widths = [math.nan if step.plus_minus_c_per_h is None else step.plus_minus_c_per_h * rate_scale for step in steps]
    if any(not math.isnan(width) for width in widths):
        axes.stairs([r + w for r, w in zip(rates, widths)], edges, baseline=[r - w for r, w in zip(rates, widths)],
                    fill=True, color=RATE_BAND_COLOUR, linewidth=0, label="climb rate, 68 % band",
                    gid=RATE_BAND_GID)  # fmt: skip
    axes.stairs(rates, edges, color=RATE_COLOUR, linewidth=1.6, baseline=None)


def _to_unit(unit: str):
    if unit == "C":
        return lambda t: t
    if unit == "F":
        return celsius_to_fahrenheit
    raise ValueError(f"The chart unit must be 'C' or 'F'; got {unit!r}.")


def _figure(points, target_c, target_label, unit: str, title: str | None, size_in=FIGURE_SIZE_IN):
    from matplotlib.figure import Figure

    convert = _to_unit(unit)
    rate_scale = 1.0 if unit == "C" else 9 / 5
    figure = Figure(figsize=size_in, layout="constrained")
    if title:
        figure.suptitle(title, fontsize="medium")
    heat, rate = figure.subplots(2, 1, sharex=True, height_ratios=(3, 1))
    for axes in (heat, rate):
        axes.spines[["top", "right"]].set_visible(False)
        axes.grid(True, color="#dddddd", linewidth=0.6)
        axes.set_axisbelow(True)

    banded = [p for p in points if p.band95_c is not None and p.band68_c is not None]
    if banded:
        hours = [p.hours for p in banded]
        heat.fill_between(hours, [convert(p.band95_c[0]) for p in banded], [convert(p.band95_c[1]) for p in banded],
                          color=BAND95_COLOUR, alpha=0.6, linewidth=0, label="95 % band")  # fmt: skip
        heat.fill_between(hours, [convert(p.band68_c[0]) for p in banded], [convert(p.band68_c[1]) for p in banded],
                          color=BAND68_COLOUR, alpha=0.6, linewidth=0, label="68 % band")  # fmt: skip
    hours, estimates_c = estimate_series(points)
    if hours:
        heat.plot(hours, [convert(t) for t in estimates_c], color=ESTIMATE_COLOUR, marker="o", markersize=3,
                  linewidth=1.6, label="estimate")  # fmt: skip
    ceilings = [p for p in points if p.temperature_c is None and p.upper_bound_c is not None]
    if ceilings:
        heat.plot([p.hours for p in ceilings], [convert(p.upper_bound_c) for p in ceilings], linestyle="none",
                  marker="v", markerfacecolor="none", color=ESTIMATE_COLOUR, label="ceiling only (colour)")  # fmt: skip
    references = [p for p in points if p.reference_c is not None]
    if references:
        heat.plot([p.hours for p in references], [convert(p.reference_c) for p in references], linestyle="none",
                  marker="D", markersize=5, color=THERMOCOUPLE_COLOUR, label="thermocouple")  # fmt: skip
    _draw_cones(heat, [p for p in points if p.cone_c is not None], convert)
    _draw_magnets(heat, [p for p in points if p.magnet_c is not None], convert, unit)
    if target_c is not None:
        heat.axhline(convert(target_c), color=TARGET_COLOUR, linestyle="--", linewidth=1.0, label=target_label or "target")

    heat.set_ylabel(f"temperature (°{unit})")
    steps = climb_steps(points)
    if steps:  # one step per pair of readings (a zero-width step where two share a time)
        _draw_climb(rate, steps, rate_scale)
    if heat.get_legend_handles_labels()[0]:
        figure.legend(loc="outside lower center", ncols=3 if size_in[0] > 6 else 2, fontsize="small", frameon=False)
    else:
        heat.text(0.5, 0.5, "no readings yet", transform=heat.transAxes, ha="center", va="center", color=TARGET_COLOUR)
    rate.axhline(0, color=TARGET_COLOUR, linewidth=0.6)
    rate.set_ylabel(f"climb (°{unit}/h)")
    rate.set_xlabel("hours since the start")
    rate.ticklabel_format(axis="x", useOffset=False)
    return figure


def _draw_cones(axes, cones: list[CurvePoint], convert) -> None:
    labelled = set()
    for state, fill in (("bent", CONE_COLOUR), ("standing", "none"), (None, "none")):
        chosen = [p for p in cones if p.cone_state == state]
        if not chosen:
            continue
        label = {"bent": "cone bent", "standing": "cone standing", None: "cone seen"}[state]
        axes.plot([p.hours for p in chosen], [convert(p.cone_c) for p in chosen], linestyle="none", marker="^",
                  markersize=7, color=CONE_COLOUR, markerfacecolor=fill, label=label)  # fmt: skip
        for p in chosen:
            if (p.cone, state) not in labelled:
                labelled.add((p.cone, state))
                axes.annotate(f"cone {p.cone}", (p.hours, convert(p.cone_c)), textcoords="offset points",
                              xytext=(4, 6), fontsize="x-small", color=CONE_COLOUR)  # fmt: skip


def horseshoe_marker():
    """A horseshoe magnet, open side up, as a matplotlib marker path: two arms joined by a
    half ring (outer radius 1, inner 0.45), closed as one outline."""
    import numpy as np
    from matplotlib.path import Path

    turn = np.linspace(np.pi, 2 * np.pi, 13)
    outer = np.column_stack([np.cos(turn), np.sin(turn)])
    inner = 0.45 * outer[::-1]
    outline = np.vstack([[(-1.0, 1.0)], outer, [(1.0, 1.0), (0.45, 1.0)], inner, [(-0.45, 1.0), (-1.0, 1.0)]])
    codes = [Path.MOVETO] + [Path.LINETO] * (len(outline) - 2) + [Path.CLOSEPOLY]
    return Path(outline, codes)


def _draw_magnets(axes, magnets: list[CurvePoint], convert, unit: str) -> None:
    """Readings whose magnet let go, at iron's Curie point, the first one labelled."""
    if not magnets:
        return
    height = convert(magnets[0].magnet_c)
    axes.plot([p.hours for p in magnets], [height] * len(magnets), linestyle="none", marker=horseshoe_marker(),
              markersize=9, color=MAGNET_COLOUR, label=f"magnet let go (about {height:.0f} °{unit})",
              gid=MAGNET_GID)  # fmt: skip
    axes.annotate("magnet let go", (magnets[0].hours, height), textcoords="offset points", xytext=(5, -12),
                  fontsize="x-small", color=MAGNET_COLOUR)  # fmt: skip


def _render(figure, image_format: str) -> bytes:
    buffer = io.BytesIO()
    metadata = {"Date": None} if image_format == "svg" else {}
    figure.savefig(buffer, format=image_format, dpi=120, metadata=metadata)
    return buffer.getvalue()


def firing_chart_svg(points: list[CurvePoint], target_c=None, target_label=None, unit: str = "C", title=None) -> str:
    """The curve as an SVG element (no XML prolog), ready to place in a page."""
    import matplotlib

    with DRAWING_LOCK, matplotlib.rc_context({"svg.fonttype": "none", "svg.hashsalt": "glowtemp-curve", **LITERAL_TEXT}):
        text = _render(_figure(points, target_c, target_label, unit, title, WEB_FIGURE_SIZE_IN), "svg").decode("utf-8")
    return text[text.index("<svg"):]


def firing_chart_png(points: list[CurvePoint], target_c=None, target_label=None, unit: str = "C", title=None) -> bytes:
    """The curve as a PNG image."""
    import matplotlib

    with DRAWING_LOCK, matplotlib.rc_context(LITERAL_TEXT):
        return _render(_figure(points, target_c, target_label, unit, title), "png")


def draw_firing(log, firing_id: int, unit: str = "C", image_format: str = "svg", title: str | None = None):
    """The chart of one firing in a :class:`glowtemp.firinglog.logbook.Logbook`: SVG text or PNG bytes."""
    firing = log.get_firing(firing_id)
    table = cone_table(log.data_dir)[0]
    points = curve_points(firing, log.readings_in(firing_id), table)
    target_c, target_label = firing_target_c(firing, table)
    draw = {"svg": firing_chart_svg, "png": firing_chart_png}[image_format]
    return draw(points, target_c, target_label, unit, title)
