"""Synthetic phone photos of glowing bodies, for tests, benchmarks and demo images.

A physically honest forward model, spectrum -> camera -> file:

1. a scene gives every pixel a temperature and an emitting weight (emissivity times a view
   factor) and reflects some daylight (``ambient``);
2. the camera (``glowtemp.render.synthetic_camera``) turns Planck radiance into raw signal through its
   spectral sensitivities;
3. photon shot noise and read noise are added in raw space (EMVA 1288 linear camera model), the
   sensor saturates at full scale;
4. white balance gains, the camera's colour matrix to XYZ, the output space's XYZ -> RGB
   matrix and an optional saturation boost are applied, negative components clip to zero (why
   sRGB blue is zero in glow);
5. a tone curve and 8-bit quantisation, then JPEG or PNG with EXIF and an ICC profile.

Exposure follows ISO 12232 standard output sensitivity (``glowtemp.render.synthetic_exposure``): each
camera's pipeline is calibrated on a daylight white, auto exposure picks shutter time, f-number
and ISO from real ladders, and the EXIF written holds the settings that made the pixels.

Nothing on the measuring path may import this module.

References
----------
- European Machine Vision Association, EMVA Standard 1288, release 4.0 (2021): linear camera
  model with photon shot noise (Poisson) and signal-independent read noise.
- IEC 61966-2-1:1999 (sRGB transfer function); CIE 015:2018 (CIE illuminants, XYZ).
- CIPA DC-008-2019, Exif 2.32: the tags written by :func:`encode_jpeg`.
- ISO 12232:2019, standard output sensitivity (see ``glowtemp.render.synthetic_exposure``).
"""

from __future__ import annotations

import io
import numbers
from dataclasses import dataclass
from datetime import datetime
from fractions import Fraction
from functools import lru_cache

import numpy as np
from PIL import Image, ImageCms
from PIL.TiffImagePlugin import IFDRational

from ..physics.colourspaces import DISPLAY_P3, SRGB, RGBSpace, srgb_decode, srgb_encode
from ..images.icc import build_matrix_profile
from ..physics.locus import blackbody_xyz, colour_matching_functions
from ..images.decoded import SENSITIVITY_TYPE_SOS
from .synthetic_camera import (
    DAYLIGHT_ILLUMINANT,
    RAW_TABLE_MIN_K,
    CameraModel,
    SyntheticInputError,
    blackbody_raw_table,
    grey_world_gains,
    illuminant_on_grid,
    preset_gains,
    raw_response,
    wavelength_grid_nm,
)
from .synthetic_camera import colour_matrix as fitted_colour_matrix
from .synthetic_exposure import BASE_ISO, LUMINOUS_EFFICACY_LM_PER_W, ExposureRequest, expose
from .synthetic_scenes import SCENES, Region, Scene, build_scene

__all__ = [
    "RenderedPhoto", "Region", "Scene", "SyntheticInputError", "SCENES", "TONE_CURVES",
    "render_photo", "render_light_photo", "encode_jpeg", "encode_png", "tone_curve_encode",
    "saturation_matrix", "daylight_calibration", "tone_curve_linear_max", "exif_rational",
]

OUTPUT_SPACES = {SRGB.name: SRGB, DISPLAY_P3.name: DISPLAY_P3}
POWER_CURVES = {"power-1.8": 1.8, "power-2.2": 2.2, "power-2.6": 2.6}  # name: gamma
TONE_CURVES = ("srgb", "phone", *POWER_CURVES, "srgb-shoulder")
PHONE_CURVE_STRENGTH = 0.3  # invented S-curve strength for the "phone" tone curve
SHOULDER_START = 0.8  # "srgb-shoulder": the sRGB curve up to this encoded value, then a roll-off
SHOULDER_TOP = 2 - SHOULDER_START  # sRGB-encoded input (above 1) at which the roll-off reaches 1
TARGET_CODE = 0.75  # auto exposure puts the brightest glow's strongest channel at 75 % of full code
FULL_WELL_ELECTRONS = 6000.0  # at ISO 100; a small phone pixel (from memory)
READ_NOISE_ELECTRONS = 2.5  # rms, from memory for phone sensors
REFERENCE_TEMPERATURE_K = 1273.15  # 1000 °C: the default brightness of a rendered light
DEFAULT_TAKEN_AT = datetime(2024, 3, 1, 12, 0, 0)  # invented default capture time
_LUT_SIZE = 65536


