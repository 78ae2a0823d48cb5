"""Build the camera population: many virtual cameras made the way cameras are made.

Each member is one sensor (a measured camera or an invented one) with one maker's choices:

1. spectral sensitivities: the 38 measured cameras in ``data/camera_sensitivities`` (Apache-2.0,
   Academy Software Foundation's rawtoaces data), colour-science's two NPL-measured cameras,
   and a parametric family spanning them (:func:`glowtemp.render.synthetic_camera.parametric_family`);
2. a daylight white-balance preset (CIE D50, D55 or D65 made neutral), off by up to 3 % per gain;
   and, for photos whose EXIF says the white balance was automatic, the balance the camera
   picks for a frame full of glow: glow is redder than any white it accepts, so it goes to its
   warmest, a Planckian white that differs between phones, 2600-3500 K (phones keep light
   warmer than that warm; common practice, from memory);
3. a colour matrix to XYZ fitted on the ColorChecker under that daylight, by one of three
   methods (:data:`glowtemp.render.synthetic_camera.MATRIX_FITS`);
4. processing between sensor and file: a saturation boost about luminance, a highlight
   roll-off, and a tone curve (sRGB, power laws 1.8-2.6, S-shaped toe-and-shoulder curves,
   shoulders), while the file is still tagged with its space's standard curve.

For every member, output space and temperature, the table holds what the estimator will observe
from a uniform patch of glow: the green/red and blue/red of the pixels decoded with the space's
standard curve, at several recorded red levels (a tone curve that is not the standard one makes
the decoded ratios depend on how bright the red was recorded), and the brightness response
``ln(recorded red / red predicted by ISO 12232)`` for the exposure channel
(:mod:`glowtemp.estimation.brightness`). The table ships as ``data/camera_population.npz``, so measuring
needs no colour-science; ``scripts/export_tables.py`` writes it and a test rebuilds members to
check it.

This module is on the synthetic side (it imports colour-science through
:mod:`glowtemp.render.synthetic_camera`); nothing on the measuring path imports it.

References
----------
- ISO 17321-1:2012, Colour characterisation of digital still cameras, part 1 (fitting a camera
  matrix on a chart under a daylight illuminant).
- G. D. Finlayson and M. S. Drew, J. Electronic Imaging 6 (1997) 484-493 (white-point preserving
  least squares); V. Cheung et al., Color. Technol. 120 (2004) 19-25 (least squares).
- ISO 12232:2019, Photography - Digital still cameras - Determination of exposure index, ISO
  speed ratings, standard output sensitivity (SOS: exposure 10/S lux s gives the encoded output
  of an 18 % grey, code 118 of 255 in sRGB).
- IEC 61966-2-1:1999 (sRGB curve); Adobe RGB (1998) Color Image Encoding (gamma 563/256).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..physics.colourspaces import ADOBE_RGB, DISPLAY_P3, LINEAR_ROMM, SRGB, gamma_decode, srgb_decode, srgb_encode
from ..physics.locus import blackbody_xyz, colour_matching_functions
from ..images.photo import ADOBE_RGB_GAMMA
from .synthetic_camera import (
    MATRIX_FITS,
    blackbody_radiance_on_grid,
    colour_matrix,
    illuminant_on_grid,
    measured_camera,
    measured_sensors,
    neutralising_gains,
    parametric_family,
    raw_response,
)

TEMPERATURES_K = np.arange(700.0, 2400.0 + 1, 10.0)
RED_LEVELS = np.array([0.25, 0.4, 0.55, 0.7, 0.85, 0.95])  # recorded (encoded) red, share of full code
DRAWS_PER_SENSOR = 4
PARAMETRIC_SENSORS = 24
STACKED_SENSORS = 8  # broad overlapping bands (stacked-photodiode designs)
SEED = 20261202
PRESET_ILLUMINANTS = ("D50", "D55", "D65")  # "daylight" presets sit near 5000-6500 K (common practice)
WHITE_BALANCE_ERROR = 0.03  # a preset's gains off by up to 3 %
SATURATION_RANGE = (1.0, 1.2)  # chroma boost of a "standard" picture style, 0-20 % (from memory)
MID_GREY = 0.18  # ISO 12232 SOS: the exposure 10/S renders an 18 % grey at its standard code
AUTO_WHITES_K = (2600.0, 3500.0)  # auto white balance's warmest white, log-uniform


def _s_curve(strength):
    def encode(linear):
        v = srgb_encode(np.clip(linear, 0.0, 1.0))
        return (1 - strength) * v + strength * (3 * v**2 - 2 * v**3)
    return encode


def _power(gamma):
    return lambda linear: np.clip(linear, 0.0, 1.0) ** (1.0 / gamma)


def _shoulder(knee):
    """The sRGB curve up to ``knee`` (encoded), then a smooth roll into full code (C1 at the knee)."""
    def encode(linear):
        v = srgb_encode(np.clip(linear, 0.0, None))
        over = np.maximum(v - knee, 0.0)
        rolled = knee + (1 - knee) * np.tanh(over / (1 - knee))
        return np.clip(np.where(v > knee, rolled, v), 0.0, 1.0)
    return encode


TONE_CURVES = {  # name -> encoding; the weights below say how often makers use each kind
    "srgb": srgb_encode,
    "power-1.8": _power(1.8), "power-2.0": _power(2.0), "power-2.2": _power(2.2),
    "power-2.4": _power(2.4), "power-2.6": _power(2.6),
    "s-curve-0.15": _s_curve(0.15), "s-curve-0.3": _s_curve(0.3), "s-curve-0.45": _s_curve(0.45),
    "shoulder-0.7": _shoulder(0.7), "shoulder-0.85": _shoulder(0.85),
}

# Most cameras and phones encode with the sRGB curve, often with a contrast S-curve or a
# highlight shoulder on top; plain power laws are rarer (common practice). Draw weights:
# sRGB 0.25, S-curves 0.3, shoulders 0.2, power laws 0.25 shared by five exponents.
TONE_CURVE_WEIGHTS = {
    "srgb": 0.25, "s-curve-0.15": 0.1, "s-curve-0.3": 0.1, "s-curve-0.45": 0.1,
    "shoulder-0.7": 0.1, "shoulder-0.85": 0.1,
    "power-1.8": 0.05, "power-2.0": 0.05, "power-2.2": 0.05, "power-2.4": 0.05, "power-2.6": 0.05,
}

SPACES = {  # output space -> its standard decoding, as the estimator will decode the file
    SRGB.name: (SRGB, srgb_decode),
    DISPLAY_P3.name: (DISPLAY_P3, srgb_decode),
    ADOBE_RGB.name: (ADOBE_RGB, lambda v: gamma_decode(v, ADOBE_RGB_GAMMA)),
}
RAW_SPACE_NAME = LINEAR_ROMM.name  # raw DNG: the file's matrix into linear ROMM, no processing


@dataclass(frozen=True)
class Member:
    """One virtual camera: a sensor and the maker's choices for it."""

    sensor: object  # glowtemp.render.synthetic_camera.CameraModel
    preset: str
    gain_error: tuple
    matrix_fit: str
    saturation: float
    rolloff_knee: float | None  # linear level above which highlights roll off (None: none)
    tone_curve: str
    auto_white_k: float  # the white automatic white balance would balance for


