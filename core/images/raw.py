"""Raw DNG photos: the sensor's linear data, turned into colour with the file's own matrix.

A raw file keeps what the sensor recorded before white balance, the colour matrix, the tone
curve and 8-bit quantisation, so glow's colour is not clipped by a small output gamut. The
decode here is the plainest that keeps that:

1. pixels, black and white levels and the colour filter pattern from LibRaw (rawpy);
2. one pixel per 2 x 2 Bayer tile (superpixel demosaicing: red, the mean of the two greens,
   blue), so the photo is read at half the sensor's width and height and no colour is
   interpolated across edges; a tile with any photosite near its white level is clipped;
3. linear camera RGB to CIE XYZ with the inverse of the DNG colour matrix (XYZ to camera),
   *without* white balance: the XYZ of the light itself, not adapted to any white (the file's
   AsShotNeutral is not used: it is the camera's white balance setting, which need not be the
   light of the scene; the real chart file in the tests carries a daylight white while its
   chart was lit near 2800 K);
4. XYZ to linear RGB with the ROMM RGB primaries (ISO 22028-2), whose gamut holds every
   blackbody colour from 700 K up, stored as 16-bit linear codes above a pedestal, so that
   sensor noise about black keeps its sign: clipping it at zero would lift the mean of a dim
   channel (on the real chart file it lifted the blue of the orange patch by 16 %).

Which colour matrix: DNG files may carry two, each measured under a calibration illuminant,
and the DNG specification interpolates between them by the scene's colour temperature
(inverse CCT), holding the end values outside their range. Glow (below 2000 K) is warmer than
any calibration illuminant, so that rule gives the matrix of the warmer illuminant.

A matrix without its CalibrationIlluminant tag: the tag's default is 0, "unknown" (DNG 1.4,
chapter 4), and a lone matrix is used for every scene whatever its illuminant (chapter 6), so
its colours are decoded as they are. glowtemp takes the unknown illuminant to be daylight
(D65, 6504 K), as single-matrix DNG writers usually calibrate (the real chart file's matrix is,
but for its first digit, the EOS 550D entry of dcraw's camera table, a D65 matrix); that choice
only decides which of two matrices is the warmer. Either way the photo is marked
(``Photo.matrix_illuminant_unstated``) and the reading warns: a daylight matrix fits glow less
well than an illuminant-A one (through colour-science's two NPL-measured cameras, the D65
matrix instead of the A matrix raises glow's green/red by about 0.012 at 700 °C and 0.002 at
1300 °C, inside the raw camera term's offset spread below).

LibRaw does not hand out a DNG's own ColorMatrix tags (rawpy's ``color_matrix`` is already
white-balance normalised, for sRGB output), so the tags are read with tifffile.

References
----------
- Adobe, Digital Negative (DNG) Specification, version 1.4.0.0 (2012) and 1.6.0.0 (2020):
  chapter 4 (BlackLevel, WhiteLevel, ColorMatrix1/2, CameraCalibration1/2, AnalogBalance,
  CalibrationIlluminant1/2, BaselineExposure, tag 50730) and chapter 6, "Mapping Camera
  Color Space to CIE XYZ Space" (XYZtoCamera = AB CC CM, and the interpolation of two matrices
  by inverse correlated colour temperature).
- ISO 22028-2:2013, Reference output medium metric RGB (ROMM RGB): primaries and D50 white.
- CIPA DC-008-2019 (Exif 2.32), LightSource codes used by CalibrationIlluminant, and the
  exposure tags read by :func:`glowtemp.images.decoded.exposure_fields`.
- D. Coffin, dcraw.c, ``adobe_coeff`` camera table (XYZ to camera matrices for CIE D65).
- ISO 12234-2:2001 (TIFF/EP): CFARepeatPatternDim and CFAPattern.
"""

from __future__ import annotations

import io
import struct

import numpy as np

from ..physics.colourspaces import LINEAR_ROMM
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

