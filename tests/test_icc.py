import io

import colour
import numpy as np
import pytest
from PIL import Image, ImageCms

from glowtemp.physics.colourspaces import ADOBE_RGB, DISPLAY_P3, SRGB, RGBSpace, srgb_encode
from glowtemp.images.icc import IccError, build_matrix_profile, parse_icc_profile

from icc_files import curv_tag, matrix_trc_profile, para_tag, profile_bytes

ADOBE_GAMMA = 563 / 256  # Adobe RGB (1998) Color Image Encoding, section 4.3.1.2
BT2020 = RGBSpace("Rec. 2020 test", ((0.708, 0.292), (0.170, 0.797), (0.131, 0.046)))
CODES = np.arange(256) / 255


def littlecms_srgb_profile() -> bytes:
    return ImageCms.ImageCmsProfile(ImageCms.createProfile("sRGB")).tobytes()


def test_littlecms_srgb_profile_is_identified_as_srgb_with_the_iec_curve():
    profile = parse_icc_profile(littlecms_srgb_profile())
    assert profile.rgb_space is SRGB
    assert "sRGB" in profile.description
    # IEC 61966-2-1 transfer function, as implemented by colour-science
    expected = colour.cctf_decoding(CODES, function="sRGB")
    np.testing.assert_allclose(profile.decode_table(255), np.tile(expected, (3, 1)), atol=2e-4)


@pytest.mark.parametrize("version", [2, 4])
@pytest.mark.parametrize(
    "space, transfer, reference",
    [
        (SRGB, "srgb", "sRGB"),
        (DISPLAY_P3, "srgb", "Display P3"),
        (ADOBE_RGB, "gamma", "Adobe RGB (1998)"),
    ],
)
def test_built_profile_reads_back_as_the_known_space(space, transfer, reference, version):
    data = build_matrix_profile(space, transfer, gamma=ADOBE_GAMMA, version=version)
    profile = parse_icc_profile(data)
    assert profile.rgb_space is space
    assert profile.description == space.name
    assert profile.version.startswith(str(version))
    # colour-science's RGB colourspace decoding functions (IEC 61966-2-1; Adobe RGB (1998))
    expected = colour.RGB_COLOURSPACES[reference].cctf_decoding(CODES)
    np.testing.assert_allclose(profile.decode_table(255)[1], expected, atol=2e-5)


@pytest.mark.parametrize("version", [2, 4])
def test_built_profile_is_readable_by_littlecms(version):
    data = build_matrix_profile(DISPLAY_P3, "srgb", description="Glow test P3", version=version)
    cms_profile = ImageCms.ImageCmsProfile(io.BytesIO(data))
    # LittleCMS (via Pillow) reads the description and the version we wrote
    assert ImageCms.getProfileDescription(cms_profile).strip() == "Glow test P3"
    assert int(cms_profile.profile.version) == version


@pytest.mark.parametrize("version", [2, 4])
@pytest.mark.parametrize(
    "space, transfer", [(DISPLAY_P3, "srgb"), (ADOBE_RGB, "gamma"), (BT2020, "srgb")]
)
def test_conversion_to_srgb_agrees_with_littlecms(space, transfer, version):
    """Our decode -> XYZ -> sRGB matches LittleCMS's relative colorimetric transform."""
    data = build_matrix_profile(space, transfer, gamma=ADOBE_GAMMA, version=version)
    codes = np.random.default_rng(7).integers(0, 256, (24, 24, 3), dtype=np.uint8)
    reference = ImageCms.profileToProfile(
        Image.fromarray(codes),
        ImageCms.ImageCmsProfile(io.BytesIO(data)),
        ImageCms.createProfile("sRGB"),
        renderingIntent=ImageCms.Intent.RELATIVE_COLORIMETRIC,
    )
    profile = parse_icc_profile(data)
    linear = profile.decode_table(255)[[0, 1, 2], codes.reshape(-1, 3)]
    to_srgb = SRGB.xyz_to_rgb @ profile.rgb_space.rgb_to_xyz
    ours = np.round(255 * srgb_encode(np.clip(linear @ to_srgb.T, 0, 1))).reshape(codes.shape)
    # LittleCMS 2 is the reference; it works in 16-bit precision, so allow one code value
    assert np.abs(ours - np.asarray(reference, dtype=int)).max() <= 1


@pytest.mark.parametrize("reference", ["ITU-R BT.2020", "DCI-P3"])
def test_unknown_space_keeps_the_profile_primaries_white_and_description(reference):
    # primaries and white as tabulated by colour-science (ITU-R BT.2020; SMPTE RP 431-2 DCI-P3,
    # whose white differs from Display P3's D65, so it must not be taken for Display P3)
    known = colour.RGB_COLOURSPACES[reference]
    space = RGBSpace(reference, tuple(map(tuple, known.primaries)), tuple(known.whitepoint))
    read = parse_icc_profile(build_matrix_profile(space, "srgb", description="Wide test space"))
    assert read.rgb_space not in (SRGB, DISPLAY_P3, ADOBE_RGB)
    assert read.rgb_space.name == "Wide test space"
    np.testing.assert_allclose(read.rgb_space.primaries_xy, known.primaries, atol=1e-4)
    np.testing.assert_allclose(read.rgb_space.white_xy, known.whitepoint, atol=1e-4)


