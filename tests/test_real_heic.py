"""The HEIC path on real phone files: two iPhone photos (tests/data/real/README.md).

phone-a.heic (iPhone 11 Pro Max, 2566 x 3313, flowers in daylight) needs no turning;
phone-b.heic (iPhone 13 Pro Max, 12 MP, a kitchen) stores a landscape picture with a HEIF
rotation and EXIF Orientation 6, and carries a thumbnail and an HDR gain map besides the photo.
Neither is glow. LittleCMS (Pillow's ImageCms) and libheif (pillow-heif) are the references.
"""

import io
import json
from datetime import datetime

import numpy as np
import pillow_heif
import pytest
from PIL import Image, ImageCms

from glowtemp.shell import cli
from glowtemp.physics.colourspaces import DISPLAY_P3, SRGB, srgb_encode
from glowtemp.images.photo import load_photo

from real_files import FLOWERS_HEIC, KITCHEN_HEIC, real_file

PHONES = {
    FLOWERS_HEIC.name: ((2566, 3313), "iPhone 11 Pro Max", datetime(2021, 4, 11, 15, 47, 53)),
    KITCHEN_HEIC.name: ((3024, 4032), "iPhone 13 Pro Max", datetime(2022, 2, 16, 12, 55, 41)),
}


@pytest.fixture(scope="module", params=[FLOWERS_HEIC, KITCHEN_HEIC], ids=lambda path: path.name)
def phone(request):
    data = real_file(request.param)
    return request.param.name, data, load_photo(data)


def test_real_heics_decode_with_their_display_p3_profile_and_exif(phone):
    name, data, photo = phone
    size, model, taken_at = PHONES[name]
    assert photo.format == "HEIC" and (photo.width, photo.height) == size
    assert photo.space is DISPLAY_P3 and photo.space_source == "icc"
    meta = photo.metadata
    assert (meta.camera_make, meta.camera_model, meta.taken_at) == ("Apple", model, taken_at)
    assert meta.white_balance == "auto"  # Exif WhiteBalance 0 (CIPA DC-008 0xA403)


def test_colour_through_the_embedded_profile_agrees_with_littlecms(phone):
    # The file's own ICC profile, applied by LittleCMS (relative colorimetric to sRGB), is the
    # reference for glowtemp's decode table and matrix; LittleCMS works in 16 bits: one code.
    _, data, photo = phone
    profile = ImageCms.ImageCmsProfile(io.BytesIO(Image.open(io.BytesIO(data)).info["icc_profile"]))
    assert ImageCms.getProfileDescription(profile).strip() == "Display P3"
    crop = np.ascontiguousarray(photo.codes[1000:1064, 1000:1064])
    reference = ImageCms.profileToProfile(
        Image.fromarray(crop), profile, ImageCms.createProfile("sRGB"),
        renderingIntent=ImageCms.Intent.RELATIVE_COLORIMETRIC,
    )
    linear = photo.linear(crop.reshape(-1, 3)) @ (SRGB.xyz_to_rgb @ photo.space.rgb_to_xyz).T
    ours = np.round(255 * srgb_encode(np.clip(linear, 0.0, 1.0))).reshape(crop.shape)
    assert np.abs(ours - np.asarray(reference, dtype=int)).max() <= 1


def test_the_photo_is_the_primary_image_as_libheif_decodes_it(phone):
    # libheif applies the HEIF transforms (irot, imir; ISO/IEC 23008-12 section 6.5.10) to the
    # primary item; glowtemp must give exactly that picture, turned once, not a thumbnail or an
    # auxiliary image.
    _, data, photo = phone
    heif = pillow_heif.open_heif(io.BytesIO(data))
    assert np.array_equal(photo.codes, np.asarray(heif[heif.primary_index]))


def test_the_kitchen_photo_is_turned_upright_once():
    # EXIF Orientation 6 (CIPA DC-008 0x0112: the stored 0th row is the visual right side) on a
    # 4032 x 3024 landscape grid: upright the photo is portrait. Checked by hand on a preview,
    # the white ceiling is at the top and the dark table at the bottom; turned a quarter or a
    # half too far, the brightest tenth of the frame would be a side or the bottom.
    data = real_file(KITCHEN_HEIC)
    photo = load_photo(data)
    assert Image.open(io.BytesIO(data)).info["original_orientation"] == 6
    assert photo.height > photo.width
    luminance = photo.linear(photo.codes[::8, ::8]) @ (SRGB.xyz_to_rgb @ photo.space.rgb_to_xyz)[1]
    tenth_rows, tenth_cols = luminance.shape[0] // 10, luminance.shape[1] // 10
    top = luminance[:tenth_rows].mean()
    others = [luminance[-tenth_rows:].mean(), luminance[:, :tenth_cols].mean(), luminance[:, -tenth_cols:].mean()]
    assert top > 1.5 * max(others)


def test_thumbnails_depth_and_auxiliary_images_are_never_read():
    # The kitchen file holds a 320 x 240 thumbnail ('thmb' reference) and an HDR gain map
    # (an 'auxl' image, ISO/IEC 23008-12 section 6.6.2.1) besides the photo. glowtemp opens
    # HEIF with pillow-heif's thumbnail, depth and auxiliary image support turned off, so
    # nothing decodes them and the photo is the primary image alone.
    data = real_file(KITCHEN_HEIC)
    assert b"thmb" in data and b"auxl" in data and b"urn:com:apple:photo:2020:aux:hdrgainmap" in data
    load_photo(data)
    options = pillow_heif.options
    assert (options.THUMBNAILS, options.DEPTH_IMAGES, options.AUX_IMAGES) == (False, False, False)
    info = Image.open(io.BytesIO(data)).info
    assert not info.get("thumbnails") and not info.get("depth_images") and not info.get("aux")


@pytest.mark.parametrize("path", [FLOWERS_HEIC, KITCHEN_HEIC], ids=lambda path: path.name)
def test_daylight_and_room_photos_are_refused_as_not_glow_on_the_command_line(path, capsys):
    # Flowers in daylight and a lamp-lit kitchen (real iPhone files): their colours are whiter
    # than anything a kiln or forge glows with, or no glow colour at all, so no temperature.
    assert cli.main(["measure", str(path), "--json"]) == 0
    result = json.loads(capsys.readouterr().out)
    assert result["status"] == "not-glow"
    assert result["temperature_c"] is None and result["interval_95_c"] is None and result["upper_bound_c"] is None
    codes = {w["code"] for w in result["warnings"]}
    assert codes & {"daylight-or-lamp", "not-glow-colour"}
    assert not codes & {"too-dark", "no-usable-pixels"}


@pytest.mark.parametrize("path", [FLOWERS_HEIC, KITCHEN_HEIC], ids=lambda path: path.name)
def test_daylight_and_room_photos_are_refused_as_not_glow_through_the_web_upload(path, web_client):
    answer = web_client.post("/api/readings", data={"photo": (io.BytesIO(real_file(path)), path.name)},
                             content_type="multipart/form-data")
    result = answer.get_json()
    assert answer.status_code == 201, result  # stored as a reading that gives no temperature
    assert result["status"] == "not-glow" and result["temperature_c"] is None and result["interval_95_c"] is None
    assert {w["code"] for w in result["warnings"]} & {"daylight-or-lamp", "not-glow-colour"}
