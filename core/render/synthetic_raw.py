"""Synthetic raw photos of glow: a Bayer sensor's linear data, written as a DNG file.

The raw half of the forward model in :mod:`glowtemp.render.synthetic`: the same scenes, the same
cameras and the same sensor noise, but the file keeps what the sensor recorded, one colour
per photosite, with no white balance, no colour matrix applied, no tone curve and no 8-bit
quantisation. Like a real raw file it carries colour matrices from CIE XYZ to the camera's
raw space, fitted here on the ColorChecker under CIE illuminants A and D65, which is how a
camera maker calibrates them.

Render a JPEG and a DNG of one capture by passing the JPEG's ``exposure_time_s``,
``f_number``, ``iso`` and ``departure`` (as ``sensitivity_departure``) to :func:`render_raw`,
as a phone saving RAW + JPEG does. Exposure follows ISO 12232 standard output sensitivity as
in the JPEG (``glowtemp.render.synthetic_exposure``), and BaselineExposure says how a raw converter
brings the normalised raw data onto the same relation.

Nothing on the measuring path may import this module.

References
----------
- Adobe, Digital Negative (DNG) Specification, version 1.4.0.0 (2012) and 1.6.0.0 (2020):
  chapter 4 (tags DNGVersion, UniqueCameraModel, CFAPlaneColor, CFALayout, BlackLevel,
  WhiteLevel, ColorMatrix1/2, CalibrationIlluminant1/2, AsShotNeutral, BaselineExposure) and
  chapter 6 (camera to XYZ).
- TIFF/EP, ISO 12234-2:2001: CFARepeatPatternDim, CFAPattern, and Exif tags in IFD 0.
- CIPA DC-008-2019 (Exif 2.32): the exposure tags, as ``glowtemp.render.synthetic.exif_bytes``.
- B. E. Bayer, "Color imaging array", US patent 3,971,065 (1976): the RGGB mosaic.
- EMVA Standard 1288, release 4.0 (2021): shot and read noise (as ``glowtemp.render.synthetic``).
"""

from __future__ import annotations

import io
from dataclasses import dataclass
from datetime import datetime
from fractions import Fraction
from functools import lru_cache

import numpy as np
import tifffile

from ..physics.locus import colour_matching_functions
from ..images.decoded import SENSITIVITY_TYPE_SOS
from .synthetic import (
    DEFAULT_TAKEN_AT,
    FULL_WELL_ELECTRONS,
    READ_NOISE_ELECTRONS,
    daylight_calibration,
)
from .synthetic_camera import (
    DAYLIGHT_ILLUMINANT,
    CameraModel,
    SyntheticInputError,
    blackbody_raw_table,
    chart_reflectances,
    illuminant_on_grid,
    preset_gains,
    raw_response,
    white_point_preserving_fit,
)
from .synthetic_exposure import BASE_ISO, ExposureRequest, expose
from .synthetic_scenes import Region, build_scene

RAW_BITS = 12  # a phone's raw depth, from memory (10 to 12 bits)
BLACK_LEVEL = 256  # from memory: a typical pedestal for 12-bit raw
WHITE_LEVEL = 2**RAW_BITS - 1
RAW_TARGET = 0.75  # auto exposure: the brightest glow's strongest raw channel at 75 % of full well
CALIBRATION_ILLUMINANTS = (("A", 17), ("D65", 21))  # EXIF LightSource: 17 Standard light A, 21 D65
RGGB = (0, 1, 1, 2)  # CFAPattern, TIFF/EP: 0 red, 1 green, 2 blue, row by row in the 2 x 2 tile


@dataclass(frozen=True)
class RawRender:
    """A rendered Bayer capture: CFA codes (H, W) uint16, truth per photosite, camera data.

    ``exposure`` is the raw scale (full well = 1); the exposure settings are what the EXIF
    says, ``departure`` the camera's factor d the EXIF does not say, ``baseline_exposure_ev``
    the file's BaselineExposure.
    """

    cfa: np.ndarray
    truth_k: np.ndarray
    region: Region
    camera_name: str
    xyz_to_camera: tuple  # one (illuminant code, 3 x 3 matrix) per calibration illuminant
    as_shot_neutral: np.ndarray
    exposure: float
    exposure_time_s: float
    iso: int
    taken_at: datetime
    f_number: float
    exposure_bias_ev: float
    departure: float
    baseline_exposure_ev: float  # see baseline_exposure_ev()
    black_level: int = BLACK_LEVEL
    white_level: int = WHITE_LEVEL


