"""A decoded photo and what every decoder shares: the :class:`Photo` record, its EXIF settings
(:class:`PhotoMetadata`), the error every decoder raises, orientation and EXIF field parsing.

JPEG, PNG, TIFF and HEIC files are decoded by :mod:`glowtemp.images.photo`, raw DNG files by
:mod:`glowtemp.images.raw`; both build on this module, which imports neither.

References
----------
- CIPA DC-008-2019 / JEITA CP-3451E, Exchangeable image file format for digital still cameras
  (Exif 2.32): Orientation (0x0112), ExposureTime (0x829A), FNumber (0x829D),
  PhotographicSensitivity (0x8827), SensitivityType (0x8830), StandardOutputSensitivity
  (0x8831), ExposureBiasValue (0x9204), CustomRendered (0xA401), DateTimeOriginal (0x9003).
- ISO 12232:2019, Photography - Digital still cameras - Determination of exposure index, ISO
  speed ratings, standard output sensitivity, and recommended exposure index: what
  SensitivityType names.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime

import numpy as np

from ..physics.colourspaces import RGBSpace

MIN_SIDE_PX = 8

TAG_EXPOSURE_TIME, TAG_F_NUMBER, TAG_ISO = 0x829A, 0x829D, 0x8827
TAG_SENSITIVITY_TYPE, TAG_STANDARD_OUTPUT_SENSITIVITY = 0x8830, 0x8831
TAG_EXPOSURE_BIAS, TAG_CUSTOM_RENDERED = 0x9204, 0xA401


class PhotoError(ValueError):
    """A file glowtemp cannot use as a photo, with the reason and what to do in plain words."""


# Plausible ranges of the exposure tags; a value outside is damage or a placeholder and reads as None.
EXPOSURE_TIME_RANGE_S = (1e-6, 3600.0)  # from memory: 1/1 000 000 s electronic shutters to an hour's bulb
F_NUMBER_RANGE = (0.5, 256.0)  # N = 1 / (2 sin u) >= 0.5 for any lens in air (Abbe sine condition)
SENSITIVITY_RANGE = (1.0, 10_000_000.0)  # from memory: the highest ISO settings sold are a few million
EXPOSURE_BIAS_RANGE_EV = (-10.0, 10.0)  # common practice: cameras offer -5 to +5 EV
SENSITIVITY_TYPES = range(8)  # Exif 2.32 SensitivityType: 0 unknown, 1 SOS, 2 REI, 3 ISO speed, 4-7 pairs
SENSITIVITY_TYPE_SOS = 1
ISO_TAG_CAP = 65535  # Exif 2.32: PhotographicSensitivity holds 65535 when the value is higher


@dataclass(frozen=True)
class PhotoMetadata:
    """Camera settings from EXIF that matter for a glow reading (CIPA DC-008-2019, Exif 2.32).

    Exposure settings are None when the tag is missing or its value is impossible (zero,
    negative, not a number, or outside the plausible ranges above). ``iso`` is
    PhotographicSensitivity, the ISO 12232 parameter that ``sensitivity_type`` names (1 is
    standard output sensitivity, SOS); ``standard_output_sensitivity`` is the separate SOS tag.
    ``exposure_bias_ev`` is the exposure compensation the photographer set (0 is a value, not
    missing). ``custom_rendered`` is the raw CustomRendered code: 0 normal process, 1 custom
    (Exif 2.32); makers use higher codes for pictures merged from several frames.
    ``baseline_exposure_ev`` is a DNG's BaselineExposure (DNG 1.6, tag 50730): how many EV a raw
    converter adds for a normal rendering; None when the file has none (the specification's
    default is then 0).
    """

    white_balance: str | None = None  # "auto" | "manual" (WhiteBalance 0 / 1) | "none" (raw)
    exposure_time_s: float | None = None
    iso: int | None = None
    f_number: float | None = None
    camera_make: str | None = None
    camera_model: str | None = None
    taken_at: datetime | None = None  # DateTimeOriginal, camera local time, no zone
    exposure_bias_ev: float | None = None
    sensitivity_type: int | None = None
    standard_output_sensitivity: int | None = None
    custom_rendered: int | None = None
    baseline_exposure_ev: float | None = None

    def to_dict(self) -> dict:
        return {
            "white_balance": self.white_balance,
            "exposure_time_s": self.exposure_time_s,
            "iso": self.iso,
            "f_number": self.f_number,
            "camera_make": self.camera_make,
            "camera_model": self.camera_model,
            "taken_at": self.taken_at.isoformat() if self.taken_at else None,
            "exposure_bias_ev": self.exposure_bias_ev,
            "sensitivity_type": self.sensitivity_type,
            "standard_output_sensitivity": self.standard_output_sensitivity,
            "custom_rendered": self.custom_rendered,
            "baseline_exposure_ev": self.baseline_exposure_ev,
        }


def _within(value: float | None, bounds) -> float | None:
    return value if value is not None and bounds[0] <= value <= bounds[1] else None


def _code(value: float | None, allowed=range(65536)) -> int | None:
    return int(value) if value is not None and value == int(value) and int(value) in allowed else None


def exposure_fields(value_of) -> dict:
    """The exposure fields of :class:`PhotoMetadata` from ``value_of(tag)``, a finite number or None.

    Shared by JPEG, PNG, TIFF and HEIC EXIF and by DNG files (which may keep these tags in
    IFD 0): tag numbers from Exif 2.32 (CIPA DC-008-2019). An ISO above 65535 is read from
    StandardOutputSensitivity when SensitivityType says the ISO value is SOS.
    """
    sensitivity_type = _code(value_of(TAG_SENSITIVITY_TYPE), SENSITIVITY_TYPES)
    sos = _within(value_of(TAG_STANDARD_OUTPUT_SENSITIVITY), SENSITIVITY_RANGE)
    iso = _within(value_of(TAG_ISO), SENSITIVITY_RANGE)
    if iso == ISO_TAG_CAP and sensitivity_type == SENSITIVITY_TYPE_SOS and sos and sos > iso:
        iso = sos
    return {
        "exposure_time_s": _within(value_of(TAG_EXPOSURE_TIME), EXPOSURE_TIME_RANGE_S),
        "f_number": _within(value_of(TAG_F_NUMBER), F_NUMBER_RANGE),
        "iso": round(iso) if iso else None,
        "exposure_bias_ev": _within(value_of(TAG_EXPOSURE_BIAS), EXPOSURE_BIAS_RANGE_EV),
        "sensitivity_type": sensitivity_type,
        "standard_output_sensitivity": round(sos) if sos else None,
        "custom_rendered": _code(value_of(TAG_CUSTOM_RENDERED)),
    }


_CHANNELS = np.arange(3)


@dataclass(frozen=True, eq=False)
class Photo:
    """A decoded photo: upright encoded codes and how they map to linear light.

    ``codes`` is a read-only (H, W, 3) uint8 or uint16 array; ``decode_table`` is float32 of
    shape (3, max_code + 1); ``space_source`` is ``"icc"``, ``"cicp"`` (HEIF colour information),
    ``"exif"``, ``"dng"`` (a raw file's colour matrix) or ``"assumed"``; ``profile_problem``
    says why an embedded profile was not used (then sRGB is assumed); ``matrix_illuminant_unstated``
    marks a raw file whose colour matrix names no calibration illuminant (see :mod:`glowtemp.images.raw`);
    ``missing_data`` is True when the decoder filled in image data that the file lacks
    (:func:`ends_in_filled_blocks`);
    ``linear_scale`` turns decoded linear light into the file's own scale (1 but for raw files,
    whose codes leave headroom for the colour matrix).
    """

    codes: np.ndarray
    max_code: int
    space: RGBSpace
    space_source: str
    decode_table: np.ndarray
    metadata: PhotoMetadata
    format: str
    profile_problem: str | None = None
    matrix_illuminant_unstated: bool = False
    missing_data: bool = False
    linear_scale: float = 1.0

    @property
    def width(self) -> int:
        return self.codes.shape[1]

    @property
    def height(self) -> int:
        return self.codes.shape[0]

    def linear(self, pixels: np.ndarray) -> np.ndarray:
        """Linear light of integer ``pixels`` of shape (..., 3), float32, same shape.

        In [0, 1], except that a raw photo keeps sensor noise about black, so its dark pixels
        may dip a little below zero (see :func:`glowtemp.images.raw.encode_linear`).
        """
        pixels = np.asarray(pixels)
        if pixels.shape[-1:] != (3,) or not np.issubdtype(pixels.dtype, np.integer):
            raise ValueError("pixels must be integer codes with 3 channels in the last axis")
        return self.decode_table[_CHANNELS, pixels]


# --- orientation ---------------------------------------------------------------------------


def upright(codes: np.ndarray, orientation: int) -> np.ndarray:
    """Turn stored pixels (H, W, ...) upright for an EXIF Orientation value, CIPA DC-008 0x0112.

    The value names where the stored 0th row and 0th column lie in the visual image:
    1 top/left, 2 top/right, 3 bottom/right, 4 bottom/left, 5 left/top, 6 right/top,
    7 right/bottom, 8 left/bottom. Unknown values are treated as 1. Returns a view.

    >>> stored = np.array([[1, 2, 3], [4, 5, 6]])
    >>> upright(stored, 6).tolist()  # camera turned a quarter clockwise
    [[4, 1], [5, 2], [6, 3]]
    """
    swap = (1, 0) + tuple(range(2, codes.ndim))
    if orientation == 2:
        return codes[:, ::-1]
    if orientation == 3:
        return codes[::-1, ::-1]
    if orientation == 4:
        return codes[::-1, :]
    if orientation == 5:
        return codes.transpose(swap)
    if orientation == 6:
        return codes[::-1, :].transpose(swap)
    if orientation == 7:
        return codes[::-1, ::-1].transpose(swap)
    if orientation == 8:
        return codes[:, ::-1].transpose(swap)
    return codes



def exif_text(value) -> str | None:
    """An EXIF ASCII value as stripped text (NULs and spaces removed), None when empty."""
    if isinstance(value, bytes):
        value = value.decode("latin-1")
    text = value.strip("\0 ").strip() if isinstance(value, str) else ""
    return text or None


def exif_time(value) -> datetime | None:
    """An EXIF date and time (``YYYY:MM:DD HH:MM:SS``, CIPA DC-008) as a naive datetime, or None."""
    text = exif_text(value)
    try:
        return datetime.strptime(text, "%Y:%m:%d %H:%M:%S") if text else None
    except ValueError:
        return None