def tone_curve_linear_max(tone_curve: str) -> float:
    """The linear input at which a tone curve reaches full code: 1, or about 1.52 for "srgb-shoulder"."""
    return float(srgb_decode(SHOULDER_TOP)) if tone_curve == "srgb-shoulder" else 1.0


def tone_curve_encode(linear, tone_curve: str = "srgb"):
    """Encode linear light with a tone curve, result in [0, 1]; input clipped to [0, linear max].

    - "srgb": the IEC 61966-2-1 encoding.
    - "phone": an S-shaped curve on top of it, ``(1 - a) v + a (3 v^2 - 2 v^3)`` with ``a = 0.3``
      and ``v`` the sRGB-encoded value: darker shadows, brighter highlights. Invented for tests
      (no real phone's curve); it stands for the unknown curves phones apply while still
      tagging the file as sRGB.
    - "power-1.8", "power-2.2", "power-2.6": plain power laws, ``linear ** (1 / gamma)``.
    - "srgb-shoulder": the sRGB curve up to the encoded value 0.8, then a gentle highlight
      shoulder, ``1 - (1.2 - u)^2 / 0.8`` of the sRGB formula's value ``u`` (which exceeds 1 for
      linear input above 1): continuous with the sRGB curve in value and slope at 0.8, it
      reaches 1, with zero slope, at the linear input :func:`tone_curve_linear_max` (about
      1.52). Invented, in the manner of phones that keep some highlight headroom.

    >>> round(float(tone_curve_encode(0.5, "phone")), 4) > round(float(tone_curve_encode(0.5)), 4)
    True
    >>> float(tone_curve_encode(0.25, "power-2.2")) == 0.25 ** (1 / 2.2)
    True
    """
    if tone_curve not in TONE_CURVES:
        raise SyntheticInputError(f"Unknown tone curve {tone_curve!r}; use one of {TONE_CURVES}.")
    x = np.clip(linear, 0.0, tone_curve_linear_max(tone_curve))
    if tone_curve in POWER_CURVES:
        return x ** (1 / POWER_CURVES[tone_curve])
    v = srgb_encode(x)
    if tone_curve == "phone":
        v = (1 - PHONE_CURVE_STRENGTH) * v + PHONE_CURVE_STRENGTH * (3 * v**2 - 2 * v**3)
    elif tone_curve == "srgb-shoulder":
        v = np.where(v <= SHOULDER_START, v, 1 - (SHOULDER_TOP - v) ** 2 / (4 * (1 - SHOULDER_START)))
    return v


@lru_cache(maxsize=None)
def _tone_grid(tone_curve: str) -> np.ndarray:
    return np.linspace(0.0, tone_curve_linear_max(tone_curve), _LUT_SIZE)


@lru_cache(maxsize=None)
def _tone_lut(tone_curve: str) -> np.ndarray:
    codes = np.rint(255 * tone_curve_encode(_tone_grid(tone_curve), tone_curve))
    return codes.astype(np.uint8)


@lru_cache(maxsize=None)
def _target_linear(tone_curve: str) -> float:
    grid = _tone_grid(tone_curve)
    return float(np.interp(TARGET_CODE, tone_curve_encode(grid, tone_curve), grid))


def saturation_matrix(space: RGBSpace, saturation: float) -> np.ndarray:
    """Linear RGB saturation about the pixel's luminance: ``c' = Y + s (c - Y)`` for each channel.

    ``Y`` is the space's luminance row (SMPTE RP 177 normalised primary matrix, row Y), whose
    entries sum to 1, so ``Y`` itself is unchanged and neutrals stay neutral; ``s = 1`` is the
    identity. As a matrix: ``s I + (1 - s) 1 y^T``.

    >>> np.allclose(saturation_matrix(SRGB, 1.0), np.eye(3))
    True
    """
    luminance_row = space.rgb_to_xyz[1]
    return saturation * np.eye(3) + (1 - saturation) * np.outer(np.ones(3), luminance_row)


