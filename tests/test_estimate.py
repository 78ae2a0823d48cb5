"""The estimator on colours computed independently with colour-science."""

import colour
import numpy as np
import pytest

from glowtemp.physics import colourspaces
from glowtemp.estimation.estimate import UNCALIBRATED, CameraTerm, estimate_temperature

IDEAL = UNCALIBRATED  # the ideal colorimetric camera with fixed spreads (no camera population)

CMFS = colour.MSDS_CMFS["CIE 1931 2 Degree Standard Observer"]


def reference_linear_rgb(temperature_k, space_name="sRGB"):
    """Blackbody linear RGB by colour-science (sd_blackbody, sd_to_XYZ, XYZ_to_RGB), clipped at 0
    as a camera clips out-of-gamut components."""
    xyz = colour.sd_to_XYZ(colour.sd_blackbody(temperature_k, CMFS.shape), CMFS, method="Integration")
    rgb = colour.XYZ_to_RGB(xyz / xyz[1], space_name, apply_cctf_encoding=False)
    return np.clip(rgb, 0.0, None)


@pytest.mark.parametrize("temperature_k", [1200.0, 1400.0, 1600.0, 1850.0])
def test_recovers_reference_blackbody_colour(temperature_k):
    # Reference library: colour-science renders the blackbody; the band must hold the truth and
    # the centre lie close to it for an ideal colorimetric camera.
    rgb = reference_linear_rgb(temperature_k)
    result = estimate_temperature(rgb / rgb[0] * 0.5, [0.001] * 3, camera=IDEAL)
    assert result.status == "ok"
    low, high = result.interval_95_k
    assert low < temperature_k < high
    assert result.temperature_k == pytest.approx(temperature_k, rel=0.01)
    assert result.interval_68_k[0] > low and result.interval_68_k[1] < high


def test_emissivity_and_exposure_cancel_in_the_ratio():
    # Planck's law for a grey body: spectral radiance eps * B(lambda, T) with eps independent of
    # wavelength, so emissivity (and exposure) scale all channels alike and cancel in the ratios.
    rgb = reference_linear_rgb(1300.0)
    bright = estimate_temperature(rgb / rgb[0] * 0.8, [0.001] * 3, camera=IDEAL)
    dim = estimate_temperature(rgb / rgb[0] * 0.8 * 0.35, [0.001 * 0.35] * 3, camera=IDEAL)
    assert bright.temperature_k == pytest.approx(dim.temperature_k, abs=1.0)


def test_srgb_below_its_green_floor_gives_only_a_ceiling():
    # In linear sRGB a blackbody's green is negative below about 960 K (IEC 61966-2-1 matrix
    # applied to CIE 1931 XYZ), so an sRGB photo can only bound the temperature from above.
    rgb = reference_linear_rgb(900.0)
    result = estimate_temperature(rgb / rgb[0] * 0.5, [0.001] * 3, camera=IDEAL)
    assert result.status == "upper-bound"
    assert 900.0 < result.interval_95_k[1] < 1050.0


def test_display_p3_resolves_1000_kelvin_where_srgb_gives_only_a_ceiling():
    # Display P3 (SMPTE EG 432-1 primaries) records a blackbody's green down to about 815 K,
    # sRGB only above about 960 K (IEC 61966-2-1), so at 1000 K only P3 carries enough green.
    p3 = reference_linear_rgb(1000.0, "Display P3")
    result = estimate_temperature(p3 / p3[0] * 0.5, [0.0005] * 3, space=colourspaces.DISPLAY_P3, camera=IDEAL)
    assert result.status == "ok"
    assert result.interval_95_k[0] < 1000.0 < result.interval_95_k[1]
    srgb = reference_linear_rgb(1000.0, "sRGB")
    assert estimate_temperature(srgb / srgb[0] * 0.5, [0.0005] * 3, camera=IDEAL).status == "upper-bound"


@pytest.mark.parametrize("rgb", [[0.3, 0.8, 0.2], [0.1, 0.3, 0.9], [0.6, 0.1, 0.7]], ids=["green", "blue", "magenta"])
def test_led_colours_are_refused_as_not_glow(rgb):
    # Colours no hot body makes: colour-science puts every blackbody below 6000 K red-heavy in
    # sRGB with blue the weakest channel; these LEDs have another channel above red.
    result = estimate_temperature(rgb, [0.001] * 3)
    assert result.status == "not-glow" and result.temperature_k is None
    assert result.refusal == "not-glow-colour"


def test_light_without_any_red_is_refused_as_not_glow():
    # Found by Hypothesis (tests/test_region_properties.py): a region of pure green pixels, too
    # noisy for the "clearly above red" test, once divided by a red of zero. Every blackbody
    # below 6000 K is red-heavy (the test above, after colour-science), so no red is no glow.
    result = estimate_temperature([0.0, 0.32, 0.0], [8.8e-5, 0.27, 8.8e-5])
    assert result.status == "not-glow" and result.refusal == "not-glow-colour"


@pytest.mark.parametrize("temperature_k", [2856.0, 4000.0, 6504.0], ids=["illuminant A", "4000 K", "D65-like"])
def test_lamp_and_daylight_colours_are_refused_as_whiter_than_glow(temperature_k):
    # CIE 015:2018: illuminant A is a 2856 K Planckian lamp; daylight is near 6500 K. Work here
    # tops out near 1600 °C (1873 K, common practice), so these are lamps or daylight, never glow.
    rgb = reference_linear_rgb(temperature_k)
    result = estimate_temperature(rgb / rgb.max() * 0.6, [0.001] * 3)
    assert result.status == "not-glow" and result.refusal == "daylight-or-lamp"


def test_noisier_data_give_a_wider_band_never_a_narrower_one():
    rgb = reference_linear_rgb(1250.0)
    widths = []
    for error in (0.0005, 0.005, 0.02):
        result = estimate_temperature(rgb / rgb[0] * 0.5, [error] * 3, camera=IDEAL)
        widths.append(result.interval_95_k[1] - result.interval_95_k[0])
    assert widths[0] < widths[1] < widths[2]


def test_calibrated_camera_term_narrows_the_band():
    rgb = reference_linear_rgb(1250.0)
    loose = estimate_temperature(rgb / rgb[0] * 0.5, [0.0005] * 3, camera=IDEAL)
    tight = estimate_temperature(rgb / rgb[0] * 0.5, [0.0005] * 3, camera=CameraTerm(0.01, 0.001))
    assert np.diff(tight.interval_95_k)[0] < 0.5 * np.diff(loose.interval_95_k)[0]


def test_no_red_means_no_estimate():
    assert estimate_temperature([0.0, 0.0, 0.0], [0.01] * 3).status == "no-data"
    assert estimate_temperature([np.nan, 0.1, 0.1], [0.01] * 3).status == "no-data"


def test_the_camera_population_is_wider_than_one_known_camera_and_holds_the_ideal_one():
    # The population's members disagree (rawtoaces' measured sensors, several matrix fits and
    # tone curves), so its band is wider than the ideal camera's, and still holds the truth.
    rgb = reference_linear_rgb(1400.0)
    ideal = estimate_temperature(rgb / rgb[0] * 0.5, [0.0005] * 3, camera=IDEAL)
    population = estimate_temperature(rgb / rgb[0] * 0.5, [0.0005] * 3)
    assert np.diff(population.interval_95_k)[0] > np.diff(ideal.interval_95_k)[0]
    assert population.interval_95_k[0] < 1400.0 < population.interval_95_k[1]
