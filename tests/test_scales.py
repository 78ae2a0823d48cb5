"""Units, rounding to the band, and heat-colour names."""

import pytest

from glowtemp.estimation import advice, scales


@pytest.mark.parametrize("celsius, fahrenheit", [(0.0, 32.0), (100.0, 212.0), (-40.0, -40.0), (1222.0, 2231.6)])
def test_fahrenheit(celsius, fahrenheit):
    # NIST SP 811, appendix B.9: t_F = 1.8 t_C + 32.
    assert scales.celsius_to_fahrenheit(celsius) == pytest.approx(fahrenheit)
    assert scales.fahrenheit_to_celsius(fahrenheit) == pytest.approx(celsius)


def test_kelvin():
    # SI Brochure 9th ed.: t/°C = T/K - 273.15.
    assert scales.kelvin_to_celsius(273.15) == 0.0
    assert scales.celsius_to_kelvin(1000.0) == pytest.approx(1273.15)


# H. M. Howe (1900), as printed in C. R. Darling, Pyrometry, 2nd ed. (1920), chapter VI (public
# domain): the temperatures (°C) at which each heat colour is seen, and the name given there.
HOWE_1900 = [
    (470, "lowest red visible in the dark"),
    (475, "lowest red visible in daylight"),
    (550, "dull red"), (590, "dull red"), (625, "dull red"),  # 550-625 °C
    (700, "full cherry red"),
    (850, "light red"),
    (950, "full yellow"), (975, "full yellow"), (1000, "full yellow"),  # 950-1000 °C
    (1050, "light yellow"),
    (1150, "white"),
]


@pytest.mark.parametrize("celsius, published_name", HOWE_1900)
def test_heat_colour_names_follow_howe_s_published_table(celsius, published_name):
    assert scales.heat_colour_name(celsius) == published_name


def test_no_name_below_the_table_s_lowest_visible_red():
    # Howe: the lowest red visible in the dark is at 470 °C; below it no glow is seen.
    assert scales.heat_colour_name(469.0) == "no visible glow"
    assert scales.heat_colour_name(20.0) == "no visible glow"


@pytest.mark.parametrize("celsius, neighbours", [(660, ("dull red", "full cherry red")),
                                                 (1020, ("full yellow", "light yellow"))])
def test_the_table_s_gaps_are_named_by_their_published_neighbours(celsius, neighbours):
    # Howe gives no name between dull red (to 625 °C) and full cherry (700 °C), nor between full
    # yellow (to 1000 °C) and light yellow (1050 °C): our wording there names both neighbours.
    name = scales.heat_colour_name(celsius)
    assert all(neighbour in name for neighbour in neighbours) and name not in dict(HOWE_1900).values()


def test_names_run_from_red_to_white_in_the_table_s_order():
    names = [scales.heat_colour_name(t) for t in range(400, 1400)]
    distinct = list(dict.fromkeys(names))
    published = list(dict.fromkeys(name for _, name in HOWE_1900))
    assert [name for name in distinct if name in published] == published
    assert distinct[0] == "no visible glow" and distinct[-1] == "white"


@pytest.mark.parametrize("half_width, step", [(0.5, 1), (4.0, 2), (12.0, 5), (25.0, 10), (45.0, 20), (150.0, 50)])
def test_rounding_step_never_finer_than_the_band_supports(half_width, step):
    assert scales.rounding_step(half_width) == step


def test_round_to():
    assert scales.round_to(1234.0, 10) == 1230
    assert scales.round_to(1235.0, 10) == 1240
    assert scales.round_to(-12.5, 5) == -15


def test_the_below_glow_warning_starts_at_the_draper_point():
    # J. W. Draper, Phil. Mag. 30 (1847) 345: every solid begins to glow at 977 °F (NIST SP 811
    # conversion: 525 °C). Howe's first red (470 °C) needs eyes adapted to the dark.
    assert advice.BELOW_GLOW_C == pytest.approx(scales.fahrenheit_to_celsius(977.0), abs=0.5)
    assert "525 °C" in advice.below_glow().message
    assert scales.heat_colour_name(advice.BELOW_GLOW_C) != "no visible glow"