@dataclass(frozen=True)
class RenderedPhoto:
    """A rendered photo: 8-bit codes (H, W, 3), the true temperature per pixel and its settings.

    ``truth_k`` is NaN where nothing glows. ``exposure`` is the raw scale used (pass it back to
    :func:`render_photo` to lock exposure across a series, or pass ``exposure_time_s``,
    ``f_number`` and ``iso``). ``white_balance`` is "daylight", "tungsten", "auto" or "manual";
    ``gains`` are the white-balance gains actually applied (with any ``white_balance_error``).
    ``exposure_time_s``, ``f_number``, ``iso`` and ``exposure_bias_ev`` are what the EXIF says;
    ``departure`` is the camera's factor d on the ISO 12232 output, which the EXIF does not say.
    """

    codes: np.ndarray
    truth_k: np.ndarray
    region: Region
    camera_name: str
    white_balance: str
    gains: tuple
    output_space: RGBSpace
    tone_curve: str
    exposure: float
    exposure_time_s: float
    iso: int
    taken_at: datetime
    f_number: float
    exposure_bias_ev: float
    departure: float
    saturation: float


def _luminance(radiance_on_grid) -> float:
    """CIE Y of a spectrum on the 1 nm grid, on the same absolute scale as the raw signal."""
    return float(radiance_on_grid @ colour_matching_functions()[1][:, 1] * 1e-9)


@lru_cache(maxsize=None)
def _blackbody_luminance_table(size: int) -> np.ndarray:
    """CIE Y of a blackbody on the raw tables' 1 K grid (same absolute scale as the raw)."""
    return blackbody_xyz(RAW_TABLE_MIN_K + np.arange(size))[:, 1]


class _Blackbody:
    """Emission of glowing pixels: Planck radiance seen through the camera, from cached tables."""

    def __init__(self, camera: CameraModel):
        self.table_k, self.table_raw = blackbody_raw_table(camera)
        self.table_y = _blackbody_luminance_table(self.table_k.size)

    def raw(self, temperature_k, weight):
        t = temperature_k.astype(np.float64)
        channels = [np.interp(t, self.table_k, self.table_raw[:, i], left=0.0) for i in range(3)]
        return (np.stack(channels, axis=-1) * weight[..., None]).astype(np.float32)

    def luminance(self, temperature_k, weight):
        return np.interp(temperature_k.astype(np.float64), self.table_k, self.table_y, left=0.0) * weight


class _Light:
    """Emission of a non-thermal light: one spectrum, scaled by the pixel weight."""

    def __init__(self, camera: CameraModel, radiance_on_grid):
        self.spectrum_raw = raw_response(camera, radiance_on_grid).astype(np.float32)
        self.spectrum_y = _luminance(radiance_on_grid)

    def raw(self, temperature_k, weight):
        return weight[..., None].astype(np.float32) * self.spectrum_raw

    def luminance(self, temperature_k, weight):
        return weight * self.spectrum_y


@dataclass(frozen=True)
class Processing:
    """What the camera does between sensor and file (see :func:`render_photo` for each field)."""

    white_balance: object = "daylight"
    white_balance_error: tuple | None = None
    colour_matrix: np.ndarray | None = None
    output_space: RGBSpace = SRGB
    tone_curve: str = "srgb"
    saturation: float = 1.0

    def check(self) -> Processing:
        """Raise :class:`SyntheticInputError` for a pipeline that cannot be built; return self."""
        if isinstance(self.white_balance, str):
            if self.white_balance not in ("daylight", "tungsten", "auto"):
                raise SyntheticInputError("white_balance must be daylight, tungsten, auto or three gains.")
        elif not _positive_triple(self.white_balance):
            raise SyntheticInputError("Manual white-balance gains must be three positive numbers.")
        if self.white_balance_error is not None and not _positive_triple(self.white_balance_error):
            raise SyntheticInputError("white_balance_error must be three positive multipliers.")
        if self.colour_matrix is not None and (np.shape(self.colour_matrix) != (3, 3)
                                               or not np.all(np.isfinite(self.colour_matrix))):
            raise SyntheticInputError("colour_matrix must be a 3 x 3 matrix of finite numbers.")
        if self.output_space not in OUTPUT_SPACES.values():
            raise SyntheticInputError(f"output_space must be one of {', '.join(OUTPUT_SPACES)}.")
        if self.tone_curve not in TONE_CURVES:
            raise SyntheticInputError(f"Unknown tone curve {self.tone_curve!r}; use one of {TONE_CURVES}.")
        if not (isinstance(self.saturation, numbers.Real) and 0 <= self.saturation <= 4):
            raise SyntheticInputError("saturation must be between 0 (grey) and 4.")
        return self

    def camera_matrix(self, camera: CameraModel) -> np.ndarray:
        """White-balanced raw to D65 XYZ: the caller's matrix, or the camera's ColorChecker fit."""
        if self.colour_matrix is None:
            return fitted_colour_matrix(camera)
        return np.asarray(self.colour_matrix, dtype=float)

    def gain_error(self) -> np.ndarray:
        return np.ones(3) if self.white_balance_error is None else np.asarray(self.white_balance_error, float)


