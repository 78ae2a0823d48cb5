"""Photo decoding: file bytes to upright integer codes, their RGB space and a linearisation table.

A :class:`glowtemp.images.decoded.Photo` keeps the pixels as the file encodes them (8- or 16-bit integers, never a float
copy of the whole image) together with a per-channel table from code value to linear light,
taken from the embedded ICC profile, from EXIF, or assumed sRGB. Linearising any set of pixels
is then one fancy-index, ``decode_table[channel, code]``.

Pillow reads JPEG, PNG and TIFF, their ICC profiles and EXIF. Pillow reduces 16-bit RGB to
8 bits, so 16-bit PNG pixels are read with libpng and 16-bit TIFF pixels with tifffile (both
with the codecs of imagecodecs); complete RGB JPEGs are decoded by libjpeg-turbo through
imagecodecs straight into an array, which saves Pillow's copy of a 12-megapixel image, and in
a worker thread, so that the header's EXIF and profile are read meanwhile (:func:`begin_loading`
lets a caller use that time too). HEIC
(HEIF with HEVC, what many phones save) is read through Pillow with pillow-heif (libheif),
which turns the image upright by the file's own transforms and keeps ICC profile and EXIF;
raw DNG files go to :mod:`glowtemp.images.raw`.

References
----------
- CIPA DC-008-2019 / JEITA CP-3451E, Exchangeable image file format for digital still cameras
  (Exif 2.32): Orientation (0x0112), ExposureTime (0x829A), FNumber (0x829D),
  PhotographicSensitivity (0x8827), SensitivityType (0x8830), StandardOutputSensitivity
  (0x8831), ExposureBiasValue (0x9204), CustomRendered (0xA401), DateTimeOriginal (0x9003),
  ColorSpace (0xA001), WhiteBalance (0xA403), InteroperabilityIndex.
- ISO 12232:2019, Photography - Digital still cameras - Determination of exposure index, ISO
  speed ratings, standard output sensitivity, and recommended exposure index: what
  SensitivityType names.
- CIPA DC-009-2010, Design rule for Camera File system (DCF 2.0), Optional colour space:
  InteroperabilityIndex "R03" marks Adobe RGB (1998) files.
- IEC 61966-2-1:1999 (sRGB) and Adobe RGB (1998) Color Image Encoding (gamma 563/256).
- ICC.1:2010, see :mod:`glowtemp.images.icc`.
- ISO/IEC 23008-12:2017 (HEIF) and ITU-T H.273 (2016) colour code points (nclx).
"""

from __future__ import annotations

import io
import math
import os
import struct
import warnings
import zlib
from functools import lru_cache
from typing import NamedTuple

import numpy as np
from PIL import Image, UnidentifiedImageError

from ..physics.colourspaces import ADOBE_RGB, DISPLAY_P3, SRGB, RGBSpace, gamma_decode, srgb_decode
from .decoded import (
    MIN_SIDE_PX,
    Photo,
    PhotoError,
    PhotoMetadata,
    exif_text,
    exif_time,
    exposure_fields,
    upright,
)
from .jpeg_decoding import HeadStart, JpegDecoding, complete_jpeg
from .icc import IccError, parse_icc_profile
from .raw import is_dng, load_dng, read_dng_header
from .regular_file import FileRefused, read_regular_file, size_text

READABLE = "JPEG, PNG, TIFF, HEIC or DNG"
# The file suffix a stored copy of each decoded format gets (chosen from content, never a client name).
STORED_SUFFIXES = {"JPEG": ".jpg", "PNG": ".png", "TIFF": ".tif", "HEIC": ".heic", "DNG": ".dng"}
LARGEST_FILE_BYTES = 200 * 1024 * 1024  # a photo file read from disk (a 100 MP raw file fits)
ADOBE_RGB_GAMMA = 563 / 256  # Adobe RGB (1998) Color Image Encoding, section 4.3.1.2
STRIP_BYTES = 2 << 20  # Pillow pixels are copied out in strips of about this size
FILLED_BLOCK_PX = 16  # one minimum coded unit of a 4:2:0 JPEG (ITU-T T.81 A.2)

TAG_ORIENTATION = 0x0112
TAG_MAKE, TAG_MODEL = 0x010F, 0x0110
IFD_EXIF, IFD_INTEROP = 0x8769, 0xA005
TAG_DATETIME_ORIGINAL, TAG_COLOR_SPACE, TAG_WHITE_BALANCE = 0x9003, 0xA001, 0xA403
TAG_INTEROP_INDEX = 0x0001
TIFF_BYTE_ORDERS = (b"II", b"MM")  # TIFF 6.0 header; a DNG is a TIFF

