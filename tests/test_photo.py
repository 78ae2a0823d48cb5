import io
import json
from datetime import datetime

import colour
import numpy as np
import pytest
import tifffile
from PIL import Image, ImageCms, ImageOps

from glowtemp.physics.colourspaces import ADOBE_RGB, DISPLAY_P3, SRGB, srgb_encode
from glowtemp.images.icc import build_matrix_profile
from glowtemp.images.photo import PhotoError, load_photo, upright

from photo_files import exif_block, header_only_png, marked, png16, rational, saved

ADOBE_GAMMA = 563 / 256  # Adobe RGB (1998) Color Image Encoding, section 4.3.1.2
P3_PROFILE = build_matrix_profile(DISPLAY_P3, "srgb")
ADOBE_PROFILE = build_matrix_profile(ADOBE_RGB, "gamma", gamma=ADOBE_GAMMA)
RNG = np.random.default_rng(2024)


def random_rgb(height=48, width=64, dtype=np.uint8, top=255):
    return RNG.integers(0, top + 1, (height, width, 3), dtype=dtype)


def srgb_decoded(codes, max_code):
    """IEC 61966-2-1 decoding, as implemented by colour-science."""
    return colour.cctf_decoding(np.asarray(codes) / max_code, function="sRGB")


# --- EXIF orientation ------------------------------------------------------------------------

# CIPA DC-008 (Exif 2.32), tag 0x0112: the visual side on which the stored 0th row and the
# stored 0th column lie, for each Orientation value.
ORIENTATION_SIDES = {
    1: ("top", "left"), 2: ("top", "right"), 3: ("bottom", "right"), 4: ("bottom", "left"),
    5: ("left", "top"), 6: ("right", "top"), 7: ("right", "bottom"), 8: ("left", "bottom"),
}
OPPOSITE = {"top": "bottom", "bottom": "top", "left": "right", "right": "left"}


def stored_corner(visual_corner, orientation, height, width):
    """Stored (row, column) of the pixel seen at ``visual_corner``, from the spec's sides."""
    row_side, column_side = ORIENTATION_SIDES[orientation]
    row = 0 if row_side in visual_corner else height - 1
    column = 0 if column_side in visual_corner else width - 1
    assert OPPOSITE[row_side] in visual_corner or row == 0
    return row, column


def paint_corner(array, row, column, rgb, size=12):
    rows = slice(0, size) if row == 0 else slice(-size, None)
    cols = slice(0, size) if column == 0 else slice(-size, None)
    array[rows, cols] = rgb


@pytest.mark.parametrize("orientation", range(1, 9))
def test_exif_orientation_puts_marked_corners_where_the_exif_spec_says(orientation):
    stored = marked(48, 64)
    red_at = stored_corner(("top", "left"), orientation, 48, 64)
    green_at = stored_corner(("top", "right"), orientation, 48, 64)
    paint_corner(stored, *red_at, (250, 0, 0))
    paint_corner(stored, *green_at, (0, 250, 0))
    data = saved(stored, "JPEG", quality=95, exif=exif_block(orientation=orientation))

    photo = load_photo(data)

    turned = orientation >= 5  # CIPA DC-008: rows and columns swap for values 5 to 8
    assert (photo.height, photo.width) == ((64, 48) if turned else (48, 64))
    top_left, top_right = photo.codes[:4, :4].mean(axis=(0, 1)), photo.codes[:4, -4:].mean(axis=(0, 1))
    assert top_left[0] > 200 and top_left[1] < 50
    assert top_right[1] > 200 and top_right[0] < 50
    # Pillow's ImageOps.exif_transpose as a second reference
    reference = np.asarray(ImageOps.exif_transpose(Image.open(io.BytesIO(data))))
    np.testing.assert_array_equal(photo.codes, reference)


def test_upright_inverts_the_camera_turn_for_all_orientations():
    # For each value, Pillow's Image.Transpose operation from ImageOps.exif_transpose
    transposes = {
        2: Image.Transpose.FLIP_LEFT_RIGHT, 3: Image.Transpose.ROTATE_180,
        4: Image.Transpose.FLIP_TOP_BOTTOM, 5: Image.Transpose.TRANSPOSE,
        6: Image.Transpose.ROTATE_270, 7: Image.Transpose.TRANSVERSE, 8: Image.Transpose.ROTATE_90,
    }
    stored = random_rgb(9, 13)
    for orientation, method in transposes.items():
        expected = np.asarray(Image.fromarray(stored).transpose(method))
        np.testing.assert_array_equal(upright(stored, orientation), expected)
    np.testing.assert_array_equal(upright(stored, 1), stored)