def test_d50_white_space_keeps_its_white():
    prophoto = colour.RGB_COLOURSPACES["ProPhoto RGB"]  # ROMM RGB, ISO 22028-2, D50 white
    space = RGBSpace("ProPhoto", tuple(map(tuple, prophoto.primaries)), tuple(prophoto.whitepoint))
    for version in (2, 4):
        read = parse_icc_profile(build_matrix_profile(space, "gamma", gamma=1.8, version=version))
        np.testing.assert_allclose(read.rgb_space.white_xy, prophoto.whitepoint, atol=1e-4)
        np.testing.assert_allclose(read.rgb_space.primaries_xy, prophoto.primaries, atol=1e-4)


def littlecms_linear_ramp(curve_tag: bytes) -> np.ndarray:
    """LittleCMS's decoding of a grey ramp through ``curve_tag``, to a linear twin profile."""
    source = matrix_trc_profile(DISPLAY_P3, curve_tag)
    linear = build_matrix_profile(DISPLAY_P3, "gamma", gamma=1.0)
    ramp = np.repeat(np.arange(256, dtype=np.uint8), 3).reshape(16, 16, 3)
    out = ImageCms.profileToProfile(
        Image.fromarray(ramp),
        ImageCms.ImageCmsProfile(io.BytesIO(source)),
        ImageCms.ImageCmsProfile(io.BytesIO(linear)),
        renderingIntent=ImageCms.Intent.RELATIVE_COLORIMETRIC,
    )
    return np.asarray(out, dtype=float).reshape(-1, 3)[:, 1] / 255


@pytest.mark.parametrize(
    "curve",
    [
        para_tag(0, [1.8]),
        para_tag(1, [2.2, 0.95, 0.05]),  # ICC.1:2010 Table 68, CIE 122-1966
        para_tag(2, [2.0, 0.9, 0.05, 0.02]),  # IEC 61966-3
        para_tag(3, [2.4, 1 / 1.055, 0.055 / 1.055, 1 / 12.92, 0.04045]),  # IEC 61966-2-1
        para_tag(4, [2.2, 0.9, 0.08, 0.1, 0.05, 0.005, 0.01]),
        curv_tag(np.linspace(0, 1, 37) ** 2.6),  # sampled table
        curv_tag([]),  # identity
        b"curv\0\0\0\0" + bytes([0, 0, 0, 1, 0x01, 0xCD]),  # u8Fixed8 gamma 1.80078125
    ],
    ids=["para0", "para1", "para2", "para3", "para4", "curv-table", "curv-identity", "curv-gamma"],
)
def test_tone_curves_agree_with_littlecms(curve):
    ours = parse_icc_profile(matrix_trc_profile(DISPLAY_P3, curve)).decode_table(255)
    # LittleCMS 2 evaluates the same tag; its 8-bit output rounds, so allow one code value
    np.testing.assert_allclose(ours[1], littlecms_linear_ramp(curve), atol=1.01 / 255)
    np.testing.assert_array_equal(ours[0], ours[2])


def test_decode_table_shape_and_range_for_16_bit():
    table = parse_icc_profile(build_matrix_profile(SRGB)).decode_table(65535)
    assert table.shape == (3, 65536) and table.dtype == np.float32
    assert table[:, 0].max() == 0.0 and np.allclose(table[:, -1], 1.0)
    # IEC 61966-2-1: code 0.5 decodes to 0.214041
    assert abs(float(table[0, 32768]) - float(colour.cctf_decoding(32768 / 65535))) < 1e-5


def test_truncated_profile_is_refused():
    data = littlecms_srgb_profile()
    for cut in (60, 200, len(data) - 40):
        with pytest.raises(IccError, match="truncated"):
            parse_icc_profile(data[:cut])


def test_non_rgb_profile_is_refused():
    lab = ImageCms.ImageCmsProfile(ImageCms.createProfile("LAB")).tobytes()
    with pytest.raises(IccError, match="Lab images, not RGB"):
        parse_icc_profile(lab)
    grey = profile_bytes({b"kTRC": para_tag(0, [2.2])}, colour_space=b"GRAY")
    with pytest.raises(IccError, match="GRAY images, not RGB"):
        parse_icc_profile(grey)


def test_lut_only_profile_is_refused():
    # an A2B0 tag (lut16Type header only) and no colorant tags, ICC.1:2010 section 10.10
    data = profile_bytes({b"A2B0": b"mft2" + b"\0" * 48, b"desc": b"text\0\0\0\0lut\0"})
    with pytest.raises(IccError, match="lookup tables"):
        parse_icc_profile(data)


def test_bytes_that_are_not_a_profile_are_refused():
    with pytest.raises(IccError, match="not an ICC profile"):
        parse_icc_profile(b"\x89PNG" + b"\0" * 300)