@lru_cache(maxsize=None)
def xyz_to_camera_matrix(camera: CameraModel, illuminant: str) -> np.ndarray:
    """A DNG ColorMatrix for ``camera``: CIE XYZ to raw camera values, fitted under ``illuminant``.

    Raw -> XYZ is fitted by white-point preserving least squares (Finlayson and Drew 1997) on
    the 24 ColorChecker patches lit by the CIE illuminant, without white balance, and inverted.
    It is scaled so the illuminant's XYZ with Y = 1 maps to a camera neutral whose largest
    component is 1 (DNG 1.4, ColorMatrix1).
    """
    light = illuminant_on_grid(illuminant)
    cmfs = colour_matching_functions()[1]
    radiance = chart_reflectances() * light
    to_xyz = white_point_preserving_fit(
        raw_response(camera, radiance), radiance @ cmfs * 1e-9, raw_response(camera, light), light @ cmfs * 1e-9
    )
    matrix = np.linalg.inv(to_xyz)
    white = light @ cmfs
    return matrix / (matrix @ (white / white[1])).max()


@lru_cache(maxsize=None)
def baseline_exposure_ev(camera: CameraModel) -> float:
    """The camera's BaselineExposure (DNG 1.6, tag 50730): EV a raw converter adds for a normal rendering.

    A raw converter turns a camera neutral whose largest component is 1 into a white of Y = 1
    (the normalisation of DNG colour matrices, as :func:`xyz_to_camera_matrix`) and multiplies
    linear data by ``2**BaselineExposure``. It is chosen so the converter's output follows the
    same ISO 12232 relation as the camera's JPEG: for a daylight (CIE D55) white the JPEG
    pipeline gives ``calibration * raw_scale * Y``, the converter ``2**B * raw_scale *
    max(raw_white)``, so ``2**B = calibration * Y / max(raw_white)``: one value per camera,
    whatever the exposure. For the colorimetric ideal camera (raw = XYZ) it is 0, and
    normalised green times ``2**B`` is the SOS output luminance.
    """
    daylight = illuminant_on_grid(DAYLIGHT_ILLUMINANT)
    white_y = float(daylight @ colour_matching_functions()[1][:, 1] * 1e-9)
    white_raw = raw_response(camera, daylight)
    return float(np.log2(daylight_calibration(camera) * white_y / white_raw.max()))


def _mosaic(pixels: np.ndarray) -> np.ndarray:
    """Keep one channel per photosite in the RGGB pattern: (H, W, 3) -> (H, W)."""
    cfa = pixels[:, :, 1].copy()
    cfa[0::2, 0::2] = pixels[0::2, 0::2, 0]
    cfa[1::2, 1::2] = pixels[1::2, 1::2, 2]
    return cfa


def render_raw(temperature_k, *, camera: CameraModel, scene="spy_hole", size=(320, 240), exposure=None,
               overexpose=1.0, emissivity=1.0, wall="cool", noise=True, seed=0, iso=None,
               taken_at=None, exposure_time_s=None, f_number=None, exposure_compensation_ev=0.0,
               sensitivity_departure=1.0, tripod=False) -> RawRender:
    """Render a raw Bayer capture of glow (arguments as :func:`glowtemp.render.synthetic.render_photo`).

    ``exposure`` locks the raw scale (full well = 1); auto exposure aims to put the brightest
    glow's strongest raw channel at 75 % of full well, with settings from the ladders, and the
    raw scale follows ISO 12232 SOS for the camera's calibration, as the JPEG's does.
    ``size`` must be even on both sides (whole Bayer tiles).
    """
    width, height = size
    if width % 2 or height % 2:
        raise SyntheticInputError("A Bayer capture needs an even width and height.")
    request = ExposureRequest(exposure, overexpose, exposure_time_s, f_number, iso, exposure_compensation_ev,
                              sensitivity_departure, tripod).check()
    built = build_scene(scene, size, temperature_k, wall=wall, emissivity=emissivity)
    table_k, table_raw = blackbody_raw_table(camera)
    t = built.temperature_k.astype(np.float64)
    raw = np.stack([np.interp(t, table_k, table_raw[:, i], left=0.0) for i in range(3)], axis=-1)
    raw *= built.weight[..., None]
    if raw.max() <= 0:
        raise SyntheticInputError("The scene emits no light the camera sees; raise the temperature.")
    exposure = expose(request, metered_raw_scale=RAW_TARGET / float(raw.max()),
                      calibration=daylight_calibration(camera))
    signal = _mosaic(raw * exposure.raw_scale)
    full_scale_e = FULL_WELL_ELECTRONS * BASE_ISO / exposure.iso
    if noise:
        rng = np.random.default_rng(seed)
        sigma = np.sqrt(np.maximum(signal, 0) * full_scale_e + READ_NOISE_ELECTRONS**2) / full_scale_e
        signal = signal + sigma * rng.standard_normal(signal.shape)
    signal = np.clip(signal, 0.0, 1.0)  # sensor saturation; the pedestal keeps noise above zero
    codes = np.rint(BLACK_LEVEL + signal * (WHITE_LEVEL - BLACK_LEVEL)).astype(np.uint16)
    matrices = tuple((code, xyz_to_camera_matrix(camera, name)) for name, code in CALIBRATION_ILLUMINANTS)
    return RawRender(
        cfa=codes,
        truth_k=np.where(built.weight > 0, built.temperature_k, np.nan).astype(np.float32),
        region=built.region,
        camera_name=camera.name,
        xyz_to_camera=matrices,
        as_shot_neutral=1.0 / preset_gains(camera, "daylight"),
        exposure=exposure.raw_scale,
        exposure_time_s=float(exposure.exposure_time_s),
        iso=exposure.iso,
        taken_at=taken_at or DEFAULT_TAKEN_AT,
        f_number=float(exposure.f_number),
        exposure_bias_ev=exposure.compensation_ev,
        departure=exposure.departure,
        baseline_exposure_ev=baseline_exposure_ev(camera),
    )