def test_orientation_is_applied_to_png_and_tiff_too():
    stored = marked(48, 64)
    paint_corner(stored, 47, 0, (250, 0, 0))  # value 6: visual top-left is stored bottom-left
    exif = exif_block(orientation=6)
    for data in (saved(stored, "PNG", exif=exif), saved(stored, "TIFF", exif=exif)):
        photo = load_photo(data)
        assert photo.codes.shape == (64, 48, 3)
        assert tuple(photo.codes[0, 0]) == (250, 0, 0)  # lossless formats: exact


# --- colour spaces -----------------------------------------------------------------------------


def test_p3_jpeg_decodes_as_display_p3_with_littlecms_agreeing():
    data = saved(random_rgb(), "JPEG", quality=90, icc_profile=P3_PROFILE)
    photo = load_photo(data)
    assert photo.space is DISPLAY_P3 and photo.space_source == "icc"
    assert photo.profile_problem is None
    pixels = photo.codes.reshape(-1, 3)
    linear = photo.linear(pixels)
    # Display P3 uses the IEC 61966-2-1 curve (colour-science reference)
    np.testing.assert_allclose(linear, srgb_decoded(pixels, 255), atol=1e-5)
    # LittleCMS 2 (Pillow ImageCms) converting the embedded profile to its own sRGB
    embedded = ImageCms.ImageCmsProfile(io.BytesIO(Image.open(io.BytesIO(data)).info["icc_profile"]))
    reference = ImageCms.profileToProfile(
        Image.fromarray(np.ascontiguousarray(photo.codes)), embedded, ImageCms.createProfile("sRGB"),
        renderingIntent=ImageCms.Intent.RELATIVE_COLORIMETRIC,
    )
    to_srgb = SRGB.xyz_to_rgb @ photo.space.rgb_to_xyz
    ours = np.round(255 * srgb_encode(np.clip(linear @ to_srgb.T, 0, 1)))
    assert np.abs(ours - np.asarray(reference, dtype=float).reshape(-1, 3)).max() <= 1


def test_adobe_rgb_from_an_embedded_profile():
    photo = load_photo(saved(random_rgb(), "JPEG", icc_profile=ADOBE_PROFILE))
    assert photo.space is ADOBE_RGB and photo.space_source == "icc"
    pixels = photo.codes.reshape(-1, 3)
    # Adobe RGB (1998) decoding, colour-science reference
    expected = colour.RGB_COLOURSPACES["Adobe RGB (1998)"].cctf_decoding(pixels / 255)
    np.testing.assert_allclose(photo.linear(pixels), expected, atol=1e-5)


def test_adobe_rgb_from_exif_r03_without_a_profile():
    # DCF 2.0 (CIPA DC-009) option file: ColorSpace 0xFFFF "Uncalibrated" + InteropIndex "R03"
    exif = exif_block(exif_ifd={0xA001: 0xFFFF}, interop={0x0001: "R03"})
    photo = load_photo(saved(random_rgb(), "JPEG", exif=exif))
    assert photo.space is ADOBE_RGB and photo.space_source == "exif"
    codes = np.arange(256)
    expected = colour.RGB_COLOURSPACES["Adobe RGB (1998)"].cctf_decoding(codes / 255)
    np.testing.assert_allclose(photo.decode_table[1], expected, atol=1e-6)


@pytest.mark.parametrize(
    "exif_ifd, interop, source",
    [
        ({0xA001: 1}, None, "exif"),  # Exif ColorSpace 1 = sRGB (CIPA DC-008)
        ({0xA001: 0xFFFF}, {0x0001: "R98"}, "assumed"),  # R98 = DCF basic file, sRGB
        ({}, None, "assumed"),
    ],
)
def test_srgb_from_exif_or_assumed(exif_ifd, interop, source):
    photo = load_photo(saved(random_rgb(), "JPEG", exif=exif_block(exif_ifd=exif_ifd, interop=interop)))
    assert photo.space is SRGB and photo.space_source == source
    np.testing.assert_allclose(photo.decode_table[0], srgb_decoded(np.arange(256), 255), atol=1e-6)


