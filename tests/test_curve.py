"""Firing curve numbers (climb rates against hand-worked examples) and the drawn chart."""

import io
import xml.etree.ElementTree as ElementTree

import numpy as np
import pytest
from PIL import Image

from glowtemp.firinglog.curve import (
    climb_rates_c_per_h,
    curve_points,
    elapsed_hours,
    firing_target_c,
    rate_summary,
    recent_climb_rate_band_c_per_h,
    recent_climb_rate_c_per_h,
    step_rate_band_c_per_h,
)
from glowtemp.firinglog.curve_chart import firing_chart_png, firing_chart_svg

HOURS = [0.0, 0.5, 1.5, 2.0]
TEMPERATURES_C = [100.0, 160.0, 310.0, 330.0]


def test_climb_rate_between_readings_worked_by_hand():
    # (160-100)/0.5 = 120, (310-160)/1.0 = 150, (330-310)/0.5 = 40 °C/h.
    assert climb_rates_c_per_h(HOURS, TEMPERATURES_C) == [120.0, 150.0, 40.0]
    # Cooling is a negative climb: from 1200 to 1050 °C in 1.5 h is -100 °C/h.
    assert climb_rates_c_per_h([3.0, 4.5], [1200.0, 1050.0]) == [-100.0]
    # Two photos at the same moment have no rate between them.
    assert climb_rates_c_per_h([1.0, 1.0, 2.0], [500.0, 510.0, 600.0]) == [None, 90.0]
    assert climb_rates_c_per_h([], []) == [] and climb_rates_c_per_h([1.0], [900.0]) == []


def test_rate_over_the_last_hours_worked_by_hand():
    # Last hour (t >= 1.0 h): the readings at 1.5 h and 2.0 h, so (330-310)/0.5 = 40 °C/h.
    assert recent_climb_rate_c_per_h(HOURS, TEMPERATURES_C, window_h=1.0) == pytest.approx(40.0)
    # Last 1.5 h: x = 0.5, 1.5, 2.0; y = 160, 310, 330. Sxx = 6.5 - 3(4/3)^2 = 7/6,
    # Sxy = 1205 - 3(4/3)(800/3) = 415/3, slope = (415/3)/(7/6) = 830/7 °C/h.
    assert recent_climb_rate_c_per_h(HOURS, TEMPERATURES_C, window_h=1.5) == pytest.approx(830 / 7)
    # Cross-check with numpy's least-squares polynomial fit over the whole firing.
    slope = np.polyfit(HOURS, TEMPERATURES_C, 1)[0]
    assert recent_climb_rate_c_per_h(HOURS, TEMPERATURES_C, window_h=10.0) == pytest.approx(slope)
    assert recent_climb_rate_c_per_h(HOURS, TEMPERATURES_C, window_h=0.25) is None  # one reading only
    assert recent_climb_rate_c_per_h([], []) is None


def test_climb_rate_band_between_two_readings_worked_by_hand():
    # GUM (JCGM 100:2008) 5.1.2 for r = (T1 - T0) / dh with uncorrelated T0, T1:
    # u(r) = sqrt(u0^2 + u1^2) / dh. Bands of +-30 and +-40 °C over half an hour: 50 / 0.5 = 100 °C/h.
    assert step_rate_band_c_per_h((1.0, 1.5), (30.0, 40.0)) == pytest.approx(100.0)
    assert step_rate_band_c_per_h((2.0, 1.0), (10.0, 10.0)) == pytest.approx(2**0.5 * 10)
    assert step_rate_band_c_per_h((1.0, 1.0), (10.0, 10.0)) is None


