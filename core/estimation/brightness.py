"""The brightness channel: temperature from how bright the glow was recorded, by the photo's
exposure data.

Below about 850 °C a daylight-balanced JPEG has lost its green, so colour gives only a ceiling,
while brightness still climbs steeply with temperature: by Wien's approximation
d ln L / dT = c2 / (lambda T^2), about 2.4 % per kelvin at 600 nm and 1000 K, so a factor-two
error in exposure or emissivity moves the estimate by only about 30 K. This is how the
disappearing-filament optical pyrometer works.

The exposure data relate the recorded level to the scene's radiance by ISO 12232:2019's
standard output sensitivity (SOS): a focal-plane exposure H = 10 / S lux s gives linear output
0.18 (an 18 % grey at its standard code), and H = q L t / N^2 with q = 0.65 (the standard's
value for a typical lens). So an ideal camera records, in the photo's own linear RGB, the red

    R = 0.018 S q t / N^2 * 683 lm/W * epsilon * red(T)

where red(T) is the red of a blackbody's absolute XYZ (:mod:`glowtemp.physics.locus`) in that space.
A real camera departs from this by its spectral response, colour matrix and tone curve (the
population's ``log_response``, :mod:`glowtemp.estimation.population`) and by its maker's calibration
and lens (the departure ``d`` below). A raw DNG's linear data are brought to the same scale by
its BaselineExposure (DNG 1.6: a converter multiplies by 2^BaselineExposure).

Priors (stated, not fitted to test photos):

- the departure ``ln d`` is normal with standard deviation :data:`DEPARTURE_SIGMA` (JPEG/HEIC)
  or :data:`RAW_DEPARTURE_SIGMA` (raw). ISO 12232 lets a maker state SOS from its own tone
  curve, lenses transmit 80-95 % with some vignetting, and metering a small bright glow adds
  nothing here (the exposure data say what was done, not why). A third of a stop of rating
  error (from memory) plus lens and fall-off effects is about 0.3 in ln; 0.35 leaves room.
  Raw data have no rendering intent behind them, and what a camera's BaselineExposure refers
  to (its brightest raw channel, or luminance) differs between makers, hence a wider prior.
- emissivity is log-uniform between the scene kind's bounds (:data:`SCENES`).

The likelihood of the recorded ln red is then a normal (departure and measurement) convolved
with a uniform (ln emissivity): a difference of two normal distribution functions.

References
----------
- ISO 12232:2019, Photography - Digital still cameras - Determination of exposure index, ISO
  speed ratings, standard output sensitivity, and recommended exposure index, sections 3 and 6.
- Adobe, Digital Negative (DNG) Specification 1.6.0.0 (2020), BaselineExposure.
- D. P. DeWitt and G. D. Nutter, Theory and Practice of Radiation Thermometry, Wiley (1988),
  ch. 1 and 6 (brightness thermometry, the disappearing-filament pyrometer, emissivity).
- CIPA DC-008-2019, Exif 2.32: ExposureTime, FNumber, PhotographicSensitivity, CustomRendered.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

LENS_Q = 0.65  # ISO 12232:2019, typical lens
SOS_GREY = 0.18  # ISO 12232:2019: H = 10/S gives an 18 % grey
SOS_EXPOSURE = 10.0  # lux s, times 1/S
LUMINOUS_EFFICACY = 683.0  # lm/W, the SI definition of the candela
DEPARTURE_SIGMA = 0.35
RAW_DEPARTURE_SIGMA = 0.7

# Emissivity by what is photographed: (low, high, where the figures come from).
SCENES = {
    "kiln": (0.9, 1.0, "a kiln's inside through a spy hole is a near-black cavity (Gouffe's "
                       "cavity formula gives 0.95-0.99 for walls of 0.6-0.9 seen through a "
                       "small hole; common practice)"),
    "steel": (0.7, 0.95, "hot oxidised steel, 0.7-0.95 (Touloukian and DeWitt, TPRC Data Series "
                         "vol. 7, 1970, oxidised iron and steels; from memory)"),
    "other": (0.2, 1.0, "anything else: a wide prior, since bright metal, glazes and flames differ"),
}
DEFAULT_SCENE = "other"


class SceneError(ValueError):
    """An unknown kind of scene, in plain words."""


def scene_bounds(scene: str) -> tuple[float, float]:
    """Emissivity bounds of a scene kind, with a clear error for unknown names."""
    if scene not in SCENES:
        raise SceneError(f"Unknown scene {scene!r}; use one of {', '.join(SCENES)}.")
    low, high, _ = SCENES[scene]
    return low, high


@dataclass(frozen=True)
class Exposure:
    """What the photo says about its exposure, and the ln of the ideal camera's scale.

    ``log_scale`` is ln(0.018 S q t / N^2 * 683 * 2^baseline): multiply by the blackbody's red
    in the photo's space (absolute XYZ units of :mod:`glowtemp.physics.locus`) and emissivity to get the
    recorded linear red of the ideal camera.
    """

    exposure_time_s: float
    f_number: float
    iso: float
    baseline_ev: float
    log_scale: float


def exposure_from(metadata, raw: bool):
    """The photo's :class:`Exposure`, or (None, reason) naming the missing or unusable fields.

    A photo processed from several frames (Exif CustomRendered other than 0, normal) has no
    single exposure behind its pixels, so it gets no brightness channel either.
    """
    fields = {"ExposureTime": metadata.exposure_time_s, "FNumber": metadata.f_number,
              "PhotographicSensitivity": metadata.iso}
    missing = [name for name, value in fields.items() if not value]
    if missing:
        return None, "the photo's exposure data lack " + ", ".join(missing)
    rendered = getattr(metadata, "custom_rendered", None)
    if rendered not in (None, 0):
        return None, "the photo says it was processed (Exif CustomRendered), perhaps from several frames"
    baseline = (getattr(metadata, "baseline_exposure_ev", None) or 0.0) if raw else 0.0
    t, n, s = float(metadata.exposure_time_s), float(metadata.f_number), float(metadata.iso)
    log_scale = (math.log(SOS_GREY / SOS_EXPOSURE * s * LENS_Q * t / n**2 * LUMINOUS_EFFICACY)
                 + baseline * math.log(2.0))
    return Exposure(t, n, s, baseline, log_scale), None


_ERFC_P = 0.3275911  # Abramowitz and Stegun 7.1.26, |error| < 1.5e-7
_ERFC_A = (0.254829592, -0.284496736, 1.421413741, -1.453152027, 1.061405429)


def _log_upper_tail(z):
    """ln Q(z) = ln P(X > z) of a standard normal for z >= 0 (Abramowitz and Stegun 7.1.26 on
    erfc(z / sqrt 2), kept in logs so far tails do not underflow)."""
    x = np.asarray(z, dtype=float) / math.sqrt(2.0)
    t = 1.0 / (1.0 + _ERFC_P * x)
    poly = t * _ERFC_A[4]  # Horner's scheme, t (a0 + t (a1 + t (a2 + t (a3 + t a4)))), in place
    for a in reversed(_ERFC_A[:4]):
        poly += a
        poly *= t
    np.log(poly, out=poly)
    poly += math.log(0.5)
    poly -= np.square(x, out=x)
    return poly


def log_likelihood(residual, sigma: float, emissivity_bounds) -> np.ndarray:
    """ln p(residual) where residual = ln(recorded red / ideal red at emissivity 1), with
    ln emissivity uniform on [a, b] (the scene's bounds) and the rest normal with ``sigma``:
    p = [Phi((r - a) / sigma) - Phi((r - b) / sigma)] / (b - a).

    Inside the bounds it is written as 1 - Q(u) - Q(l); outside as the difference of the two
    tails taken in logs, so far tails keep their logarithm instead of underflowing to zero.
    Bounds narrower than a hundredth of ``sigma`` (a profile that fixed the emissivity) give
    the normal density itself, the limit of the formula.
    """
    a, b = (math.log(v) for v in emissivity_bounds)
    residual = np.asarray(residual, dtype=float)
    if b - a < 0.01 * sigma:
        middle = (a + b) / 2
        return -0.5 * ((residual - middle) / sigma) ** 2 - math.log(sigma * math.sqrt(2 * math.pi))
    upper = (residual - a) / sigma  # > 0 unless the residual is below the lowest emissivity
    lower = (b - residual) / sigma  # > 0 unless it is above the highest
    inside = (upper > 0) & (lower > 0)
    found = np.empty(np.broadcast(upper, lower).shape)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        # each residual's own formula only: most members lie outside the bounds at most heats
        up, low = upper[inside], lower[inside]
        found[inside] = np.log(np.clip(1.0 - np.exp(_log_upper_tail(up)) - np.exp(_log_upper_tail(low)), 1e-300, None))
        up, low = upper[~inside], lower[~inside]
        near = np.where(up <= 0, -up, -low).clip(0.0)
        far = np.where(up <= 0, low, up).clip(0.0)
        log_near, log_far = _log_upper_tail(near), _log_upper_tail(far)
        found[~inside] = log_near + np.log1p(-np.exp(np.minimum(log_far - log_near, -1e-12)))
    return found - math.log(b - a)
