"""The raw DNG path on a real camera file: a 24-patch colour chart from a Canon EOS 550D.

The file (tests/data/real/README.md) was written by a third-party camera firmware: BlackLevel
2056, WhiteLevel 15000, RGGB, a ColorMatrix1 without CalibrationIlluminant1, and an
AsShotNeutral. The chart is checked against the published chart data of colour-science
(``colour.CCS_COLOURCHECKERS['ColorChecker24 - After November 2014']``, X-Rite's values for
charts made after November 2014, CIE 1931 2 degree observer, under D50), with colour-science's
Bradford adaptation (``colour.chromatic_adaptation``) and CIE 2000 colour difference
(``colour.delta_E(..., method='CIE 2000')``, CIE 015:2018 section 8.3) as the reference library.
"""

import io

import colour
import numpy as np
import pytest
import rawpy

from glowtemp.images.photo import load_photo
from glowtemp.images.raw import RAW_SPACE, illuminant_unstated, read_dng_header, xyz_to_camera
from glowtemp.estimation.reading import measure

from real_files import CHART_DNG, real_file

CHART = colour.CCS_COLOURCHECKERS["ColorChecker24 - After November 2014"]
PUBLISHED_XYY = np.array(list(CHART.data.values()))  # 24 patches, row by row; xyY under D50
D50_XY = CHART.illuminant
WHITE, NEUTRALS, CHROMATIC = 18, slice(18, 24), slice(0, 18)

# Patch centres (x, y) in pixels of the decoded photo (867 x 578, one pixel per 2 x 2 Bayer
# tile), hand-measured on a preview of this file; the chart is tilted slightly, so the lower
# rows start further left. Each 17 x 17 pixel box lies well inside its patch.
PATCH_CENTRES = (
    [(x, 312) for x in (356, 410, 464, 517, 571, 625)]
    + [(x, 360) for x in (356, 410, 464, 517, 571, 625)]
    + [(x, 410) for x in (354, 408, 462, 517, 571, 625)]
    + [(x, 463) for x in (352, 406, 460, 515, 570, 624)]
)
BOX_HALF_PX = 8


@pytest.fixture(scope="module")
def chart_bytes() -> bytes:
    return real_file(CHART_DNG)


@pytest.fixture(scope="module")
def chart_photo(chart_bytes):
    return load_photo(chart_bytes)


@pytest.fixture(scope="module")
def patch_xyz(chart_photo) -> np.ndarray:
    """CIE XYZ of the 24 patches as glowtemp decodes them (no white balance), row by row."""
    means = []
    for x, y in PATCH_CENTRES:
        box = chart_photo.codes[y - BOX_HALF_PX : y + BOX_HALF_PX + 1, x - BOX_HALF_PX : x + BOX_HALF_PX + 1]
        means.append(chart_photo.linear(box.reshape(-1, 3)).mean(axis=0, dtype=np.float64))
    return np.array(means) @ RAW_SPACE.rgb_to_xyz.T


def adapted_to_d50(xyz: np.ndarray, white_xyz: np.ndarray) -> np.ndarray:
    """Bradford (von Kries) adaptation from ``white_xyz`` to D50, as colour-science does it."""
    return colour.chromatic_adaptation(
        xyz, white_xyz / white_xyz[1], colour.xy_to_XYZ(D50_XY), method="Von Kries", transform="Bradford"
    )


def chromaticity_delta_e(xyz_d50: np.ndarray) -> np.ndarray:
    """CIE 2000 difference of each patch's chromaticity from the published one, at the published Y.

    Only chromaticity is compared: the chart is not evenly lit, so lightness says nothing
    about the decoding.
    """
    measured = colour.xyY_to_XYZ(np.column_stack([colour.XYZ_to_xy(xyz_d50), PUBLISHED_XYY[:, 2]]))
    return colour.delta_E(
        colour.XYZ_to_Lab(measured, D50_XY), colour.XYZ_to_Lab(colour.xyY_to_XYZ(PUBLISHED_XYY), D50_XY),
        method="CIE 2000",
    )