def _rationals(values, max_denominator: int = 1_000_000) -> list[int]:
    out = []
    for value in np.ravel(values):
        fraction = Fraction(float(value)).limit_denominator(max_denominator)
        out += [fraction.numerator, fraction.denominator]
    return out


def encode_dng(rendered: RawRender, orientation: int = 1) -> bytes:
    """DNG 1.4 bytes (tifffile): the CFA in IFD 0 with its colour tags and Exif capture tags."""
    make, model = "glowtemp demo", rendered.camera_name
    tags = [
        (271, "s", 0, make, True),  # Make
        (272, "s", 0, model, True),  # Model
        (274, "H", 1, orientation, True),  # Orientation
        (33421, "H", 2, (2, 2), True),  # CFARepeatPatternDim
        (33422, "B", 4, RGGB, True),  # CFAPattern
        (50706, "B", 4, (1, 4, 0, 0), True),  # DNGVersion
        (50707, "B", 4, (1, 1, 0, 0), True),  # DNGBackwardVersion
        (50708, "s", 0, f"{make} {model}", True),  # UniqueCameraModel
        (50710, "B", 3, (0, 1, 2), True),  # CFAPlaneColor
        (50711, "H", 1, 1, True),  # CFALayout: rectangular
        (50714, "H", 1, rendered.black_level, True),  # BlackLevel
        (50717, "H", 1, rendered.white_level, True),  # WhiteLevel
        (50728, "2I", 3, _rationals(rendered.as_shot_neutral), True),  # AsShotNeutral
        (50730, "2i", 1, _rationals([rendered.baseline_exposure_ev]), True),  # BaselineExposure
        (33434, "2I", 1, _rationals([rendered.exposure_time_s]), True),  # ExposureTime
        (33437, "2I", 1, _rationals([rendered.f_number], 100), True),  # FNumber
        (34855, "H", 1, rendered.iso, True),  # ISOSpeedRatings (PhotographicSensitivity)
        (34864, "H", 1, SENSITIVITY_TYPE_SOS, True),  # SensitivityType: standard output sensitivity
        (34865, "I", 1, rendered.iso, True),  # StandardOutputSensitivity
        (37380, "2i", 1, _rationals([rendered.exposure_bias_ev], 100), True),  # ExposureBiasValue
        (36867, "s", 0, rendered.taken_at.strftime("%Y:%m:%d %H:%M:%S"), True),  # DateTimeOriginal
    ]
    for index, (illuminant, matrix) in enumerate(rendered.xyz_to_camera):
        tags.append((50721 + index, "2i", 9, _rationals(matrix), True))  # ColorMatrix1/2
        tags.append((50778 + index, "H", 1, illuminant, True))  # CalibrationIlluminant1/2
    out = io.BytesIO()
    tifffile.imwrite(
        out, rendered.cfa, photometric=32803, subfiletype=0, extratags=tags,  # 32803: CFA
        description="Synthetic glow photo rendered by glowtemp; not a real photograph",
    )
    return out.getvalue()