# What a failing decoder may raise on damaged input (Pillow, tifffile, zlib; libpng's own
# errors are translated where it is called). The 16-bit decoders load only when needed.
DECODER_FAILURES = (
    OSError, ValueError, SyntaxError, EOFError, IndexError, KeyError, TypeError,
    struct.error, zlib.error, Image.DecompressionBombError,
)


# --- reading the container -----------------------------------------------------------------


def _read_bytes(source, max_bytes: int) -> bytes:
    if isinstance(source, (str, os.PathLike)):
        try:
            data = read_regular_file(source, max_bytes, "photo file")
        except FileRefused as error:
            raise PhotoError(str(error)) from None
        except OSError as error:
            raise PhotoError(f"The file {os.fspath(source)} could not be read ({error.strerror}).") from error
    elif isinstance(source, (bytes, bytearray, memoryview)):
        data = bytes(source)
    elif hasattr(source, "read"):
        data = source.read(max_bytes + 1)
        if not isinstance(data, bytes):
            raise TypeError("load_photo needs a file opened in binary mode")
        if len(data) > max_bytes:
            raise PhotoError(f"The photo file is larger than {size_text(max_bytes)}; it is not read.")
    else:
        raise TypeError(f"load_photo needs a path, bytes or a binary file, not {type(source).__name__}")
    if not data:
        raise PhotoError("The file is empty (0 bytes): it holds no photo.")
    return data


@lru_cache(maxsize=1)
def _heif_opener() -> None:
    """Teach Pillow HEIF (pillow-heif, libheif); loaded only when a file looks like one.

    Only the primary image is the photo: thumbnails, depth maps and auxiliary images (an HDR
    gain map, alpha or depth planes, ISO/IEC 23008-12 section 6.6) are never listed or decoded.
    """
    import pillow_heif

    pillow_heif.register_heif_opener(thumbnails=False, depth_images=False, aux_images=False)


def _open(data: bytes) -> Image.Image:
    return _open_stream(io.BytesIO(data), data[:16])


def _open_stream(stream, head: bytes) -> Image.Image:
    """Pillow's image for a seekable binary ``stream`` whose first bytes are ``head``."""
    formats = ("JPEG", "PNG", "TIFF", "GIF", "WEBP")
    if head[4:8] == b"ftyp":  # ISO/IEC 14496-12 file type box: HEIF, AVIF, MP4, ...
        _heif_opener()
        formats += ("HEIF",)
    try:
        with warnings.catch_warnings():
            # Pillow warns about large headers; load_photo's own pixel limit decides and says why.
            warnings.simplefilter("ignore", Image.DecompressionBombWarning)
            return Image.open(stream, formats=formats)
    except Image.DecompressionBombError as error:
        raise PhotoError(
            "The image is far too large to be a photo (its header claims more than "
            f"{Image.MAX_IMAGE_PIXELS * 2 // 1_000_000} megapixels); it may be damaged or hostile."
        ) from error
    except UnidentifiedImageError as error:
        if head[4:8] == b"ftyp":
            raise PhotoError(
                "This looks like a HEIC/HEIF, AVIF or video file that glowtemp cannot decode "
                "(AVIF and videos are not read, or the HEIC file is damaged); export the photo "
                "as JPEG (or set the camera to save JPEG)."
            ) from error
        raise PhotoError(f"This file is not an image glowtemp can read ({READABLE}).") from error
    except DECODER_FAILURES as error:
        raise PhotoError(f"The image header is damaged, so the photo cannot be read ({error}).") from error


