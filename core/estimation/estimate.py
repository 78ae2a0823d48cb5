"""From a region's mean linear colour to a temperature posterior with 68 % and 95 % intervals.

The observables are the colour ratios green/red and blue/red of the region's mean linear RGB.
For a grey body they do not depend on emissivity, exposure or distance (the scale cancels), so
a kiln interior seen through a spy hole (close to a black cavity) or a dull oxidised bar
(roughly grey over the visible band) gives the same ratios as a blackbody of its temperature.
Bright metal, some glazes and flames are not grey and bias the result.

The model predicts the ratios a camera records. Uncalibrated, the cameras are a population
(:mod:`glowtemp.estimation.population`): real measured sensors and invented ones, each with a maker's
colour matrix, white-balance preset error, saturation, highlight roll-off and tone curve, at the
photo's recorded red level. The likelihood is the members' mixture, so the band is wide where
cameras disagree and narrow where they agree; a mixture rather than one fitted camera term,
because the members' ratios are far from Gaussian about their mean (green clips to zero for
some cameras at heats where others still record it). A camera profile
(:mod:`glowtemp.estimation.profile`) replaces the population with one fitted camera (:class:`CameraTerm`).
Each member's ratios have a Gaussian likelihood whose variance adds the measurement variance
(delta method on the channel standard errors, which include quantisation; see
:mod:`glowtemp.images.sampling`) and what a member leaves unmodelled (JPEG chroma subsampling and
DCT error, demosaicing, local processing).

With exposure data, the brightness channel (:mod:`glowtemp.estimation.brightness`) multiplies in, member
by member, on the same grid: one posterior from colour and brightness.

The posterior on a 2 K grid (flat prior in T from 700 K to 2400 K; glow in this trade tops out
near 1600 °C) gives the median and equal-tailed 68 % and 95 % credible intervals. When the best
fit is poor the variances are scaled by chi^2 / dof (the scale-factor method of the Particle
Data Group); when it is very poor the colour is no glow, and a colour whiter than glow reaches
here is daylight or lamp light. A posterior with two separate modes is refused as ambiguous.

References
----------
- D. S. Sivia and J. Skilling, Data Analysis: A Bayesian Tutorial, 2nd ed., OUP (2006), ch. 2-3
  (grid posterior, credible intervals, nuisance scales).
- JCGM 100:2008 (GUM), section 5.1.2 (law of propagation of uncertainty for a ratio).
- G. J. McLachlan and D. Peel, Finite Mixture Models, Wiley (2000), ch. 1.
- R. L. Workman et al. (Particle Data Group), Prog. Theor. Exp. Phys. 2022, 083C01,
  "Introduction", section 5.2.2 (scale factor S = sqrt(chi^2 / dof)).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from functools import lru_cache, partial

import numpy as np

from . import brightness as brightness_channel
from ..physics.colourspaces import LINEAR_ROMM, SRGB, RGBSpace, srgb_encode
from ..physics.locus import TABLE_MIN_K, TABLE_STEP_K, blackbody_table, locus_ratios
from .population import Population, camera_population
from ..images.raw import RAW_SPACE

GRID_K = np.arange(700.0, 2400.0 + 1.0, 2.0)  # the posterior's grid
POOR_FIT_P = 0.01  # below this p-value the variances are scaled (PDG scale factor)
REFUSE_CHI2 = 60.0  # chi^2 per degree of freedom beyond which the colour is not glow
WIDE_HALF_WIDTH_K = 150.0  # a 68 % band wider than +/-150 K names a range, not one heat
WHITER_THAN_GLOW_K = 1973.15  # 1700 °C: beyond the trade's hottest work (about 1600 °C, common practice)
# A whitish light (daylight, a lamp): green/red in this range and blue no stronger than green
# by more than this factor. Lamps from about 2400 K (green/red 0.35) to daylight at 6500 K (0.94)
# fall inside (blackbodies in sRGB by colour-science); green, blue and magenta lights do not.
WHITISH_GREEN = (0.3, 1.3)
WHITISH_BLUE_OVER_GREEN = 1.3
# What one population member leaves unmodelled, per ratio: a floor (in units of red) and a
# proportional part. Sized on rendered JPEGs of the population's own members, whose recorded
# ratios scatter about the member's table by about this much (4:2:0 chroma, DCT, 8-bit codes).
MEMBER_FLOOR = np.array([0.004, 0.01])
MEMBER_RATIO_SIGMA = 0.03
# Bhattacharyya coefficient (A. Bhattacharyya, Bull. Calcutta Math. Soc. 35 (1943) 99) of the
# two channels' posteriors below which they disagree: then one of them is wrong (HDR, a filter,
# a surface that is not grey), and the reading gives the range both allow instead of a product
# sitting in the tails of each.
CHANNELS_AGREE = 0.2
MEMBERS_PER_BLOCK = 16  # the likelihoods are worked out for this many members at a time, so that
# their intermediate arrays stay in a core's cache (speed only: the numbers are the same)


@dataclass(frozen=True)
class Cameras:
    """What a set of cameras records from a blackbody on :data:`GRID_K`, as a mixture.

    ``ratios`` and ``variance`` (members, grid, 2) are green/red and blue/red and the camera part
    of their variance; ``log_response`` (members, grid) is ln(recorded red / the ideal camera's
    red under ISO 12232) for the brightness channel, ``departure_sigma`` the spread of the rest.
    """

    ratios: np.ndarray
    variance: np.ndarray
    log_response: np.ndarray
    weights: np.ndarray
    departure_sigma: float = brightness_channel.DEPARTURE_SIGMA
    white_balance_factors: np.ndarray = field(default_factory=lambda: np.ones((1, 2)))  # (whites, 2)


def _on_grid(values_by_table_k):
    """Values on the 1 K blackbody table picked at :data:`GRID_K` (the grid's points are on it)."""
    index = np.rint((GRID_K - TABLE_MIN_K) / TABLE_STEP_K).astype(int)
    return values_by_table_k[..., index, :] if values_by_table_k.ndim > 1 else values_by_table_k[index]


@dataclass(frozen=True)
class CameraTerm:
    """One camera, as a camera profile fits it: recorded green/red ``offset + gain * g_ideal``.

    ``g_ideal`` is the unclipped green/red of the ideal colorimetric camera (the result clipped at
    zero, as a camera clips), which is what a small error in a camera's colour matrix does to a
    colour whose blue is negligible. The spreads are the fit's (:mod:`glowtemp.estimation.profile`); beyond
    the pairs' span an extrapolation term grows with the distance. ``log_response`` and
    ``departure_sigma`` are the brightness channel's fitted exposure constant and its spread.
    """

    ratio_sigma: float = 0.05
    green_floor: float = 0.012
    blue_floor: float = 0.03
    green_gain: float = 1.0
    green_offset: float = 0.0
    offset_gain_covariance: tuple = ((0.0, 0.0), (0.0, 0.0))
    fitted_span: tuple | None = None  # ideal green/red at the ends of a profile's pairs
    extrapolation_sigma: float = 0.0  # spread per unit of ideal green/red beyond that span
    log_response: float = 0.0
    departure_sigma: float = brightness_channel.DEPARTURE_SIGMA

    def model(self, space: RGBSpace):
        """Predicted (green/red, blue/red) on the 1 K table grid and the camera part of their variance."""
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

    def cameras(self, space: RGBSpace) -> Cameras:
        """This one camera as a one-member :class:`Cameras`."""
        ratios, variance = self.model(space)
        return Cameras(
            ratios=_on_grid(ratios)[None],
            variance=_on_grid(variance)[None],
            log_response=np.full((1, GRID_K.size), self.log_response),
            weights=np.ones(1),
            departure_sigma=self.departure_sigma,
        )


@lru_cache(maxsize=4)
def _grid_weights(table_k: tuple):
    """Where each point of :data:`GRID_K` falls on a table's temperature grid, for
    :func:`_interpolate_rows`: (on a node, that node, the node below, distance above it)."""
    nodes = np.array(table_k)
    right = np.searchsorted(nodes, GRID_K)  # nodes[right - 1] < t <= nodes[right]
    on_node = (right < nodes.size) & (nodes[np.minimum(right, nodes.size - 1)] == GRID_K)
    below = np.clip(right - 1, 0, nodes.size - 2)
    return on_node, np.minimum(right, nodes.size - 1), below, GRID_K - nodes[below]


def _interpolate_rows(table_k: np.ndarray, rows: np.ndarray) -> np.ndarray:
    """Each row of ``rows`` (values on ``table_k``) linearly interpolated at :data:`GRID_K`: the
    same arithmetic as ``np.interp`` row by row (a node's own value where a grid point is on one,
    else ``slope * (t - t_below) + y_below``), so the numbers are identical, in one pass.
    :data:`GRID_K` lies inside the table, so nothing is held at the ends."""
    on_node, node, below, above = _grid_weights(tuple(table_k))
    slopes = np.diff(rows, axis=-1) / np.diff(table_k)
    found = np.take(slopes, below, axis=-1)
    found *= above
    found += np.take(rows, below, axis=-1)
    found[:, on_node] = rows[:, node[on_node]]
    return found


def population_cameras(space: RGBSpace, red_level: float, population: Population | None = None,
                       auto_white_balance: bool = False) -> Cameras | None:
    """The population's members in ``space`` at a recorded red level (share of full code), on
    :data:`GRID_K`, white-balanced by their daylight preset or automatically; None when the
    population has no table for that space."""
    population = population or camera_population()
    if not population.knows(space.name, auto_white_balance):
        return None
    ratios, response = population.at_level(space.name, red_level, auto_white_balance)
    interpolate = partial(_interpolate_rows, population.temperature_k)
    ratios = np.stack([interpolate(ratios[..., 0]), interpolate(ratios[..., 1])], axis=-1)
    variance = MEMBER_RATIO_SIGMA * ratios  # then squared and floored in place: (s r)^2 + floor^2
    variance *= variance
    variance += MEMBER_FLOOR**2
    weights = population.weights[population.keep]
    departure = brightness_channel.RAW_DEPARTURE_SIGMA if space is LINEAR_ROMM else brightness_channel.DEPARTURE_SIGMA
    return Cameras(ratios, variance, interpolate(response), weights / weights.sum(), departure)


def read_population_tables(space: RGBSpace, auto_white_balance: bool = False) -> None:
    """Read now the shipped population's tables that :func:`population_cameras` will want for a
    photo in ``space`` (for instance while its pixels decode, :func:`glowtemp.images.photo.begin_loading`)."""
    population = camera_population()
    if population.knows(space.name, auto_white_balance):
        population.tables(space.name, auto_white_balance)


UNCALIBRATED = CameraTerm()  # the ideal camera with fixed spreads: for spaces the population lacks

# Uncalibrated camera term for raw photos. A DNG's matrix is fitted on a colour chart, not on
# glow, so a camera's recorded green/red is offset + gain x ideal, like a JPEG's (see
# CameraTerm above). Offsets and gains of the benchmark cameras (colour-science's
# two NPL-measured cameras and parametric ones, bench/raw_vs_jpeg.py) pivot about a green/red
# near 0.45 (about 1500 °C): second moments about (0, 1) give these spreads and correlation;
# the scatter about each camera's straight line stayed below 0.012.
RAW_OFFSET_SIGMA = 0.041
RAW_GAIN_SIGMA = 0.083
RAW_OFFSET_GAIN_CORRELATION = -0.94
RAW_SCATTER = 0.008
_COVARIANCE = RAW_OFFSET_GAIN_CORRELATION * RAW_OFFSET_SIGMA * RAW_GAIN_SIGMA
RAW_UNCALIBRATED = CameraTerm(
    ratio_sigma=0.0,
    green_floor=RAW_SCATTER,
    offset_gain_covariance=((RAW_OFFSET_SIGMA**2, _COVARIANCE), (_COVARIANCE, RAW_GAIN_SIGMA**2)),
)


def uncalibrated_term(photo) -> CameraTerm:
    """The camera term to use without a profile: the raw one for DNG photos, else the default."""
    return RAW_UNCALIBRATED if photo.space is RAW_SPACE else UNCALIBRATED

# Auto white balance pulls glow towards neutral: the camera balances for a white it guesses from
# the frame. The population carries that for its members (glowtemp.render.population_build); a single
# profiled camera gets it as unknown factors on green/red and blue/red: balancing for a white
# of temperature T_w instead of daylight multiplies them by the daylight white's ratios over
# T_w's (von Kries), with T_w log-uniform from 2600 K to 3500 K: glow drives the balance to its
# warmest white, which differs between phones (common practice, from memory; Sivia and
# Skilling, ch. 3: nuisance parameters).
# Auto white balance also moves the red gain by an unknown amount, so such photos get no
# brightness channel (glowtemp.estimation.reading).
AUTO_WHITE_BALANCE_WHITES_K = tuple(np.geomspace(2600.0, 3500.0, 9))
DAYLIGHT_WHITE_K = 5500.0  # the daylight preset's white, as a Planckian stand-in


def auto_white_balance_factors(space: RGBSpace) -> np.ndarray:
    """(whites, 2) factors on green/red and blue/red of balancing for each guessed white."""
    from ..physics.locus import blackbody_xyz

    whites = np.array([*AUTO_WHITE_BALANCE_WHITES_K, DAYLIGHT_WHITE_K])
    rgb = np.clip(blackbody_xyz(whites) @ space.xyz_to_rgb.T, 1e-12, None)
    ratios = rgb[:, 1:] / rgb[:, :1]
    return ratios[-1] / ratios[:-1]


def glow_limits(cameras: Cameras, ratio_errors) -> np.ndarray:
    """The largest green/red and blue/red glow up to :data:`WHITER_THAN_GLOW_K` can show with
    these cameras: the members' largest at that heat, times the largest white-balance factor,
    with a margin of half again and three standard errors of the observation."""
    top = int(np.searchsorted(GRID_K, WHITER_THAN_GLOW_K))
    largest = cameras.ratios[:, top, :].max(axis=0) + np.sqrt(cameras.variance[:, top, :].max(axis=0))
    return 1.5 * largest * cameras.white_balance_factors.max(axis=0) + 3.0 * np.asarray(ratio_errors)


@dataclass(frozen=True)
class Brightness:
    """The brightness observation: ln of the recorded linear red, its standard error, the photo's
    exposure (:class:`glowtemp.estimation.brightness.Exposure`), the scene's emissivity bounds, and the
    ideal camera's red per unit of absolute XYZ in the photo's space."""

    log_red: float
    log_red_sigma: float
    log_scale: float
    emissivity_bounds: tuple
    ideal_red: np.ndarray  # on GRID_K


def brightness_observation(mean_red, red_error, exposure, scene: str, space: RGBSpace) -> Brightness:
    """Put together the brightness channel's data for one region."""
    ideal_red = np.clip(_on_grid(blackbody_table().xyz) @ space.xyz_to_rgb[0], 1e-300, None)
    return Brightness(
        log_red=math.log(mean_red),
        log_red_sigma=float(red_error) / float(mean_red),
        log_scale=exposure.log_scale,
        emissivity_bounds=brightness_channel.scene_bounds(scene),
        ideal_red=ideal_red,
    )


@dataclass(frozen=True)
class TemperatureEstimate:
    """A temperature posterior summarised for people and programs (kelvin).

    ``channels`` names what set the band ("colour", "brightness"); ``colour_status`` is what
    colour alone said (e.g. "upper-bound" where brightness then gave the estimate);
    ``refusal`` names why a colour is no glow ("not-glow-colour" or "daylight-or-lamp").
    """

    temperature_k: float | None
    interval_68_k: tuple[float, float] | None
    interval_95_k: tuple[float, float] | None
    chi2: float
    scale_factor: float
    status: str  # "ok", "wide", "upper-bound", "not-glow", "no-data", "clipped"
    channels: tuple = ()
    colour_status: str | None = None
    refusal: str | None = None
    channels_disagree: bool = False
    modes: int = 1

    @property
    def usable(self) -> bool:
        return self.status in ("ok", "wide", "upper-bound")


def refused(status: str, chi2: float = np.inf, scale: float = np.inf, refusal: str | None = None) -> TemperatureEstimate:
    """An estimate that gives no temperature."""
    return TemperatureEstimate(None, None, None, chi2, scale, status, refusal=refusal)


def observed_ratios(mean_linear, standard_error):
    """Green/red and blue/red with their standard errors (GUM 5.1.2, uncorrelated channels)."""
    red, green, blue = (float(v) for v in mean_linear)
    s_red, s_green, s_blue = (float(v) for v in standard_error)
    ratios = np.array([green / red, blue / red])
    errors = np.sqrt((np.array([s_green, s_blue]) ** 2 + (ratios * s_red) ** 2)) / red
    return ratios, errors


def _logmeanexp(values, axis):
    """ln mean exp(values) along ``axis``, from the peak so nothing overflows; ``values`` (an
    array the caller made for it) is overwritten."""
    peak = values.max(axis=axis, keepdims=True)
    peak = np.where(np.isfinite(peak), peak, 0.0)
    values -= peak
    return np.squeeze(peak, axis=axis) + np.log(np.exp(values, out=values).mean(axis=axis))


def _one_white(ratios, squared_errors, cameras: Cameras, factor, scale: float):
    """Log-likelihood and chi^2 per member and grid point for one white-balance factor, one
    ratio at a time and :data:`MEMBERS_PER_BLOCK` members at a time; multiplying by a factor or
    scale of exactly 1 is left out, since it changes no number."""
    loglike, chi2 = np.empty(cameras.ratios.shape[:2]), np.empty(cameras.ratios.shape[:2])
    for start in range(0, loglike.shape[0], MEMBERS_PER_BLOCK):
        block = slice(start, start + MEMBERS_PER_BLOCK)
        block_chi2 = block_logs = None
        for channel in range(2):
            variance = cameras.variance[block, :, channel]
            predicted = cameras.ratios[block, :, channel]
            if factor[channel] != 1.0:
                variance = variance * factor[channel] ** 2
                predicted = predicted * factor[channel]
            variance = squared_errors[channel] + variance
            if scale != 1.0:
                variance = variance * scale**2
            term = (ratios[channel] - predicted) ** 2 / variance
            block_chi2 = term if block_chi2 is None else block_chi2 + term
            logs = np.log(variance)
            block_logs = logs if block_logs is None else block_logs + logs
        loglike[block] = -0.5 * (block_chi2 + block_logs)
        chi2[block] = block_chi2
    return loglike, chi2


def colour_log_likelihood(ratios, ratio_errors, cameras: Cameras, scale: float = 1.0):
    """Per member and grid point: the Gaussian log-likelihood of the observed ratios, averaged over
    the white-balance factors (marginalised), and chi^2 (the best over the factors)."""
    squared_errors = np.asarray(ratio_errors) ** 2
    found = [_one_white(ratios, squared_errors, cameras, factor, scale) for factor in cameras.white_balance_factors]
    if len(found) == 1:  # the mean over one factor is that factor's own value
        return found[0]
    return _logmeanexp(np.array([ll for ll, _ in found]), axis=0), np.min([c for _, c in found], axis=0)


def brightness_log_likelihood(observation: Brightness, cameras: Cameras) -> np.ndarray:
    """Per member and grid point: ln p(recorded red | T), :func:`glowtemp.estimation.brightness.log_likelihood`."""
    ideal = observation.log_scale + np.log(observation.ideal_red)
    sigma = float(np.hypot(cameras.departure_sigma, observation.log_red_sigma))
    found = np.empty(cameras.log_response.shape)
    for start in range(0, found.shape[0], MEMBERS_PER_BLOCK):
        block = slice(start, start + MEMBERS_PER_BLOCK)
        residual = observation.log_red - (ideal + cameras.log_response[block])
        found[block] = brightness_channel.log_likelihood(residual, sigma, observation.emissivity_bounds)
    return found


def _mixture(member_loglike, weights):
    """ln sum_m w_m exp(ll_m) on the grid."""
    return _logmeanexp(member_loglike + np.log(weights)[:, None], axis=0) + math.log(weights.size)


@dataclass(frozen=True)
class _Summary:
    posterior: np.ndarray
    median: float
    interval_68: tuple
    interval_95: tuple
    low_edge_mass: float
    modes: int


def _summarise(loglike) -> _Summary:
    posterior = np.exp(loglike - loglike.max())
    posterior /= posterior.sum()
    cdf = np.cumsum(posterior) - posterior / 2
    q = lambda p: float(np.interp(p, cdf, GRID_K))  # noqa: E731 - a short local helper
    low_edge = posterior[: max(1, int(GRID_K.size * 0.01))].sum()
    return _Summary(posterior, q(0.5), (q(0.16), q(0.84)), (q(0.025), q(0.975)), float(low_edge), _modes(posterior))


def _modes(posterior, floor=0.1, least_mass=0.025) -> int:
    """Number of separate modes: runs of the posterior above ``floor`` of its peak that each hold
    at least ``least_mass`` of the probability. A dip that stays above the floor joins its
    neighbours, so a broad shoulder is one answer, and two heats far apart are two."""
    above = posterior >= floor * posterior.max()
    edges = np.flatnonzero(np.diff(np.r_[0, above.astype(int), 0]))
    runs = zip(edges[::2], edges[1::2])
    return sum(1 for start, stop in runs if posterior[start:stop].sum() >= least_mass)


def _status(summary: _Summary) -> str:
    if summary.low_edge_mass > 0.005:
        return "upper-bound"
    if (summary.interval_68[1] - summary.interval_68[0]) / 2 > WIDE_HALF_WIDTH_K:
        return "wide"
    return "ok"


def _why_not_glow(ratios) -> str:
    """A whitish colour is daylight or a lamp; a coloured one (green, blue, magenta) no glow."""
    green, blue = ratios
    low, high = WHITISH_GREEN
    whitish = low <= green <= high and blue <= WHITISH_BLUE_OVER_GREEN * green
    return "daylight-or-lamp" if whitish else "not-glow-colour"


def default_red_level(mean_red: float) -> float:
    """The recorded red level of a linear red, for a file with the sRGB curve (IEC 61966-2-1)."""
    return float(srgb_encode(min(max(mean_red, 0.0), 1.0)))


def estimate_temperature(
    mean_linear,
    standard_error,
    space: RGBSpace = SRGB,
    camera: CameraTerm | Cameras | None = None,
    brightness: Brightness | None = None,
    red_level: float | None = None,
) -> TemperatureEstimate:
    """Posterior summary of the temperature of a grey body from its mean linear RGB.

    ``camera`` is a profile's :class:`CameraTerm`, prepared :class:`Cameras`, or None for the
    camera population at ``red_level`` (the recorded red, share of full code; from the sRGB curve
    when None). ``brightness`` adds the exposure channel.

    >>> from glowtemp.physics.locus import blackbody_xyz, clipped_linear_rgb
    >>> rgb = clipped_linear_rgb(blackbody_xyz(1400.0)[0])
    >>> result = estimate_temperature(rgb / rgb[0] * 0.5, [0.001, 0.001, 0.001])
    >>> lo, hi = result.interval_95_k
    >>> bool(lo < 1400 < hi), result.status, result.channels
    (True, 'ok', ('colour',))
    """
    mean_linear = np.asarray(mean_linear, dtype=float)
    if not np.all(np.isfinite(mean_linear)) or mean_linear.max() <= 0:
        return refused("no-data")
    errors = np.asarray(standard_error, dtype=float)
    if mean_linear[0] <= 0:  # green or blue light and no red at all: no ratio to red, and no glow
        return refused("not-glow", refusal="not-glow-colour")
    if np.any(mean_linear[1:] > mean_linear[0] + 3 * np.hypot(errors[0], errors[1:])):
        # green or blue clearly above red: glow below 6000 K is red-heavy (Planck's law in any of
        # these spaces), even pulled towards white by automatic white balance
        return refused("not-glow", refusal="not-glow-colour")
    cameras = _cameras_for(camera, space, mean_linear[0] if red_level is None else None, red_level)
    ratios, errors = observed_ratios(mean_linear, standard_error)
    if np.any(ratios > glow_limits(cameras, errors)):
        return refused("not-glow", refusal=_why_not_glow(ratios))
    colour_ll, chi2 = colour_log_likelihood(ratios, errors, cameras)
    chi2_min, dof = float(chi2.min()), 1
    if chi2_min / dof > REFUSE_CHI2:
        return refused("not-glow", chi2_min, math.sqrt(chi2_min / dof), _why_not_glow(ratios))
    scale = 1.0
    if math.erfc(math.sqrt(chi2_min / 2)) < POOR_FIT_P:
        scale = math.sqrt(chi2_min / dof)
        colour_ll = colour_log_likelihood(ratios, errors, cameras, scale)[0]
    colour = _summarise(_mixture(colour_ll, cameras.weights))
    if colour.median > WHITER_THAN_GLOW_K:
        return refused("not-glow", chi2_min, scale, "daylight-or-lamp")
    channels, disagree, final = ("colour",), False, colour
    if brightness is not None:
        bright_ll = brightness_log_likelihood(brightness, cameras)
        joint = _mixture(colour_ll + bright_ll, cameras.weights)
        alone = _summarise(_mixture(bright_ll, cameras.weights))
        overlap = float(np.sqrt(colour.posterior * alone.posterior).sum())
        channels = ("colour", "brightness")
        if overlap < CHANNELS_AGREE:
            disagree = True
            final = _summarise(np.log(colour.posterior + alone.posterior + 1e-300))
        else:
            final = _summarise(joint)
    status = _status(final)
    if final.modes > 1 and status == "ok":
        status = "wide"  # two heats fit (cameras of the prior disagree): a range holds both
    interval_95 = final.interval_95
    if status == "upper-bound":
        interval_95 = (float(GRID_K[0]), interval_95[1])
    return TemperatureEstimate(
        temperature_k=final.median,
        interval_68_k=final.interval_68,
        interval_95_k=interval_95,
        chi2=chi2_min,
        scale_factor=float(scale),
        status=status,
        channels=channels,
        colour_status=_status(colour),
        channels_disagree=disagree,
        modes=final.modes,
    )


def _cameras_for(camera, space, mean_red, red_level) -> Cameras:
    if isinstance(camera, Cameras):
        return camera
    if isinstance(camera, CameraTerm):
        return camera.cameras(space)
    level = default_red_level(mean_red) if red_level is None else red_level
    return population_cameras(space, level) or UNCALIBRATED.cameras(space)
