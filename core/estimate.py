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
posterior has two separate modes (two heats far apart fit), the estimate is refused.

References
----------
- D. S. Sivia and J. Skilling, Data Analysis: A Bayesian Tutorial, 2nd ed., OUP (2006), ch. 2-3
  (grid posterior, credible intervals, nuisance scales).
- JCGM 100:2008 (GUM), section 5.1.2 (law of propagation of uncertainty for a ratio).
- R. L. Workman et al. (Particle Data Group), Prog. Theor. Exp. Phys. 2022, 083C01,
  "Introduction", section 5.2.2 (scale factor S = sqrt(chi^2 / dof)).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from .colourspaces import SRGB, RGBSpace
from .locus import blackbody_table, locus_ratios

POOR_FIT_P = 0.01  # below this p-value the variances are scaled (PDG scale factor)
REFUSE_CHI2 = 60.0  # chi^2 per degree of freedom beyond which the colour is not glow
WIDE_HALF_WIDTH_K = 150.0  # a 68 % band wider than +/-150 K names a range, not one heat


@dataclass(frozen=True)
class CameraTerm:
    """How a camera's recorded ratios relate to the ideal colorimetric camera's, with spreads.

    The recorded green/red is modelled as ``offset + gain * g_ideal`` (``g_ideal`` unclipped,
    the result clipped at zero, as a camera clips), which is what a small error in a camera's
    colour matrix does to a colour whose blue is negligible. Uncalibrated, gain is 1 and offset
    0 with 1-sigma spreads sized by rendering blackbodies through colour-science's two
    NPL-measured cameras and parametric ones (``bench/accuracy.py``); a camera profile supplies
    fitted values and their covariance instead (:mod:`glowtemp.profile`).
    """

    ratio_sigma: float = 0.05
    green_floor: float = 0.012
    blue_floor: float = 0.03
    green_gain: float = 1.0
    green_offset: float = 0.0
    offset_gain_covariance: tuple = ((0.0, 0.0), (0.0, 0.0))
    white_balance_factors: tuple = (1.0,)
    fitted_span: tuple | None = None  # ideal green/red at the ends of a profile's pairs
    extrapolation_sigma: float = 0.0  # spread per unit of ideal green/red beyond that span

    def model(self, space: RGBSpace):
        """Predicted (green/red, blue/red) on the table grid and the camera part of their variance."""
        ideal = locus_ratios(space, clipped=False)[:, 0]
        green = np.clip(self.green_offset + self.green_gain * ideal, 0.0, None)
        ratios = np.column_stack([green, locus_ratios(space)[:, 1]])
        # Where the map predicts a clipped (zero) green, its spread is that at the clipping point.
        at = np.maximum(ideal, -self.green_offset / self.green_gain)
        covariance = np.asarray(self.offset_gain_covariance, dtype=float)
        fit_var = covariance[0, 0] + 2 * at * covariance[0, 1] + at**2 * covariance[1, 1]
        variance = (self.ratio_sigma * ratios) ** 2 + np.array([self.green_floor, self.blue_floor]) ** 2
        variance[:, 0] += fit_var
        if self.fitted_span is not None:
            low, high = self.fitted_span
            beyond = np.maximum(np.maximum(low - at, at - high), 0.0)
            variance[:, 0] += (self.extrapolation_sigma * beyond) ** 2
        return ratios, variance


UNCALIBRATED = CameraTerm()

# Auto white balance pulls glow towards neutral: it raises green/red and blue/red by an unknown
# factor. Rendered with a grey-world balance capped at a 2000 K white (glowtemp.synthetic), the
# factor reached 5 to 6 on a glow-filled frame; real phones differ. The estimate marginalises
# over factors from 1 to 8, log-uniform (Sivia and Skilling, ch. 3: nuisance parameters).
AUTO_WHITE_BALANCE_FACTORS = tuple(np.geomspace(1.0, 8.0, 25))


def with_auto_white_balance(camera: CameraTerm) -> CameraTerm:
    """The camera term for a photo whose white balance the camera chose itself."""
    return replace(camera, white_balance_factors=AUTO_WHITE_BALANCE_FACTORS)


@dataclass(frozen=True)
class TemperatureEstimate:
    """A temperature posterior summarised for people and programs (kelvin)."""

    temperature_k: float | None
    interval_68_k: tuple[float, float] | None
    interval_95_k: tuple[float, float] | None
    chi2: float
    scale_factor: float
    status: str  # "ok", "wide", "upper-bound", "ambiguous", "not-glow", "no-data", "clipped"
    at_table_top: bool = False

    @property
    def usable(self) -> bool:
        return self.status in ("ok", "wide", "upper-bound")