def _check_image(image: Image.Image, max_pixels: int) -> str:
    """Refuse what glowtemp cannot use before decoding any pixels; return the format name."""
    # MPO: JPEG plus extra pictures; HEIF: the primary image is the photo (others are bursts
    # or edits), read as HEIC, the HEVC-coded HEIF that phones save (ISO/IEC 23008-12).
    fmt = {"MPO": "JPEG", "HEIF": "HEIC"}.get(image.format, image.format)
    try:
        frames = 1 if image.format in ("MPO", "HEIF") else getattr(image, "n_frames", 1)
    except DECODER_FAILURES as error:
        raise PhotoError(f"The image's frame list is damaged ({error}).") from error
    if frames > 1:
        raise PhotoError(
            f"This {image.format} file holds {frames} frames (an animation or several pages); "
            "glowtemp reads one still photo: export the photo alone as JPEG or PNG."
        )
    if fmt not in ("JPEG", "PNG", "TIFF", "HEIC"):
        raise PhotoError(f"This is a {fmt} image; glowtemp reads photos saved as {READABLE}.")
    width, height = image.size
    if width * height > max_pixels:
        raise PhotoError(
            f"The image is {width} x {height} pixels ({width * height / 1e6:.0f} megapixels), "
            f"more than the {max_pixels / 1e6:g} megapixels glowtemp accepts; resize it first."
        )
    if min(width, height) < MIN_SIDE_PX:
        raise PhotoError(
            f"The image is only {width} x {height} pixels; glowtemp needs at least "
            f"{MIN_SIDE_PX} x {MIN_SIDE_PX}."
        )
    if image.mode == "CMYK":
        raise PhotoError(
            "CMYK photos are print separations, not camera colour; export the photo as JPEG or PNG."
        )
    return fmt


def _exif(image: Image.Image) -> tuple[dict, dict, dict]:
    """Base IFD, Exif IFD and Interoperability IFD as dicts; empty where missing or damaged."""
    try:
        exif = image.getexif()
        base = dict(exif)
        exif_ifd = dict(exif.get_ifd(IFD_EXIF)) if IFD_EXIF in exif else {}
        interop = dict(exif.get_ifd(IFD_INTEROP)) if IFD_INTEROP in exif_ifd else {}
    except DECODER_FAILURES:
        return {}, {}, {}
    return base, exif_ifd, interop


def _number(value) -> float | None:
    """A Pillow EXIF value (number, IFDRational, or a tuple of them) as a finite float, or None."""
    if isinstance(value, (tuple, list)):
        value = value[0] if value else None
    try:
        number = float(value)
    except (TypeError, ValueError, ZeroDivisionError):
        return None
    return number if math.isfinite(number) else None


def _metadata(base: dict, exif_ifd: dict) -> PhotoMetadata:
    return PhotoMetadata(
        white_balance={0: "auto", 1: "manual"}.get(exif_ifd.get(TAG_WHITE_BALANCE)),
        camera_make=exif_text(base.get(TAG_MAKE)),
        camera_model=exif_text(base.get(TAG_MODEL)),
        taken_at=exif_time(exif_ifd.get(TAG_DATETIME_ORIGINAL)),
        **exposure_fields(lambda tag: _number(exif_ifd.get(tag))),
    )


# --- pixels --------------------------------------------------------------------------------


def _three_channels(pixels: np.ndarray, colour: bool) -> np.ndarray:
    """(H, W) or (H, W, planes) to (H, W, 3): drop alpha, repeat grey."""
    if pixels.ndim == 2:
        pixels = pixels[:, :, None]
    if colour:
        return pixels[:, :, :3]
    return np.repeat(pixels[:, :, :1], 3, axis=2)


