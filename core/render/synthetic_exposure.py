"""Exposure of synthetic photos: ISO 12232 standard output sensitivity and real setting ladders.

A rendered camera is calibrated the way ISO 12232:2019 rates a digital camera by its standard
output sensitivity (SOS): a focal-plane exposure ``H = 10 / S`` lux s gives the linear output
0.18 (on the scale where 1 is full code; 0.18 is the sRGB-decoded value of code 118 of 255).
The focal-plane exposure of a scene of luminance ``L`` (cd/m^2) is ``H = q L t / N^2`` with
the exposure time ``t`` (s), the f-number ``N`` and ``q = 0.65``, the standard's value for a
typical lens. So the camera's linear output luminance is

    Y_out = 0.018 * S * q * L * t / N^2 * d        (clipped at 1),

where ``d`` is the camera's departure from the standard (the maker's own ISO calibration, the
lens's real transmission, a filter in front of it); the file's EXIF still says ``S``.
Luminance is ``L = K_m * Y`` with ``Y`` the CIE 1931 Y of the spectral radiance in
W sr^-1 m^-2 and ``K_m = 683 lm/W``.

Auto exposure picks (t, N, S) from the marked 1/3-stop series of shutter times, apertures and
ISO settings, as a camera's program does: the widest aperture, then the lowest ISO that allows
a hand-held time (1/30 s or shorter; up to 30 s on a tripod); it stops the lens down only when
the shortest time at the lowest ISO would still overexpose.

Nothing on the measuring path may import this module.

References
----------
- ISO 12232:2019, Photography - Digital still cameras - Determination of exposure index, ISO
  speed ratings, standard output sensitivity, and recommended exposure index: SOS, H = 10/S,
  the output level 0.18 (118 of 255 in sRGB) and q = 0.65 (from memory).
- CIE 015:2018 and the SI definition of the candela (BIPM SI Brochure, 9th ed. 2019):
  K_cd = 683 lm/W at 540 THz.
- CIPA DC-008-2019 (Exif 2.32): ExposureTime, FNumber, PhotographicSensitivity,
  SensitivityType, ExposureBiasValue, the values the renderer writes.
"""

from __future__ import annotations

import math
import numbers
from dataclasses import dataclass
from fractions import Fraction

import numpy as np

from .synthetic_camera import SyntheticInputError

LUMINOUS_EFFICACY_LM_PER_W = 683.0  # K_m (SI definition of the candela)
LENS_FACTOR = 0.65  # ISO 12232:2019 q for a typical lens
SOS_EXPOSURE_LUX_S = 10.0  # ISO 12232:2019: H = 10 / S lux s ...
SOS_OUTPUT = 0.18  # ... gives linear output 0.18 of full code
BASE_ISO = 100  # the noise model's reference (full well at ISO 100) and the ISO of a locked raw scale
MAX_COMPENSATION_EV = 5.0  # common practice: cameras offer -5 to +5 EV

_F = Fraction
# The marked 1/3-stop series of camera dials (common practice), as exact values written to EXIF.
SHUTTER_LADDER_S = tuple(_F(v) for v in ("30", "25", "20", "15", "13", "10", "8", "6", "5", "4", "16/5", "5/2", "2",
                                         "8/5", "13/10", "1", "4/5", "3/5", "1/2", "2/5", "3/10")) + tuple(
    _F(1, d) for d in (4, 5, 6, 8, 10, 13, 15, 20, 25, 30, 40, 50, 60, 80, 100, 125, 160, 200, 250, 320, 400,
                       500, 640, 800, 1000, 1250, 1600, 2000, 2500, 3200, 4000, 5000, 6400, 8000))
APERTURE_LADDER = tuple(_F(v) for v in ("1.8", "2", "2.2", "2.5", "2.8", "3.2", "3.5", "4", "4.5", "5", "5.6",
                                        "6.3", "7.1", "8", "9", "10", "11", "13", "14", "16", "18", "20", "22"))
