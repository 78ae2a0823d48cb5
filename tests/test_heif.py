"""HEIC photos: files made here with pillow-heif (libheif) from rendered scenes."""

import io
import subprocess
import sys
from datetime import datetime

import numpy as np
import pillow_heif
import pytest
from PIL import Image

from glowtemp.physics.colourspaces import DISPLAY_P3, SRGB
from glowtemp.images.icc import build_matrix_profile
from glowtemp.images.photo import PhotoError, load_photo, upright
from glowtemp.estimation.reading import measure
from glowtemp.render.synthetic import exif_bytes, render_photo
from glowtemp.render.synthetic_camera import ideal_camera

from photo_files import exif_block, rational

pillow_heif.register_heif_opener()
LOSSLESS = {"quality": -1, "chroma": 444, "matrix_coefficients": 0}  # RGB kept exactly (H.273 MC 0)


def heic(array: np.ndarray, **options) -> bytes:
    out = io.BytesIO()
    Image.fromarray(array).save(out, "HEIF", **LOSSLESS, **options)
    return out.getvalue()


def rendered_p3(temperature_c=1000.0):
    return render_photo(temperature_c + 273.15, camera=ideal_camera(), size=(96, 64), output_space=DISPLAY_P3)


def test_a_display_p3_heic_keeps_its_profile_exif_and_pixels():
    rendered = rendered_p3()
    data = heic(rendered.codes, icc_profile=build_matrix_profile(DISPLAY_P3), exif=exif_bytes(rendered))
    assert data[4:8] == b"ftyp" and data[8:12] in (b"heic", b"heix")  # ISO/IEC 23008-12 brands
    photo = load_photo(data)
    assert photo.format == "HEIC"
    assert photo.space is DISPLAY_P3 and photo.space_source == "icc"
    assert np.array_equal(photo.codes, rendered.codes)
    assert photo.metadata.taken_at == rendered.taken_at
    assert photo.metadata.white_balance == "manual"  # Exif WhiteBalance 1, as rendered
    assert photo.metadata.camera_model == ideal_camera().name


def test_heic_glow_is_measured_like_the_same_pixels_in_a_png():
    rendered = rendered_p3(1000.0)
    profile = build_matrix_profile(DISPLAY_P3)
    from_heic = measure(load_photo(heic(rendered.codes, icc_profile=profile))).to_dict()
    out = io.BytesIO()
    Image.fromarray(rendered.codes).save(out, "PNG", icc_profile=profile)
    from_png = measure(load_photo(out.getvalue())).to_dict()
    assert from_heic["colour_space"] == "Display P3"
    for key in ("status", "temperature_c", "interval_95_c", "pixels_used"):
        assert from_heic[key] == from_png[key]
    low, high = from_heic["interval_95_c"]
    assert low <= 1000 <= high  # the rendered truth


def test_orientation_is_applied_once():
    # pillow-heif stores EXIF Orientation as the HEIF transform (irot) and libheif applies it on
    # decoding; glowtemp must not turn the photo a second time. Orientation 6 (CIPA DC-008):
    # the stored 0th row is on the visual right, so the stored top-left mark ends top-right.
    stored = np.zeros((48, 64, 3), dtype=np.uint8)
    stored[:12, :12] = (200, 40, 10)
    photo = load_photo(heic(stored, exif=exif_block(orientation=6).tobytes()))
    assert (photo.width, photo.height) == (48, 64)
    assert np.array_equal(photo.codes, upright(stored, 6))
    assert photo.codes[5, -5].tolist() == [200, 40, 10]


@pytest.mark.parametrize("primaries, space", [(1, SRGB), (12, DISPLAY_P3)])
def test_heif_colour_information_without_a_profile_names_the_space(primaries, space):
    # ITU-T H.273: ColourPrimaries 1 = BT.709 (sRGB primaries), 12 = P3 D65; transfer 13 = sRGB
    data = heic(rendered_p3().codes, color_primaries=primaries, transfer_characteristics=13)
    photo = load_photo(data)
    assert photo.space is space and photo.space_source == "cicp"


def test_a_damaged_heic_is_refused_in_plain_words():
    data = heic(rendered_p3().codes)
    message = str(pytest.raises(PhotoError, load_photo, data[: len(data) // 2]).value)
    assert "HEIC" in message or "truncated" in message


def test_time_taken_is_read_from_heic_exif():
    exif = exif_block(exif_ifd={0x9003: "2025:02:03 19:45:10"})
    photo = load_photo(heic(rendered_p3().codes, exif=exif.tobytes()))
    assert photo.metadata.taken_at == datetime(2025, 2, 3, 19, 45, 10)


def test_exposure_settings_are_read_from_heic_exif():
    # Exif 2.32 (CIPA DC-008-2019): ExposureTime 0x829A, FNumber 0x829D, PhotographicSensitivity
    # 0x8827, SensitivityType 0x8830 (1 = SOS), ExposureBiasValue 0x9204, CustomRendered 0xA401.
    exif = exif_block(exif_ifd={0x829A: rational(1, 120), 0x829D: rational(16, 10), 0x8827: 50,
                                0x8830: 1, 0x9204: rational(1, 3), 0xA401: 0})
    meta = load_photo(heic(rendered_p3().codes, exif=exif.tobytes())).metadata
    assert meta.exposure_time_s == pytest.approx(1 / 120) and meta.f_number == pytest.approx(1.6)
    assert (meta.iso, meta.sensitivity_type, meta.custom_rendered) == (50, 1, 0)
    assert meta.exposure_bias_ev == pytest.approx(1 / 3)


def test_measuring_a_jpeg_loads_neither_libheif_nor_libraw():
    # glowtemp measure must start fast: the HEIC and raw decoders load only for those files.
    code = (
        "import sys, io; from PIL import Image; from glowtemp.shell import cli; from glowtemp.images.photo import load_photo;"
        "out = io.BytesIO(); Image.new('RGB', (32, 32), (200, 60, 10)).save(out, 'JPEG');"
        "load_photo(out.getvalue());"
        "print(sorted(m for m in ('pillow_heif', 'rawpy', 'tqdm') if m in sys.modules))"
    )
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert result.stdout.strip() == "[]"