def test_band_of_the_rate_over_the_last_hours_worked_by_hand():
    hours, temperatures = [0.0, 0.5, 1.0], [100.0, 160.0, 200.0]
    # Slope weights (h - 0.5) / Shh with Shh = 0.5: -1, 0, 1; bands of +-10 °C give sqrt(2) * 10.
    assert recent_climb_rate_band_c_per_h(hours, [100.0, 160.0, 200.0], [10.0] * 3, 10.0) == pytest.approx(200**0.5)
    # Narrow bands: the scatter about the line rules. The fit is 103.33 + 100 h; residuals -10/3,
    # 20/3, -10/3; s^2 = (200/3) / (3 - 2); standard error sqrt(s^2 / Shh) = sqrt(400/3) = 11.547 °C/h
    # (Draper and Smith, section 1.4), cross-checked with numpy's covariance of the fit.
    band = recent_climb_rate_band_c_per_h(hours, temperatures, [1.0] * 3, 10.0)
    assert band == pytest.approx((400 / 3) ** 0.5)
    _, covariance = np.polyfit(hours, temperatures, 1, cov="unscaled")
    scale = np.sum((np.polyval(np.polyfit(hours, temperatures, 1), hours) - temperatures) ** 2) / (3 - 2)
    assert band == pytest.approx(np.sqrt(covariance[0, 0] * scale))
    assert recent_climb_rate_band_c_per_h(hours, temperatures, [1.0, None, 1.0], 10.0) is None
    assert recent_climb_rate_band_c_per_h([1.0], [900.0], [5.0], 10.0) is None


def test_propagated_band_matches_a_monte_carlo_of_the_slope():
    # Readings scattered by their bands (normal, sigma = half-width): the slope's spread over many
    # draws matches the propagated band (GUM Supplement 1, JCGM 101:2008, propagation of distributions).
    hours = np.array([0.0, 0.4, 0.9, 1.5, 2.0])
    sigmas = np.array([40.0, 25.0, 30.0, 20.0, 35.0])
    rng = np.random.default_rng(7)
    draws = 1000.0 + 150.0 * hours + rng.normal(0.0, 1.0, (20000, 5)) * sigmas
    slopes = np.polyfit(hours, draws.T, 1)[0]
    propagated = recent_climb_rate_band_c_per_h(list(hours), list(1000.0 + 150.0 * hours), list(sigmas), 10.0)
    assert propagated == pytest.approx(np.std(slopes), rel=0.03)


def test_elapsed_hours_across_offsets():
    # 10:30 at +01:00 is 09:30 UTC: 1.5 h after 08:00 UTC.
    assert elapsed_hours("2024-03-01T08:00:00+00:00", "2024-03-01T10:30:00+01:00") == 1.5
    assert elapsed_hours("2024-03-01T08:00:00+00:00", "2024-03-01T07:45:00+00:00") == -0.25


def reading(id_, taken_at, temperature_c, reference_c=None, cone=None, cone_state=None, status="ok"):
    usable = temperature_c is not None
    return {
        "id": id_, "taken_at": taken_at, "temperature_c": temperature_c, "status": status,
        "interval_68_c": [temperature_c - 20, temperature_c + 20] if usable else None,
        "interval_95_c": [temperature_c - 45, temperature_c + 45] if usable else None,
        "upper_bound_c": None if usable else 640, "reference_c": reference_c, "cone": cone, "cone_state": cone_state,
    }  # fmt: skip


FIRING = {"started_at": "2024-03-01T08:00:00+00:00", "target_c": None, "target_cone": "6"}
READINGS = [
    reading(3, "2024-03-01T13:00:00+00:00", 1000, reference_c=985, cone="06", cone_state="bent"),
    reading(1, "2024-03-01T09:00:00+00:00", None, status="upper-bound"),
    reading(2, "2024-03-01T12:00:00+00:00", 900, reference_c=930),
    reading(4, "2024-03-01T14:30:00+00:00", 1180, cone="6", cone_state="standing"),
]
CONES_C = {"06": 999.0, "6": 1222.0}  # an example cone table as glowtemp.estimation.cones.cone_table returns it


