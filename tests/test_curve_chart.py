"""The climb-rate panel of the firing chart: steps with their band, worked by hand and read back
from the drawn SVG."""

from __future__ import annotations

import math
import re
import xml.etree.ElementTree as ElementTree

import pytest

from glowtemp.firinglog.curve import CurvePoint
from glowtemp.firinglog.curve_chart import RATE_BAND_GID, ClimbStep, climb_steps, firing_chart_png, firing_chart_svg

SVG = "{http://www.w3.org/2000/svg}"


def point(hours, temperature_c=None, plus_minus_c=None, ceiling_c=None):
    """A reading on the curve with a symmetric 68 % band (and a 95 % band twice as wide)."""
    band = lambda k: None if temperature_c is None else (temperature_c - k * plus_minus_c, temperature_c + k * plus_minus_c)  # noqa: E731
    return CurvePoint(0, hours, temperature_c, band(1), band(2), ceiling_c, None, None, None, None)


# 900 ± 30 °C at 0 h, 960 ± 40 at 0.5 h, a second photo at 0.5 h (965 ± 40), a ceiling only at
# 1 h, then 1000 ± 10 at 1.5 h (invented readings).
POINTS = [point(0.0, 900.0, 30.0), point(0.5, 960.0, 40.0), point(0.5, 965.0, 40.0),
          point(1.0, ceiling_c=700.0), point(1.5, 1000.0, 10.0)]  # fmt: skip


def test_climb_steps_carry_their_band_worked_by_hand():
    # GUM (JCGM 100:2008) 5.1.2 for r = (T1 - T0) / dh with uncorrelated T0, T1:
    # u(r) = sqrt(u0^2 + u1^2) / dh. (960-900)/0.5 = 120 °C/h, sqrt(30^2 + 40^2)/0.5 = 100 °C/h;
    # two photos at one time have no rate; the ceiling is no estimate and is skipped;
    # (1000-965)/1.0 = 35 °C/h, sqrt(40^2 + 10^2)/1.0 = 41.23 °C/h.
    steps = climb_steps(POINTS)
    assert steps[:2] == [ClimbStep(0.0, 0.5, 120.0, pytest.approx(100.0)), ClimbStep(0.5, 0.5, None, None)]
    assert steps[2] == ClimbStep(0.5, 1.5, pytest.approx(35.0), pytest.approx(math.hypot(40, 10)))
    assert climb_steps([point(0.0, 900.0, 30.0)]) == [] and climb_steps([]) == []


def _number(text: str) -> float:
    return float(text.replace("\u2212", "-"))  # matplotlib writes the minus sign U+2212


def drawn_band(svg: str) -> list[float]:
    """The band's edges in chart units, read from the SVG: its path's heights mapped through the
    y tick labels of the panel that holds it."""
    root = ElementTree.fromstring(svg)
    panel = next(axes for axes in root.iter(f"{SVG}g") if axes.get("id", "").startswith("axes_")
                 and any(g.get("id") == RATE_BAND_GID for g in axes.iter(f"{SVG}g")))  # fmt: skip
    ticks = []
    for tick in panel.iter(f"{SVG}g"):
        if tick.get("id", "").startswith("ytick_"):
            mark = next(tick.iter(f"{SVG}use"))
            label = "".join(next(tick.iter(f"{SVG}text")).itertext())
            ticks.append((float(mark.get("y")), _number(label)))
    (y0, v0), (y1, v1) = ticks[0], ticks[-1]
    band = next(g for g in panel.iter(f"{SVG}g") if g.get("id") == RATE_BAND_GID)
    heights = {float(y) for y in re.findall(r"[ML] [\d.]+ ([\d.]+)", next(band.iter(f"{SVG}path")).get("d"))}
    return sorted(round(v0 + (y - y0) * (v1 - v0) / (y1 - y0), 2) for y in heights)


