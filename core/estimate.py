"""From a region's mean linear colour to a temperature posterior with 68 % and 95 % intervals.

The observables are the colour ratios green/red and blue/red of the region's mean linear RGB.
For a grey body they do not depend on emissivity, exposure or distance (the scale cancels), so
a kiln interior seen through a spy hole (close to a black cavity) or a dull oxidised bar
(roughly grey over the visible band) gives the same ratios as a blackbody of its temperature.
Bright metal, some glazes and flames are not grey and bias the result.

The model predicts the ratios that an ideal colorimetric camera records in the photo's RGB
space: blackbody XYZ from :mod:`glowtemp.locus`, converted to that space with negative
components clipped to zero. Each ratio has a Gaussian likelihood whose variance adds

- the measurement variance of the observed ratio (delta method on the channel standard
  errors, which already include quantisation; see :mod:`glowtemp.sampling`), and
- a *camera term*: a real camera's spectral sensitivities, colour matrix and processing differ
  from the ideal one. Rendered through measured and parametric cameras, glow's green/red came
  out shifted by up to about +/-0.02 (in units of red) at every temperature, more an offset than
  a scale, so the term has an additive part per channel (``green_floor``, ``blue_floor``) and a
  small proportional part (``ratio_sigma``). Below about 1900 K an sRGB blackbody's blue is out
  of gamut: what a camera records there is crosstalk, noise and JPEG chroma error, hence the
  wider blue floor.

The posterior on a 1 K grid (flat prior in T from 700 K to 4000 K) gives the median and equal-
tailed 68 % and 95 % credible intervals. When the best fit is poor the variances are scaled by
chi^2 / dof (the scale-factor method of the Particle Data Group); when it is very poor, or the
95 % highest-density set falls apart into separate pieces, the estimate is refused.

References
----------
- D. S. Sivia and J. Skilling, Data Analysis: A Bayesian Tutorial, 2nd ed., OUP (2006), ch. 2-3
  (grid posterior, credible intervals, nuisance scales).
- JCGM 100:2008 (GUM), section 5.1.2 (law of propagation of uncertainty for a ratio).
- R. L. Workman et al. (Particle Data Group), Prog. Theor. Exp. Phys. 2022, 083C01,
  "Introduction", section 5.2.2 (scale factor S = sqrt(chi^2 / dof)).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .colourspaces import SRGB, RGBSpace
from .locus import blackbody_table, locus_ratios

POOR_FIT_P = 0.01  # below this p-value the variances are scaled (PDG scale factor)
REFUSE_CHI2 = 60.0  # chi^2 per degree of freedom beyond which the colour is not glow


@dataclass(frozen=True)
class CameraTerm:
    """How far a camera may depart from an ideal colorimetric one, as 1-sigma ratio errors.

    The uncalibrated default was sized by rendering blackbodies through the two NPL-measured
    cameras in colour-science and two parametric cameras (``bench/accuracy.py``).
    """

    ratio_sigma: float = 0.05
    green_floor: float = 0.012
    blue_floor: float = 0.03

    @property
    def floors(self) -> np.ndarray:
        return np.array([self.green_floor, self.blue_floor])


UNCALIBRATED = CameraTerm()


@dataclass(frozen=True)
class TemperatureEstimate:
    """A temperature posterior summarised for people and programs (kelvin)."""

    temperature_k: float | None
    interval_68_k: tuple[float, float] | None
    interval_95_k: tuple[float, float] | None
    chi2: float
    scale_factor: float
    status: str  # "ok", "upper-bound" (only a ceiling is known), "ambiguous", "not-glow", "no-data"
    at_table_top: bool = False

    @property
    def usable(self) -> bool:
        return self.status in ("ok", "upper-bound")


def observed_ratios(mean_linear, standard_error):
    """Green/red and blue/red with their standard errors (GUM 5.1.2, uncorrelated channels)."""
    red, green, blue = (float(v) for v in mean_linear)
    s_red, s_green, s_blue = (float(v) for v in standard_error)
    ratios = np.array([green / red, blue / red])
    errors = np.sqrt((np.array([s_green, s_blue]) ** 2 + (ratios * s_red) ** 2)) / red
    return ratios, errors


def log_likelihood(ratios, ratio_errors, space: RGBSpace = SRGB, camera: CameraTerm = UNCALIBRATED):
    """Gaussian log-likelihood of the observed ratios on the blackbody table grid, and chi^2."""
    model = locus_ratios(space)
    variance = (
        ratio_errors[None, :] ** 2 + (camera.ratio_sigma * model) ** 2 + camera.floors[None, :] ** 2
    )
    chi2 = ((ratios[None, :] - model) ** 2 / variance).sum(axis=1)
    return -0.5 * (chi2 + np.log(variance).sum(axis=1)), chi2, variance


def _quantile(grid, cdf, q):
    return float(np.interp(q, cdf, grid))


def _pieces(posterior, mass=0.95) -> int:
    """Number of separate runs in the highest-density set holding ``mass`` of the posterior.

    The set is every grid point at or above the density level that encloses ``mass``, so a
    flat shoulder is kept whole rather than split by rounding.
    """
    ordered = np.sort(posterior)[::-1]
    level = ordered[min(int(np.searchsorted(np.cumsum(ordered), mass)), len(ordered) - 1)]
    kept = posterior >= level * (1 - 1e-9)
    return int(np.count_nonzero(np.diff(kept.astype(int)) == 1) + kept[0])


def estimate_temperature(
    mean_linear, standard_error, space: RGBSpace = SRGB, camera: CameraTerm = UNCALIBRATED
) -> TemperatureEstimate:
    """Posterior summary of the temperature of a grey body from its mean linear RGB.

    >>> from glowtemp.locus import blackbody_xyz, clipped_linear_rgb
    >>> rgb = clipped_linear_rgb(blackbody_xyz(1400.0)[0])
    >>> result = estimate_temperature(rgb / rgb[0], [0.002, 0.002, 0.002])
    >>> lo, hi = result.interval_95_k
    >>> bool(lo < 1400 < hi), result.status
    (True, 'ok')
    """
    mean_linear = np.asarray(mean_linear, dtype=float)
    if not np.all(np.isfinite(mean_linear)) or mean_linear[0] <= 0:
        return TemperatureEstimate(None, None, None, np.inf, np.inf, "no-data")
    ratios, errors = observed_ratios(mean_linear, standard_error)
    grid = blackbody_table().temperature_k
    loglike, chi2, variance = log_likelihood(ratios, errors, space, camera)
    best = int(np.argmax(loglike))
    chi2_min, dof = float(chi2[best]), 1
    if chi2_min / dof > REFUSE_CHI2:
        return TemperatureEstimate(None, None, None, chi2_min, np.sqrt(chi2_min / dof), "not-glow")
    scale = 1.0
    if _chi2_survival_1dof(chi2_min) < POOR_FIT_P:
        scale = np.sqrt(chi2_min / dof)
        loglike = -0.5 * (chi2 / scale**2 + np.log(variance * scale**2).sum(axis=1))
    posterior = np.exp(loglike - loglike.max())
    posterior /= posterior.sum()
    if _pieces(posterior) > 1:
        return TemperatureEstimate(None, None, None, chi2_min, scale, "ambiguous")
    cdf = np.cumsum(posterior) - posterior / 2
    q = lambda p: _quantile(grid, cdf, p)  # noqa: E731 - a short local helper
    interval_95 = (q(0.025), q(0.975))
    low_edge_mass = posterior[: int(len(grid) * 0.01)].sum()
    status = "upper-bound" if low_edge_mass > 0.005 else "ok"
    if status == "upper-bound":
        interval_95 = (float(grid[0]), _quantile(grid, cdf, 0.95))
    return TemperatureEstimate(
        temperature_k=q(0.5),
        interval_68_k=(q(0.16), q(0.84)),
        interval_95_k=interval_95,
        chi2=chi2_min,
        scale_factor=float(scale),
        status=status,
        at_table_top=bool(posterior[-int(len(grid) * 0.01):].sum() > 0.005),
    )


def _chi2_survival_1dof(chi2: float) -> float:
    """P(X > chi2) for a chi-square variable with one degree of freedom: erfc(sqrt(chi2 / 2))."""
    from math import erfc, sqrt

    return erfc(sqrt(max(chi2, 0.0) / 2))
