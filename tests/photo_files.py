"""Test helper: small photo files made in memory with Pillow, pypng and tifffile."""

import io
import struct
import zlib

import numpy as np
import png
from PIL import Image, TiffImagePlugin

IFD_EXIF, IFD_INTEROP = 0x8769, 0xA005


def saved(image_or_array, fmt: str, **options) -> bytes:
    """The bytes Pillow writes for an image (or a uint8 array) in format ``fmt``."""
    image = image_or_array
    if isinstance(image_or_array, np.ndarray):
        image = Image.fromarray(image_or_array)
    buffer = io.BytesIO()
    image.save(buffer, fmt, **options)
    return buffer.getvalue()


def exif_block(orientation=None, base=None, exif_ifd=None, interop=None) -> Image.Exif:
    """An Exif object (CIPA DC-008 tag numbers) for Pillow's ``save(exif=...)``."""
    exif = Image.Exif()
    exif.update(base or {})
    if orientation is not None:
        exif[0x0112] = orientation
    ifd = exif.get_ifd(IFD_EXIF)
    ifd.update(exif_ifd or {})
    if interop:
        ifd[IFD_INTEROP] = interop
    return exif


def rational(numerator: int, denominator: int):
    return TiffImagePlugin.IFDRational(numerator, denominator)


def png_chunk(kind: bytes, payload: bytes) -> bytes:
    """One PNG chunk: length, type, data, CRC-32 (PNG 3rd ed., section 5.3)."""
    return struct.pack(">I", len(payload)) + kind + payload + struct.pack(">I", zlib.crc32(kind + payload))


def png16(array: np.ndarray, icc_profile: bytes | None = None) -> bytes:
    """A 16-bit PNG written by pypng; ``array`` is (H, W) grey or (H, W, planes) uint16."""
    height, width = array.shape[:2]
    planes = 1 if array.ndim == 2 else array.shape[2]
    writer = png.Writer(width, height, greyscale=planes in (1, 2), alpha=planes in (2, 4), bitdepth=16)
    buffer = io.BytesIO()
    writer.write(buffer, array.reshape(height, width * planes))
    data = buffer.getvalue()
    if icc_profile:  # iCCP goes before IDAT, right after IHDR (PNG 3rd ed., section 11.3.2.3)
        iccp = png_chunk(b"iCCP", b"test profile\0\0" + zlib.compress(icc_profile))
        data = data[:33] + iccp + data[33:]
    return data


def header_only_png(width: int, height: int) -> bytes:
    """A PNG whose IHDR claims ``width`` x ``height`` pixels but whose data is a few bytes."""
    ihdr = struct.pack(">IIBBBBB", width, height, 8, 2, 0, 0, 0)
    return (
        b"\x89PNG\r\n\x1a\n" + png_chunk(b"IHDR", ihdr)
        + png_chunk(b"IDAT", zlib.compress(b"\0" * 16)) + png_chunk(b"IEND", b"")
    )


def marked(height: int = 48, width: int = 64, grey: int = 128) -> np.ndarray:
    """A grey uint8 RGB array, to be painted with corner marks."""
    return np.full((height, width, 3), grey, dtype=np.uint8)
