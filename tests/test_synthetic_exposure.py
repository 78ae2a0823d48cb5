"""The renderer's exposure and processing options against ISO 12232, Exif 2.32, DNG and colour-science.

Hand-worked photos follow ISO 12232:2019 standard output sensitivity (SOS): a focal-plane
exposure H = 10 / S lux s gives linear output 0.18, with H = q L t / N^2 and q = 0.65 (the
standard's value for a typical lens), so the linear output luminance is 0.018 S q L t / N^2.
Scene luminance is L = 683 lm/W x CIE Y of the spectral radiance (SI definition of the
candela), here integrated by colour-science, the reference library.
"""

import io

import colour
import numpy as np
import pytest
import rawpy

from glowtemp.physics.colourspaces import SRGB
from glowtemp.images.photo import load_photo
from glowtemp.render.synthetic import (
    SyntheticInputError,
    encode_jpeg,
    encode_png,
    render_light_photo,
    render_photo,
    saturation_matrix,
    tone_curve_encode,
    tone_curve_linear_max,
)
from glowtemp.render.synthetic_camera import CAMERAS, colour_matrix, ideal_camera, preset_gains
from glowtemp.render.synthetic_exposure import HANDHELD_LONGEST_S, ISO_LADDER, SHUTTER_LADDER_S
from glowtemp.render.synthetic_raw import BLACK_LEVEL, WHITE_LEVEL, encode_dng, render_raw

pytestmark = pytest.mark.filterwarnings("ignore::colour.utilities.ColourRuntimeWarning")

CMFS = colour.MSDS_CMFS["CIE 1931 2 Degree Standard Observer"]
SRGB_CS = colour.RGB_COLOURSPACES["sRGB"]
NIKON = CAMERAS["Nikon 5100 (NPL)"]
SIZE = (64, 48)
Q = 0.65  # ISO 12232:2019, typical lens


def blackbody_xyz_w(temperature_k):
    """CIE XYZ of Planck radiance in W sr^-1 m^-2 (Y weighted by y-bar), by colour-science.

    sd_blackbody holds spectral radiance per nanometre (planck_law in W sr^-1 m^-3 times
    1e-9), so sd_to_XYZ with k = 1 on its 1 nm grid sums L_lambda y-bar d-lambda directly.
    """
    sd = colour.sd_blackbody(temperature_k, CMFS.shape)
    return colour.sd_to_XYZ(sd, CMFS, k=1, method="Integration")


def sos_output(luminance, time_s, f_number, iso):
    """ISO 12232:2019: 0.18 * H / (10 / S) with H = q L t / N^2."""
    return 0.18 * (Q * luminance * time_s / f_number**2) / (10 / iso)


def linear_means(data, region=None):
    """Mean linear sRGB of a decoded file's pixels (colour-science's IEC 61966-2-1 decoding)."""
    photo = load_photo(data)
    codes = photo.codes if region is None else photo.codes[region]
    return colour.cctf_decoding(codes.reshape(-1, 3) / 255, function="sRGB").mean(axis=0), photo


def quantisation_bounds(linear):
    """Linear values half a code either side of the code that encodes ``linear`` (IEC 61966-2-1)."""
    code = np.rint(255 * colour.cctf_encoding(np.asarray(linear), function="sRGB"))
    return (colour.cctf_decoding(np.clip(code - 1.5, 0, 255) / 255, function="sRGB"),
            colour.cctf_decoding(np.clip(code + 1.5, 0, 255) / 255, function="sRGB"))


# --- hand-worked photos ---------------------------------------------------------------------


