"""Camera profiles: a camera's own colour-ratio law, learnt from photos paired with trusted values.

The model is the calibration law of a two-colour (ratio) pyrometer. Under Wien's approximation
the ratio of two colour channels of a grey body obeys

    ln(G/R) = p + q / T

where q depends on the channels' effective wavelengths and p on their relative gains; both
absorb a camera's spectral sensitivities, colour matrix and (to first order) its tone curve.
The profile fits p and q by weighted least squares to pairs of (observed ln G/R, trusted T),
with the trusted value's uncertainty carried by the effective-variance method. It was kept over
the correction ``1/T_true = a + b / T_estimate`` on the uncalibrated estimate because it works
from the observed ratio itself: it stays usable where the ideal camera would record no green at
all (sRGB below ~960 K), where the estimate-based correction has nothing to correct, and it
generalised better across the 650-1350 °C range in ``bench/accuracy.py`` (see the note there).

- One pair fixes p only; q is taken from the ideal colorimetric camera in the photo's colour
  space, with a prior spread sized on the benchmark cameras.
- Two pairs fix p and q; the scatter about the law is then taken as a prior value.
- Three or more pairs also measure the scatter (reduced chi-square), which scales the bands.

A reading's band combines the photo's own ratio uncertainty, the fit covariance and the scatter
(delta method in 1/T); outside the span of the pairs it widens through the covariance and the
reading is flagged.

References
----------
- D. P. DeWitt and G. D. Nutter (eds.), Theory and Practice of Radiation Thermometry, Wiley
  (1988), ch. 8 (ratio pyrometers, Wien approximation).
- J. Orear, "Least squares when both variables have uncertainties", Am. J. Phys. 50 (1982) 912.
- JCGM 100:2008 (GUM), 4.3.7 (rectangular distribution of a tolerance) and 5.1.2 (propagation).
- IEC 60584-1:2013, type K class 2 tolerance: +/-2.5 °C or +/-0.0075 |t|.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .colourspaces import RGBSpace
from .estimate import TemperatureEstimate, observed_ratios
from .locus import blackbody_table, locus_ratios
from .scales import celsius_to_kelvin

PROFILE_FORMAT = "glowtemp-camera-profile"
PROFILE_VERSION = 1
PRIOR_SCATTER_LN_RATIO = 0.03  # scatter about the law when too few pairs measure it
PRIOR_SLOPE_SPREAD = 0.08  # relative spread of q between cameras, for one-pair profiles
SLOPE_FIT_RANGE_K = (1000.0, 1700.0)
SPAN_MARGIN_C = 25.0  # readings this far outside the pairs' span are flagged
MIN_RATIO_SIGNAL = 3.0  # an observed ratio below this many standard errors carries no law


class ProfileError(ValueError):
    """A profile that cannot be fitted, read or applied, in plain words."""


def thermocouple_sigma_c(temperature_c: float) -> float:
    """1-sigma of a type K class 2 reading: its IEC 60584-1 tolerance as a rectangular bound (GUM 4.3.7)."""
    return max(2.5, 0.0075 * abs(temperature_c)) / np.sqrt(3.0)


def ideal_slope(space: RGBSpace) -> float:
    """q of the ideal colorimetric camera in ``space``: slope of ln(G/R) against 1/T, 1000-1700 K."""
    grid = blackbody_table().temperature_k
    ratios = locus_ratios(space)[:, 0]
    use = (grid >= SLOPE_FIT_RANGE_K[0]) & (grid <= SLOPE_FIT_RANGE_K[1]) & (ratios > 0)
    slope, _ = np.polyfit(1.0 / grid[use], np.log(ratios[use]), 1)
    return float(slope)


@dataclass(frozen=True)
class Pair:
    """One calibration pair: the photo's observed log ratio and the trusted temperature."""

    photo: str
    log_ratio: float
    log_ratio_sigma: float
    reference_c: float
    reference_sigma_c: float
    reference_kind: str = "thermocouple"  # or "cone"
    cone: str | None = None
    region: str | None = None

    def to_dict(self) -> dict:
        return {k: v for k, v in self.__dict__.items()}


@dataclass(frozen=True)
class RatioLaw:
    """The fitted law ln(G/R) = p + q / T with covariance and scatter."""

    p: float
    q: float
    covariance: np.ndarray
    scatter: float
    scatter_measured: bool

    def log_ratio(self, temperature_k):
        return self.p + self.q / np.asarray(temperature_k, dtype=float)