def chroma(xyz_d50: np.ndarray, white_xyz_d50: np.ndarray) -> np.ndarray:
    """CIELAB chroma C*ab (CIE 015:2018, 8.2.1) relative to the adapted white, as colour-science."""
    lab = colour.XYZ_to_Lab(xyz_d50 / white_xyz_d50[1] * PUBLISHED_XYY[WHITE, 2], D50_XY)
    return np.hypot(lab[..., 1], lab[..., 2])


def test_levels_and_pattern_agree_between_libraw_and_the_tags(chart_bytes, chart_photo):
    # Two readers of one file: LibRaw (rawpy) and tifffile's tags. DNG 1.4 chapter 4: BlackLevel,
    # WhiteLevel, ActiveArea (top, left, bottom, right); TIFF/EP CFAPattern 0 1 1 2 = RGGB.
    tags, size = read_dng_header(chart_bytes)
    assert size == (1888, 1182)
    assert (int(tags[50714]), int(tags[50717])) == (2056, 15000)
    assert bytes(tags[33422]) == bytes([0, 1, 1, 2])
    top, left, bottom, right = tags[50829]
    with rawpy.imread(io.BytesIO(chart_bytes)) as raw:
        assert raw.black_level_per_channel == [2056] * 4
        assert raw.white_level == 15000
        assert raw.color_desc == b"RGBG" and raw.raw_pattern.tolist() == [[0, 1], [3, 2]]
        assert raw.raw_image_visible.shape == (bottom - top, right - left)
    # One pixel per Bayer tile of the active area; nothing in this dim photo is clipped.
    assert (chart_photo.width, chart_photo.height) == ((right - left) // 2, (bottom - top) // 2)
    assert not (chart_photo.codes == chart_photo.max_code).any()
    meta = chart_photo.metadata
    assert (meta.camera_make, meta.camera_model, meta.white_balance) == ("Canon", "Canon EOS Kiss X4", "none")


def test_a_colour_matrix_without_calibration_illuminant_is_used_as_it_is_and_warned(chart_bytes, chart_photo):
    # DNG 1.4: CalibrationIlluminant1 defaults to 0 (unknown) and a lone ColorMatrix1 is used
    # for every illuminant (chapter 6), so the decode uses the file's matrix unchanged; the
    # reading says the calibration light is unknown.
    tags, _ = read_dng_header(chart_bytes)
    assert 50721 in tags and 50778 not in tags and 50722 not in tags
    matrix = np.array(tags[50721], dtype=float).reshape(-1, 2)
    assert np.allclose(xyz_to_camera(tags), (matrix[:, 0] / matrix[:, 1]).reshape(3, 3))
    assert illuminant_unstated(tags) and chart_photo.matrix_illuminant_unstated
    codes = [w.code for w in measure(chart_photo).warnings]
    assert "raw-calibration-unstated" in codes


def test_as_shot_neutral_is_a_daylight_white_not_the_chart_light(chart_bytes, patch_xyz):
    # DNG 1.4 chapter 6: with one matrix, the XYZ of the as-shot white is the inverse of
    # XYZtoCamera applied to AsShotNeutral. McCamy's CCT formula (colour-science) puts it near
    # 5300 K, while the chart's white patch is near 2800 K: the firmware wrote a daylight white
    # balance, not the light the chart was under. Balanced on AsShotNeutral the chart's white
    # patch comes out strongly orange, so the file's own white balance cannot neutralise it.
    tags, _ = read_dng_header(chart_bytes)
    neutral = np.array(tags[50728], dtype=float).reshape(-1, 2)
    neutral = neutral[:, 0] / neutral[:, 1]
    assert neutral == pytest.approx([1.0, 2.477, 1.462])
    as_shot_white = np.linalg.solve(xyz_to_camera(tags), neutral)
    as_shot_cct = colour.xy_to_CCT(colour.XYZ_to_xy(as_shot_white), method="McCamy 1992")
    chart_cct = colour.xy_to_CCT(colour.XYZ_to_xy(patch_xyz[WHITE]), method="McCamy 1992")
    assert 5000 < as_shot_cct < 5600
    assert 2600 < chart_cct < 3000
    under_as_shot = adapted_to_d50(patch_xyz, as_shot_white)
    assert chroma(under_as_shot[WHITE], under_as_shot[WHITE]) > 30


def test_the_six_neutral_patches_come_out_neutral(patch_xyz):
    # Balanced on the chart's white patch (Bradford to D50), the other five neutrals must be
    # neutral: CIELAB chroma C*ab within 3.5 for the light ones (neutral 8 and 6.5), within 9 for
    # the dark ones (neutral 5, 3.5 and black), which take a green cast from the file's
    # BlackLevel (the sensor's masked margin reads 2047-2051, a few codes below 2056, so more is
    # taken from the weaker red and blue) and glare from the bright windows behind the chart.
    # A wrong black level per channel or a broken demosaic shows here first.
    adapted = adapted_to_d50(patch_xyz, patch_xyz[WHITE])
    neutral_chroma = chroma(adapted[NEUTRALS], adapted[WHITE])
    assert neutral_chroma[0] == pytest.approx(0.0, abs=1e-6)  # the white itself, by construction
    assert np.all(neutral_chroma[1:3] < 3.5)
    assert np.all(neutral_chroma[3:] < 9.0)
    # Their lightness follows the published Y (linearity of the decode, black level): each
    # neutral's luminance ratio to the white patch within 10 % of the published ratio.
    measured_ratio = patch_xyz[NEUTRALS, 1] / patch_xyz[WHITE, 1]
    published_ratio = PUBLISHED_XYY[NEUTRALS, 2] / PUBLISHED_XYY[WHITE, 2]
    assert measured_ratio == pytest.approx(published_ratio, rel=0.1)


def test_the_sensor_margin_reads_a_few_codes_below_the_black_level_tag(chart_bytes):
    # The photosites left of the ActiveArea (columns 0-149) hold no image, only black and noise
    # (the file names no MaskedAreas, so glowtemp keeps the BlackLevel tag, as DNG 1.4 has it).
    # Their mean per CFA position is 2044-2052, a few codes below 2056: the cause of the dark
    # neutrals' green cast stated above.
    with rawpy.imread(io.BytesIO(chart_bytes)) as raw:
        margin = raw.raw_image[26:, :150].astype(float)
    means = [margin[dy::2, dx::2].mean() for dy in (0, 1) for dx in (0, 1)]
    assert all(2044 <= mean <= 2052 for mean in means)


def test_chromatic_patches_match_the_published_chart(patch_xyz):
    # Stated tolerance: CIE 2000 difference of chromaticity at most 7.5 per patch and 4.0 on
    # average over the 18 colour patches. The file's matrix is a daylight one used here under
    # about 2800 K light, on a capture whose white patch sits at 7 % of full scale, and a 3 x 3
    # matrix cannot match every patch of a real sensor; a wrong matrix, pattern or white would
    # miss by far more (the same check with red and blue swapped averages over 30).
    delta_e = chromaticity_delta_e(adapted_to_d50(patch_xyz, patch_xyz[WHITE]))[CHROMATIC]
    assert delta_e.max() <= 7.5
    assert delta_e.mean() <= 4.0
    swapped = patch_xyz @ np.linalg.inv(RAW_SPACE.rgb_to_xyz).T
    swapped_xyz = swapped[:, ::-1] @ RAW_SPACE.rgb_to_xyz.T
    assert chromaticity_delta_e(adapted_to_d50(swapped_xyz, swapped_xyz[WHITE]))[CHROMATIC].mean() > 30