def test_hand_worked_1000_c_blackbody_through_the_ideal_camera():
    # 1000 °C = 1273.15 K, emissivity 1. colour-science: Y = 0.6420 W sr^-1 m^-2, so
    # L = 683 x 0.6420 = 438.5 cd/m^2. Manual 1/250 s, f/4, ISO 100:
    # H = 0.65 x 438.5 x (1/250) / 4^2 = 0.07126 lux s; SOS: 10/100 = 0.1 lux s gives 0.18,
    # so Y_out = 0.18 x 0.07126 / 0.1 = 0.1283. The ideal camera (CIE 1931 CMFs, identity
    # matrix, gains 1) outputs XYZ scaled to that Y; sRGB linear = M_XYZ->sRGB XYZ_out, blue
    # clipped at 0: red about 0.483, green about 0.037, blue 0.
    xyz = blackbody_xyz_w(1273.15)
    luminance = 683 * xyz[1]
    assert luminance == pytest.approx(438.5, rel=1e-3)
    y_out = sos_output(luminance, 1 / 250, 4.0, 100)
    assert y_out == pytest.approx(0.1283, rel=1e-3)
    expected = np.clip(SRGB_CS.matrix_XYZ_to_RGB @ (xyz * y_out / xyz[1]), 0, None)
    assert expected[0] == pytest.approx(0.483, abs=0.001) and expected[2] == 0

    rendered = render_photo(1273.15, camera=ideal_camera(), scene="uniform", size=SIZE, white_balance=(1, 1, 1),
                            exposure_time_s=1 / 250, f_number=4, iso=100, noise=False)
    means, photo = linear_means(encode_jpeg(rendered, quality=95))
    # Noise off; a flat JPEG keeps each code within 1 of the rendered one: +-1.5 codes of slack.
    low, high = quantisation_bounds(expected)
    assert np.all((low <= means) & (means <= high))
    meta = photo.metadata  # Exif 2.32 tags read back
    assert (meta.exposure_time_s, meta.f_number, meta.iso) == (pytest.approx(1 / 250), pytest.approx(4.0), 100)
    assert meta.sensitivity_type == 1 and meta.standard_output_sensitivity == 100  # 1: SOS
    assert meta.exposure_bias_ev == 0 and meta.custom_rendered == 0


def test_hand_worked_900_c_grey_body_with_the_daylight_preset_and_noise():
    # 900 °C = 1173.15 K, emissivity 0.5. colour-science: Y = 0.12936, so
    # L = 0.5 x 683 x 0.12936 = 44.18 cd/m^2. Manual 1/125 s, f/2.8, ISO 100:
    # H = 0.65 x 44.18 / 125 / 2.8^2 = 0.02930 lux s; Y_out = 0.18 x 0.02930 / 0.1 = 0.05274.
    # The ideal camera's daylight preset multiplies X and Z by Y/X and Y/Z of CIE D55 (green
    # gain 1, so Y_out is unchanged); sRGB linear = M_XYZ->sRGB diag(g) XYZ_out, clipped at 0.
    xyz = 0.5 * blackbody_xyz_w(1173.15)
    luminance = 683 * xyz[1]
    assert luminance == pytest.approx(44.18, rel=1e-3)
    y_out = sos_output(luminance, 1 / 125, 2.8, 100)
    assert y_out == pytest.approx(0.05274, rel=1e-3)
    d55 = colour.sd_to_XYZ(colour.SDS_ILLUMINANTS["D55"], CMFS, k=1, method="Integration")
    gains = d55[1] / d55
    expected = np.clip(SRGB_CS.matrix_XYZ_to_RGB @ (gains * xyz * y_out / xyz[1]), 0, None)

    rendered = render_photo(1173.15, camera=ideal_camera(), scene="uniform", size=SIZE, emissivity=0.5,
                            exposure_time_s=1 / 125, f_number=2.8, iso=100, seed=3)
    assert np.allclose(rendered.gains, gains, rtol=1e-3)
    means, _ = linear_means(encode_png(rendered))
    # Shot noise at ISO 100 (6000 e- full well) averages out over 3072 pixels to well under
    # 1 % of the red level; quantisation adds under 1 %.
    assert means[0] == pytest.approx(expected[0], rel=0.02)


def test_auto_exposure_of_a_daylight_card_agrees_with_its_exif():
    # A grey card lit by CIE D55 at 1000 cd/m^2, Nikon D5100 (NPL) sensitivities, daylight
    # preset: the matrix keeps the D55 white, so the file is neutral at the SOS level of the
    # settings its EXIF reads back: 0.018 S q L t / N^2.
    d55 = colour.SDS_ILLUMINANTS["D55"]
    rendered = render_light_photo(d55.wavelengths, d55.values, camera=NIKON, scene="uniform", size=SIZE,
                                  luminance_cd_m2=1000.0, noise=False)
    means, photo = linear_means(encode_jpeg(rendered, quality=95))
    meta = photo.metadata
    assert meta.exposure_time_s in [float(t) for t in SHUTTER_LADDER_S] and meta.iso in ISO_LADDER
    assert meta.exposure_time_s <= HANDHELD_LONGEST_S  # a hand-held time
    expected = sos_output(1000.0, meta.exposure_time_s, meta.f_number, meta.iso)
    low, high = quantisation_bounds(expected)
    assert np.all((low <= means) & (means <= high))


# --- exposure choices -----------------------------------------------------------------------


