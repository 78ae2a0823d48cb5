"""Tests of the synthetic renderer against physics, CIE data, colour-science and LittleCMS."""

import io

import colour
import numpy as np
import pytest
from PIL import Image, ImageCms

from glowtemp.physics.colourspaces import DISPLAY_P3, SRGB
from glowtemp.physics.locus import blackbody_xyz, clipped_linear_rgb
from glowtemp.render.synthetic import (
    SyntheticInputError,
    encode_jpeg,
    encode_png,
    render_light_photo,
    render_photo,
    tone_curve_encode,
)
from glowtemp.render.synthetic_camera import (
    CAMERAS,
    camera_by_name,
    chart_training_data,
    colour_matrix,
    ideal_camera,
    parametric_camera,
    white_point_preserving_fit,
)

# colour-science warns when it trims or aligns spectral shapes; that is expected here.
pytestmark = pytest.mark.filterwarnings("ignore::colour.utilities.ColourRuntimeWarning")

SMALL = (32, 24)
NIKON = CAMERAS["Nikon 5100 (NPL)"]
# Auto exposure lands within half the widest gap of the marked 1/3-stop shutter series
# (1/8 s to 1/6 s: log2(8/6) = 0.415 stop; common practice camera markings).
LADDER_HALF_STEP_STOPS = 0.21


def decode(codes):
    """8-bit sRGB-encoded codes to linear light with colour-science's IEC 61966-2-1 decoding."""
    return colour.cctf_decoding(np.asarray(codes, dtype=float) / 255, function="sRGB")