def test_unreadable_profile_falls_back_to_srgb_and_says_why():
    photo = load_photo(saved(random_rgb(), "JPEG", icc_profile=P3_PROFILE[:300]))
    assert photo.space is SRGB and photo.space_source == "assumed"
    assert "truncated" in photo.profile_problem


# --- bit depth -----------------------------------------------------------------------------------


def test_16_bit_png_keeps_16_bit_codes_and_linearises_per_iec_61966_2_1():
    codes = random_rgb(dtype=np.uint16, top=65535)
    photo = load_photo(png16(codes))
    assert photo.codes.dtype == np.uint16 and photo.max_code == 65535
    np.testing.assert_array_equal(photo.codes, codes)
    pixels = photo.codes.reshape(-1, 3)
    np.testing.assert_allclose(photo.linear(pixels), srgb_decoded(pixels, 65535), atol=1e-6)


def test_16_bit_png_with_a_p3_profile_grey_and_alpha():
    codes = random_rgb(dtype=np.uint16, top=65535)
    photo = load_photo(png16(codes, icc_profile=P3_PROFILE))
    assert photo.space is DISPLAY_P3 and photo.decode_table.shape == (3, 65536)
    grey = codes[:, :, 0]
    np.testing.assert_array_equal(load_photo(png16(grey)).codes, np.dstack([grey] * 3))
    rgba = np.dstack([codes, grey])
    np.testing.assert_array_equal(load_photo(png16(rgba)).codes, codes)


def tiff_bytes(array, **options) -> bytes:
    buffer = io.BytesIO()
    tifffile.imwrite(buffer, array, **options)
    return buffer.getvalue()


def test_16_bit_tiff_keeps_16_bit_codes_profile_and_orientation():
    codes = random_rgb(dtype=np.uint16, top=65535)
    data = tiff_bytes(
        codes, photometric="rgb", compression="zlib", iccprofile=ADOBE_PROFILE,
        extratags=[(274, "H", 1, 3, True)],  # TIFF 6.0 Orientation 3: turned half round
    )
    photo = load_photo(data)
    assert photo.format == "TIFF" and photo.codes.dtype == np.uint16
    np.testing.assert_array_equal(photo.codes, codes[::-1, ::-1])
    assert photo.space is ADOBE_RGB
    expected = colour.RGB_COLOURSPACES["Adobe RGB (1998)"].cctf_decoding(codes[-1, -1] / 65535)
    np.testing.assert_allclose(photo.linear(photo.codes[0, 0]), expected, atol=1e-6)


def test_16_bit_tiff_planar_and_greyscale():
    codes = random_rgb(dtype=np.uint16, top=65535)
    planar = tiff_bytes(np.moveaxis(codes, -1, 0), photometric="rgb", planarconfig="separate")
    np.testing.assert_array_equal(load_photo(planar).codes, codes)
    grey = codes[:, :, 1]
    photo = load_photo(tiff_bytes(grey, photometric="minisblack"))
    np.testing.assert_array_equal(photo.codes, np.dstack([grey] * 3))
    # IEC 61966-2-1 decoding of 16-bit codes, colour-science reference
    np.testing.assert_allclose(photo.linear(photo.codes[5, 7]), srgb_decoded(grey[5, 7], 65535), atol=1e-6)


def test_16_bit_lzw_tiff_decodes():
    # Written by libtiff (through Pillow) with LZW; read back by tifffile with imagecodecs' LZW.
    grey = RNG.integers(0, 65536, (48, 64), dtype=np.uint16)
    data = saved(Image.fromarray(grey), "TIFF", compression="tiff_lzw")
    np.testing.assert_array_equal(load_photo(data).codes[:, :, 0], grey)