def _positive_triple(values) -> bool:
    try:
        array = np.asarray(values, dtype=float)
    except (TypeError, ValueError):
        return False
    return array.shape == (3,) and bool(np.all(np.isfinite(array) & (array > 0)))


def _check_scene(camera, emissivity, ambient):
    if not isinstance(camera, CameraModel):
        raise SyntheticInputError("camera must be a CameraModel (see glowtemp.render.synthetic_camera.CAMERAS).")
    if not 0 < emissivity <= 1:
        raise SyntheticInputError("emissivity must be in (0, 1].")
    if ambient < 0:
        raise SyntheticInputError("ambient must be >= 0.")


def _white_balance_gains(camera, white_balance, sample_raw):
    if isinstance(white_balance, str) and white_balance != "auto":
        return white_balance, preset_gains(camera, white_balance)
    if isinstance(white_balance, str):
        return "auto", grey_world_gains(camera, sample_raw.reshape(-1, 3).mean(axis=0))
    return "manual", np.asarray(white_balance, dtype=float)


def daylight_calibration(camera: CameraModel, camera_matrix=None, gain_error=(1.0, 1.0, 1.0)) -> float:
    """The pipeline's output Y per unit raw scale and per unit scene Y, for a daylight white.

    ISO 12232 rates a camera in daylight with its daylight white balance (CIE D55 here, near
    the ISO 7589 sensitometric daylight the standard refers to; from memory). The white, lit
    by D55, goes through the camera's sensitivities, its daylight preset gains (times any
    preset error), and its colour matrix; the output space and a saturation boost keep the
    luminance of a white. For a matrix fitted with its white preserved this is exactly 1.
    """
    matrix = fitted_colour_matrix(camera) if camera_matrix is None else np.asarray(camera_matrix, float)
    daylight = illuminant_on_grid(DAYLIGHT_ILLUMINANT)
    gains = preset_gains(camera, "daylight") * np.asarray(gain_error, dtype=float)
    return float((matrix @ (gains * raw_response(camera, daylight)))[1]) / _luminance(daylight)