RAW_SPACE = LINEAR_ROMM
RAW_SOURCE = "dng"  # Photo.space_source for raw photos: the colour comes from the file's matrix
MAX_CODE = 65535
PEDESTAL = 4096  # the code of linear zero: values down to about -7 % of full scale keep their sign
BAYER_CHANNEL = {0: 0, 1: 1, 3: 1, 2: 2}  # LibRaw colour index (3: second green) to R, G, B
SATURATED = 250 / 255  # a photosite at or above this share of its range is clipped (as sampling)

# Correlated colour temperature (K) of the EXIF LightSource codes a DNG names.
# CIE 015:2018: A 2856 K; D50/D55/D65/D75 about 5003/5503/6504/7504 K; B and C from CIE 015
# (4874 K, 6774 K). Generic codes (daylight, tungsten, flash, ...): common practice, from memory.
ILLUMINANT_CCT_K = {
    1: 5500.0, 2: 4200.0, 3: 2856.0, 4: 5500.0, 9: 5500.0, 10: 6500.0, 11: 7500.0,
    12: 6430.0, 13: 5000.0, 14: 4150.0, 15: 3450.0, 16: 3000.0,  # fmt: skip
    17: 2856.0, 18: 4874.0, 19: 6774.0, 20: 5503.0, 21: 6504.0, 22: 7504.0, 23: 5003.0,
    24: 3200.0,
}
UNSTATED_ILLUMINANT_CCT_K = 6504.0  # an unknown (0) or missing CalibrationIlluminant: taken as D65

TAG_COLOR_MATRIX = (50721, 50722)
TAG_CAMERA_CALIBRATION = (50723, 50724)
TAG_ANALOG_BALANCE = 50727
TAG_CALIBRATION_ILLUMINANT = (50778, 50779)
TAG_DNG_VERSION = 50706
PHOTOMETRIC_CFA = 32803
TAG_EXIF_IFD = 34665
TAG_ORIENTATION, TAG_MAKE, TAG_MODEL = 274, 271, 272
TAG_DATETIME_ORIGINAL = 36867
TAG_BASELINE_EXPOSURE = 50730  # DNG 1.6: SRATIONAL, EV a raw converter adds for a normal rendering
BASELINE_EXPOSURE_LIMIT_EV = 10.0  # from memory: cameras write about -1 to +3 EV; beyond 10 is damage


class RawError(PhotoError):
    """A raw file glowtemp cannot decode, with the reason in plain words."""


def _rational_values(value) -> np.ndarray:
    """tifffile gives (S)RATIONAL arrays as flat numerator, denominator pairs."""
    values = np.asarray(value, dtype=float).reshape(-1)
    return values[0::2] / values[1::2]