def pair_log_ratio(mean_linear, standard_error) -> tuple[float, float]:
    """ln(G/R) of a region and its standard error; raises when green carries no signal."""
    ratios, errors = observed_ratios(mean_linear, standard_error)
    if not np.isfinite(ratios[0]) or ratios[0] < MIN_RATIO_SIGNAL * errors[0] or ratios[0] <= 0:
        raise ProfileError(
            "the photo's green channel is too weak to carry the colour ratio (glow too dim, "
            "too cool for this colour space, or exposure too low)"
        )
    return float(np.log(ratios[0])), float(errors[0] / ratios[0])


def fit_ratio_law(pairs: list[Pair], space: RGBSpace) -> RatioLaw:
    """Weighted least-squares fit of ln(G/R) = p + q / T (Orear's effective variance for sigma_T)."""
    if not pairs:
        raise ProfileError("A profile needs at least one photo paired with a trusted reading.")
    y = np.array([pair.log_ratio for pair in pairs])
    sigma_y = np.array([pair.log_ratio_sigma for pair in pairs])
    t = celsius_to_kelvin(np.array([pair.reference_c for pair in pairs]))
    sigma_t = np.array([pair.reference_sigma_c for pair in pairs])
    x = 1.0 / t
    q0 = ideal_slope(space)
    if len(pairs) == 1:
        sigma_x = sigma_t / t**2
        variance = sigma_y**2 + (q0 * sigma_x) ** 2 + PRIOR_SCATTER_LN_RATIO**2
        p = float(y[0] - q0 * x[0])
        var_q = (PRIOR_SLOPE_SPREAD * q0) ** 2
        cov = np.array([[variance[0] + x[0] ** 2 * var_q, -x[0] * var_q], [-x[0] * var_q, var_q]])
        return RatioLaw(p, q0, cov, PRIOR_SCATTER_LN_RATIO, False)
    q = q0
    for _ in range(3):  # effective variance depends on the slope: iterate to convergence
        weights = 1.0 / (sigma_y**2 + (q * sigma_t / t**2) ** 2)
        design = np.column_stack([np.ones_like(x), x])
        normal = design.T @ (design * weights[:, None])
        cov = np.linalg.inv(normal)
        p, q = cov @ (design.T @ (weights * y))
    residual = y - (p + q * x)
    dof = len(pairs) - 2
    if dof >= 1:
        chi2 = float((residual**2 * weights).sum())
        scatter = float(np.sqrt(max(chi2 / dof - 1.0, 0.0) / weights.mean()))
        cov = cov * max(chi2 / dof, 1.0)
        return RatioLaw(float(p), float(q), cov, scatter, True)
    return RatioLaw(float(p), float(q), cov, PRIOR_SCATTER_LN_RATIO, False)


def predict(law: RatioLaw, log_ratio: float, log_ratio_sigma: float) -> TemperatureEstimate:
    """Temperature from an observed ln(G/R) through the law, with 68 % and 95 % intervals.

    Works in u = 1/T = (y - p) / q with the delta method (GUM 5.1.2), where the band is
    symmetric, and maps the interval ends back to T.
    """
    u = (log_ratio - law.p) / law.q
    if not np.isfinite(u) or u <= 0:
        return TemperatureEstimate(None, None, None, np.inf, np.inf, "not-glow")
    gradient = np.array([-1.0 / law.q, -u / law.q])
    var_u = (log_ratio_sigma**2 + law.scatter**2) / law.q**2 + gradient @ law.covariance @ gradient
    sigma_u = float(np.sqrt(var_u))

    def interval(z):
        low_u, high_u = u + z * sigma_u, max(u - z * sigma_u, 1e-6)
        return (1.0 / low_u, 1.0 / high_u)

    return TemperatureEstimate(
        temperature_k=float(1.0 / u),
        interval_68_k=interval(1.0),
        interval_95_k=interval(1.959964),
        chi2=0.0,
        scale_factor=1.0,
        status="ok",
    )


