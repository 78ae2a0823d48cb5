"""A cold measure's head start: a JPEG's decode begun before Pillow and the measuring modules load.

References: Pillow (the reference reader here) for every frame size and every decoded code;
ITU-T T.81 B.2.2 for the frame header's layout; the measuring path itself, taken the ordinary
way, for the readings.
"""

import io
import json
import struct
import subprocess
import sys

import numpy as np
import pytest
from PIL import Image, ImageOps

from glowtemp.images.jpeg_decoding import HeadStart, frame_header
from glowtemp.images.photo import PhotoError, begin_loading, load_photo
from glowtemp.render.synthetic import encode_jpeg, render_photo
from glowtemp.render.synthetic_camera import CAMERAS
from glowtemp.shell.batch import measure_file

HEAD_START_ALONE = """
import sys
from glowtemp.images.jpeg_decoding import HeadStart
started = HeadStart.begin(sys.argv[1])
print(started is not None, started.decoding.is_alive() or started.decoding.pixels() is not None,
      *[name in sys.modules for name in ("PIL", "glowtemp.images.photo", "glowtemp.estimation.reading")])
"""


@pytest.fixture(scope="module")
def glow(tmp_path_factory):
    rendered = render_photo(1273.15, camera=CAMERAS["Nikon 5100 (NPL)"], size=(160, 120), seed=5)
    return tmp_path_factory.mktemp("head-start"), rendered


def _jpeg(folder, name, rendered) -> str:
    path = folder / name
    path.write_bytes(encode_jpeg(rendered))
    return str(path)


def _pillow_jpeg(folder, name, pixels, **options) -> str:
    path = folder / name
    Image.fromarray(pixels).save(path, "JPEG", **options)
    return str(path)


@pytest.mark.parametrize("options", [
    {"quality": 95, "subsampling": 0},  # 4:4:4
    {"quality": 80, "subsampling": 2},  # 4:2:0
    {"quality": 90, "progressive": True},
])
def test_the_frame_size_is_the_one_pillow_reads(glow, options):
    folder, rendered = glow
    pixels = np.random.default_rng(1).integers(0, 256, (37, 53, 3), dtype=np.uint8)
    path = _pillow_jpeg(folder, "frame.jpg", pixels, **options)
    data = open(path, "rb").read()
    with Image.open(io.BytesIO(data)) as image:  # Pillow, the reference reader
        assert frame_header(data) == (*image.size, len(image.getbands()))


def test_a_header_without_a_frame_or_not_a_jpeg_has_no_frame_size():
    scan_first = b"\xff\xd8" + b"\xff\xda" + struct.pack(">H", 8) + bytes(6)  # SOS before SOF (T.81 B.2)
    assert frame_header(scan_first) is None
    assert frame_header(b"\x89PNG\r\n\x1a\n" + bytes(20)) is None
    assert frame_header(b"\xff\xd8\xff") is None  # cut inside the first marker


def test_a_head_start_gives_the_codes_and_the_reading_of_the_ordinary_path(glow):
    folder, rendered = glow
    with Image.open(io.BytesIO(encode_jpeg(rendered))) as image:  # the render, turned by EXIF
        exif = image.getexif()
        exif[0x0112] = 6  # Orientation: right/top (CIPA DC-008)
        path = folder / "turned.jpg"
        image.save(path, "JPEG", quality=92, exif=exif.tobytes(), icc_profile=image.info["icc_profile"])
    path = str(path)
    started = HeadStart.begin(path)
    assert started is not None
    with_head_start = begin_loading(started).finish()
    ordinary = load_photo(path)
    with Image.open(path) as image:  # Pillow's decode of the same file, turned upright by its EXIF
        upright = np.asarray(ImageOps.exif_transpose(image))
    assert np.array_equal(with_head_start.codes, ordinary.codes)
    assert np.array_equal(with_head_start.codes, upright)
    assert with_head_start.space is ordinary.space and with_head_start.metadata == ordinary.metadata
    assert measure_file(path, head_start=HeadStart.begin(path)) == measure_file(path)


def test_the_command_measures_one_photo_with_a_head_start(glow, monkeypatch, capsys):
    from glowtemp.shell import cli

    folder, rendered = glow
    path = _jpeg(folder, "one.jpg", rendered)
    begun = []
    begin = HeadStart.begin.__func__
    monkeypatch.setattr(HeadStart, "begin", classmethod(lambda cls, p: begun.append(p) or begin(cls, p)))
    assert cli.main(["measure", path, "--json"]) == 0
    assert begun == [path]
    assert json.loads(capsys.readouterr().out) == measure_file(path).result


def test_a_head_start_loads_neither_pillow_nor_the_measuring_modules(glow):
    folder, rendered = glow
    path = _jpeg(folder, "alone.jpg", rendered)
    shown = subprocess.run([sys.executable, "-c", HEAD_START_ALONE, path], capture_output=True, text=True,
                           check=True).stdout.split()
    assert shown == ["True", "True", "False", "False", "False"]


def test_no_head_start_for_what_is_not_a_whole_colour_jpeg(glow):
    folder, rendered = glow
    whole = open(_jpeg(folder, "whole.jpg", rendered), "rb").read()
    cut = folder / "cut.jpg"
    cut.write_bytes(whole[: len(whole) // 2])
    grey = _pillow_jpeg(folder, "grey.jpg", np.full((16, 16), 200, np.uint8))
    png = folder / "glow.png"
    Image.new("RGB", (16, 16), (250, 120, 20)).save(png)
    # A frame header claiming 60 000 x 60 000 pixels (T.81 B.2.2): refused before any decode.
    huge = folder / "huge.jpg"
    huge.write_bytes(b"\xff\xd8\xff\xc0" + struct.pack(">HBHHB", 17, 8, 60000, 60000, 3) + bytes(9) + b"\xff\xd9")
    for refused in (cut, grey, png, huge, folder, folder / "missing.jpg"):
        assert HeadStart.begin(refused) is None
    with pytest.raises(PhotoError):  # the ordinary path still says why, in its own words
        load_photo(huge)