def exposure_factor(rendered):
    return rendered.iso * rendered.exposure_time_s / rendered.f_number**2


def test_plus_one_ev_doubles_the_linear_level():
    # Auto exposure aims at 75 % of code, so +1 EV from there clips: compare -1 EV with 0 EV.
    d55 = colour.SDS_ILLUMINANTS["D55"]
    options = dict(camera=NIKON, scene="uniform", size=SIZE, luminance_cd_m2=200.0, noise=False)
    normal = render_light_photo(d55.wavelengths, d55.values, exposure_compensation_ev=-1.0, **options)
    brighter = render_light_photo(d55.wavelengths, d55.values, **options)
    level_normal, photo = linear_means(encode_png(normal))
    level_brighter, _ = linear_means(encode_png(brighter))
    assert photo.metadata.exposure_bias_ev == -1.0  # ExposureBiasValue, Exif 2.32
    # Pixels follow the settings written (SOS), and the settings moved by 1 EV, to within the
    # rounding of marked ladder values (1/125 s is really 2^-7 s = 1/128 s, ...).
    factor = exposure_factor(brighter) / exposure_factor(normal)
    assert level_brighter[1] / level_normal[1] == pytest.approx(factor, rel=0.01)
    assert factor == pytest.approx(2.0, rel=0.1)
    assert level_brighter.max() < 0.9  # below clipping


def test_departure_scales_the_output_in_manual_and_the_settings_in_auto():
    manual = dict(camera=NIKON, scene="uniform", size=SIZE, exposure_time_s=1 / 500, f_number=2.0, iso=100,
                  noise=False)
    nominal = render_photo(1273.15, **manual)
    weak = render_photo(1273.15, sensitivity_departure=0.5, **manual)
    assert weak.departure == 0.5 and weak.exposure == pytest.approx(nominal.exposure / 2)
    red_nominal = linear_means(encode_png(nominal))[0][0]
    red_weak = linear_means(encode_png(weak))[0][0]
    assert red_weak / red_nominal == pytest.approx(0.5, rel=0.02)  # half a code at these levels
    auto = dict(camera=NIKON, scene="uniform", size=SIZE, noise=False)
    claimed = exposure_factor(render_photo(1273.15, sensitivity_departure=0.5, **auto)) / exposure_factor(
        render_photo(1273.15, **auto))
    assert abs(np.log2(claimed / 2)) <= 0.42  # the meter sees the weak output and gives 1 EV more


def test_dim_glow_uses_high_iso_by_hand_and_long_times_on_a_tripod():
    # Phone-like program: lowest ISO allowing 1/30 s or shorter by hand; on a tripod, ISO 50.
    hand = render_photo(973.15, camera=NIKON, size=SIZE, noise=False)
    tripod = render_photo(973.15, camera=NIKON, size=SIZE, noise=False, tripod=True)
    assert hand.exposure_time_s <= 1 / 30 and hand.iso > 400
    assert tripod.iso == 50 and tripod.exposure_time_s > 1 / 30
    assert abs(np.log2(exposure_factor(hand) / exposure_factor(tripod))) <= 0.42


def test_bright_glow_stops_the_lens_down_and_a_fixed_aperture_clips():
    stopped = render_photo(1873.15, camera=NIKON, size=SIZE, noise=False)  # 1600 °C
    assert stopped.f_number > 4 and stopped.iso == 50
    fixed = render_photo(1873.15, camera=NIKON, size=SIZE, noise=False, f_number=1.8)
    assert fixed.exposure_time_s == 1 / 8000
    mask = fixed.region.mask(SIZE[1], SIZE[0])
    assert np.all(fixed.codes[mask][:, 0] == 255)  # an f/1.8 phone cannot shorten enough


def test_dng_follows_the_same_sos_relation_through_baseline_exposure():
    # DNG 1.6: a raw converter multiplies linear data by 2^BaselineExposure. For the ideal
    # camera (raw = XYZ) the normalised green is Y, so green x 2^B must be the SOS output of
    # the 1000 °C hand-worked photo above: 0.1283 at 1/250 s, f/4, ISO 100.
    raw = render_raw(1273.15, camera=ideal_camera(), scene="uniform", size=SIZE, exposure_time_s=1 / 250,
                     f_number=4, iso=100, noise=False)
    data = encode_dng(raw)
    meta = load_photo(data).metadata
    assert meta.baseline_exposure_ev == pytest.approx(0.0, abs=1e-6)
    assert (meta.exposure_time_s, meta.f_number, meta.iso, meta.sensitivity_type) == (
        pytest.approx(1 / 250), pytest.approx(4.0), 100, 1)
    with rawpy.imread(io.BytesIO(data)) as image:  # LibRaw reads the CFA
        green = image.raw_image_visible[image.raw_colors_visible % 2 == 1].astype(float)
    normalised = (green.mean() - BLACK_LEVEL) / (WHITE_LEVEL - BLACK_LEVEL)
    expected = sos_output(683 * blackbody_xyz_w(1273.15)[1], 1 / 250, 4.0, 100)
    assert normalised * 2**meta.baseline_exposure_ev == pytest.approx(expected, rel=0.005)  # 12-bit codes


