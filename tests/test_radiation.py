"""Planck, Wien and Stefan-Boltzmann against CODATA 2018 and colour-science."""

import colour
import numpy as np
import pytest

from glowtemp.physics import radiation


def test_codata_2018_second_radiation_constant():
    # CODATA 2018 (NIST SP 961): c2 = 1.438 776 877e-2 m K
    assert radiation.SECOND_RADIATION_C2 == pytest.approx(1.438776877e-2, rel=1e-9)


def test_codata_2018_first_radiation_constant():
    # CODATA 2018: c1 = 3.741 771 852e-16 W m^2, c1L = 1.191 042 972e-16 W m^2 sr^-1
    assert radiation.FIRST_RADIATION_C1 == pytest.approx(3.741771852e-16, rel=1e-9)
    assert radiation.FIRST_RADIATION_C1L == pytest.approx(1.191042972e-16, rel=1e-9)


def test_codata_2018_stefan_boltzmann():
    # CODATA 2018: sigma = 5.670 374 419e-8 W m^-2 K^-4
    assert radiation.STEFAN_BOLTZMANN_SIGMA == pytest.approx(5.670374419e-8, rel=1e-9)


@pytest.mark.parametrize("temperature_k", [800.0, 1000.0, 1500.0, 2856.0, 5800.0])
def test_wien_peak_matches_planck_maximum(temperature_k):
    # Wien's displacement law, b = 2.897 771 955e-3 m K (CODATA 2018): the maximum of Planck's
    # law found numerically must sit at b / T.
    wavelengths = np.linspace(0.2e-6, 10e-6, 200001)
    peak = wavelengths[np.argmax(radiation.spectral_radiance(wavelengths, temperature_k))]
    assert peak == pytest.approx(radiation.WIEN_B / temperature_k, rel=1e-4)
    assert radiation.peak_wavelength_m(temperature_k) == pytest.approx(radiation.WIEN_B / temperature_k)


def test_wien_peak_at_1000_k_is_deep_infrared_and_halves_when_temperature_doubles():
    # Wien's law: lambda_max = b / T, so 1000 K peaks near 2.9 um and doubling T halves it.
    assert radiation.peak_wavelength_m(1000.0) == pytest.approx(2.898e-6, rel=1e-3)
    assert radiation.peak_wavelength_m(2000.0) == pytest.approx(radiation.peak_wavelength_m(1000.0) / 2)


@pytest.mark.parametrize("temperature_k", [700.0, 1273.15, 2856.0])
def test_planck_agrees_with_colour_science(temperature_k):
    # Reference library: colour.colorimetry.planck_law (spectral radiance, W sr^-1 m^-3), given
    # the CODATA 2018 constants explicitly (its defaults are rounded to 7 digits).
    wavelengths = np.linspace(360e-9, 830e-9, 48)
    ours = radiation.spectral_radiance(wavelengths, temperature_k)
    reference = colour.colorimetry.planck_law(
        wavelengths,
        temperature_k,
        c1=radiation.FIRST_RADIATION_C1,
        c2=radiation.SECOND_RADIATION_C2,
    )
    np.testing.assert_allclose(ours, reference, rtol=1e-6)


def test_stefan_boltzmann_is_integral_of_planck():
    # Stefan-Boltzmann law: pi * integral of L(lambda, T) d(lambda) = sigma T^4.
    wavelengths = np.geomspace(50e-9, 2e-3, 400000)
    integral = np.pi * np.trapezoid(radiation.spectral_radiance(wavelengths, 1200.0), wavelengths)
    assert integral == pytest.approx(float(radiation.radiant_exitance(1200.0)), rel=1e-4)


@pytest.mark.parametrize("bad", [0.0, -10.0])
def test_rejects_non_positive_temperature(bad):
    with pytest.raises(ValueError):
        radiation.spectral_radiance(500e-9, bad)
