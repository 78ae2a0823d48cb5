"""Synthetic phone photos of glowing bodies, for tests, benchmarks and demo images.

A physically honest forward model, spectrum -> camera -> file:

1. a scene gives every pixel a temperature and an emitting weight (emissivity times a view
   factor) and reflects some daylight (``ambient``);
2. the camera (``glowtemp.synthetic_camera``) turns Planck radiance into raw signal through its
   spectral sensitivities;
3. photon shot noise and read noise are added in raw space (EMVA 1288 linear camera model), the
   sensor saturates at full scale;
4. white balance gains, the camera's colour matrix to XYZ and the output space's XYZ -> RGB
   matrix are applied, negative components clip to zero (why sRGB blue is zero in glow);
5. a tone curve and 8-bit quantisation, then JPEG or PNG with EXIF and an ICC profile.

Nothing on the measuring path may import this module.

References
----------
- European Machine Vision Association, EMVA Standard 1288, release 4.0 (2021): linear camera
  model with photon shot noise (Poisson) and signal-independent read noise.
- IEC 61966-2-1:1999 (sRGB transfer function); CIE 015:2018 (CIE illuminants, XYZ).
- CIPA DC-008-2019, Exif 2.32: the tags written by :func:`encode_jpeg`.
"""

from __future__ import annotations

import io
from dataclasses import dataclass
from datetime import datetime
from functools import lru_cache

import numpy as np
from PIL import Image, ImageCms
from PIL.TiffImagePlugin import IFDRational

from .colourspaces import DISPLAY_P3, SRGB, RGBSpace, srgb_encode
from .icc import build_matrix_profile
from .locus import blackbody_xyz, colour_matching_functions
from .synthetic_camera import (
    RAW_TABLE_MIN_K,
    CameraModel,
    SyntheticInputError,
    blackbody_raw_table,
    colour_matrix,
    grey_world_gains,
    illuminant_on_grid,
    preset_gains,
    raw_response,
    wavelength_grid_nm,
)
from .synthetic_scenes import SCENES, Region, Scene, build_scene

__all__ = [
    "RenderedPhoto", "Region", "Scene", "SyntheticInputError", "SCENES", "TONE_CURVES",
    "render_photo", "render_light_photo", "encode_jpeg", "encode_png", "tone_curve_encode",
]

OUTPUT_SPACES = {SRGB.name: SRGB, DISPLAY_P3.name: DISPLAY_P3}
TONE_CURVES = ("srgb", "phone")
PHONE_CURVE_STRENGTH = 0.3  # invented S-curve strength for the "phone" tone curve
TARGET_CODE = 0.75  # auto exposure puts the brightest glow's strongest channel at 75 % of full code
FULL_WELL_ELECTRONS = 6000.0  # at ISO 100; a small phone pixel (from memory)
READ_NOISE_ELECTRONS = 2.5  # rms, from memory for phone sensors
BASE_ISO = 100
REFERENCE_TEMPERATURE_K = 1273.15  # 1000 °C: sets plausible exposure times and light brightness
REFERENCE_EXPOSURE_S = 1 / 125  # invented: the ideal camera's auto exposure of 1000 °C at ISO 100
DEFAULT_TAKEN_AT = datetime(2024, 3, 1, 12, 0, 0)  # invented default capture time
_LUT_SIZE = 65536


def tone_curve_encode(linear, tone_curve: str = "srgb"):
    """Encode linear light in [0, 1] with a tone curve, result in [0, 1].

    "srgb" is the IEC 61966-2-1 encoding. "phone" is an S-shaped curve on top of it,
    ``(1 - a) v + a (3 v^2 - 2 v^3)`` with ``a = 0.3`` and ``v`` the sRGB-encoded value: darker
    shadows, brighter highlights. It is invented for tests (no real phone's curve) and stands for
    the unknown tone curves phones apply while still tagging the file as sRGB.

    >>> round(float(tone_curve_encode(0.5, "phone")), 4) > round(float(tone_curve_encode(0.5)), 4)
    True
    """
    if tone_curve not in TONE_CURVES:
        raise SyntheticInputError(f"Unknown tone curve {tone_curve!r}; use one of {TONE_CURVES}.")
    v = srgb_encode(np.clip(linear, 0.0, 1.0))
    if tone_curve == "phone":
        v = (1 - PHONE_CURVE_STRENGTH) * v + PHONE_CURVE_STRENGTH * (3 * v**2 - 2 * v**3)
    return v


@lru_cache(maxsize=None)
def _tone_lut(tone_curve: str) -> np.ndarray:
    codes = np.rint(255 * tone_curve_encode(np.linspace(0.0, 1.0, _LUT_SIZE), tone_curve))
    return codes.astype(np.uint8)


@lru_cache(maxsize=None)
def _target_linear(tone_curve: str) -> float:
    grid = np.linspace(0.0, 1.0, _LUT_SIZE)
    return float(np.interp(TARGET_CODE, tone_curve_encode(grid, tone_curve), grid))