def observed_ratios(mean_linear, standard_error):
    """Green/red and blue/red with their standard errors (GUM 5.1.2, uncorrelated channels)."""
    red, green, blue = (float(v) for v in mean_linear)
    s_red, s_green, s_blue = (float(v) for v in standard_error)
    ratios = np.array([green / red, blue / red])
    errors = np.sqrt((np.array([s_green, s_blue]) ** 2 + (ratios * s_red) ** 2)) / red
    return ratios, errors


def log_likelihood(ratios, ratio_errors, space: RGBSpace = SRGB, camera: CameraTerm = UNCALIBRATED):
    """Gaussian log-likelihood of the observed ratios on the blackbody table grid, and chi^2.

    With several white-balance factors the likelihood is averaged over them (marginalised);
    chi^2 is then the best over the factors.
    """
    model, camera_variance = camera.model(space)
    loglikes, chi2s = [], []
    for factor in camera.white_balance_factors:
        variance = ratio_errors[None, :] ** 2 + camera_variance * factor**2
        chi2 = ((ratios[None, :] - model * factor) ** 2 / variance).sum(axis=1)
        loglikes.append(-0.5 * (chi2 + np.log(variance).sum(axis=1)))
        chi2s.append(chi2)
    loglikes = np.array(loglikes)
    peak = loglikes.max(axis=0)
    loglike = peak + np.log(np.exp(loglikes - peak).mean(axis=0))
    return loglike, np.min(chi2s, axis=0)


def _quantile(grid, cdf, q):
    return float(np.interp(q, cdf, grid))


def _modes(posterior, floor=0.1, least_mass=0.025) -> int:
    """Number of separate modes: runs of the posterior above ``floor`` of its peak that each hold
    at least ``least_mass`` of the probability. A dip that stays above the floor joins its
    neighbours, so a broad shoulder is one answer, and two heats far apart are two."""
    above = posterior >= floor * posterior.max()
    edges = np.flatnonzero(np.diff(np.r_[0, above.astype(int), 0]))
    runs = zip(edges[::2], edges[1::2])
    return sum(1 for start, stop in runs if posterior[start:stop].sum() >= least_mass)


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
    loglike, chi2 = log_likelihood(ratios, errors, space, camera)
    best = int(np.argmax(loglike))
    chi2_min, dof = float(chi2[best]), 1
    if chi2_min / dof > REFUSE_CHI2:
        return TemperatureEstimate(None, None, None, chi2_min, np.sqrt(chi2_min / dof), "not-glow")
    scale = 1.0
    if _chi2_survival_1dof(chi2_min) < POOR_FIT_P:
        scale = np.sqrt(chi2_min / dof)
        loglike = log_likelihood(ratios, errors * scale, space, _scaled(camera, scale))[0]
    posterior = np.exp(loglike - loglike.max())
    posterior /= posterior.sum()
    if _modes(posterior) > 1:
        return TemperatureEstimate(None, None, None, chi2_min, scale, "ambiguous")
    cdf = np.cumsum(posterior) - posterior / 2
    q = lambda p: _quantile(grid, cdf, p)  # noqa: E731 - a short local helper
    interval_95 = (q(0.025), q(0.975))
    low_edge_mass = posterior[: int(len(grid) * 0.01)].sum()
    interval_68 = (q(0.16), q(0.84))
    status = "ok"
    if low_edge_mass > 0.005:
        status = "upper-bound"
    elif (interval_68[1] - interval_68[0]) / 2 > WIDE_HALF_WIDTH_K:
        status = "wide"
    if status == "upper-bound":
        interval_95 = (float(grid[0]), _quantile(grid, cdf, 0.95))
    return TemperatureEstimate(
        temperature_k=q(0.5),
        interval_68_k=interval_68,
        interval_95_k=interval_95,
        chi2=chi2_min,
        scale_factor=float(scale),
        status=status,
        at_table_top=bool(posterior[-int(len(grid) * 0.01):].sum() > 0.005),
    )


def _scaled(camera: CameraTerm, scale: float) -> CameraTerm:
    """The camera term with every spread multiplied by ``scale`` (the PDG scale factor)."""
    covariance = np.asarray(camera.offset_gain_covariance) * scale**2
    return replace(
        camera,
        ratio_sigma=camera.ratio_sigma * scale,
        green_floor=camera.green_floor * scale,
        blue_floor=camera.blue_floor * scale,
        offset_gain_covariance=tuple(map(tuple, covariance)),
    )


def _chi2_survival_1dof(chi2: float) -> float:
    """P(X > chi2) for a chi-square variable with one degree of freedom: erfc(sqrt(chi2 / 2))."""
    from math import erfc, sqrt

    return erfc(sqrt(max(chi2, 0.0) / 2))