def _pillow_pixels(image: Image.Image) -> np.ndarray:
    """8-bit pixels as (H, W, 3) uint8, copied out in strips to keep the peak memory low."""
    image.load()
    if image.mode in ("RGBA", "RGBX", "P", "PA"):
        image = image.convert("RGB")
    elif image.mode in ("LA", "1"):
        image = image.convert("L")
    if image.mode not in ("RGB", "L"):
        raise PhotoError(
            f"The image stores pixels as {image.mode}, which glowtemp does not read; "
            "export it as an 8- or 16-bit RGB JPEG, PNG or TIFF."
        )
    width, height = image.size
    planes = 3 if image.mode == "RGB" else 1
    pixels = np.empty((height, width, planes), dtype=np.uint8)
    rows = max(1, STRIP_BYTES // (4 * width))
    for top in range(0, height, rows):
        strip = image.crop((0, top, width, min(top + rows, height))).tobytes()
        pixels[top : top + rows] = np.frombuffer(strip, np.uint8).reshape(-1, width, planes)
    return _three_channels(pixels, colour=planes == 3)


def png_exif_chunk(data: bytes) -> bytes | None:
    """The payload of a PNG's eXIf chunk wherever it lies (PNG 3rd ed., 11.3.6), found by walking
    the chunk headers without inflating any image data; None when there is none.

    Pillow looks for eXIf by decoding the whole image into its own 8-bit copy, which for a
    16-bit photo (read by libpng instead) would double the memory a decode takes.
    """
    position = 8  # after the PNG signature
    while position + 8 <= len(data):
        length, kind = struct.unpack_from(">I4s", data, position)
        if kind == b"eXIf":
            return data[position + 8 : position + 8 + length]
        if kind == b"IEND":
            break
        position += 12 + length  # length, type, data and CRC
    return None


def _png16_pixels(data: bytes) -> np.ndarray:
    """16-bit PNG pixels with libpng through imagecodecs (PNG 3rd ed., ISO/IEC 15948)."""
    from imagecodecs import _png

    try:
        pixels = _png.png_decode(data)
    except _png.PngError as error:
        raise ValueError(str(error)) from error
    if pixels.ndim == 2:
        pixels = pixels[:, :, None]
    return _three_channels(pixels.astype(np.uint16, copy=False), colour=pixels.shape[2] >= 3)


def ends_in_filled_blocks(codes: np.ndarray) -> bool:
    """Whether a decoded JPEG's last block is what the decoder makes of missing data.

    When the entropy-coded data ends early (a file cut short, even with its EOI marker put
    back), libjpeg warns "premature end of data segment" and decodes the remaining blocks with
    all coefficients zero: after the level shift of ITU-T T.81 A.3.1 that is exactly code 128
    in every pixel and channel. The block decoded last (bottom right, as stored) is checked;
    a camera's sensor noise never leaves a 16 x 16 patch at exactly one value.
    """
    corner = codes[-FILLED_BLOCK_PX:, -FILLED_BLOCK_PX:]
    return bool(corner.size) and bool((corner == 128).all())


def _tiff16_pixels(data: bytes) -> np.ndarray:
    """16-bit TIFF pixels with tifffile (TIFF 6.0): (H, W, 3) uint16."""
    import tifffile

    with tifffile.TiffFile(io.BytesIO(data)) as tiff:
        page = tiff.pages[0]
        colour = page.photometric == tifffile.PHOTOMETRIC.RGB
        if not colour and page.photometric != tifffile.PHOTOMETRIC.MINISBLACK:
            raise PhotoError(
                f"This 16-bit TIFF stores colour as {page.photometric.name}; "
                "save it as RGB or greyscale."
            )
        if page.sampleformat != tifffile.SAMPLEFORMAT.UINT:
            raise PhotoError("This TIFF holds floating-point or signed samples; save it as 16-bit RGB.")
        try:
            tifffile.TIFF.DECOMPRESSORS[page.compression]  # KeyError when a codec is missing
        except KeyError as error:
            raise PhotoError(
                f"This 16-bit TIFF uses {page.compression.name} compression, which glowtemp cannot "
                "decode; save it uncompressed or with ZIP compression, or as a 16-bit PNG."
            ) from error
        pixels = page.asarray()
        if "S" in page.axes:
            pixels = np.moveaxis(pixels, page.axes.index("S"), -1)
    return _three_channels(pixels.astype(np.uint16, copy=False), colour)


def _pixels(image: Image.Image, data: bytes, fmt: str, decoding: JpegDecoding | None) -> np.ndarray:
    try:
        if fmt == "PNG" and data[24] == 16:  # IHDR bit depth, PNG 3rd ed. section 11.2.1
            return _png16_pixels(data)
        if fmt == "TIFF" and 16 in np.atleast_1d(image.tag_v2.get(258, 8)):  # BitsPerSample
            return _tiff16_pixels(data)
        fast = decoding.pixels() if decoding is not None else None
        if fast is not None:
            return fast
        return _pillow_pixels(image)
    except PhotoError:
        raise
    except DECODER_FAILURES as error:
        raise PhotoError(
            f"The image data is truncated or damaged ({error}); the file may not have "
            "finished copying. Try the original photo again."
        ) from error


# --- colour encoding -----------------------------------------------------------------------


def _curve_table(decode, max_code: int) -> np.ndarray:
    linear = decode(np.arange(max_code + 1) / max_code).astype(np.float32)
    return np.repeat(linear[None, :], 3, axis=0)


def _as_phrase(error: Exception) -> str:
    text = str(error).rstrip(".")
    return text[:1].lower() + text[1:]


def _cicp_space(nclx) -> RGBSpace | None:
    """The space named by HEIF colour information (nclx): ITU-T H.273 ColourPrimaries 1 (BT.709,
    the sRGB primaries) or 12 (SMPTE EG 432-1, P3 with D65) with TransferCharacteristics 13
    (IEC 61966-2-1 sRGB curve); None for anything else."""
    if not isinstance(nclx, dict) or nclx.get("transfer_characteristics") != 13:
        return None
    return {1: SRGB, 12: DISPLAY_P3}.get(nclx.get("color_primaries"))


def _colour_encoding(icc_bytes, exif_ifd: dict, interop: dict, max_code: int, nclx=None):
    """(space, space_source, decode_table, profile_problem) from the ICC profile, HEIF nclx or EXIF."""
    if icc_bytes:
        try:
            profile = parse_icc_profile(icc_bytes)
        except IccError as error:
            return SRGB, "assumed", _curve_table(srgb_decode, max_code), _as_phrase(error)
        return profile.rgb_space, "icc", profile.decode_table(max_code), None
    if _cicp_space(nclx) is not None:
        return _cicp_space(nclx), "cicp", _curve_table(srgb_decode, max_code), None
    colour_space = exif_ifd.get(TAG_COLOR_SPACE)
    if colour_space == 1:  # Exif ColorSpace: 1 = sRGB
        return SRGB, "exif", _curve_table(srgb_decode, max_code), None
    if colour_space == 0xFFFF and exif_text(interop.get(TAG_INTEROP_INDEX)) == "R03":  # DCF option file
        adobe = _curve_table(lambda v: gamma_decode(v, ADOBE_RGB_GAMMA), max_code)
        return ADOBE_RGB, "exif", adobe, None
    return SRGB, "assumed", _curve_table(srgb_decode, max_code), None


# --- the whole decode ----------------------------------------------------------------------


def decoded_bytes(data: bytes) -> int:
    """About how many bytes :func:`load_photo` will hold for the photo's pixels, from its header
    alone: three channels of one byte, or two for 16-bit PNG and TIFF and for raw DNG files
    (which LibRaw also unpacks whole). 0 for a file whose header cannot be read (refused at once)."""
    try:
        if data[:2] in TIFF_BYTE_ORDERS:
            if is_dng(data):
                _, (width, height) = read_dng_header(data)
                return width * height * 6
        with _open(data) as image:
            width, height = image.size
            sixteen = (image.format == "PNG" and data[24] == 16) or (
                image.format == "TIFF" and 16 in np.atleast_1d(image.tag_v2.get(258, 8)))  # fmt: skip
    except (PhotoError, *DECODER_FAILURES):
        return 0
    return width * height * 3 * (2 if sixteen else 1)


def photo_format(stream, *, max_pixels: int = 50_000_000) -> str:
    """The format (a key of :data:`STORED_SUFFIXES`) of the photo file in the seekable binary
    ``stream``, judged from its header alone, with every check :func:`load_photo` makes before
    decoding pixels; :class:`PhotoError` otherwise. A TIFF's directories may lie anywhere in the
    file (TIFF 6.0, section 2), so a TIFF or DNG is read whole; other files only as far as
    their header goes.
    """
    head = stream.read(16)
    stream.seek(0)
    if not head:
        raise PhotoError("The file is empty (0 bytes): it holds no photo.")
    if head[:2] in TIFF_BYTE_ORDERS:

        data = stream.read()
        if is_dng(data):
            _, (width, height) = read_dng_header(data)
            if width * height > max_pixels or min(width, height) < MIN_SIDE_PX:
                raise PhotoError(f"The raw image is {width} x {height} photosites, outside what glowtemp accepts.")
            return "DNG"
        stream = io.BytesIO(data)
    image = _open_stream(stream, head)
    try:
        return _check_image(image, max_pixels)
    finally:
        image.close()


def load_photo(source, *, max_pixels: int = 50_000_000, max_bytes: int = LARGEST_FILE_BYTES) -> Photo:
    """Decode a JPEG, PNG, TIFF, HEIC or DNG photo to upright integer codes and a linearisation table.

    ``source`` is a path, the file's bytes, or a binary file object; the type is decided by
    content, not by name. EXIF orientation is applied, alpha dropped, greyscale repeated into
    three channels and palettes expanded. 16-bit PNG and TIFF keep their 16-bit codes. DNG
    files become 16-bit linear codes at half the sensor size (see :mod:`glowtemp.images.raw`).

    Raises :class:`PhotoError` with a plain-words reason for anything that is not a usable
    still photo: empty, truncated, damaged, not an image, CMYK, animated or multi-page, larger
    than ``max_pixels`` (checked from the header, before decoding) or smaller than 8 x 8. A
    named file must be a regular file of at most ``max_bytes`` (:mod:`glowtemp.images.regular_file`).
    """
    return begin_loading(source, max_pixels=max_pixels, max_bytes=max_bytes).finish()


class PhotoLoading:
    """A photo part way through :func:`begin_loading`; :meth:`finish` returns the :class:`Photo`.

    A JPEG's EXIF and colour profile are read from its header while its pixels decode, so
    ``space`` and ``metadata`` are known before the pixels are (None for other formats).
    """

    def __init__(self, finish, space: RGBSpace | None = None, metadata: PhotoMetadata | None = None):
        self.finish, self.space, self.metadata = finish, space, metadata


def begin_loading(source, *, max_pixels: int = 50_000_000, max_bytes: int = LARGEST_FILE_BYTES) -> PhotoLoading:
    """:func:`load_photo` in two steps, so that a caller can do other work while the pixels of a
    JPEG decode: reads the file and checks its header (every refusal that needs no pixels is
    raised here), starts a complete RGB JPEG's decode in a worker thread (:class:`JpegDecoding`)
    and reads its EXIF and colour profile meanwhile.

    ``source`` may also be a :class:`glowtemp.images.jpeg_decoding.HeadStart`: its file is
    checked the same way, and its decode, already running, stands in for a new one.
    """
    head_start = source if isinstance(source, HeadStart) else None
    data = head_start.data if head_start else _read_bytes(source, max_bytes)
    if data[:2] in TIFF_BYTE_ORDERS:
        if is_dng(data):
            photo = load_dng(data, max_pixels)
            return PhotoLoading(lambda: photo, photo.space, photo.metadata)
    image = _open(data)
    try:
        fmt = _check_image(image, max_pixels)
        if fmt != "JPEG":
            return PhotoLoading(lambda: _finish_loading(image, data, fmt, None, None))
        decoding = None
        if image.mode == "RGB" and complete_jpeg(data):
            started = head_start.decoding if head_start else None
            decoding = started if started and started.size == image.size else JpegDecoding(data, image.size)
        header = _header(image, 255)  # a JPEG's EXIF and profile are in its header
    except BaseException:
        image.close()
        raise
    return PhotoLoading(lambda: _finish_loading(image, data, fmt, decoding, header), header.encoding[0], header.metadata)


class _Header(NamedTuple):
    orientation: int
    encoding: tuple  # (space, space_source, decode_table, profile_problem), see _colour_encoding
    metadata: PhotoMetadata


def _header(image: Image.Image, max_code: int) -> _Header:
    """What an open image's EXIF and colour profile say."""
    base, exif_ifd, interop = _exif(image)
    nclx = image.info.get("nclx_profile")  # HEIF colour information without an ICC profile
    encoding = _colour_encoding(image.info.get("icc_profile"), exif_ifd, interop, max_code, nclx)
    return _Header(base.get(TAG_ORIENTATION, 1), encoding, _metadata(base, exif_ifd))


def _finish_loading(image: Image.Image, data: bytes, fmt: str, decoding: JpegDecoding | None,
                    header: _Header | None) -> Photo:
    try:
        codes = _pixels(image, data, fmt, decoding)
        if fmt == "PNG" and codes.dtype == np.uint16 and "exif" not in image.info:
            chunk = png_exif_chunk(data)  # libpng read the pixels: keep Pillow from loading them too
            image.info["exif"] = None if chunk is None else b"Exif\x00\x00" + chunk
        max_code = 65535 if codes.dtype == np.uint16 else 255
        if header is None:
            header = _header(image, max_code)  # after the pixels: Pillow finds PNG eXIf late
    finally:
        image.close()  # frees Pillow's pixel memory now (leaving a `with` block does not)
    space, space_source, table, problem = header.encoding
    missing = fmt == "JPEG" and ends_in_filled_blocks(codes)  # as stored, before turning upright
    if header.orientation != 1:
        codes = np.ascontiguousarray(upright(codes, header.orientation))
    codes.flags.writeable = False
    return Photo(
        codes=codes,
        max_code=max_code,
        space=space,
        space_source=space_source,
        decode_table=table,
        metadata=header.metadata,
        format=fmt,
        profile_problem=problem,
        missing_data=missing,
    )
