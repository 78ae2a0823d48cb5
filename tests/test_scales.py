"""Units, rounding to the band, and heat-colour names."""

import pytest

from glowtemp import scales


@pytest.mark.parametrize("celsius, fahrenheit", [(0.0, 32.0), (100.0, 212.0), (-40.0, -40.0), (1222.0, 2231.6)])
def test_fahrenheit(celsius, fahrenheit):
    # NIST SP 811, appendix B.9: t_F = 1.8 t_C + 32.
    assert scales.celsius_to_fahrenheit(celsius) == pytest.approx(fahrenheit)
    assert scales.fahrenheit_to_celsius(fahrenheit) == pytest.approx(celsius)


def test_kelvin():
    # SI Brochure 9th ed.: t/°C = T/K - 273.15.
    assert scales.kelvin_to_celsius(273.15) == 0.0
    assert scales.celsius_to_kelvin(1000.0) == pytest.approx(1273.15)


@pytest.mark.parametrize(
    "celsius, expected_word",
    # Heat colours, common practice, approximate, from memory (DESIGN.md section 4): used as a
    # loose check of the names only.
    [(600.0, "dull red"), (800.0, "cherry"), (950.0, "orange"), (1100.0, "yellow"), (1300.0, "white")],
)
def test_heat_colour_names_loosely_follow_common_practice(celsius, expected_word):
    assert expected_word in scales.heat_colour_name(celsius)


def test_names_run_from_red_to_white():
    names = [scales.heat_colour_name(t) for t in range(400, 1400, 10)]
    assert names[0] == "no visible glow" and names[-1] == "near white"
    assert len(set(names)) == len(scales.HEAT_COLOURS)


@pytest.mark.parametrize("half_width, step", [(0.5, 1), (4.0, 2), (12.0, 5), (25.0, 10), (45.0, 20), (150.0, 50)])
def test_rounding_step_never_finer_than_the_band_supports(half_width, step):
    assert scales.rounding_step(half_width) == step


def test_round_to():
    assert scales.round_to(1234.0, 10) == 1230
    assert scales.round_to(1235.0, 10) == 1240
    assert scales.round_to(-12.5, 5) == -15