# ISO settings in 1/3 stops (the series ISO 12232 ratings are rounded to, from memory).
ISO_LADDER = (50, 64, 80, 100, 125, 160, 200, 250, 320, 400, 500, 640, 800, 1000, 1250, 1600, 2000, 2500,
              3200, 4000, 5000, 6400)
HANDHELD_LONGEST_S = _F(1, 30)  # common practice: slower than about 1/30 s blurs a hand-held phone
TRIPOD_LONGEST_S = SHUTTER_LADDER_S[0]


def sos_output_per_luminance(exposure_time_s, f_number, iso, departure=1.0) -> float:
    """Linear output luminance per cd/m^2 of scene: ``0.18 / 10 * S * q * t / N^2 * d``, ISO 12232.

    >>> round(sos_output_per_luminance(1 / 100, 4.0, 100) * 100, 6)  # 100 cd/m^2, 1/100 s, f/4, ISO 100
    0.073125
    """
    focal_plane_lux_s_per_cd_m2 = LENS_FACTOR * float(exposure_time_s) / float(f_number) ** 2
    return SOS_OUTPUT / SOS_EXPOSURE_LUX_S * float(iso) * focal_plane_lux_s_per_cd_m2 * departure


@dataclass(frozen=True)
class ExposureRequest:
    """What the photographer asked for; None settings are left to auto exposure.

    ``exposure`` locks a raw scale (full well = 1) as before settings existed; its exposure time
    is then derived and may fall between the ladder's steps. ``overexpose`` multiplies the raw
    scale auto exposure aims at (a meter that misjudges; not recorded in EXIF), and
    ``compensation_ev`` shifts it by ``2**compensation_ev`` and is recorded as ExposureBiasValue.
    ``departure`` is the camera's factor ``d`` (see the module notes); ``tripod`` allows times
    up to 30 s.
    """

    exposure: float | None = None
    overexpose: float = 1.0
    exposure_time_s: float | None = None
    f_number: float | None = None
    iso: int | None = None
    compensation_ev: float = 0.0
    departure: float = 1.0
    tripod: bool = False

    def check(self) -> ExposureRequest:
        """Raise :class:`SyntheticInputError` for settings no camera has; return self."""
        def bad(value, low, high):
            return value is not None and not (isinstance(value, numbers.Real) and low <= value <= high)

        if bad(self.exposure, 1e-300, math.inf) or bad(self.overexpose, 1e-300, math.inf):
            raise SyntheticInputError("exposure and overexpose must be positive numbers.")
        if bad(self.exposure_time_s, 1e-6, 3600):
            raise SyntheticInputError("exposure_time_s must be between 1e-6 s and 3600 s.")
        if bad(self.f_number, 0.5, 256):
            raise SyntheticInputError("f_number must be between 0.5 (the limit for any lens in air) and 256.")
        if self.iso is not None and not (isinstance(self.iso, numbers.Integral) and 1 <= self.iso <= 65535):
            raise SyntheticInputError("iso must be a whole number from 1 to 65535.")
        if bad(self.compensation_ev, -MAX_COMPENSATION_EV, MAX_COMPENSATION_EV):
            raise SyntheticInputError(f"exposure_compensation_ev must be within +-{MAX_COMPENSATION_EV:g} EV.")
        if bad(self.departure, 1e-12, 1e12):
            raise SyntheticInputError("sensitivity_departure must be a positive number.")
        fixed = (self.exposure_time_s, self.f_number, self.iso)
        if self.exposure is not None and self.exposure_time_s is not None:
            raise SyntheticInputError("Give either a raw exposure scale or an exposure time, not both.")
        manual = self.exposure is not None or None not in fixed
        if manual and self.compensation_ev != 0:
            raise SyntheticInputError("Exposure compensation moves auto exposure; with the exposure fixed it moves nothing.")
        if None not in fixed and self.overexpose != 1:
            raise SyntheticInputError("overexpose misleads auto exposure; with time, f-number and ISO given, give a longer time.")
        return self