def test_a_measured_camera_s_baseline_exposure_is_one_value_for_every_exposure():
    # BaselineExposure moves the converter's zero point per camera model (DNG 1.6), so two
    # exposures of one camera carry the same value and their raw levels scale as S t / N^2.
    short = render_raw(1273.15, camera=NIKON, scene="uniform", size=SIZE, exposure_time_s=1 / 500, f_number=2,
                       iso=100, noise=False)
    long = render_raw(1273.15, camera=NIKON, scene="uniform", size=SIZE, exposure_time_s=1 / 250, f_number=2,
                      iso=100, noise=False)
    assert short.baseline_exposure_ev == long.baseline_exposure_ev
    assert (long.cfa.astype(float).mean() - BLACK_LEVEL) / (short.cfa.astype(float).mean() - BLACK_LEVEL) == (
        pytest.approx(2.0, rel=0.005))


# --- processing options ---------------------------------------------------------------------


LINEAR = np.linspace(0.0, 1.0, 201)


@pytest.mark.parametrize("gamma", [1.8, 2.2, 2.6])
def test_power_tone_curves_are_plain_power_laws(gamma):
    # colour-science's gamma_function: encoded = linear ** (1 / gamma)
    expected = colour.gamma_function(LINEAR, 1 / gamma)
    np.testing.assert_allclose(tone_curve_encode(LINEAR, f"power-{gamma}"), expected, atol=1e-12)


def test_power_curve_file_codes_follow_the_power_law():
    rendered = render_photo(1273.15, camera=ideal_camera(), scene="uniform", size=SIZE, white_balance=(1, 1, 1),
                            exposure_time_s=1 / 250, f_number=4, iso=100, noise=False, tone_curve="power-2.2")
    srgb = render_photo(1273.15, camera=ideal_camera(), scene="uniform", size=SIZE, white_balance=(1, 1, 1),
                        exposure_time_s=1 / 250, f_number=4, iso=100, noise=False)
    red_linear = colour.cctf_decoding(srgb.codes[24, 32, 0] / 255, function="sRGB")
    assert rendered.codes[24, 32, 0] == pytest.approx(255 * red_linear ** (1 / 2.2), abs=2)


def test_srgb_shoulder_is_srgb_below_0_8_and_rolls_off_smoothly_to_1_above_linear_1():
    srgb = colour.cctf_encoding(LINEAR, function="sRGB")  # IEC 61966-2-1 via colour-science
    shoulder = tone_curve_encode(LINEAR, "srgb-shoulder")
    below = srgb <= 0.8
    np.testing.assert_allclose(shoulder[below], srgb[below], atol=1e-12)
    assert np.all(shoulder[~below] < srgb[~below])  # highlights compressed
    top = tone_curve_linear_max("srgb-shoulder")
    assert top == pytest.approx(colour.cctf_decoding(1.2, function="sRGB"), rel=1e-9)  # about 1.517
    assert top > 1
    x = np.linspace(0.0, top, 20001)
    v = tone_curve_encode(x, "srgb-shoulder")
    assert v[-1] == pytest.approx(1.0) and np.all(np.diff(v) >= 0)
    slopes = np.diff(v) / np.diff(x)
    knee = np.searchsorted(v, 0.8)
    assert slopes[knee + 1] == pytest.approx(slopes[knee - 2], rel=0.01)  # no kink at the knee
    assert slopes[-1] < 0.01 * slopes[knee]  # flat at the top
    assert tone_curve_encode(1.0, "srgb-shoulder") == pytest.approx(0.95)  # 1 - 0.2^2 / 0.8