def _render(scene: Scene, emitter, *, camera, processing: Processing, request: ExposureRequest, ambient,
            noise, seed, taken_at) -> RenderedPhoto:
    height, width = scene.temperature_k.shape
    step = max(1, int(np.sqrt(height * width / 20000)))
    sample_t = scene.temperature_k[::step, ::step]
    sample_w = scene.weight[::step, ::step]
    brightest_y = float(emitter.luminance(sample_t, sample_w).max())
    if brightest_y <= 0:
        raise SyntheticInputError("The scene emits no visible light; raise the temperature.")
    daylight = illuminant_on_grid("D65")
    ambient_raw = (ambient * brightest_y / _luminance(daylight) * raw_response(camera, daylight)).astype(np.float32)
    sample_raw = emitter.raw(sample_t, sample_w) + ambient_raw
    wb_label, gains = _white_balance_gains(camera, processing.white_balance, sample_raw)
    gains = gains * processing.gain_error()
    space = processing.output_space
    camera_matrix = processing.camera_matrix(camera)
    to_output = (saturation_matrix(space, processing.saturation) @ space.xyz_to_rgb @ camera_matrix
                 @ np.diag(gains)).astype(np.float32)
    brightest = float((sample_raw @ to_output.T).max())
    if brightest <= 0:
        raise SyntheticInputError("The camera's colour matrix turns this scene black; check colour_matrix.")
    exposure = expose(request, metered_raw_scale=_target_linear(processing.tone_curve) / brightest,
                      calibration=daylight_calibration(camera, camera_matrix, processing.gain_error()))

    full_scale_e = FULL_WELL_ELECTRONS * BASE_ISO / exposure.iso
    lut = _tone_lut(processing.tone_curve)
    to_index = (_LUT_SIZE - 1) / tone_curve_linear_max(processing.tone_curve)
    rng = np.random.default_rng(seed)
    codes = np.empty((height, width, 3), dtype=np.uint8)
    rows = max(1, 2**19 // width)
    for top in range(0, height, rows):
        band = slice(top, min(top + rows, height))
        raw = (emitter.raw(scene.temperature_k[band], scene.weight[band]) + ambient_raw) * np.float32(exposure.raw_scale)
        if noise:
            sigma = np.sqrt(np.maximum(raw, 0) * full_scale_e + READ_NOISE_ELECTRONS**2) / full_scale_e
            raw += sigma * rng.standard_normal(raw.shape, dtype=np.float32)
        np.minimum(raw, 1.0, out=raw)  # sensor saturation
        linear = raw @ to_output.T
        index = np.clip(linear * to_index + 0.5, 0, _LUT_SIZE - 1).astype(np.uint16)  # negatives clip to 0
        codes[band] = lut[index]

    truth = np.where(scene.weight > 0, scene.temperature_k, np.nan).astype(np.float32)
    return RenderedPhoto(
        codes=codes, truth_k=truth, region=scene.region, camera_name=camera.name,
        white_balance=wb_label, gains=tuple(float(g) for g in gains), output_space=space,
        tone_curve=processing.tone_curve, exposure=exposure.raw_scale,
        exposure_time_s=float(exposure.exposure_time_s), iso=exposure.iso,
        taken_at=taken_at or DEFAULT_TAKEN_AT, f_number=float(exposure.f_number),
        exposure_bias_ev=exposure.compensation_ev, departure=exposure.departure,
        saturation=float(processing.saturation),
    )


def render_photo(temperature_k, *, camera: CameraModel, scene="spy_hole", size=(320, 240),
                 white_balance="daylight", output_space: RGBSpace = SRGB, tone_curve="srgb",
                 exposure=None, overexpose=1.0, emissivity=1.0, ambient=0.0, wall="cool",
                 noise=True, seed=0, iso=None, taken_at=None, exposure_time_s=None, f_number=None,
                 exposure_compensation_ev=0.0, sensitivity_departure=1.0, tripod=False,
                 saturation=1.0, white_balance_error=None, colour_matrix=None) -> RenderedPhoto:
    """Render a phone photo of glow at ``temperature_k``.

    Parameters
    ----------
    temperature_k
        Temperature of the glow in kelvin (500 to 4000), or a function ``f(x, y)`` of pixel
        coordinates normalised to [0, 1] (x across, y down) returning kelvin, for gradients.
    camera
        A :class:`~glowtemp.render.synthetic_camera.CameraModel`, e.g. from ``CAMERAS``.
    scene
        "spy_hole", "bar" or "uniform" (see ``glowtemp.render.synthetic_scenes``); ``size`` is
        (width, height) in pixels and ``wall`` ("cool" or "black") shapes the spy hole's bore.
    white_balance, white_balance_error
        "daylight" (CIE D55 neutral), "tungsten" (CIE A neutral), "auto" (grey world, capped) or
        three manual gains; ``white_balance_error`` is three multipliers on those gains (a
        preset that is off by a few per cent), None for none.
    colour_matrix
        A 3 x 3 matrix from white-balanced raw to D65-referred XYZ; None for the camera's own
        ColorChecker fit (``glowtemp.render.synthetic_camera.colour_matrix``).
    output_space, saturation, tone_curve
        sRGB or Display P3; a saturation boost ``c' = Y + s (c - Y)`` in linear output RGB
        about the pixel's luminance (:func:`saturation_matrix`; negatives then clip to zero);
        one of :data:`TONE_CURVES` (see :func:`tone_curve_encode`).
    exposure_time_s, f_number, iso
        The exposure settings; those left None are chosen by auto exposure from the ladders of
        ``glowtemp.render.synthetic_exposure`` (widest aperture, lowest ISO with a hand-held time of
        1/30 s or shorter, or up to 30 s with ``tripod``), aiming to put the brightest glow's
        strongest channel at 75 % of the code range. With all three given, exposure is manual.
        Pixels follow ISO 12232 SOS: linear output luminance ``0.018 S q L t / N^2 * d``.
    exposure_compensation_ev
        Auto exposure's target moved by this many EV (within +-5), written as ExposureBiasValue.
    sensitivity_departure
        The camera's factor d on the ISO 12232 output (its maker's calibration, lens
        transmission, a filter in front of the lens); the EXIF still claims the nominal ISO.
        Auto exposure meters the real output, so d changes the settings chosen, not the pixels.
    exposure, overexpose
        ``exposure`` locks a raw scale (from another render), with ISO 100 unless ``iso`` is
        given and the exposure time derived from it. ``overexpose`` multiplies the raw scale
        auto exposure aims at (> 1 clips red), or the locked one; it is not written to EXIF.
    emissivity
        Grey-body emissivity in (0, 1]: scales radiance, not colour.
    ambient
        Daylight (D65) reflected by everything in frame, as a fraction of the brightest glow's
        luminance.
    noise, seed
        Shot and read noise in raw space, reproducible from ``seed``; the ISO scales full well.
    """
    _check_scene(camera, emissivity, ambient)
    processing = Processing(white_balance, white_balance_error, colour_matrix, output_space, tone_curve,
                            saturation).check()
    request = ExposureRequest(exposure, overexpose, exposure_time_s, f_number, iso, exposure_compensation_ev,
                              sensitivity_departure, tripod).check()
    built = build_scene(scene, size, temperature_k, wall=wall, emissivity=emissivity)
    return _render(built, _Blackbody(camera), camera=camera, processing=processing, request=request,
                   ambient=ambient, noise=noise, seed=seed, taken_at=taken_at)


def render_light_photo(wavelengths_nm, spectral_radiance, *, camera: CameraModel, scene="spy_hole",
                       size=(320, 240), white_balance="daylight", output_space: RGBSpace = SRGB,
                       tone_curve="srgb", exposure=None, overexpose=1.0, ambient=0.0, noise=True,
                       seed=0, iso=None, taken_at=None, exposure_time_s=None, f_number=None,
                       exposure_compensation_ev=0.0, sensitivity_departure=1.0, tripod=False,
                       saturation=1.0, white_balance_error=None, colour_matrix=None,
                       luminance_cd_m2=None) -> RenderedPhoto:
    """Render a photo of a light that is not glow (an LED, a lamp, a lit grey card).

    The scene's glowing parts emit the given spectrum (relative units, resampled onto 1 nm)
    instead of Planck radiance, scaled to ``luminance_cd_m2`` (None: the luminance of a
    1000 °C blackbody, about 440 cd/m^2, so settings look like a kiln photo's); ``truth_k`` is
    NaN everywhere. Other arguments as :func:`render_photo`.
    """
    _check_scene(camera, 1.0, ambient)
    processing = Processing(white_balance, white_balance_error, colour_matrix, output_space, tone_curve,
                            saturation).check()
    request = ExposureRequest(exposure, overexpose, exposure_time_s, f_number, iso, exposure_compensation_ev,
                              sensitivity_departure, tripod).check()
    if luminance_cd_m2 is not None and not (isinstance(luminance_cd_m2, numbers.Real) and luminance_cd_m2 > 0):
        raise SyntheticInputError("luminance_cd_m2 must be a positive number (cd/m^2).")
    values = np.interp(wavelength_grid_nm(), np.asarray(wavelengths_nm, float),
                       np.asarray(spectral_radiance, float), left=0.0, right=0.0)
    if np.any(values < 0) or not np.any(values > 0):
        raise SyntheticInputError("A light's spectral radiance must be non-negative and not all zero.")
    if luminance_cd_m2 is None:
        target_y = float(blackbody_xyz(REFERENCE_TEMPERATURE_K)[0, 1])
    else:
        target_y = luminance_cd_m2 / LUMINOUS_EFFICACY_LM_PER_W
    values = values * target_y / _luminance(values)
    built = build_scene(scene, size, 1000.0, wall="black", emissivity=1.0)
    built = Scene(np.full_like(built.temperature_k, np.nan), built.weight, built.region)
    return _render(built, _Light(camera, values), camera=camera, processing=processing, request=request,
                   ambient=ambient, noise=noise, seed=seed, taken_at=taken_at)


def icc_profile_bytes(space: RGBSpace) -> bytes:
    """ICC profile of an output space: LittleCMS's built-in sRGB (via Pillow) or glowtemp.images.icc's."""
    if space is SRGB:
        return ImageCms.ImageCmsProfile(ImageCms.createProfile("sRGB")).tobytes()
    return build_matrix_profile(space, transfer="srgb", description=space.name)


def exif_rational(value: float, max_denominator: int = 1_000_000) -> tuple[int, int]:
    """(numerator, denominator) of an EXIF (S)RATIONAL; ladder values such as 1/60 come out exact."""
    fraction = Fraction(float(value)).limit_denominator(max_denominator)
    return fraction.numerator, fraction.denominator


def exif_bytes(rendered: RenderedPhoto) -> bytes:
    """EXIF block (Exif 2.32, CIPA DC-008-2019): make, model, exposure settings, white balance, date.

    The exposure tags hold the settings that made the pixels: ExposureTime, FNumber,
    PhotographicSensitivity with SensitivityType 1 (standard output sensitivity, ISO 12232) and
    StandardOutputSensitivity, ExposureBiasValue and CustomRendered 0 (normal process). Pillow
    picks the stored types from the values, so a non-negative ExposureBiasValue is stored as
    RATIONAL rather than SRATIONAL and StandardOutputSensitivity as SHORT; the values are those.
    """
    exif = Image.Exif()
    exif[0x010F] = "glowtemp demo"  # Make
    exif[0x0110] = rendered.camera_name  # Model
    exif[0x010E] = "Synthetic glow photo rendered by glowtemp; not a real photograph"  # ImageDescription
    ifd = exif.get_ifd(0x8769)
    ifd[0x829A] = IFDRational(*exif_rational(rendered.exposure_time_s))  # ExposureTime
    ifd[0x829D] = IFDRational(*exif_rational(rendered.f_number, 100))  # FNumber
    ifd[0x8827] = rendered.iso  # PhotographicSensitivity (ISOSpeedRatings)
    ifd[0x8830] = SENSITIVITY_TYPE_SOS  # SensitivityType
    ifd[0x8831] = rendered.iso  # StandardOutputSensitivity
    ifd[0x9204] = IFDRational(*exif_rational(rendered.exposure_bias_ev, 100))  # ExposureBiasValue
    ifd[0xA401] = 0  # CustomRendered: normal process
    ifd[0x9003] = rendered.taken_at.strftime("%Y:%m:%d %H:%M:%S")  # DateTimeOriginal
    ifd[0xA403] = 0 if rendered.white_balance == "auto" else 1  # WhiteBalance: 0 auto, 1 manual
    ifd[0xA001] = 1 if rendered.output_space is SRGB else 0xFFFF  # ColorSpace: sRGB or uncalibrated
    return exif.tobytes()


def encode_jpeg(rendered: RenderedPhoto, quality: int = 92) -> bytes:
    """JPEG bytes (Pillow, 4:2:0 chroma subsampling as most phones) with EXIF and ICC profile."""
    if not 1 <= quality <= 95:
        raise SyntheticInputError("JPEG quality must be between 1 and 95.")
    out = io.BytesIO()
    Image.fromarray(rendered.codes, "RGB").save(
        out, "JPEG", quality=quality, exif=exif_bytes(rendered),
        icc_profile=icc_profile_bytes(rendered.output_space),
    )
    return out.getvalue()


def encode_png(rendered: RenderedPhoto) -> bytes:
    """8-bit PNG bytes with the ICC profile (iCCP chunk) and EXIF (eXIf chunk)."""
    out = io.BytesIO()
    Image.fromarray(rendered.codes, "RGB").save(
        out, "PNG", exif=exif_bytes(rendered), icc_profile=icc_profile_bytes(rendered.output_space)
    )
    return out.getvalue()
