"""Raw DNG decoding: files written here with tifffile from rendered Bayer captures."""

import io
import struct
from datetime import datetime

import colour
import numpy as np
import pytest
import rawpy
import tifffile

from glowtemp.estimation.estimate import RAW_UNCALIBRATED, UNCALIBRATED, uncalibrated_term
from glowtemp.images.photo import PhotoError, load_photo, upright
from glowtemp.estimation.profile import Pair, fit_profile
from glowtemp.images.raw import (
    RAW_SPACE,
    RawError,
    decode_table,
    dng_metadata,
    encode_linear,
    illuminant_unstated,
    read_dng_header,
    superpixel,
    xyz_to_camera,
)
from glowtemp.estimation.reading import measure
from glowtemp.images.region import Circle, Rectangle
from glowtemp.physics.colourspaces import SRGB
from glowtemp.render.synthetic import encode_jpeg, render_photo
from glowtemp.render.synthetic_camera import CAMERAS, ideal_camera
from glowtemp.render.synthetic_raw import BLACK_LEVEL, WHITE_LEVEL, encode_dng, render_raw

SIZE = (96, 64)


def capture(temperature_c, camera=None, **options):
    options.setdefault("size", SIZE)
    return render_raw(temperature_c + 273.15, camera=camera or ideal_camera(), **options)


def with_exif_ifd(dng: bytes, tags: dict) -> bytes:
    """The DNG with its IFD 0 ASCII ``tags`` moved into an Exif IFD (TIFF 6.0 section 2, Exif 2.32).

    IFD 0 is rewritten at the end of the file without those tags and with the pointer (34665).
    """
    order = "<"
    (ifd0,) = struct.unpack_from(order + "I", dng, 4)
    (count,) = struct.unpack_from(order + "H", dng, ifd0)
    entries = [dng[ifd0 + 2 + 12 * i : ifd0 + 14 + 12 * i] for i in range(count)]
    entries = [e for e in entries if struct.unpack_from(order + "H", e)[0] not in tags]
    out = bytearray(dng + b"\0" * (len(dng) % 2))
    exif_at = len(out)
    values = [(code, text.encode("ascii") + b"\0") for code, text in sorted(tags.items())]
    data_at = exif_at + 2 + 12 * len(values) + 4
    exif, blob = struct.pack(order + "H", len(values)), b""
    for code, value in values:
        exif += struct.pack(order + "HHII", code, 2, len(value), data_at + len(blob))
        blob += value + b"\0" * (len(value) % 2)
    out += exif + struct.pack(order + "I", 0) + blob
    out += b"\0" * (len(out) % 2)
    new_ifd0 = len(out)
    entries.append(struct.pack(order + "HHII", 34665, 4, 1, exif_at))
    entries.sort(key=lambda entry: struct.unpack_from(order + "H", entry)[0])
    out += struct.pack(order + "H", len(entries)) + b"".join(entries) + struct.pack(order + "I", 0)
    out[4:8] = struct.pack(order + "I", new_ifd0)
    return bytes(out)


def test_libraw_reads_the_cfa_levels_and_pattern_that_tifffile_wrote():
    rendered = capture(1000)
    with rawpy.imread(io.BytesIO(encode_dng(rendered))) as raw:  # LibRaw's own reading
        assert np.array_equal(raw.raw_image_visible, rendered.cfa)
        assert raw.black_level_per_channel == [BLACK_LEVEL] * 4
        assert raw.white_level == WHITE_LEVEL
        # RGGB (TIFF/EP CFAPattern 0 1 1 2): LibRaw's colour indices 0 red, 1/3 green, 2 blue
        assert raw.raw_colors_visible[:2, :2].tolist() == [[0, 1], [3, 2]]
        assert raw.color_desc == b"RGBG"


def test_superpixel_averages_the_two_greens_and_flags_saturated_tiles():
    # Hand-worked 2 x 4 mosaic, black 100, white 1100: the second tile has a saturated red.
    codes = np.array([[600, 300, 1100, 300], [500, 200, 500, 200]])
    colours = np.array([[0, 1, 0, 1], [3, 2, 3, 2]])
    rgb, clipped = superpixel(codes, colours, np.full(4, 100.0), np.full(4, 1100.0))
    assert rgb[0, 0].tolist() == pytest.approx([0.5, 0.3, 0.1])
    assert clipped.tolist() == [[False, True]]