def sensors() -> list:
    """Every sensor of the population: measured (38 + NPL's two) and the parametric families."""
    npl = [measured_camera("Nikon 5100 (NPL)"), measured_camera("Sigma SDMerill (NPL)")]
    return [*measured_sensors().values(), *npl, *parametric_family(PARAMETRIC_SENSORS, SEED),
            *parametric_family(STACKED_SENSORS, SEED + 1, stacked=True)]


def draw_members(seed: int = SEED) -> list:
    """:data:`DRAWS_PER_SENSOR` members per sensor, each with the maker's choices drawn at random."""
    rng = np.random.default_rng(seed)
    curves, fits = list(TONE_CURVE_WEIGHTS), list(MATRIX_FITS)
    curve_weights = np.array(list(TONE_CURVE_WEIGHTS.values()))
    members = []
    for sensor in sensors():
        for _ in range(DRAWS_PER_SENSOR):
            members.append(Member(
                sensor=sensor,
                preset=str(rng.choice(PRESET_ILLUMINANTS)),
                gain_error=(float(rng.uniform(-1, 1) * WHITE_BALANCE_ERROR), float(rng.uniform(-1, 1) * WHITE_BALANCE_ERROR)),
                matrix_fit=str(rng.choice(fits)),
                saturation=float(rng.uniform(*SATURATION_RANGE)),
                rolloff_knee=None if rng.random() < 0.5 else float(rng.uniform(0.7, 0.9)),
                tone_curve=str(rng.choice(curves, p=curve_weights / curve_weights.sum())),
                auto_white_k=float(np.exp(rng.uniform(*np.log(AUTO_WHITES_K)))),
            ))
    return members


def _rolloff(linear, knee):
    if knee is None:
        return linear
    over = np.maximum(linear - knee, 0.0)
    return np.where(linear > knee, knee + (1 - knee) * (1 - np.exp(-over / (1 - knee))), linear)


def _invert(encode, level, knee):
    """Linear camera level whose roll-off and tone curve give the encoded ``level`` (bisection)."""
    low, high = np.zeros_like(level), np.full_like(level, 64.0)
    for _ in range(60):
        middle = (low + high) / 2
        below = encode(_rolloff(middle, knee)) < level
        low, high = np.where(below, middle, low), np.where(below, high, middle)
    return (low + high) / 2


