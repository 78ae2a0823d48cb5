"""HEIC and raw DNG photos through the web API: measured, stored under their own suffix, previewed.

The files are made here: a HEIC with pillow-heif (libheif) from a rendered scene, a DNG with
glowtemp's Bayer renderer and tifffile. Expected readings come from the core measuring the same
bytes; expected preview colours come from colour-science.
"""

from __future__ import annotations

import hashlib
import io

import colour
import numpy as np
import pillow_heif
import pytest
from PIL import Image

from glowtemp.images.photo import STORED_SUFFIXES, load_photo
from glowtemp.estimation.reading import measure
from glowtemp.render.synthetic import render_photo
from glowtemp.render.synthetic_camera import ideal_camera
from glowtemp.render.synthetic_raw import encode_dng, render_raw

from test_web_api import WEB_ONLY_KEYS, post_photo

pillow_heif.register_heif_opener()
SIZE = (160, 120)


def heic_photo(temperature_c: float, **options) -> bytes:
    """A lossy HEIC (HEVC, as phones save it) of a rendered spy hole at ``temperature_c``."""
    rendered = render_photo(temperature_c + 273.15, camera=ideal_camera(), size=SIZE, **options)
    out = io.BytesIO()
    Image.fromarray(rendered.codes).save(out, "HEIF", quality=90)
    return out.getvalue()


def dng_photo(temperature_c: float, **options) -> bytes:
    """A raw DNG of a rendered capture at ``temperature_c`` by a sensor with the CIE 1931 CMFs."""
    return encode_dng(render_raw(temperature_c + 273.15, camera=ideal_camera(), size=SIZE, **options))


def blackbody_display_codes(temperature_c: float) -> np.ndarray:
    """sRGB codes of a blackbody with its strongest channel at full scale, by colour-science
    (Planck's law through the CIE 1931 2° observer, IEC 61966-2-1 matrix and encoding)."""
    cmfs = colour.MSDS_CMFS["CIE 1931 2 Degree Standard Observer"]
    xyz = colour.sd_to_XYZ(colour.sd_blackbody(temperature_c + 273.15, cmfs.shape), cmfs, method="Integration")
    srgb = colour.RGB_COLOURSPACES["sRGB"]
    rgb = np.clip(colour.XYZ_to_RGB(xyz, srgb, chromatic_adaptation_transform=None, apply_cctf_encoding=False), 0, None)
    return np.round(colour.cctf_encoding(rgb / rgb.max(), "sRGB") * 255)


@pytest.mark.parametrize("kind, make", [("HEIC", heic_photo), ("DNG", dng_photo)])
def test_heic_and_dng_uploads_are_measured_and_stored_under_their_suffix(web_app, web_client, kind, make):
    data = make(1000.0)
    response = post_photo(web_client, data, name="IMG_0001.bin")
    assert response.status_code == 201, response.get_json()
    body = response.get_json()
    suffix = STORED_SUFFIXES[kind]
    name = f"photo-{hashlib.sha256(data).hexdigest()[:12]}{suffix}"  # SHA-256, FIPS 180-4
    # The web shell gives the core's own reading of the same bytes (with the raw camera term by default).
    expected = measure(load_photo(data), photo_name=name).to_dict()
    assert {k: v for k, v in body.items() if k not in WEB_ONLY_KEYS} == expected
    low, high = body["interval_95_c"]
    assert low <= 1000.0 <= high  # the rendered truth
    logbook = web_app.extensions["glowtemp"]["logbook"]
    stored = logbook.get_reading(body["id"])
    assert stored["photo_key"].endswith(suffix) and stored["photo_name"] == name
    assert logbook.photo_path(stored["photo_key"]).read_bytes() == data
    # Moving the region measures the stored file again.
    width, height = body["image"]["width"], body["image"]["height"]
    again = web_client.post(f"/api/readings/{body['id']}/region", json={"circle": f"{width // 2},{height // 2},{height // 6}"})
    assert again.status_code == 200 and again.get_json()["colour_space"] == expected["colour_space"]


@pytest.mark.parametrize("temperature_c", [800.0, 1200.0])
def test_a_raw_preview_shows_the_glow_in_its_blackbody_colour(web_client, temperature_c):
    # A raw file is linear light: shown as 8-bit codes it would look dark and too red. Brought to
    # sRGB and a display brightness, a colorimetric sensor's glow shows the blackbody's colour.
    body = post_photo(web_client, dng_photo(temperature_c, scene="uniform"), name="glow.dng").get_json()
    response = web_client.get(body["preview_url"])
    assert response.status_code == 200 and response.mimetype == "image/jpeg"
    with Image.open(io.BytesIO(response.data)) as preview:
        assert preview.size == (body["image"]["width"], body["image"]["height"])
        shown = np.median(np.asarray(preview.convert("RGB")).reshape(-1, 3), axis=0)
    assert shown == pytest.approx(blackbody_display_codes(temperature_c), abs=12)


def test_a_heic_preview_keeps_the_photo_s_own_colours(web_client):
    data = heic_photo(1100.0, scene="uniform")
    body = post_photo(web_client, data, name="glow.heic").get_json()
    with Image.open(io.BytesIO(web_client.get(body["preview_url"]).data)) as preview:
        shown = np.asarray(preview.convert("RGB")).astype(float)
    with Image.open(io.BytesIO(data)) as original:  # decoded by libheif through pillow-heif
        own = np.asarray(original.convert("RGB")).astype(float)
    assert np.abs(shown - own).mean() < 3  # an sRGB photo is shown as its camera encoded it