@dataclass
class CameraProfile:
    """A named camera profile: the law, the pairs it came from, and the camera it belongs to."""

    name: str
    law: RatioLaw
    pairs: list[Pair]
    colour_space: str
    camera: dict = field(default_factory=dict)  # make, model, white_balance, iso, exposure_time_s
    created: str = ""

    @property
    def span_c(self) -> tuple[float, float]:
        refs = [pair.reference_c for pair in self.pairs]
        return (min(refs), max(refs))

    def residuals_c(self) -> list[float]:
        """Each pair's measured-minus-trusted temperature under the fitted law, in °C."""
        out = []
        for pair in self.pairs:
            estimate = predict(self.law, pair.log_ratio, 0.0)
            out.append(float(estimate.temperature_k - celsius_to_kelvin(pair.reference_c)))
        return out

    def to_dict(self) -> dict:
        return {
            "format": PROFILE_FORMAT,
            "version": PROFILE_VERSION,
            "name": self.name,
            "created": self.created,
            "model": "ratio-pyrometer ln(G/R) = p + q/T",
            "colour_space": self.colour_space,
            "camera": self.camera,
            "parameters": {"p": self.law.p, "q_k": self.law.q},
            "covariance": self.law.covariance.tolist(),
            "scatter_ln_ratio": self.law.scatter,
            "scatter_measured": self.law.scatter_measured,
            "span_c": list(self.span_c),
            "pairs": [pair.to_dict() for pair in self.pairs],
            "residuals_c": self.residuals_c(),
        }

    @classmethod
    def from_dict(cls, record: dict) -> "CameraProfile":
        if record.get("format") != PROFILE_FORMAT:
            raise ProfileError("This file is not a glowtemp camera profile.")
        if int(record.get("version", 0)) > PROFILE_VERSION:
            raise ProfileError(
                f"This profile was written by a newer glowtemp (format version {record['version']}); "
                "update glowtemp to read it."
            )
        try:
            law = RatioLaw(
                p=float(record["parameters"]["p"]),
                q=float(record["parameters"]["q_k"]),
                covariance=np.array(record["covariance"], dtype=float).reshape(2, 2),
                scatter=float(record["scatter_ln_ratio"]),
                scatter_measured=bool(record["scatter_measured"]),
            )
            pairs = [Pair(**pair) for pair in record["pairs"]]
        except (KeyError, TypeError, ValueError) as error:
            raise ProfileError(f"This camera profile is damaged ({error}).") from None
        return cls(
            name=record["name"],
            law=law,
            pairs=pairs,
            colour_space=record["colour_space"],
            camera=dict(record.get("camera") or {}),
            created=record.get("created", ""),
        )


def fit_profile(name: str, pairs: list[Pair], space: RGBSpace, camera: dict, created: str) -> CameraProfile:
    """Fit a profile from pairs (all from one camera, one colour space)."""
    return CameraProfile(name, fit_ratio_law(pairs, space), list(pairs), space.name, dict(camera), created)


def extrapolation_sigma(law: RatioLaw, temperature_k: float, span_c: tuple[float, float]) -> float:
    """Extra ln-ratio spread for a reading outside the pairs' span: the law's curvature is unknown.

    Grows as the slope's prior spread times the distance in 1/T beyond the nearest end of the span.
    """
    low_k, high_k = (celsius_to_kelvin(t) for t in span_c)
    u, u_low, u_high = 1.0 / temperature_k, 1.0 / high_k, 1.0 / low_k
    beyond = max(u_low - u, u - u_high, 0.0)
    return abs(PRIOR_SLOPE_SPREAD * law.q * beyond)


def apply_profile(profile: CameraProfile, mean_linear, standard_error) -> tuple[TemperatureEstimate, bool]:
    """Estimate through a profile; returns the estimate and whether it lies outside the span."""
    ratios, errors = observed_ratios(mean_linear, standard_error)
    if not np.all(np.isfinite(ratios)):
        return TemperatureEstimate(None, None, None, np.inf, np.inf, "no-data"), False
    green, sigma = float(ratios[0]), float(errors[0])
    if green < MIN_RATIO_SIGNAL * sigma or green <= 0:
        ceiling = predict(profile.law, float(np.log(max(green, 0.0) + 2 * sigma + 1e-9)), 0.0)
        if ceiling.temperature_k is None:
            return ceiling, False
        top = ceiling.interval_95_k[1]
        bottom = float(blackbody_table().temperature_k[0])
        return TemperatureEstimate(None, None, (bottom, top), 0.0, 1.0, "upper-bound"), False
    log_ratio, log_sigma = float(np.log(green)), sigma / green
    first = predict(profile.law, log_ratio, log_sigma)
    if first.temperature_k is None:
        return first, False
    extra = extrapolation_sigma(profile.law, first.temperature_k, profile.span_c)
    low, high = profile.span_c
    outside = not (low - SPAN_MARGIN_C <= first.temperature_k - 273.15 <= high + SPAN_MARGIN_C)
    if extra > 0:
        first = predict(profile.law, log_ratio, float(np.hypot(log_sigma, extra)))
    return first, outside