def test_a_pattern_that_is_not_bayer_is_refused():
    with pytest.raises(RawError, match="not a 2 x 2 Bayer"):
        superpixel(np.zeros((4, 4)), np.array([[0, 0], [1, 2]] * 2), np.zeros(4), np.ones(4))


def test_raw_space_is_romm_rgb_as_colour_science_has_it():
    # ISO 22028-2 ROMM RGB = colour-science's "ProPhoto RGB" (matrix rounded to 4 decimals there)
    reference = colour.RGB_COLOURSPACES["ProPhoto RGB"].matrix_RGB_to_XYZ
    assert np.allclose(RAW_SPACE.rgb_to_xyz, reference, atol=2e-4)


@pytest.mark.parametrize("temperature_c", [600.0, 900.0, 1300.0])
def test_a_colorimetric_sensor_decodes_to_the_blackbody_chromaticity(temperature_c):
    # A sensor with the CIE 1931 CMFs records XYZ itself; the decoded colour must be the
    # blackbody's chromaticity as colour-science computes it (CIE 015:2018, Planck's law).
    photo = load_photo(encode_dng(capture(temperature_c, scene="uniform", noise=False)))
    mean = photo.linear(photo.codes.reshape(-1, 3)).mean(axis=0)
    xyz = RAW_SPACE.rgb_to_xyz @ mean
    cmfs = colour.MSDS_CMFS["CIE 1931 2 Degree Standard Observer"]
    sd = colour.sd_blackbody(temperature_c + 273.15, cmfs.shape)
    reference = colour.XYZ_to_xy(colour.sd_to_XYZ(sd, cmfs, method="Integration"))
    assert xyz[:2] / xyz.sum() == pytest.approx(reference, abs=5e-4)
    assert photo.format == "DNG" and photo.space is RAW_SPACE and photo.space_source == "dng"
    assert (photo.width, photo.height) == (SIZE[0] // 2, SIZE[1] // 2)  # one pixel per Bayer tile


def test_raw_measures_700_c_where_the_srgb_jpeg_of_the_same_capture_gives_only_a_ceiling():
    # At 973 K a blackbody lies outside sRGB (colour-science, CIE 1931 2-degree integration with
    # the IEC 61966-2-1 matrix: blue negative below 1900 K, green below about 964 K): the JPEG's
    # green is clipped to a few codes, so its colour gives only a ceiling; the raw file keeps
    # green well above its noise, and with its exposure data names the heat. Truth: Planck's law
    # through the CIE observer (the ideal camera).
    truth_c = 700.0
    jpeg = render_photo(truth_c + 273.15, camera=ideal_camera(), size=SIZE, white_balance=(1.0, 1.0, 1.0),
                        tripod=True)  # ISO 50 on a tripod, not ISO 640 by hand
    raw = capture(truth_c, exposure_time_s=jpeg.exposure_time_s, f_number=jpeg.f_number, iso=jpeg.iso)
    jpeg_reading = measure(load_photo(encode_jpeg(jpeg)))
    photo = load_photo(encode_dng(raw))
    reading = measure(photo, scene="kiln")
    assert jpeg_reading.estimate.colour_status == "upper-bound"
    jpeg_green = jpeg_reading.statistics.mean_linear[1] / jpeg_reading.statistics.mean_linear[0]
    raw_green = reading.statistics.mean_linear[1] / reading.statistics.mean_linear[0]
    assert jpeg_green < 0.01 and raw_green > 3 * jpeg_green  # colour-science: 973 K has green below zero in sRGB
    assert reading.estimate.status == "ok"
    low, high = reading.estimate.interval_95_k
    assert low < truth_c + 273.15 < high
    assert high - low < 150
    assert reading.estimate.temperature_k - 273.15 == pytest.approx(truth_c, abs=40)


@pytest.mark.parametrize("camera_name", ["Nikon 5100 (NPL)", "Sigma SDMerill (NPL)"])
def test_raw_bands_of_measured_cameras_hold_the_rendered_truth(camera_name):
    # colour-science's NPL-measured sensitivities; the DNG matrix is fitted on the ColorChecker;
    # a spy hole (emissivity 1 rendered) measured as a kiln, with the camera population as prior.
    for truth_c in (850.0, 1150.0):
        photo = load_photo(encode_dng(capture(truth_c, CAMERAS[camera_name], seed=3)))
        estimate = measure(photo, scene="kiln").estimate
        assert estimate.usable
        low, high = estimate.interval_95_k
        assert low < truth_c + 273.15 < high
        if estimate.status == "ok":
            assert abs(estimate.temperature_k - 273.15 - truth_c) < 60


def test_the_uncalibrated_term_follows_the_photo_kind():
    raw_photo = load_photo(encode_dng(capture(1000)))
    jpeg_photo = load_photo(encode_jpeg(render_photo(1273.15, camera=ideal_camera(), size=SIZE)))
    assert uncalibrated_term(raw_photo) is RAW_UNCALIBRATED
    assert uncalibrated_term(jpeg_photo) is UNCALIBRATED


def test_blown_out_raw_tiles_are_clipped_and_refused():
    photo = load_photo(encode_dng(capture(1000, scene="uniform", overexpose=3.0)))
    reading = measure(photo, Rectangle(4, 4, 30, 20), camera=uncalibrated_term(photo))
    assert reading.statistics.pixels_clipped == reading.statistics.pixels_total
    assert reading.estimate.status == "clipped"


def test_orientation_turns_the_superpixel_image_upright():
    rendered = capture(1000, scene="bar", size=(96, 64))
    stored = load_photo(encode_dng(rendered))
    turned = load_photo(encode_dng(rendered, orientation=6))  # TIFF 6.0 Orientation 6: 0th row on the right
    assert (turned.width, turned.height) == (stored.height, stored.width)
    assert np.array_equal(turned.codes, upright(stored.codes, 6))


def test_capture_settings_come_from_ifd0_or_the_exif_ifd():
    taken = datetime(2025, 5, 17, 21, 4, 9)
    rendered = capture(1000, iso=200, taken_at=taken)
    photo = load_photo(encode_dng(rendered))
    meta = photo.metadata
    assert meta.taken_at == taken and meta.iso == 200
    assert meta.exposure_time_s == pytest.approx(rendered.exposure_time_s, rel=1e-4)
    assert (meta.camera_make, meta.camera_model) == ("glowtemp demo", ideal_camera().name)
    assert meta.white_balance == "none"  # no white balance is applied to raw data
    # Phones put DateTimeOriginal in the Exif IFD (CIPA DC-008 tag 0x9003) rather than IFD 0.
    later = with_exif_ifd(encode_dng(rendered), {36867: "2025:05:18 06:30:00"})
    assert load_photo(later).metadata.taken_at == datetime(2025, 5, 18, 6, 30)


def moved_to_exif_ifd(dng: bytes, codes) -> bytes:
    """The DNG with the IFD 0 entries ``codes`` moved, as they are, into a new Exif IFD (34665).

    An entry's value offset is from the start of the file, so the moved entries still point
    at their values; IFD 0 is rewritten at the end of the file (TIFF 6.0 section 2).
    """
    order = "<"
    (ifd0,) = struct.unpack_from(order + "I", dng, 4)
    (count,) = struct.unpack_from(order + "H", dng, ifd0)
    entries = [dng[ifd0 + 2 + 12 * i : ifd0 + 14 + 12 * i] for i in range(count)]
    moved = [e for e in entries if struct.unpack_from(order + "H", e)[0] in codes]
    kept = [e for e in entries if e not in moved]
    out = bytearray(dng + b"\0" * (len(dng) % 2))
    exif_at = len(out)
    out += struct.pack(order + "H", len(moved)) + b"".join(moved) + struct.pack(order + "I", 0)
    new_ifd0 = len(out)
    kept.append(struct.pack(order + "HHII", 34665, 4, 1, exif_at))
    kept.sort(key=lambda entry: struct.unpack_from(order + "H", entry)[0])
    out += struct.pack(order + "H", len(kept)) + b"".join(kept) + struct.pack(order + "I", 0)
    out[4:8] = struct.pack(order + "I", new_ifd0)
    return bytes(out)


# Exposure tags as a DNG keeps them (tifffile extratags: code, type, count, value), with the
# tag numbers and types of Exif 2.32 (CIPA DC-008-2019) and, for BaselineExposure, DNG 1.6.
EXPOSURE_EXTRATAGS = [
    (33434, "2I", 1, (1, 15), True),  # ExposureTime 1/15 s, RATIONAL
    (33437, "2I", 1, (4, 1), True),  # FNumber f/4, RATIONAL
    (34855, "H", 1, 3200, True),  # PhotographicSensitivity (ISOSpeedRatings), SHORT
    (34864, "H", 1, 1, True),  # SensitivityType 1: standard output sensitivity, SHORT
    (34865, "I", 1, 3200, True),  # StandardOutputSensitivity, LONG
    (37380, "2i", 1, (-1, 3), True),  # ExposureBiasValue -1/3 EV, SRATIONAL
    (41985, "H", 1, 0, True),  # CustomRendered 0: normal process
    (50730, "2i", 1, (-3, 4), True),  # BaselineExposure -0.75 EV, SRATIONAL (DNG 1.6)
]


def tiny_dng(extratags) -> bytes:
    """A 16 x 16 CFA DNG header written by tifffile: DNGVersion, RGGB pattern and ``extratags``."""
    out = io.BytesIO()
    tags = [(50706, "B", 4, (1, 4, 0, 0), True), (33421, "H", 2, (2, 2), True),
            (33422, "B", 4, (0, 1, 1, 2), True), *extratags]
    tifffile.imwrite(out, np.zeros((16, 16), np.uint16), photometric=32803, extratags=tags)
    return out.getvalue()


@pytest.mark.parametrize("where", ["ifd0", "exif_ifd"])
def test_dng_exposure_tags_and_baseline_exposure_read_back(where):
    data = tiny_dng(EXPOSURE_EXTRATAGS)
    if where == "exif_ifd":  # BaselineExposure is a DNG tag and stays in IFD 0
        data = moved_to_exif_ifd(data, {33434, 33437, 34855, 34864, 34865, 37380, 41985})
    meta = dng_metadata(read_dng_header(data)[0])
    assert meta.exposure_time_s == pytest.approx(1 / 15) and meta.f_number == pytest.approx(4.0)
    assert (meta.iso, meta.sensitivity_type, meta.standard_output_sensitivity) == (3200, 1, 3200)
    assert meta.exposure_bias_ev == pytest.approx(-1 / 3)
    assert meta.custom_rendered == 0
    assert meta.baseline_exposure_ev == pytest.approx(-0.75)


def test_dng_without_or_with_impossible_exposure_tags_reads_none():
    bare = dng_metadata(read_dng_header(tiny_dng([]))[0]).to_dict()
    assert bare.pop("white_balance") == "none"  # raw data get no white balance
    assert set(bare.values()) == {None}
    absurd = [
        (33434, "2I", 1, (0, 1), True),  # ExposureTime 0 s
        (33437, "2I", 1, (0, 0), True),  # FNumber 0/0
        (34855, "H", 1, 0, True),  # ISO 0
        (37380, "2i", 1, (0, 0), True),  # ExposureBiasValue 0/0
        (50730, "2i", 1, (-100, 1), True),  # BaselineExposure -100 EV
    ]
    meta = dng_metadata(read_dng_header(tiny_dng(absurd))[0])
    assert (meta.exposure_time_s, meta.f_number, meta.iso) == (None, None, None)
    assert meta.exposure_bias_ev is None and meta.baseline_exposure_ev is None


def test_the_warmer_calibration_illuminant_s_matrix_is_used_whatever_the_order():
    # DNG 1.4 chapter 6: interpolation by inverse CCT, held at the end values; glow is warmer
    # than CIE illuminant A (EXIF LightSource 17) and D65 (21).
    rendered = capture(1000, CAMERAS["Nikon 5100 (NPL)"])
    tags, size = read_dng_header(encode_dng(rendered))
    assert size == SIZE
    matrix_a = dict(rendered.xyz_to_camera)[17]
    assert np.allclose(xyz_to_camera(tags), matrix_a, atol=1e-5)
    swapped = dict(tags)
    swapped[50721], swapped[50722] = tags[50722], tags[50721]
    swapped[50778], swapped[50779] = tags[50779], tags[50778]
    assert np.allclose(xyz_to_camera(swapped), matrix_a, atol=1e-5)
    assert np.allclose(xyz_to_camera({50721: tags[50722], 50778: 21}), dict(rendered.xyz_to_camera)[21], atol=1e-5)


def test_an_unstated_calibration_illuminant_counts_as_d65():
    # DNG 1.4: CalibrationIlluminant defaults to 0, unknown; glowtemp takes it as D65 (6504 K).
    # Against illuminant A (EXIF LightSource 17, 2856 K) the A matrix is the warmer; against D75
    # (22, 7504 K) the unstated one is.
    rendered = capture(1000, CAMERAS["Nikon 5100 (NPL)"])
    tags, _ = read_dng_header(encode_dng(rendered))
    matrix_a, matrix_d65 = (dict(rendered.xyz_to_camera)[code] for code in (17, 21))
    assert not illuminant_unstated(tags)
    unstated_and_a = {50721: tags[50722], 50722: tags[50721], 50779: 17}
    assert illuminant_unstated(unstated_and_a)
    assert np.allclose(xyz_to_camera(unstated_and_a), matrix_a, atol=1e-5)
    unstated_and_d75 = {50721: tags[50722], 50722: tags[50721], 50778: 0, 50779: 22}
    assert illuminant_unstated(unstated_and_d75)
    assert np.allclose(xyz_to_camera(unstated_and_d75), matrix_d65, atol=1e-5)


def test_a_rendered_dng_that_names_its_illuminants_gets_no_calibration_warning():
    photo = load_photo(encode_dng(capture(1000)))
    assert not photo.matrix_illuminant_unstated
    assert "raw-calibration-unstated" not in [w.code for w in measure(photo).warnings]


def test_noise_about_black_keeps_its_sign_so_dim_means_are_not_lifted():
    # Zero-mean noise (sigma 0.001 of full scale) averages to zero: the mean of 480 000 values
    # has a standard error of 1.4e-6. Clipped at zero, as unsigned codes without a pedestal
    # would store it, the mean is lifted to sigma / sqrt(2 pi) = 4.0e-4 (half-normal mean).
    rng = np.random.default_rng(7)
    rgb = (0.001 * rng.standard_normal((400, 400, 3))).astype(np.float32)
    codes = encode_linear(rgb, np.zeros((400, 400), dtype=bool), np.eye(3))
    decoded = decode_table()[np.arange(3), codes]
    gain = float(np.polyfit(rgb.ravel(), decoded.ravel(), 1)[0])  # decoded units per camera unit
    assert np.all(np.abs(decoded.mean(axis=(0, 1)) / gain) < 1e-5)
    assert float(np.clip(rgb, 0, None).mean()) == pytest.approx(0.001 / np.sqrt(2 * np.pi), rel=0.02)
    assert np.all(codes < 250 / 255 * 65535)  # nothing unclipped reaches the clipped range


def test_a_dng_without_colour_matrix_is_refused_in_plain_words():
    tags, _ = read_dng_header(encode_dng(capture(1000)))
    del tags[50721], tags[50722]
    with pytest.raises(RawError, match="no ColorMatrix"):
        xyz_to_camera(tags)


def test_a_truncated_dng_is_a_photo_error():
    data = encode_dng(capture(1000))
    with pytest.raises(PhotoError, match="DNG"):
        load_photo(data[: len(data) // 3])


def test_a_profile_made_from_jpegs_is_not_applied_to_a_raw_photo():
    # Raw and JPEG readings of one camera need separate profiles: their colour spaces differ.
    profile = fit_profile("phone jpeg", [Pair("a.jpg", 0.05, 0.002, 1100.0, 5.0)], SRGB, {}, "test")
    photo = load_photo(encode_dng(capture(1100)))
    reading = measure(photo, Circle(24, 16, 8), camera=uncalibrated_term(photo), profile=profile)
    assert reading.profile is None
    assert "profile-not-applied" in [w.code for w in reading.warnings]