def test_jpeg_fast_path_matches_pillows_decode_and_still_refuses_truncation():
    # Reference decoder: Pillow (libjpeg-turbo). A file cut short must still be refused.
    codes = RNG.integers(0, 256, (48, 64, 3), dtype=np.uint8)
    data = saved(Image.fromarray(codes, "RGB"), "JPEG", quality=90)
    np.testing.assert_array_equal(load_photo(data).codes, np.asarray(Image.open(io.BytesIO(data))))
    with pytest.raises(PhotoError, match="truncated or damaged"):
        load_photo(data[: len(data) * 2 // 3])


# --- pixel formats ------------------------------------------------------------------------------


def test_greyscale_becomes_three_equal_channels():
    grey = RNG.integers(0, 256, (48, 64), dtype=np.uint8)
    photo = load_photo(saved(Image.fromarray(grey, "L"), "PNG"))
    assert photo.codes.shape == (48, 64, 3)
    np.testing.assert_array_equal(photo.codes, np.dstack([grey] * 3))


def test_palette_becomes_rgb_of_the_palette_entries():
    palette = RNG.integers(0, 256, (16, 3), dtype=np.uint8)
    indices = RNG.integers(0, 16, (48, 64), dtype=np.uint8)
    image = Image.fromarray(indices, "P")
    image.putpalette(palette.ravel().tolist())
    photo = load_photo(saved(image, "PNG"))
    np.testing.assert_array_equal(photo.codes, palette[indices])  # PNG PLTE lookup


def test_alpha_is_dropped():
    rgb = random_rgb()
    rgba = np.dstack([rgb, RNG.integers(0, 256, (48, 64), dtype=np.uint8)])
    np.testing.assert_array_equal(load_photo(saved(rgba, "PNG")).codes, rgb)
    grey = rgb[:, :, 0]
    la = Image.fromarray(np.dstack([grey, grey]), "LA")
    np.testing.assert_array_equal(load_photo(saved(la, "PNG")).codes, np.dstack([grey] * 3))


def test_mpo_from_a_phone_reads_its_first_picture_as_jpeg():
    first, second = random_rgb(), random_rgb()
    data = saved(Image.fromarray(first), "MPO", save_all=True, append_images=[Image.fromarray(second)])
    photo = load_photo(data)
    assert photo.format == "JPEG"
    reference = np.asarray(Image.open(io.BytesIO(data)))  # Pillow reads frame 0 by default
    np.testing.assert_array_equal(photo.codes, reference)


def test_type_is_decided_by_content_and_all_source_kinds_agree(tmp_path):
    rgb = random_rgb()
    path = tmp_path / "photo.jpg"  # a PNG under a JPEG name
    path.write_bytes(saved(rgb, "PNG"))
    with path.open("rb") as handle:
        from_handle = load_photo(handle)
    for photo in (load_photo(path), load_photo(str(path)), load_photo(path.read_bytes()), from_handle):
        assert photo.format == "PNG"
        np.testing.assert_array_equal(photo.codes, rgb)


def test_codes_are_read_only_and_linear_wants_integer_codes():
    photo = load_photo(saved(random_rgb(), "PNG"))
    with pytest.raises(ValueError):
        photo.codes[0, 0, 0] = 1
    with pytest.raises(ValueError, match="integer codes"):
        photo.linear(np.zeros((2, 3)))


# --- metadata ---------------------------------------------------------------------------------


@pytest.mark.parametrize("fmt", ["JPEG", "PNG"])
def test_exif_camera_settings_read_back(fmt):
    # Tag numbers from CIPA DC-008: Make 0x010F, Model 0x0110, ExposureTime 0x829A,
    # FNumber 0x829D, PhotographicSensitivity 0x8827, DateTimeOriginal 0x9003, WhiteBalance 0xA403
    exif = exif_block(
        base={0x010F: "Glowmaker", 0x0110: "Test Cam 2"},
        exif_ifd={
            0x829A: rational(1, 250), 0x829D: rational(28, 10), 0x8827: 400,
            0x9003: "2024:05:01 18:30:05", 0xA403: 0,
        },
    )
    meta = load_photo(saved(random_rgb(), fmt, exif=exif)).metadata
    assert meta.white_balance == "auto"
    assert meta.exposure_time_s == pytest.approx(0.004)
    assert meta.f_number == pytest.approx(2.8)
    assert meta.iso == 400
    assert (meta.camera_make, meta.camera_model) == ("Glowmaker", "Test Cam 2")
    assert meta.taken_at == datetime(2024, 5, 1, 18, 30, 5)
    round_trip = json.loads(json.dumps(meta.to_dict()))
    assert round_trip["taken_at"] == "2024-05-01T18:30:05" and round_trip["iso"] == 400


# Exposure tags of the Exif IFD (Exif 2.32, CIPA DC-008-2019): ExposureTime 0x829A (RATIONAL, s),
# FNumber 0x829D (RATIONAL), PhotographicSensitivity 0x8827 (SHORT), SensitivityType 0x8830
# (SHORT; 1 = standard output sensitivity of ISO 12232), StandardOutputSensitivity 0x8831
# (LONG), ExposureBiasValue 0x9204 (SRATIONAL, EV), CustomRendered 0xA401 (SHORT; 1 = custom).
EXPOSURE_TAGS = {
    0x829A: rational(1, 60), 0x829D: rational(18, 10), 0x8827: 640, 0x8830: 1, 0x8831: 640,
    0x9204: rational(-2, 3), 0xA401: 1,
}


def with_exif_ifd(array, fmt, exif_ifd) -> bytes:
    """A photo whose Exif IFD holds ``exif_ifd``; Pillow takes a TIFF's Exif IFD as ``tiffinfo``.

    The EXIF goes as bytes: Pillow's PNG writer skips an Exif object with an empty IFD 0.
    """
    if fmt == "TIFF":
        return saved(array, "TIFF", tiffinfo={0x8769: exif_ifd})
    return saved(array, fmt, exif=exif_block(exif_ifd=exif_ifd).tobytes())


@pytest.mark.parametrize("fmt", ["JPEG", "PNG", "TIFF"])
def test_exposure_tags_read_back(fmt):
    meta = load_photo(with_exif_ifd(random_rgb(), fmt, EXPOSURE_TAGS)).metadata
    assert meta.exposure_time_s == pytest.approx(1 / 60)
    assert meta.f_number == pytest.approx(1.8)
    assert meta.iso == 640 and meta.standard_output_sensitivity == 640
    assert meta.sensitivity_type == 1  # SOS
    assert meta.exposure_bias_ev == pytest.approx(-2 / 3)
    assert meta.custom_rendered == 1
    round_trip = json.loads(json.dumps(meta.to_dict()))
    assert round_trip["exposure_bias_ev"] == pytest.approx(-2 / 3) and round_trip["custom_rendered"] == 1


def test_zero_exposure_compensation_is_a_value_not_a_gap():
    meta = load_photo(with_exif_ifd(random_rgb(), "JPEG", {0x9204: rational(0, 1), 0xA401: 0})).metadata
    assert meta.exposure_bias_ev == 0.0 and meta.custom_rendered == 0  # 0 EV; 0 = normal process


@pytest.mark.parametrize(
    ("tag", "value", "field"),
    [
        (0x829A, rational(-1, 250), "exposure_time_s"),  # negative (written as SRATIONAL)
        (0x829A, rational(0, 1), "exposure_time_s"),  # zero
        (0x829A, rational(0, 0), "exposure_time_s"),  # 0/0: not a number
        (0x829A, rational(7200, 1), "exposure_time_s"),  # two hours: beyond the plausible hour
        (0x829D, rational(0, 10), "f_number"),
        (0x829D, rational(1, 0), "f_number"),  # infinite
        (0x829D, rational(3, 10), "f_number"),  # f/0.3: no lens in air is faster than f/0.5
        (0x8827, 0, "iso"),
        (0x8831, 0, "standard_output_sensitivity"),
        (0x9204, rational(0, 0), "exposure_bias_ev"),
        (0x9204, rational(40, 1), "exposure_bias_ev"),  # +40 EV: no camera offers that
        (0x8830, 9, "sensitivity_type"),  # Exif 2.32 defines 0 to 7
    ],
)
def test_impossible_exposure_values_read_as_missing(tag, value, field):
    meta = load_photo(with_exif_ifd(random_rgb(), "JPEG", {tag: value})).metadata
    assert getattr(meta, field) is None


def test_an_iso_above_the_short_tag_comes_from_standard_output_sensitivity():
    # Exif 2.32: PhotographicSensitivity is 65535 when the value is higher; SensitivityType 1
    # says the SOS tag holds it.
    tags = {0x8827: 65535, 0x8830: 1, 0x8831: 102400}
    assert load_photo(with_exif_ifd(random_rgb(), "JPEG", tags)).metadata.iso == 102400


def test_manual_white_balance_and_missing_metadata():
    manual = exif_block(exif_ifd={0xA403: 1, 0x9003: "    :  :     :  :  "})  # blank date
    meta = load_photo(saved(random_rgb(), "JPEG", exif=manual)).metadata
    assert meta.white_balance == "manual" and meta.taken_at is None
    bare = load_photo(saved(random_rgb(), "JPEG")).metadata
    assert set(bare.to_dict().values()) == {None}


# --- refusals -------------------------------------------------------------------------------------


def refusal(data, **options) -> str:
    with pytest.raises(PhotoError) as caught:
        load_photo(data, **options)
    return str(caught.value)


def test_cmyk_is_refused_with_a_reason():
    cmyk = Image.fromarray(RNG.integers(0, 256, (48, 64, 4), dtype=np.uint8), "CMYK")
    assert "CMYK photos are print separations" in refusal(saved(cmyk, "JPEG"))


def test_animations_and_multi_page_files_are_refused():
    frames = [Image.fromarray(random_rgb()) for _ in range(3)]
    gif = saved(frames[0], "GIF", save_all=True, append_images=frames[1:], duration=100)
    apng = saved(frames[0], "PNG", save_all=True, append_images=frames[1:])
    tiff = saved(frames[0], "TIFF", save_all=True, append_images=frames[1:])
    for data in (gif, apng, tiff):
        assert "3 frames" in refusal(data)


def test_empty_truncated_and_damaged_files_are_refused(tmp_path):
    assert "empty" in refusal(b"")
    jpeg = saved(random_rgb(), "JPEG")
    assert "truncated" in refusal(jpeg[: len(jpeg) // 2])
    png_data = saved(random_rgb(), "PNG")
    assert "truncated" in refusal(png_data[: len(png_data) // 2])
    damaged = bytearray(png_data)
    damaged[60:90] = b"\xff" * 30  # inside the zlib stream of IDAT
    assert "damaged" in refusal(bytes(damaged))
    assert "could not be read" in refusal(tmp_path / "no such photo.jpg")


def test_things_that_are_not_photos_are_refused():
    expected = "not an image glowtemp can read (JPEG, PNG, TIFF, HEIC or DNG)"
    assert expected in refusal(b"Kiln log: cone 6 at 10:40\n" * 20)
    assert expected in refusal(b"%PDF-1.7\n1 0 obj << /Type /Catalog >> endobj\n" * 10)
    assert "GIF" in refusal(saved(random_rgb(), "GIF"))
    assert "HEIC" in refusal(b"\0\0\0\x18ftypheic\0\0\0\0mif1heic" + b"\0" * 64)


def test_raw_dng_is_refused():
    dng = tiff_bytes(random_rgb(), photometric="rgb", extratags=[(50706, "B", 4, (1, 4, 0, 0), True)])
    assert "DNG" in refusal(dng)  # DNGVersion tag 0xC612, Adobe DNG 1.4 specification


def test_too_many_pixels_are_refused_from_the_header():
    assert "megapixels" in refusal(saved(random_rgb(), "PNG"), max_pixels=1000)
    # header claims 9000 x 9000 = 81 Mpx, over the 50 Mpx default; no pixel data is decoded
    assert "81 megapixels" in refusal(header_only_png(9000, 9000))
    # 40000 x 40000 trips Pillow's own decompression-bomb guard first
    assert "far too large" in refusal(header_only_png(40000, 40000))


def test_tiny_images_are_refused():
    assert "at least 8 x 8" in refusal(saved(random_rgb(7, 64), "PNG"))
    assert "at least 8 x 8" in refusal(saved(random_rgb(48, 5), "JPEG"))


def test_16_bit_png_reads_its_exif_chunk_after_the_image_data_without_a_second_decode(monkeypatch):
    # An eXIf chunk may follow IDAT (PNG 3rd ed., 11.3.6); its Orientation 6 turns the photo
    # upright as CIPA DC-008 says. Pillow would find it only by decoding every pixel into its own
    # 8-bit copy, so Pillow's load is made to fail here: the 16-bit codes come from libpng alone.
    from photo_files import png_chunk

    stored = random_rgb(dtype=np.uint16, top=65535)
    data = png16(stored)
    exif = exif_block(orientation=6).tobytes()[6:]  # without the "Exif\0\0" of JPEG APP1 (PNG 11.3.6)
    iend = data.rindex(b"IEND") - 4
    with_exif = data[:iend] + png_chunk(b"eXIf", exif) + data[iend:]

    def no_pillow_decode(self, *args, **kwargs):
        raise AssertionError("Pillow decoded the 16-bit PNG's pixels")

    monkeypatch.setattr(Image.Image, "load", no_pillow_decode)
    photo = load_photo(with_exif)
    assert photo.codes.dtype == np.uint16
    np.testing.assert_array_equal(photo.codes, upright(stored, 6))
    assert load_photo(data).codes.shape == stored.shape  # no eXIf chunk at all