@dataclass(frozen=True)
class Exposure:
    """What the camera did: the raw scale applied to the scene and the settings its EXIF claims."""

    raw_scale: float
    exposure_time_s: Fraction
    f_number: Fraction
    iso: int
    compensation_ev: float
    departure: float


def _raw_scale(exposure_time_s, f_number, iso, departure, calibration) -> float:
    """Raw scale for the settings: output Y per unit scene Y (W sr^-1 m^-2) over the pipeline's gain."""
    output_per_y = sos_output_per_luminance(exposure_time_s, f_number, iso, departure) * LUMINOUS_EFFICACY_LM_PER_W
    return output_per_y / calibration


def choose_settings(needed, *, exposure_time_s=None, f_number=None, iso=None, tripod=False):
    """(t, N, S) from the ladders whose ``S t / N^2`` is nearest ``needed``, as a camera's program.

    Fixed settings are kept. Among the free ones: the nearest exposure in whole 1/3 stops
    first, then the widest aperture, then the lowest ISO, then the nearest exposure; times are
    held to 1/30 s or shorter unless on a ``tripod``.

    >>> [float(v) for v in choose_settings(100 * (1 / 100) / 1.8**2)]  # as ISO 100, 1/100 s, f/1.8
    [0.02, 1.8, 50.0]
    """
    longest = TRIPOD_LONGEST_S if tripod else HANDHELD_LONGEST_S
    times = [_F(exposure_time_s).limit_denominator(1_000_000)] if exposure_time_s is not None else [
        t for t in SHUTTER_LADDER_S if t <= longest]
    apertures = [_F(f_number).limit_denominator(100)] if f_number is not None else list(APERTURE_LADDER)
    isos = [int(iso)] if iso is not None else list(ISO_LADDER)
    t, n, s = (np.array(v, dtype=float) for v in np.meshgrid(times, apertures, isos, indexing="ij"))
    stops_off = np.abs(np.log2(s * t / n**2 / needed)).ravel()
    best = np.lexsort((stops_off, s.ravel(), n.ravel(), np.rint(3 * stops_off)))[0]  # last key first
    i, j, k = np.unravel_index(best, t.shape)
    return times[i], apertures[j], isos[k]


def expose(request: ExposureRequest, *, metered_raw_scale: float, calibration: float) -> Exposure:
    """The exposure of one photo.

    ``metered_raw_scale`` is the raw scale that puts the meter's reading on its target level;
    ``calibration`` is the camera pipeline's linear output Y per unit raw scale and per unit
    scene Y of a daylight white. Auto exposure chooses ladder settings for the metered scale
    times ``overexpose * 2**compensation_ev``, and the raw scale is then recomputed from the
    chosen settings, so pixels and EXIF agree exactly.
    """
    d = request.departure
    if request.exposure is not None:
        iso = request.iso or BASE_ISO
        f_number = _F(request.f_number if request.f_number is not None else APERTURE_LADDER[0]).limit_denominator(100)
        raw_scale = float(request.exposure) * request.overexpose
        time = raw_scale / _raw_scale(1.0, f_number, iso, d, calibration)
        return Exposure(raw_scale, _F(time).limit_denominator(1_000_000), f_number, int(iso), 0.0, d)
    aimed = metered_raw_scale * request.overexpose * 2.0**request.compensation_ev
    needed = aimed / _raw_scale(1.0, 1.0, 1.0, d, calibration)  # S t / N^2 that gives the aimed scale
    time, f_number, iso = choose_settings(needed, exposure_time_s=request.exposure_time_s,
                                          f_number=request.f_number, iso=request.iso, tripod=request.tripod)
    raw_scale = _raw_scale(time, f_number, iso, d, calibration)
    return Exposure(raw_scale, time, f_number, iso, float(request.compensation_ev), d)