@dataclass(frozen=True)
class RenderedPhoto:
    """A rendered photo: 8-bit codes (H, W, 3), the true temperature per pixel and its settings.

    ``truth_k`` is NaN where nothing glows. ``exposure`` is the raw scale used (pass it back to
    :func:`render_photo` to lock exposure across a series). ``white_balance`` is "daylight",
    "tungsten", "auto" or "manual"; ``gains`` are the white-balance gains actually applied.
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


def _check_settings(camera, white_balance, output_space, tone_curve, emissivity, ambient, overexpose, exposure, iso):
    if not isinstance(camera, CameraModel):
        raise SyntheticInputError("camera must be a CameraModel (see glowtemp.synthetic_camera.CAMERAS).")
    if isinstance(white_balance, str):
        if white_balance not in ("daylight", "tungsten", "auto"):
            raise SyntheticInputError("white_balance must be daylight, tungsten, auto or three gains.")
    elif np.shape(white_balance) != (3,) or not np.all(np.asarray(white_balance, dtype=float) > 0):
        raise SyntheticInputError("Manual white-balance gains must be three positive numbers.")
    if output_space not in OUTPUT_SPACES.values():
        raise SyntheticInputError(f"output_space must be one of {', '.join(OUTPUT_SPACES)}.")
    if tone_curve not in TONE_CURVES:
        raise SyntheticInputError(f"Unknown tone curve {tone_curve!r}; use one of {TONE_CURVES}.")
    if not 0 < emissivity <= 1:
        raise SyntheticInputError("emissivity must be in (0, 1].")
    if ambient < 0 or overexpose <= 0 or (exposure is not None and exposure <= 0) or iso <= 0:
        raise SyntheticInputError("ambient must be >= 0; overexpose, exposure and iso must be positive.")


def _white_balance_gains(camera, white_balance, sample_raw):
    if isinstance(white_balance, str) and white_balance != "auto":
        return white_balance, preset_gains(camera, white_balance)
    if isinstance(white_balance, str):
        return "auto", grey_world_gains(camera, sample_raw.reshape(-1, 3).mean(axis=0))
    return "manual", np.asarray(white_balance, dtype=float)


@lru_cache(maxsize=1)
def _reference_exposure_scale() -> float:
    """Auto exposure scale of the ideal camera for a 1000 °C blackbody (sRGB, sRGB curve)."""
    xyz = blackbody_xyz(REFERENCE_TEMPERATURE_K)[0]
    return _target_linear("srgb") / float((SRGB.xyz_to_rgb @ xyz).max())


def _render(scene: Scene, emitter, *, camera, white_balance, output_space, tone_curve, exposure,
            overexpose, ambient, noise, seed, iso, taken_at) -> RenderedPhoto:
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
    wb_label, gains = _white_balance_gains(camera, white_balance, sample_raw)
    to_output = (output_space.xyz_to_rgb @ colour_matrix(camera) @ np.diag(gains)).astype(np.float32)
    if exposure is None:
        brightest = float((sample_raw @ to_output.T).max())
        exposure = _target_linear(tone_curve) / brightest
    exposure = float(exposure) * overexpose

    full_scale_e = FULL_WELL_ELECTRONS * BASE_ISO / iso
    lut = _tone_lut(tone_curve)
    rng = np.random.default_rng(seed)
    codes = np.empty((height, width, 3), dtype=np.uint8)
    rows = max(1, 2**19 // width)
    for top in range(0, height, rows):
        band = slice(top, min(top + rows, height))
        raw = (emitter.raw(scene.temperature_k[band], scene.weight[band]) + ambient_raw) * np.float32(exposure)
        if noise:
            sigma = np.sqrt(np.maximum(raw, 0) * full_scale_e + READ_NOISE_ELECTRONS**2) / full_scale_e
            raw += sigma * rng.standard_normal(raw.shape, dtype=np.float32)
        np.minimum(raw, 1.0, out=raw)  # sensor saturation
        linear = raw @ to_output.T
        index = np.clip(linear * (_LUT_SIZE - 1) + 0.5, 0, _LUT_SIZE - 1).astype(np.uint16)
        codes[band] = lut[index]

    truth = np.where(scene.weight > 0, scene.temperature_k, np.nan).astype(np.float32)
    return RenderedPhoto(
        codes=codes, truth_k=truth, region=scene.region, camera_name=camera.name,
        white_balance=wb_label, gains=tuple(float(g) for g in gains), output_space=output_space,
        tone_curve=tone_curve, exposure=exposure,
        exposure_time_s=REFERENCE_EXPOSURE_S * exposure / _reference_exposure_scale() * BASE_ISO / iso,
        iso=int(iso), taken_at=taken_at or DEFAULT_TAKEN_AT,
    )


def render_photo(temperature_k, *, camera: CameraModel, scene="spy_hole", size=(320, 240),
                 white_balance="daylight", output_space: RGBSpace = SRGB, tone_curve="srgb",
                 exposure=None, overexpose=1.0, emissivity=1.0, ambient=0.0, wall="cool",
                 noise=True, seed=0, iso=BASE_ISO, taken_at=None) -> RenderedPhoto:
    """Render a phone photo of glow at ``temperature_k``.

    Parameters
    ----------
    temperature_k
        Temperature of the glow in kelvin (500 to 4000), or a function ``f(x, y)`` of pixel
        coordinates normalised to [0, 1] (x across, y down) returning kelvin, for gradients.
    camera
        A :class:`~glowtemp.synthetic_camera.CameraModel`, e.g. from ``CAMERAS``.
    scene
        "spy_hole", "bar" or "uniform" (see ``glowtemp.synthetic_scenes``); ``size`` is
        (width, height) in pixels and ``wall`` ("cool" or "black") shapes the spy hole's bore.
    white_balance
        "daylight" (CIE D55 neutral), "tungsten" (CIE A neutral), "auto" (grey world, capped) or
        three manual gains.
    exposure, overexpose
        Raw scale; None picks it so the brightest glow's strongest channel lands at 75 % of the
        code range. ``overexpose`` multiplies it (> 1 clips red).
    emissivity
        Grey-body emissivity in (0, 1]: scales radiance, not colour.
    ambient
        Daylight (D65) reflected by everything in frame, as a fraction of the brightest glow's
        luminance.
    noise, seed, iso
        Shot and read noise in raw space, reproducible from ``seed``; ``iso`` scales full well.
    """
    _check_settings(camera, white_balance, output_space, tone_curve, emissivity, ambient, overexpose, exposure, iso)
    built = build_scene(scene, size, temperature_k, wall=wall, emissivity=emissivity)
    return _render(built, _Blackbody(camera), camera=camera, white_balance=white_balance,
                   output_space=output_space, tone_curve=tone_curve, exposure=exposure,
                   overexpose=overexpose, ambient=ambient, noise=noise, seed=seed, iso=iso,
                   taken_at=taken_at)


def render_light_photo(wavelengths_nm, spectral_radiance, *, camera: CameraModel, scene="spy_hole",
                       size=(320, 240), white_balance="daylight", output_space: RGBSpace = SRGB,
                       tone_curve="srgb", exposure=None, overexpose=1.0, ambient=0.0, noise=True,
                       seed=0, iso=BASE_ISO, taken_at=None) -> RenderedPhoto:
    """Render a photo of a light that is not glow (an LED, a lamp, a lit grey card).

    The scene's glowing parts emit the given spectrum (relative units, resampled onto 1 nm)
    instead of Planck radiance, scaled to the luminance of a 1000 °C blackbody so exposure
    settings look like a kiln photo's; ``truth_k`` is NaN everywhere. Other arguments as
    :func:`render_photo`.
    """
    _check_settings(camera, white_balance, output_space, tone_curve, 1.0, ambient, overexpose, exposure, iso)
    values = np.interp(wavelength_grid_nm(), np.asarray(wavelengths_nm, float),
                       np.asarray(spectral_radiance, float), left=0.0, right=0.0)
    if np.any(values < 0) or not np.any(values > 0):
        raise SyntheticInputError("A light's spectral radiance must be non-negative and not all zero.")
    values = values * float(blackbody_xyz(REFERENCE_TEMPERATURE_K)[0, 1]) / _luminance(values)
    built = build_scene(scene, size, 1000.0, wall="black", emissivity=1.0)
    built = Scene(np.full_like(built.temperature_k, np.nan), built.weight, built.region)
    return _render(built, _Light(camera, values), camera=camera, white_balance=white_balance,
                   output_space=output_space, tone_curve=tone_curve, exposure=exposure,
                   overexpose=overexpose, ambient=ambient, noise=noise, seed=seed, iso=iso,
                   taken_at=taken_at)


def icc_profile_bytes(space: RGBSpace) -> bytes:
    """ICC profile of an output space: LittleCMS's built-in sRGB (via Pillow) or glowtemp.icc's."""
    if space is SRGB:
        return ImageCms.ImageCmsProfile(ImageCms.createProfile("sRGB")).tobytes()
    return build_matrix_profile(space, transfer="srgb", description=space.name)


def exif_bytes(rendered: RenderedPhoto) -> bytes:
    """EXIF block (Exif 2.32, CIPA DC-008-2019): make, model, exposure, ISO, white balance, date."""
    exif = Image.Exif()
    exif[0x010F] = "glowtemp demo"  # Make
    exif[0x0110] = rendered.camera_name  # Model
    exif[0x010E] = "Synthetic glow photo rendered by glowtemp; not a real photograph"  # ImageDescription
    ifd = exif.get_ifd(0x8769)
    ifd[0x829A] = IFDRational(*_rational(rendered.exposure_time_s))  # ExposureTime
    ifd[0x8827] = rendered.iso  # ISOSpeedRatings
    ifd[0x9003] = rendered.taken_at.strftime("%Y:%m:%d %H:%M:%S")  # DateTimeOriginal
    ifd[0xA403] = 0 if rendered.white_balance == "auto" else 1  # WhiteBalance: 0 auto, 1 manual
    ifd[0xA001] = 1 if rendered.output_space is SRGB else 0xFFFF  # ColorSpace: sRGB or uncalibrated
    return exif.tobytes()


def _rational(seconds: float):
    if seconds >= 1:
        return round(seconds * 10), 10
    return 1, max(1, round(1 / seconds))


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