def is_dng(data: bytes) -> bool:
    """Whether ``data`` is a TIFF whose IFD 0 has a DNGVersion tag (TIFF 6.0 header; DNG 1.4).

    >>> is_dng(b"II*\\0" + struct.pack("<IH", 8, 1) + struct.pack("<HHII", 50706, 1, 4, 0x0104))
    True
    """
    order = {b"II*\0": "<", b"MM\0*": ">"}.get(data[:4])
    if order is None or len(data) < 8:
        return False
    (offset,) = struct.unpack_from(order + "I", data, 4)
    if offset + 2 > len(data):
        return False
    (count,) = struct.unpack_from(order + "H", data, offset)
    entries = data[offset + 2 : offset + 2 + 12 * count]
    return any(
        struct.unpack_from(order + "H", entries, 12 * index)[0] == TAG_DNG_VERSION
        for index in range(len(entries) // 12)
    )


def read_dng_header(data: bytes):
    """IFD 0 tags of a DNG by number (Exif IFD tags merged in) and the raw image's (width, height).

    The raw image is IFD 0 or one of its SubIFDs (DNG 1.4, chapter 3), the one holding CFA
    data (PhotometricInterpretation 32803); tifffile reads the header without the pixels.
    """
    import tifffile  # only for raw and 16-bit TIFF files

    try:
        with tifffile.TiffFile(io.BytesIO(data)) as tiff:
            first = tiff.pages[0]
            tags = {tag.code: tag.value for tag in first.tags.values()}
            images = [first, *(first.pages or [])]
            cfa = [page for page in images if page.photometric == PHOTOMETRIC_CFA]
            size = (cfa[0].imagewidth, cfa[0].imagelength) if cfa else None
    except (tifffile.TiffFileError, ValueError, IndexError, KeyError, OSError) as error:
        raise RawError(f"The DNG file's header is damaged ({error}).") from error
    if TAG_DNG_VERSION not in tags:
        raise RawError("This TIFF file is not a DNG (it has no DNGVersion tag).")
    if size is None:
        raise RawError(
            "This DNG holds no colour-filter (Bayer) raw image (it may be a demosaiced linear "
            "DNG); glowtemp reads Bayer raw DNG files, or export the photo as JPEG or PNG."
        )
    exif = tags.get(TAG_EXIF_IFD)
    for name, value in (exif.items() if isinstance(exif, dict) else ()):
        tags.setdefault(tifffile.TIFF.TAGS.get(name, name), value)  # tifffile names them
    return tags, size


def illuminant_unstated(tags: dict) -> bool:
    """Whether a ColorMatrix of the DNG has no CalibrationIlluminant, or names it 0 (unknown)."""
    return any(
        TAG_COLOR_MATRIX[index] in tags
        and int(np.ravel(tags.get(TAG_CALIBRATION_ILLUMINANT[index], 0))[0]) == 0
        for index in (0, 1)
    )


def xyz_to_camera(tags: dict) -> np.ndarray:
    """The DNG's XYZ to camera matrix for glow: AB x CC x CM of the warmer calibration illuminant.

    DNG 1.4 chapter 6: ``XYZtoCamera = AB * CC * CM``; with two matrices the one whose
    CalibrationIlluminant has the lower correlated colour temperature (the interpolation's end
    value for a scene warmer than both illuminants). An unstated illuminant counts as D65
    (see the module notes); a lone matrix is used whatever its illuminant.
    """
    candidates = []
    for index in (0, 1):
        if TAG_COLOR_MATRIX[index] not in tags:
            continue
        values = _rational_values(tags[TAG_COLOR_MATRIX[index]])
        if values.size != 9:
            raise RawError(
                f"The DNG's ColorMatrix{index + 1} has {values.size} values; glowtemp reads "
                "three-colour (RGB) raw files only."
            )
        illuminant = int(np.ravel(tags.get(TAG_CALIBRATION_ILLUMINANT[index], 0))[0])
        calibration = np.eye(3)
        if TAG_CAMERA_CALIBRATION[index] in tags:
            calibration = _rational_values(tags[TAG_CAMERA_CALIBRATION[index]]).reshape(3, 3)
        cct = ILLUMINANT_CCT_K.get(illuminant, UNSTATED_ILLUMINANT_CCT_K)
        candidates.append((cct, calibration @ values.reshape(3, 3)))
    if not candidates:
        raise RawError("The DNG has no ColorMatrix tag, so its colours cannot be known.")
    analog = np.eye(3)
    if TAG_ANALOG_BALANCE in tags:
        analog = np.diag(_rational_values(tags[TAG_ANALOG_BALANCE]))
    return analog @ min(candidates, key=lambda item: item[0])[1]


def superpixel(visible: np.ndarray, colours: np.ndarray, black: np.ndarray, white: np.ndarray):
    """Superpixel demosaicing of a 2 x 2 Bayer CFA to linear camera RGB at half size.

    ``visible`` are the raw codes (H, W), ``colours`` the colour index of each photosite (0 red,
    1 or 3 green, 2 blue, as LibRaw's ``raw_colors``), ``black`` and ``white`` per colour index.
    Returns (rgb float32 (H/2, W/2, 3) with 0 = black and 1 = white level, clipped (H/2, W/2)).

    >>> raw = np.array([[300, 200], [200, 100]]); idx = np.array([[0, 1], [3, 2]])
    >>> rgb, clipped = superpixel(raw, idx, np.zeros(4), np.full(4, 400.0))
    >>> rgb[0, 0].tolist(), bool(clipped[0, 0])
    ([0.75, 0.5, 0.25], False)
    """
    height, width = (visible.shape[0] // 2) * 2, (visible.shape[1] // 2) * 2
    tile = colours[:2, :2]
    if sorted(BAYER_CHANNEL.get(int(i), -1) for i in tile.ravel()) != [0, 1, 1, 2]:
        raise RawError("The raw file's colour filter is not a 2 x 2 Bayer pattern (one red, two greens, one blue).")
    black = np.asarray(black, dtype=np.float32)
    span = np.asarray(white, dtype=np.float32) - black
    rgb = np.zeros((height // 2, width // 2, 3), dtype=np.float32)
    clipped = np.zeros((height // 2, width // 2), dtype=bool)
    for dy in (0, 1):
        for dx in (0, 1):
            index = int(tile[dy, dx])
            site = visible[dy:height:2, dx:width:2].astype(np.float32) - black[index]
            value = site / span[index]
            clipped |= value >= SATURATED
            channel = BAYER_CHANNEL[index]
            rgb[:, :, channel] += value / (2.0 if channel == 1 else 1.0)
    return rgb, clipped


def camera_to_raw_space(xyz_to_cam: np.ndarray) -> np.ndarray:
    """Matrix from linear camera RGB to linear :data:`RAW_SPACE` RGB (no white balance)."""
    try:
        camera_to_xyz = np.linalg.inv(xyz_to_cam)
    except np.linalg.LinAlgError:
        raise RawError("The DNG's colour matrix cannot be inverted; the file is damaged.") from None
    return RAW_SPACE.xyz_to_rgb @ camera_to_xyz


def code_scale(to_space: np.ndarray) -> float:
    """Codes per unit of linear :data:`RAW_SPACE` light: so no unclipped camera value in [0, 1]
    can reach full scale (the largest row sum of the matrix's positive part maps below it)."""
    headroom = float(np.clip(to_space, 0.0, None).sum(axis=1).max())
    return ((MAX_CODE - 1) * SATURATED - PEDESTAL) / headroom


def linear_scale(to_space: np.ndarray) -> float:
    """What :func:`decode_table`'s linear light is multiplied by to be the file's own scale
    (normalised raw through the colour matrix), for the brightness channel."""
    return (MAX_CODE - PEDESTAL) / code_scale(to_space)


def encode_linear(rgb: np.ndarray, clipped: np.ndarray, to_space: np.ndarray) -> np.ndarray:
    """Linear camera RGB to 16-bit codes in :data:`RAW_SPACE`; clipped tiles at full scale.

    Linear zero is code :data:`PEDESTAL`, so values a little below black (sensor noise, which
    averages out) keep their sign instead of being clipped to zero; :func:`decode_table`
    undoes it. Scaled so no unclipped camera value in [0, 1] can reach full scale (the largest
    row sum of the matrix's positive part maps below it), so full scale means clipped only.
    """
    out = np.empty(rgb.shape, dtype=np.uint16)
    scale = np.float32(code_scale(to_space))
    matrix = (to_space * scale).astype(np.float32).T
    rows = max(1, 2**18 // max(rgb.shape[1], 1))
    for top in range(0, rgb.shape[0], rows):
        linear = rgb[top : top + rows] @ matrix + np.float32(PEDESTAL)
        out[top : top + rows] = np.clip(np.rint(linear), 0, MAX_CODE - 1).astype(np.uint16)
    out[clipped] = MAX_CODE
    return out


def decode_table() -> np.ndarray:
    """Linear light of every code, (3, MAX_CODE + 1) float32: 0 at :data:`PEDESTAL`, 1 at full scale.

    >>> table = decode_table(); float(table[0, PEDESTAL]), float(table[0, MAX_CODE]), bool(table[0, 0] < 0)
    (0.0, 1.0, True)
    """
    ramp = (np.arange(MAX_CODE + 1, dtype=np.float32) - PEDESTAL) / np.float32(MAX_CODE - PEDESTAL)
    return np.repeat(ramp[None, :], 3, axis=0)


def decode_dng(data: bytes, tags: dict) -> np.ndarray:
    """Linear 16-bit codes in :data:`RAW_SPACE`, (H/2, W/2, 3), as stored (not yet upright), and
    their :func:`linear_scale`.

    ``tags`` are the DNG's, from :func:`read_dng_header`. Raises :class:`RawError`.
    """
    import rawpy  # LibRaw: loaded only when a raw file is read

    to_space = camera_to_raw_space(xyz_to_camera(tags))
    try:
        with rawpy.imread(io.BytesIO(data)) as raw:
            if raw.raw_type != rawpy.RawType.Flat or raw.num_colors != 3:
                raise RawError("This DNG is not a single-sensor Bayer raw file; glowtemp reads those only.")
            visible = raw.raw_image_visible
            colours = raw.raw_colors_visible
            black = np.asarray(raw.black_level_per_channel, dtype=float)
            white = np.asarray(raw.camera_white_level_per_channel or [raw.white_level] * 4, dtype=float)
            rgb, clipped = superpixel(visible, colours, black, white)
    except (rawpy.LibRawError, OSError) as error:
        raise RawError(f"LibRaw cannot read this DNG's pixels ({error}).") from error
    return encode_linear(rgb, clipped, to_space), linear_scale(to_space)


def _value(value) -> float | None:
    """A tag's finite number; tifffile gives one (S)RATIONAL as a (numerator, denominator) tuple."""
    if isinstance(value, (tuple, list, np.ndarray)):
        value = np.ravel(value)
        if value.size == 2:
            value = value[0] / value[1] if value[1] else None
        elif value.size:
            value = value[0]
        else:
            return None
    try:
        number = float(value)
    except (TypeError, ValueError):
        return None
    return number if np.isfinite(number) else None


def dng_metadata(tags: dict) -> PhotoMetadata:
    """Capture settings from the DNG's Exif tags (in IFD 0 as TIFF/EP allows, or the Exif IFD).

    ``white_balance`` is ``"none"``: glowtemp applies no white balance to raw data.
    ``baseline_exposure_ev`` is BaselineExposure (DNG 1.6), None when missing or beyond
    :data:`BASELINE_EXPOSURE_LIMIT_EV`; the exposure fields are as for other photos
    (:func:`glowtemp.images.decoded.exposure_fields`).
    """
    baseline = _value(tags.get(TAG_BASELINE_EXPOSURE))
    return PhotoMetadata(
        white_balance="none",
        camera_make=exif_text(tags.get(TAG_MAKE)),
        camera_model=exif_text(tags.get(TAG_MODEL)),
        taken_at=exif_time(tags.get(TAG_DATETIME_ORIGINAL)),
        baseline_exposure_ev=baseline if baseline is not None and abs(baseline) <= BASELINE_EXPOSURE_LIMIT_EV else None,
        **exposure_fields(lambda tag: _value(tags.get(tag))),
    )


def load_dng(data: bytes, max_pixels: int) -> Photo:
    """Decode a DNG to a :class:`glowtemp.images.decoded.Photo` in :data:`RAW_SPACE` (see the module notes)."""
    tags, (width, height) = read_dng_header(data)
    if width * height > max_pixels:
        raise RawError(
            f"The raw image is {width} x {height} pixels ({width * height / 1e6:.0f} megapixels), "
            f"more than the {max_pixels / 1e6:g} megapixels glowtemp accepts."
        )
    codes, scale = decode_dng(data, tags)
    if min(codes.shape[:2]) < MIN_SIDE_PX:
        raise RawError(f"The raw image is too small; glowtemp needs at least {2 * MIN_SIDE_PX} x {2 * MIN_SIDE_PX} photosites.")
    orientation = int(_value(tags.get(TAG_ORIENTATION)) or 1)
    if orientation != 1:
        codes = np.ascontiguousarray(upright(codes, orientation))
    codes.flags.writeable = False
    return Photo(
        codes=codes,
        max_code=MAX_CODE,
        space=RAW_SPACE,
        space_source=RAW_SOURCE,
        decode_table=decode_table(),
        metadata=dng_metadata(tags),
        format="DNG",
        matrix_illuminant_unstated=illuminant_unstated(tags),
        linear_scale=scale,
    )