def test_curve_points_in_time_order_with_cone_heights():
    points = curve_points(FIRING, READINGS, CONES_C)
    assert [p.reading_id for p in points] == [1, 2, 3, 4]
    assert [p.hours for p in points] == [1.0, 4.0, 5.0, 6.5]
    assert points[2].cone_c == 999.0 and points[3].cone_c == 1222.0 and points[1].cone_c is None
    assert points[0].upper_bound_c == 640 and points[0].band95_c is None
    summary = rate_summary(points)
    assert summary["last_step_c_per_h"] == pytest.approx(180 / 1.5)  # 1000 -> 1180 °C in 1.5 h
    assert summary["over_last_hours_c_per_h"][1.0] is None  # only the last reading is within the hour
    assert summary["over_last_hours_c_per_h"][2.0] == pytest.approx(120.0)
    # Every reading here has a 68 % band of +-20 °C: the last step's band is sqrt(2) * 20 / 1.5 °C/h.
    assert summary["last_step_plus_minus_c_per_h"] == pytest.approx(2**0.5 * 20 / 1.5)
    assert summary["over_last_hours_plus_minus_c_per_h"][1.0] is None
    assert summary["over_last_hours_plus_minus_c_per_h"][2.0] == pytest.approx(2**0.5 * 20 / 1.5)


def test_a_magnet_that_let_go_sits_at_iron_s_curie_point():
    # Iron's Curie point, 770 °C (CRC Handbook of Chemistry and Physics, "Curie temperatures").
    readings = [{**READINGS[2], "magnet": "let go"}, {**READINGS[0], "magnet": None}]
    points = curve_points(FIRING, readings, CONES_C)
    assert [(p.reading_id, p.magnet_c) for p in points] == [(2, 770.0), (3, None)]
    assert curve_points(FIRING, READINGS, CONES_C)[0].magnet_c is None  # a reading without the key


def test_hours_count_from_the_first_photo_when_it_predates_the_start():
    early = {**FIRING, "started_at": "2024-03-01T12:30:00+00:00"}
    points = curve_points(early, READINGS, CONES_C)
    assert [p.hours for p in points] == [0.0, 3.0, 4.0, 5.5]  # from the 09:00 photo


def test_target_from_temperature_or_cone():
    assert firing_target_c({"target_c": 1240.0, "target_cone": "6"}, CONES_C) == (1240.0, "target")
    assert firing_target_c(FIRING, CONES_C) == (1222.0, "target cone 6 (approximate)")
    assert firing_target_c({"target_c": None, "target_cone": None}, CONES_C) == (None, None)


def svg_texts(svg: str) -> list[str]:
    root = ElementTree.fromstring(svg)  # well-formed XML, or this raises
    return ["".join(element.itertext()) for element in root.iter("{http://www.w3.org/2000/svg}text")]


def test_svg_chart_carries_curve_legend_cones_and_units():
    points = curve_points(FIRING, READINGS, CONES_C)
    svg = firing_chart_svg(points, 1222.0, "target cone 6 (approximate)")
    assert svg.startswith("<svg")
    texts = svg_texts(svg)
    for label in ("estimate", "95 % band", "68 % band", "thermocouple", "cone 06", "cone 6",
                  "target cone 6 (approximate)", "temperature (°C)", "climb (°C/h)"):  # fmt: skip
        assert label in texts, label
    fahrenheit = svg_texts(firing_chart_svg(points, 1222.0, None, unit="F"))
    assert "temperature (°F)" in fahrenheit
    # 1180 °C is 2156 °F (NIST SP 811, B.9): the °F axis reaches 2000, the °C one stays below.
    assert "2000" in fahrenheit and "2000" not in texts


def test_empty_firing_says_so_and_png_is_an_image():
    assert "no readings yet" in svg_texts(firing_chart_svg([]))
    png = firing_chart_png(curve_points(FIRING, READINGS, CONES_C), title="Test firing")
    image = Image.open(io.BytesIO(png))
    assert image.format == "PNG" and image.size == (840, 624)  # 7 x 5.2 inches at 120 dpi
    with pytest.raises(ValueError, match="unit"):
        firing_chart_png([], unit="K")