def camera_output(member: Member, space, auto: bool = False):
    """Linear output RGB of the member for blackbodies on :data:`TEMPERATURES_K` (n, 3), after
    white balance (the preset, or with ``auto`` the automatic one), matrix and saturation; and
    the output luminance of its preset white per unit of true luminance (1 for a perfect camera)."""
    light = illuminant_on_grid(member.preset)
    gains = neutralising_gains(raw_response(member.sensor, light))
    gains = gains * np.array([1 + member.gain_error[0], 1.0, 1 + member.gain_error[1]])
    to_xyz = space.xyz_to_rgb @ colour_matrix(member.sensor, member.matrix_fit, illuminant=member.preset)
    preset_to_output = to_xyz @ np.diag(gains)
    if auto:
        gains = neutralising_gains(raw_response(member.sensor, blackbody_radiance_on_grid(member.auto_white_k)))
    to_output = to_xyz @ np.diag(gains)
    rgb = raw_response(member.sensor, blackbody_radiance_on_grid(TEMPERATURES_K)) @ to_output.T
    luminance_row = space.rgb_to_xyz[1]
    white_out = luminance_row @ (preset_to_output @ raw_response(member.sensor, light))
    white_true = float(light @ colour_matching_functions()[1][:, 1]) * 1e-9
    if space is not LINEAR_ROMM:
        y = rgb @ luminance_row
        rgb = y[:, None] + member.saturation * (rgb - y[:, None])
    return np.clip(rgb, 0.0, None), white_out / white_true


MAX_RATIO = 100.0  # green or blue a hundred times red is no glow; kept finite for float16


def _ratios(rgb):
    """Green/red and blue/red, finite where red is (nearly) zero."""
    return np.clip(rgb[..., 1:] / np.maximum(rgb[..., :1], 1e-12), 0.0, MAX_RATIO)


def member_table(member: Member, space_name: str, auto: bool = False):
    """Observed (green/red, blue/red) and ln brightness response of one member in one space,
    white-balanced by its preset or, with ``auto``, automatically.

    Returns ``ratios`` (levels, temperatures, 2) and ``log_response`` (levels, temperatures).
    For raw there is one level: no white balance, tone curve or saturation, linear decoding.
    """
    raw = space_name == RAW_SPACE_NAME
    space, decode = (LINEAR_ROMM, lambda v: v) if raw else SPACES[space_name]
    rgb, white_gain = camera_output(member, space, auto)
    ideal_red = (blackbody_xyz(TEMPERATURES_K) @ space.xyz_to_rgb.T)[:, 0]
    spectral = np.log(np.maximum(rgb[:, 0], 1e-300) / (white_gain * ideal_red))
    if raw:
        return _ratios(rgb)[None], spectral[None]
    encode = TONE_CURVES[member.tone_curve]
    knee = member.rolloff_knee
    grey_linear = float(_invert(encode, np.array([srgb_encode(MID_GREY)]), knee)[0])
    tone_gain = grey_linear / MID_GREY  # SOS: the maker's curve puts 18 % grey at code 118
    red_linear = _invert(encode, RED_LEVELS, knee)  # camera-linear red for each recorded level
    scale = red_linear[:, None] / np.maximum(rgb[None, :, 0], 1e-300)  # (levels, temperatures)
    decoded = decode(encode(_rolloff(scale[..., None] * rgb[None], knee)))
    ratios = _ratios(decoded)
    log_response = (np.log(decode(RED_LEVELS) / red_linear)[:, None] + np.log(tone_gain) + spectral[None])
    return ratios, log_response


def build_population(seed: int = SEED) -> dict:
    """The arrays written to ``data/camera_population.npz`` (float16 tables, text labels)."""
    members = draw_members(seed)
    arrays = {
        "temperature_k": TEMPERATURES_K,
        "red_levels": RED_LEVELS,
        "maker": np.array([m.sensor.maker for m in members]),
        "sensor": np.array([m.sensor.name for m in members]),
        "tone_curve": np.array([m.tone_curve for m in members]),
        "matrix_fit": np.array([m.matrix_fit for m in members]),
        "seed": np.array(seed),
    }
    for index, name in enumerate([*SPACES, RAW_SPACE_NAME]):
        tables = [member_table(m, name) for m in members]
        arrays[f"ratios_{index}"] = np.stack([t[0] for t in tables]).astype(np.float16)
        arrays[f"log_response_{index}"] = np.stack([t[1] for t in tables]).astype(np.float16)
        arrays[f"space_{index}"] = np.array(name)
        if name != RAW_SPACE_NAME:
            auto = [member_table(m, name, auto=True)[0] for m in members]
            arrays[f"auto_ratios_{index}"] = np.stack(auto).astype(np.float16)
    return arrays