def test_saturation_boost_moves_colour_away_from_luminance_and_keeps_luminance():
    # A 3500 K lamp (colour-science's Planck spectrum) under the daylight preset: orange, no
    # channel clipped. With s = 1.4 each linear channel must be Y + 1.4 (c - Y), Y from
    # colour-science's sRGB luminance row; tolerance: the 8-bit quantisation.
    lamp = colour.sd_blackbody(3500, CMFS.shape)
    options = dict(camera=NIKON, scene="uniform", size=SIZE, noise=False, luminance_cd_m2=1000.0,
                   exposure_time_s=1 / 1000, f_number=2.8, iso=100)
    plain, _ = linear_means(encode_png(render_light_photo(lamp.wavelengths, lamp.values, **options)))
    boosted, _ = linear_means(encode_png(render_light_photo(lamp.wavelengths, lamp.values, saturation=1.4,
                                                            **options)))
    y_row = SRGB_CS.matrix_RGB_to_XYZ[1]
    y = y_row @ plain
    expected = y + 1.4 * (plain - y)
    assert np.all(expected > 0)
    np.testing.assert_allclose(boosted, expected, rtol=0.02, atol=0.002)
    assert y_row @ boosted == pytest.approx(y, rel=0.01)
    grey = saturation_matrix(SRGB, 0.0) @ np.array([0.5, 0.2, 0.1])  # s = 0: the pixel's luminance
    np.testing.assert_allclose(grey, y_row @ [0.5, 0.2, 0.1], rtol=1e-3)


def test_white_balance_error_multiplies_the_preset_gains():
    # Ideal camera: output = M_XYZ->sRGB diag(g * e) XYZ; a D55 light is neutral with g alone.
    d55 = colour.SDS_ILLUMINANTS["D55"]
    error = (1.03, 1.0, 0.97)
    options = dict(camera=ideal_camera(), scene="uniform", size=SIZE, noise=False, luminance_cd_m2=2000.0,
                   exposure_time_s=1 / 1000, f_number=2.8, iso=100)
    rendered = render_light_photo(d55.wavelengths, d55.values, white_balance_error=error, **options)
    gains = preset_gains(ideal_camera(), "daylight") * error
    assert np.allclose(rendered.gains, gains)
    xyz = colour.sd_to_XYZ(d55, CMFS, k=1, method="Integration")
    expected = SRGB_CS.matrix_XYZ_to_RGB @ (gains * xyz)
    means, _ = linear_means(encode_png(rendered))
    ratios = means / means[1]
    np.testing.assert_allclose(ratios, expected / expected[1], rtol=0.01)
    assert ratios[0] > 1.02 and ratios[2] < 0.98  # no longer neutral


def test_a_supplied_colour_matrix_is_used_and_calibrated():
    options = dict(camera=NIKON, scene="uniform", size=SIZE, noise=False, exposure_time_s=1 / 500, f_number=2,
                   iso=100)
    default = render_photo(1273.15, **options)
    same = render_photo(1273.15, colour_matrix=colour_matrix(NIKON), **options)
    assert np.array_equal(default.codes, same.codes)
    # A matrix twice as strong is a different pipeline; its ISO calibration on the daylight white
    # halves the raw scale, so the same settings give the same output.
    doubled = render_photo(1273.15, colour_matrix=2 * colour_matrix(NIKON), **options)
    assert doubled.exposure == pytest.approx(default.exposure / 2)
    assert np.all(np.abs(doubled.codes.astype(int) - default.codes) <= 1)
    # A different matrix (no white preserved: rows scaled) changes the colour.
    skewed = render_photo(1273.15, colour_matrix=np.diag([1.0, 1.1, 1.0]) @ colour_matrix(NIKON), **options)
    assert not np.array_equal(skewed.codes, default.codes)


@pytest.mark.parametrize(
    ("kwargs", "words"),
    [
        ({"saturation": -1}, "saturation"),
        ({"white_balance_error": (1.0, 0.0, 1.0)}, "white_balance_error"),
        ({"colour_matrix": np.eye(2)}, "colour_matrix"),
        ({"exposure_compensation_ev": 9}, "compensation"),
        ({"f_number": 0.2}, "f_number"),
        ({"iso": 0}, "iso"),
        ({"exposure_time_s": -1}, "exposure_time_s"),
        ({"sensitivity_departure": 0}, "sensitivity_departure"),
        ({"exposure_time_s": 0.01, "f_number": 2, "iso": 100, "exposure_compensation_ev": 1}, "compensation"),
        ({"exposure_time_s": 0.01, "exposure": 1.0}, "not both"),
    ],
)
def test_bad_exposure_and_processing_input_gets_a_clear_error(kwargs, words):
    with pytest.raises(SyntheticInputError, match=words):
        render_photo(1200, camera=NIKON, size=(32, 24), **kwargs)