@pytest.mark.parametrize("unit, per_degree_c", [("C", 1.0), ("F", 9 / 5)])
def test_the_band_is_drawn_around_the_steps_in_either_unit(unit, per_degree_c):
    # A rate in °F/h is the °C/h rate times 9/5 (NIST SP 811, B.9: a kelvin is 1.8 °F steps).
    expected = sorted(round(per_degree_c * value, 2) for value in
                      (120 - 100, 120 + 100, 35 - math.hypot(40, 10), 35 + math.hypot(40, 10)))  # fmt: skip
    assert drawn_band(firing_chart_svg(POINTS, unit=unit)) == pytest.approx(expected, abs=0.05)


def test_the_band_is_named_in_the_legend_and_absent_without_bands():
    svg = firing_chart_svg(POINTS)
    assert "climb rate, 68 % band" in svg
    no_bands = [CurvePoint(0, h, t, None, None, None, None, None, None, None) for h, t in ((0.0, 900.0), (1.0, 960.0))]
    assert f'id="{RATE_BAND_GID}"' not in firing_chart_svg(no_bands)
    assert firing_chart_png(POINTS)[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (ISO/IEC 15948)


def drawn_marker_heights(svg: str, gid: str) -> list[float]:
    """The heights, in chart units, of the markers of the line with ``gid``: each marker's y in
    the SVG mapped through the y tick labels of the panel that holds it."""
    root = ElementTree.fromstring(svg)
    panel = next(axes for axes in root.iter(f"{SVG}g") if axes.get("id", "").startswith("axes_")
                 and any(g.get("id") == gid for g in axes.iter(f"{SVG}g")))  # fmt: skip
    ticks = []
    for tick in panel.iter(f"{SVG}g"):
        if tick.get("id", "").startswith("ytick_"):
            mark = next(tick.iter(f"{SVG}use"))
            ticks.append((float(mark.get("y")), _number("".join(next(tick.iter(f"{SVG}text")).itertext()))))
    (y0, v0), (y1, v1) = ticks[0], ticks[-1]
    line = next(g for g in panel.iter(f"{SVG}g") if g.get("id") == gid)
    return [round(v0 + (float(use.get("y")) - y0) * (v1 - v0) / (y1 - y0), 1) for use in line.iter(f"{SVG}use")]


@pytest.mark.parametrize("unit, expected", [("C", 770.0), ("F", 1418.0)])
def test_a_magnet_that_let_go_is_drawn_at_iron_s_curie_point_and_labelled(unit, expected):
    from glowtemp.firinglog.curve_chart import MAGNET_GID

    # Iron's Curie point is 770 °C (CRC Handbook of Chemistry and Physics, "Curie temperatures"),
    # 770 * 9/5 + 32 = 1418 °F (NIST SP 811, B.9). Two readings whose magnet let go, at 1 h and 2 h.
    points = [point(0.0, 700.0, 20.0), point(1.0, 760.0, 20.0), point(2.0, 790.0, 20.0)]
    points[1:] = [CurvePoint(p.reading_id, p.hours, p.temperature_c, p.band68_c, p.band95_c, None, None, None, None,
                             None, magnet_c=770.0) for p in points[1:]]  # fmt: skip
    svg = firing_chart_svg(points, unit=unit)
    assert drawn_marker_heights(svg, MAGNET_GID) == pytest.approx([expected, expected], abs=1.0)
    assert f"magnet let go (about {expected:.0f} °{unit})" in svg  # the legend, in the chart's unit
    assert svg.count(">magnet let go<") == 1  # the first one labelled beside it
    assert f'id="{MAGNET_GID}"' not in firing_chart_svg(points[:1])


def test_the_horseshoe_marker_is_one_closed_outline_open_at_the_top():
    from matplotlib.path import Path

    from glowtemp.firinglog.curve_chart import horseshoe_marker

    marker = horseshoe_marker()
    assert marker.codes[0] == Path.MOVETO and marker.codes[-1] == Path.CLOSEPOLY
    assert list(marker.codes[1:-1]) == [Path.LINETO] * (len(marker.codes) - 2)
    # Open at the top: the point between the arms, (0, 0.9), lies outside; an arm, (-0.7, 0.5), inside.
    assert not marker.contains_point((0.0, 0.9)) and marker.contains_point((-0.7, 0.5))
