"""The brightness channel: ISO 12232 exposure, emissivity priors, and its likelihood."""

import math

import colour
import numpy as np
import pytest

from glowtemp.estimation import brightness
from glowtemp.physics.colourspaces import SRGB
from glowtemp.estimation.estimate import GRID_K, UNCALIBRATED, brightness_observation, estimate_temperature
from glowtemp.images.decoded import PhotoMetadata


def test_exposure_scale_is_iso_12232_standard_output_sensitivity_worked_by_hand():
    # ISO 12232:2019 SOS: H = 10/S lux s gives linear output 0.18; H = q L t / N^2, q = 0.65.
    # ISO 100, 1/60 s, f/4:  output per cd/m^2 = 0.18 * (100/10) * 0.65 * (1/60) / 16
    #                                          = 0.18 * 10 * 0.65 / 960 = 1.21875e-3
    # and per unit of XYZ-weighted radiance (W sr^-1 m^-2) times 683 lm/W: 0.83240625.
    meta = PhotoMetadata(exposure_time_s=1 / 60, f_number=4.0, iso=100)
    exposure, reason = brightness.exposure_from(meta, raw=False)
    assert reason is None
    assert math.exp(exposure.log_scale) == pytest.approx(0.83240625, rel=1e-9)


def test_a_dng_brings_raw_levels_to_scale_by_its_baseline_exposure():
    # DNG 1.6: a converter multiplies linear raw by 2^BaselineExposure; +1 EV doubles the scale.
    plain = PhotoMetadata(exposure_time_s=0.5, f_number=8.0, iso=200)
    meta = type("Meta", (), {**plain.__dict__, "baseline_exposure_ev": 1.0, "custom_rendered": None})()
    with_baseline, _ = brightness.exposure_from(meta, raw=True)
    without, _ = brightness.exposure_from(plain, raw=True)
    assert with_baseline.log_scale - without.log_scale == pytest.approx(math.log(2))


@pytest.mark.parametrize("fields, named", [
    ({"exposure_time_s": None, "f_number": 2.0, "iso": 100}, "ExposureTime"),
    ({"exposure_time_s": 0.01, "f_number": None, "iso": 100}, "FNumber"),
    ({"exposure_time_s": 0.01, "f_number": 2.0, "iso": None}, "PhotographicSensitivity"),
])
def test_missing_exposure_fields_are_named(fields, named):
    exposure, reason = brightness.exposure_from(PhotoMetadata(**fields), raw=False)
    assert exposure is None and named in reason


def test_a_photo_processed_from_several_frames_gets_no_brightness():
    # Exif 2.32 CustomRendered: 0 normal process, anything else a custom (e.g. HDR) rendering.
    meta = type("Meta", (), {"exposure_time_s": 0.01, "f_number": 2.0, "iso": 100, "custom_rendered": 2})()
    exposure, reason = brightness.exposure_from(meta, raw=False)
    assert exposure is None and "CustomRendered" in reason


def test_emissivity_priors_name_their_source_and_refuse_unknown_scenes():
    for low, high, source in brightness.SCENES.values():
        assert 0 < low < high <= 1 and source
    assert brightness.scene_bounds("kiln") == (0.9, 1.0)
    with pytest.raises(brightness.SceneError, match="Unknown scene"):
        brightness.scene_bounds("lava")


@pytest.mark.parametrize("residual", [-4.0, -1.5, -0.8, -0.3, 0.0, 0.2, 1.0, 3.0])
def test_likelihood_is_a_normal_convolved_with_a_log_uniform_emissivity(residual):
    # Reference: direct numerical integration of the convolution over ln(emissivity).
    sigma, bounds = 0.35, (0.2, 1.0)
    grid = np.linspace(math.log(bounds[0]), math.log(bounds[1]), 40001)
    density = np.exp(-0.5 * ((residual - grid) / sigma) ** 2) / (sigma * math.sqrt(2 * math.pi))
    expected = math.log(np.trapezoid(density, grid) / (grid[-1] - grid[0]))
    assert float(brightness.log_likelihood(residual, sigma, bounds)) == pytest.approx(expected, abs=0.02 + 0.01 * abs(expected))


def test_ideal_camera_red_follows_planck_through_colour_science():
    # Reference library: colour-science's blackbody (CIE 015 integration, 683 lm/W) in sRGB.
    # The ideal camera at ISO 100, 1/8 s, f/2.8 records R = 0.018 S q t / N^2 * L_red.
    meta = PhotoMetadata(exposure_time_s=1 / 8, f_number=2.8, iso=100)
    exposure, _ = brightness.exposure_from(meta, raw=False)
    t = 1100.0
    sd = colour.sd_blackbody(t, colour.SpectralShape(360, 830, 1))
    xyz = colour.sd_to_XYZ(sd, method="Integration", k=683)  # cd/m^2 (sd in W sr^-1 m^-2 nm^-1)
    red = colour.XYZ_to_RGB(xyz, "sRGB")[0]
    expected = 0.018 * 100 * 0.65 * (1 / 8) / 2.8**2 * red
    observation = brightness_observation(0.5, 0.001, exposure, "kiln", SRGB)
    index = int(np.searchsorted(GRID_K, t))
    predicted = math.exp(exposure.log_scale) * observation.ideal_red[index]
    assert predicted == pytest.approx(expected, rel=0.01)


def test_brightness_alone_pins_a_dull_red_heat_where_colour_gives_only_a_ceiling():
    # 700 °C in sRGB: colour-science puts the blackbody's linear green below zero, so colour only
    # gives a ceiling; the red level at a known exposure gives the heat (Wien: d ln L/dT =
    # c2/(lambda T^2), about 2 % per kelvin here, so sigma 0.35 in ln is about 17 K).
    t = 973.15
    meta = PhotoMetadata(exposure_time_s=1 / 8, f_number=2.8, iso=200)
    exposure, _ = brightness.exposure_from(meta, raw=False)
    xyz = colour.sd_to_XYZ(colour.sd_blackbody(t, colour.SpectralShape(360, 830, 1)), method="Integration", k=1)
    rgb = np.clip(colour.XYZ_to_RGB(xyz, "sRGB"), 0, None) * math.exp(exposure.log_scale) * 0.95  # emissivity 0.95
    assert 0.05 < rgb[0] < 1.0
    colour_only = estimate_temperature(rgb, [1e-4] * 3, SRGB, UNCALIBRATED)
    assert colour_only.status == "upper-bound"
    observation = brightness_observation(rgb[0], 1e-4, exposure, "kiln", SRGB)
    fused = estimate_temperature(rgb, [1e-4] * 3, SRGB, UNCALIBRATED, brightness=observation)
    assert fused.status == "ok" and fused.channels == ("colour", "brightness")
    low, high = fused.interval_95_k
    assert low < t < high and high - low < 120
    assert fused.temperature_k == pytest.approx(t, abs=20)