def centre(rendered):
    height, width = rendered.codes.shape[:2]
    return rendered.codes[height // 2, width // 2].astype(int)


def ratio_bounds(codes, numerator, denominator):
    """The range of a linear colour ratio allowed by +-0.5 code of rounding in each channel."""
    low = decode(np.clip(codes - 0.5, 0, 255))
    high = decode(np.clip(codes + 0.5, 0, 255))
    return low[numerator] / high[denominator], high[numerator] / low[denominator]


def glow_ratio(rendered, channel=1):
    """Linear channel/red of the centre pixel."""
    linear = decode(centre(rendered))
    return linear[channel] / linear[0]


# --- grey body -------------------------------------------------------------------------------


@pytest.mark.parametrize("camera_name", list(CAMERAS))
def test_emissivity_scales_brightness_not_colour(camera_name):
    # Physics: a grey body's radiance is eps * Planck, so eps cancels in any colour ratio
    # (Kirchhoff's law with wavelength-independent emissivity).
    camera = CAMERAS[camera_name]
    black = render_photo(1800, camera=camera, scene="uniform", size=SMALL, noise=False)
    grey = render_photo(1800, camera=camera, scene="uniform", size=SMALL, noise=False,
                        emissivity=0.4, exposure=black.exposure)
    low, high = ratio_bounds(centre(grey), 1, 0)
    assert low <= glow_ratio(black) <= high
    red_ratio = decode(centre(grey))[0] / decode(centre(black))[0]
    assert red_ratio == pytest.approx(0.4, rel=0.02)
    # Auto exposure undoes a pure brightness change, up to the ladders' 1/3-stop steps.
    auto = render_photo(1800, camera=camera, scene="uniform", size=SMALL, noise=False, emissivity=0.4)
    assert abs(np.log2(auto.exposure * 0.4 / black.exposure)) <= LADDER_HALF_STEP_STOPS


# --- white balance and colour matrix ---------------------------------------------------------


def _illuminant(name):
    sd = colour.SDS_ILLUMINANTS[name]  # CIE 015:2018 illuminant tables via colour-science
    return sd.wavelengths, sd.values


@pytest.mark.parametrize("camera_name", list(CAMERAS))
@pytest.mark.parametrize(("preset", "illuminant"), [("daylight", "D55"), ("tungsten", "A")])
def test_white_balance_preset_makes_its_illuminant_neutral(camera_name, preset, illuminant):
    # CIE 015:2018: D55 (the daylight preset) and illuminant A (tungsten) reflected by a flat
    # white must come out neutral, R = G = B, after that preset's white balance.
    rendered = render_light_photo(*_illuminant(illuminant), camera=CAMERAS[camera_name],
                                  scene="uniform", size=SMALL, white_balance=preset, noise=False)
    red, green, blue = decode(centre(rendered))
    assert green / red == pytest.approx(1, abs=0.02)
    assert blue / red == pytest.approx(1, abs=0.02)


@pytest.mark.parametrize("camera_name", list(CAMERAS))
def test_daylight_preset_leaves_bluer_d65_light_blue(camera_name):
    # CIE 015:2018: D65 (about 6500 K) is bluer than D55 (about 5500 K), so under the D55
    # preset a D65-lit white has blue above red.
    rendered = render_light_photo(*_illuminant("D65"), camera=CAMERAS[camera_name],
                                  scene="uniform", size=SMALL, noise=False)
    red, _, blue = decode(centre(rendered))
    assert blue > 1.03 * red


@pytest.mark.parametrize("camera_name", list(CAMERAS))
def test_colour_matrix_reproduces_colorchecker(camera_name):
    # Reference: colour-science's own tristimulus integration (ASTM E308 method) of the
    # BabelColor Average ColorChecker under CIE D55, Bradford-adapted to D65; CIEDE2000 errors.
    camera = CAMERAS[camera_name]
    rgb, _, _, _ = chart_training_data(camera)
    estimate = rgb @ colour_matrix(camera).T
    cmfs = colour.MSDS_CMFS["CIE 1931 2 Degree Standard Observer"]
    d55 = colour.SDS_ILLUMINANTS["D55"]
    reference = np.array([colour.sd_to_XYZ(sd, cmfs, d55) for sd in colour.SDS_COLOURCHECKERS["BabelColor Average"].values()])
    white_d55 = colour.sd_to_XYZ(colour.sd_ones(d55.shape), cmfs, d55)
    white_d65 = colour.xy_to_XYZ(colour.CCS_ILLUMINANTS["CIE 1931 2 Degree Standard Observer"]["D65"])
    reference = colour.chromatic_adaptation(reference / white_d55[1], white_d55 / white_d55[1], white_d65,
                                            method="Von Kries", transform="Bradford")
    # Put the camera's estimate on the same scale: its white maps to the D65 white.
    white_estimate = chart_training_data(camera)[3]
    estimate = estimate / white_estimate[1]
    d65_xy = colour.XYZ_to_xy(white_d65)
    delta_e = colour.delta_E(colour.XYZ_to_Lab(reference, d65_xy), colour.XYZ_to_Lab(estimate, d65_xy),
                             method="CIE 2000")
    assert delta_e.mean() < 2.5  # a typical 3 x 3 camera matrix (common practice: mean dE00 of 1 to 3)
    assert delta_e.max() < 8


def test_white_point_preserving_fit_matches_colour_science_when_data_are_exactly_linear():
    # colour-science's unconstrained least-squares colour correction (Cheung 2004, 3 terms) must
    # agree with the constrained fit when a linear map fits the data and the white exactly.
    rng = np.random.default_rng(4)
    rgb = rng.uniform(0.05, 1, (24, 3))
    truth = np.array([[0.6, 0.3, 0.1], [0.2, 0.9, -0.1], [0.0, -0.2, 1.2]])
    xyz = rgb @ truth.T
    fitted = white_point_preserving_fit(rgb, xyz, np.ones(3), truth @ np.ones(3))
    reference = colour.characterisation.matrix_colour_correction(rgb, xyz, method="Cheung 2004", terms=3)
    np.testing.assert_allclose(fitted, reference, atol=1e-9)


def test_auto_white_balance_of_a_grey_scene_is_the_daylight_balance():
    # Grey world (Buchsbaum 1980): a frame that averages to the daylight illuminant's colour is
    # balanced exactly as the daylight preset balances it.
    d55 = _illuminant("D55")
    auto = render_light_photo(*d55, camera=NIKON, scene="uniform", size=SMALL, white_balance="auto", noise=False)
    preset = render_light_photo(*d55, camera=NIKON, scene="uniform", size=SMALL, noise=False)
    np.testing.assert_allclose(auto.gains, preset.gains, rtol=1e-4)  # float32 raw
    assert auto.white_balance == "auto" and preset.white_balance == "daylight"


# --- glow colour -----------------------------------------------------------------------------


@pytest.mark.parametrize("camera_name", list(CAMERAS))
def test_glow_gets_greener_with_temperature(camera_name):
    # Planck/Wien: the blackbody spectrum shifts to shorter wavelengths as T rises, so green/red
    # rises (heat colours, common practice: dull red -> orange -> yellow -> white).
    camera = CAMERAS[camera_name]
    ratios = [glow_ratio(render_photo(t, camera=camera, scene="uniform", size=SMALL, noise=False))
              for t in range(800, 2101, 100)]
    assert np.all(np.diff(ratios) >= 0)
    assert np.all(np.diff(ratios[4:]) > 0)  # strictly from 1200 K, where every camera sees green


def test_ideal_camera_blue_is_zero_below_about_1900_k_in_srgb():
    # colour-science (CIE 1931 2-degree integration, IEC 61966-2-1 matrix): blackbody blue is
    # negative in linear sRGB up to 1900 K (out of gamut) and clips to zero; above, it is kept.
    for t in (900, 1300, 1700, 1880):
        rendered = render_photo(t, camera=ideal_camera(), scene="uniform", size=SMALL,
                                white_balance=(1, 1, 1), noise=False)
        assert centre(rendered)[2] == 0
    rendered = render_photo(2100, camera=ideal_camera(), scene="uniform", size=SMALL,
                            white_balance=(1, 1, 1), noise=False)
    assert centre(rendered)[2] > 0


@pytest.mark.parametrize("camera_name", list(CAMERAS))
def test_camera_blue_stays_small_below_1500_k(camera_name):
    # Same physics for real sensors: their matrices leak a little, but blue stays a few per
    # cent of red in linear light.
    for t in (900, 1200, 1500):
        rendered = render_photo(t, camera=CAMERAS[camera_name], scene="uniform", size=SMALL, noise=False)
        assert glow_ratio(rendered, channel=2) < 0.05


@pytest.mark.parametrize("space", [SRGB, DISPLAY_P3])
@pytest.mark.parametrize("temperature_k", [900, 1000, 1250, 1600, 2200, 3000])
def test_ideal_camera_reproduces_the_locus(space, temperature_k):
    # An ideal colorimetric camera (CIE 1931 CMFs, identity matrix, unit gains) records the
    # blackbody's XYZ; the file must hold the locus's clipped linear RGB, encoded with the
    # IEC 61966-2-1 curve as implemented by colour-science, within one code of rounding.
    # Above 2000 K no exposure ladder reaches the luminance (3000 K: about 3e7 cd/m^2, Planck's
    # law), so those shots go through a dark filter the EXIF does not know (departure 1e-3);
    # a tripod lets the dim 900 K shot expose for longer than 1/30 s.
    departure = 1e-3 if temperature_k > 2000 else 1.0
    rendered = render_photo(temperature_k, camera=ideal_camera(), scene="uniform", size=SMALL, tripod=True,
                            white_balance=(1, 1, 1), output_space=space, noise=False,
                            sensitivity_departure=departure)
    linear = np.clip(rendered.exposure * clipped_linear_rgb(blackbody_xyz(temperature_k)[0], space), 0, 1)
    expected = np.rint(255 * colour.cctf_encoding(linear, function="sRGB"))
    assert np.all(np.abs(centre(rendered) - expected) <= 1)
    # auto exposure: the strongest channel near 75 % of full code, within the ladders' step
    target = colour.cctf_decoding(0.75, function="sRGB")
    assert abs(np.log2(decode(centre(rendered)).max() / target)) <= LADDER_HALF_STEP_STOPS


def test_display_p3_keeps_more_green_than_srgb():
    # Display P3's red primary (0.680, 0.320) is more saturated than sRGB's (0.64, 0.33), so less of
    # the glow is clipped and green/red is higher (SMPTE EG 432-1 vs IEC 61966-2-1 primaries).
    srgb = render_photo(1100, camera=ideal_camera(), scene="uniform", size=SMALL, white_balance=(1, 1, 1), noise=False)
    p3 = render_photo(1100, camera=ideal_camera(), scene="uniform", size=SMALL, white_balance=(1, 1, 1),
                      noise=False, output_space=DISPLAY_P3)
    assert glow_ratio(p3) > 2 * glow_ratio(srgb)


def test_overexposure_clips_red_and_auto_white_balance_looks_hotter():
    # An 8-bit file saturates at code 255 (IEC 61966-2-1 encodes [0, 1] to 0-255); grey-world
    # auto white balance (Buchsbaum 1980) scales the channels towards equal means, so it pulls
    # glow towards neutral and raises green/red.
    base = render_photo(1173, camera=NIKON, size=(64, 48))
    mask = base.region.mask(48, 64)
    assert base.codes[mask][:, 0].max() < 255
    clipped = render_photo(1173, camera=NIKON, size=(64, 48), overexpose=4)
    assert np.all(clipped.codes[mask][:, 0] == 255)
    auto = render_photo(1173, camera=NIKON, size=(64, 48), white_balance="auto")
    daylight_ratio = decode(base.codes[mask]).mean(axis=0)
    auto_ratio = decode(auto.codes[mask]).mean(axis=0)
    # Balancing for a 2800 K white (the renderer's warmest) instead of D55 raises raw green/red
    # by this factor (colour-science: NPL Nikon sensitivities, CIE D55, a 2800 K Planckian);
    # the camera's colour matrix subtracts red from green, so the file's factor is larger still.
    sensitivities = colour.MSDS_CAMERA_SENSITIVITIES["Nikon 5100 (NPL)"]

    def raw(sd):
        sd = sd.copy().align(sensitivities.shape)
        return sd.values @ sensitivities.values

    d55, warm = raw(colour.SDS_ILLUMINANTS["D55"]), raw(colour.sd_blackbody(2800))
    raw_factor = (d55[1] / d55[0]) / (warm[1] / warm[0])
    assert raw_factor > 1.5
    assert auto_ratio[1] / auto_ratio[0] > raw_factor * daylight_ratio[1] / daylight_ratio[0]


def test_ambient_daylight_tints_glow_and_lights_the_wall():
    # Additive mixture (Grassmann's laws, CIE 015:2018): daylight reflected off the scene adds
    # its own colour, far bluer and greener than glow's, to every channel of the glow.
    dark = render_photo(1100, camera=NIKON, scene="uniform", size=SMALL, noise=False)
    lit = render_photo(1100, camera=NIKON, scene="uniform", size=SMALL, noise=False, ambient=0.1)
    assert glow_ratio(lit, 1) > glow_ratio(dark, 1)
    assert glow_ratio(lit, 2) > glow_ratio(dark, 2)
    hole = render_photo(1100, camera=NIKON, size=(64, 48), noise=False, ambient=0.1, wall="black")
    assert hole.codes[2, 2].min() > 0  # the kiln face is no longer black


# --- noise ------------------------------------------------------------------------------------


def test_noise_is_reproducible_from_the_seed():
    first = render_photo(1200, camera=NIKON, size=SMALL, seed=7)
    again = render_photo(1200, camera=NIKON, size=SMALL, seed=7)
    other = render_photo(1200, camera=NIKON, size=SMALL, seed=8)
    assert np.array_equal(first.codes, again.codes)
    assert not np.array_equal(first.codes, other.codes)


def test_shot_noise_grows_as_the_square_root_of_signal():
    # EMVA 1288: photon shot noise is Poisson, so its standard deviation scales as sqrt(signal);
    # a quarter of the light gives half the noise (read noise is negligible at these levels).
    grey = _illuminant("D55")
    bright = render_light_photo(*grey, camera=NIKON, scene="uniform", size=(200, 150), seed=1)
    dim = render_light_photo(*grey, camera=NIKON, scene="uniform", size=(200, 150), seed=1,
                             exposure_time_s=bright.exposure_time_s / 4, f_number=bright.f_number,
                             iso=bright.iso)
    assert dim.exposure == pytest.approx(bright.exposure / 4)
    noise_bright = decode(bright.codes[..., 1]).std()
    noise_dim = decode(dim.codes[..., 1]).std()
    assert noise_bright / noise_dim == pytest.approx(2.0, rel=0.15)


def test_clipped_blue_shows_a_small_positive_mean_with_noise():
    # Real cameras: noise around a component that clips at zero leaves a small positive mean.
    clean = render_photo(1000, camera=ideal_camera(), scene="uniform", size=(100, 80),
                         white_balance=(1, 1, 1), noise=False)
    noisy = render_photo(1000, camera=ideal_camera(), scene="uniform", size=(100, 80),
                         white_balance=(1, 1, 1), iso=800)
    assert clean.codes[..., 2].max() == 0
    assert 0 < noisy.codes[..., 2].mean() < 5


# --- files ------------------------------------------------------------------------------------


def test_jpeg_carries_exif_and_srgb_profile():
    # Exif 2.32 (CIPA DC-008-2019) tags read back by Pillow; the profile opened by LittleCMS.
    rendered = render_photo(1300, camera=NIKON, size=SMALL, white_balance="auto", iso=200)
    image = Image.open(io.BytesIO(encode_jpeg(rendered, quality=90)))
    assert image.format == "JPEG" and image.size == SMALL
    exif = image.getexif()
    assert exif[0x010F] == "glowtemp demo" and exif[0x0110] == NIKON.name
    details = exif.get_ifd(0x8769)
    assert details[0xA403] == 0  # WhiteBalance: auto
    assert details[0x8827] == 200
    assert float(details[0x829A]) == pytest.approx(rendered.exposure_time_s, rel=0.05)
    assert details[0x9003] == rendered.taken_at.strftime("%Y:%m:%d %H:%M:%S")
    profile = ImageCms.ImageCmsProfile(io.BytesIO(image.info["icc_profile"]))
    assert "sRGB" in ImageCms.getProfileDescription(profile)


def test_display_p3_file_decodes_to_the_same_colour_through_littlecms():
    # LittleCMS (via Pillow) converts the file's codes from its embedded profile to sRGB; the
    # result must match colour-science's Display P3 -> sRGB conversion of the same codes.
    rendered = render_photo(1500, camera=NIKON, size=SMALL, white_balance="daylight",
                            output_space=DISPLAY_P3, noise=False)
    png = Image.open(io.BytesIO(encode_png(rendered)))
    assert png.getexif().get_ifd(0x8769)[0xA403] == 1  # WhiteBalance: manual preset
    embedded = ImageCms.ImageCmsProfile(io.BytesIO(png.info["icc_profile"]))
    srgb = ImageCms.ImageCmsProfile(ImageCms.createProfile("sRGB"))
    converted = ImageCms.applyTransform(png, ImageCms.buildTransform(embedded, srgb, "RGB", "RGB",
                                                                     renderingIntent=ImageCms.Intent.RELATIVE_COLORIMETRIC))
    codes = np.asarray(converted)[12, 16].astype(float)
    reference = colour.RGB_to_RGB(decode(centre(rendered)), colour.RGB_COLOURSPACES["Display P3"],
                                  colour.RGB_COLOURSPACES["sRGB"], apply_cctf_encoding=True)
    assert np.all(np.abs(codes - 255 * np.clip(reference, 0, 1)) <= 2)


def test_phone_tone_curve_is_not_the_srgb_curve():
    # IEC 61966-2-1 sets the sRGB curve; the invented phone curve keeps the end points but
    # brightens the upper mid-tones and darkens shadows.
    linear = np.array([0.0, 0.02, 0.5, 1.0])
    srgb = colour.cctf_encoding(linear, function="sRGB")
    phone = tone_curve_encode(linear, "phone")
    assert phone[0] == 0 and phone[-1] == pytest.approx(1)
    assert phone[1] < srgb[1] - 0.01 and phone[2] > srgb[2] + 0.01
    np.testing.assert_allclose(tone_curve_encode(linear, "srgb"), srgb, atol=1e-9)


# --- scenes and input checks --------------------------------------------------------------------


def test_scenes_report_truth_and_region():
    hole = render_photo(1250, camera=NIKON, size=(80, 60), noise=False)
    mask = hole.region.mask(60, 80)
    assert np.all(hole.truth_k[mask] == pytest.approx(1250))
    assert abs(mask.sum() - np.pi * (0.15 * 60) ** 2) < 0.1 * mask.sum()  # disc of 15 % radius
    bar = render_photo(lambda x, y: 1300 - 200 * x, camera=NIKON, scene="bar", size=(80, 60), noise=False)
    row = bar.truth_k[30]
    assert np.all(np.diff(row[np.isfinite(row)]) < 0)  # hotter towards the far end, as asked
    assert np.isnan(bar.truth_k[2, 2])


@pytest.mark.parametrize(
    ("kwargs", "words"),
    [
        ({"temperature_k": 300}, "between"),
        ({"emissivity": 1.5}, "emissivity"),
        ({"size": (2, 2)}, "pixels"),
        ({"scene": "furnace"}, "scene"),
        ({"white_balance": "cloudy"}, "white_balance"),
        ({"tone_curve": "film"}, "tone curve"),
        ({"camera": "Nikon"}, "CameraModel"),
    ],
)
def test_bad_input_gets_a_clear_error(kwargs, words):
    arguments = {"temperature_k": 1200, "camera": NIKON, "size": SMALL} | kwargs
    with pytest.raises(SyntheticInputError, match=words):
        render_photo(arguments.pop("temperature_k"), **arguments)


def test_camera_lookups_and_parametric_checks():
    assert camera_by_name("Sigma SDMerill (NPL)") is CAMERAS["Sigma SDMerill (NPL)"]
    with pytest.raises(SyntheticInputError, match="Unknown camera"):
        camera_by_name("Pinhole 1")
    with pytest.raises(SyntheticInputError, match="positive widths"):
        parametric_camera("bad", (600, 540, 460), (30, 0, 30))
