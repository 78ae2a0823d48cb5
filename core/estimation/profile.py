"""Camera profiles: a camera's own colour-ratio map, learnt from photos paired with trusted values.

A camera records glow's green/red not as the ideal colorimetric camera would, because its
spectral sensitivities and colour matrix differ from the CIE observer. For a colour whose blue
is negligible (all glow below about 1900 K in sRGB), a small error in the colour matrix turns
the recorded green/red into an affine function of the ideal one:

    g_recorded = offset + gain * g_ideal(T)          (then clipped at zero)

where ``g_ideal`` is the unclipped green/red of a blackbody in the photo's RGB space
(:func:`glowtemp.physics.locus.locus_ratios`). A profile fits ``offset`` and ``gain`` by weighted least
squares to pairs of (recorded green/red, trusted temperature); the trusted value's uncertainty
enters through the slope of the model (the effective-variance method). The estimator then
uses the fitted map, its covariance and its scatter as the camera term
(:class:`glowtemp.estimation.estimate.CameraTerm`), so bands widen by themselves away from the pairs.

Why this model: rendered through colour-science's two NPL-measured cameras and parametric
ones, recorded green/red came out as the ideal value plus a near-constant offset (with a gain
near 1), at every temperature. Two alternatives were tried in ``bench/accuracy.py``: the
correction ``1/T_true = a + b / T_estimate`` on the uncalibrated estimate, and the ratio-
pyrometer law ``ln(G/R) = p + q / T`` (Wien approximation). Both assume a shape the offset
breaks; the affine map generalised best, inside and outside the pairs' span.

- One pair fixes the offset only; the gain is 1 with a prior spread sized on the benchmark cameras.
- Two pairs fix offset and gain; the scatter about the map is a prior value.
- Three or more pairs also measure the scatter from the residuals, pooled with the prior value
  (weight of two pairs) so that three pairs that happen to agree do not make a band too narrow
  (Gelman et al., Bayesian Data Analysis, 3rd ed., section 3.2: scaled inverse chi-square prior).

Brightness. A pair whose photo carries its exposure data also measures the camera's exposure
constant for the brightness channel (:mod:`glowtemp.estimation.brightness`): ln(recorded red / the ideal
camera's red at the trusted heat), which holds the camera's departure from ISO 12232 and the
scene's emissivity together. The profile keeps their weighted mean (each pair weighted by its
measurement and by the trusted value's uncertainty through the slope d ln(red)/dT) and its
standard error, pooled with a repeatability between photos of :data:`BRIGHTNESS_SCATTER`. For
a photo of the same kind of scene the emissivity stays inside the constant; for another kind
the pairs' mean emissivity is taken out and the photo's scene prior put in. A pair at heats
where green is lost (below about 850 °C in sRGB) has no colour part, only brightness: the
magnet test at iron's Curie point is such a pair.

References
----------
- J. Orear, "Least squares when both variables have uncertainties", Am. J. Phys. 50 (1982) 912.
- G. D. Finlayson and M. S. Drew, "Constrained least-squares regression in color spaces",
  J. Electronic Imaging 6 (1997) 484-493 (camera colour matrices as linear maps).
- JCGM 100:2008 (GUM), 4.3.7 (rectangular distribution of a tolerance) and 5.1.2 (propagation).
- IEC 60584-1:2013, type K class 2 tolerance: +/-2.5 °C or +/-0.0075 |t|.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .brightness import scene_bounds
from ..physics.colourspaces import SPACES_BY_NAME, RGBSpace
from .estimate import CameraTerm, observed_ratios
from ..physics.locus import TABLE_MIN_K, blackbody_table, locus_ratios
from .scales import celsius_to_kelvin

PROFILE_FORMAT = "glowtemp-camera-profile"
PROFILE_VERSION = 2  # 2: a brightness part, and pairs without a colour part
PRIOR_GAIN_SIGMA = 0.1  # gain spread between cameras, for one-pair profiles
PRIOR_SCATTER = 0.003  # green/red scatter about the map when too few pairs measure it
PRIOR_SCATTER_DOF = 2  # weight of that prior, in pairs, when pairs do measure it
SPAN_MARGIN_C = 25.0  # readings this far outside the pairs' span are flagged
MIN_RATIO_SIGNAL = 3.0  # a recorded green/red below this many standard errors carries no map
BRIGHTNESS_SCATTER = 0.1  # ln units: recorded level between photos of one camera (focus, framing, vignetting; a hedge)


class ProfileError(ValueError):
    """A profile that cannot be fitted, read or applied, in plain words."""


# The magnet test: plain carbon steel stops attracting a magnet at iron's Curie point, 770 °C
# (1043 K; CRC Handbook of Chemistry and Physics, "Curie temperatures"). Alloyed and high-carbon
# steels let go elsewhere (their transformation range), so it is approximate: 1-sigma 10 °C for
# plain carbon steel (from memory), and the table and screen say so.
CURIE_POINT_IRON_C = 770.0
MAGNET_SIGMA_C = 10.0


def thermocouple_sigma_c(temperature_c: float) -> float:
    """1-sigma of a type K class 2 reading: its IEC 60584-1 tolerance as a rectangular bound (GUM 4.3.7)."""
    return max(2.5, 0.0075 * abs(temperature_c)) / np.sqrt(3.0)


def ideal_green_ratio(temperature_k, space: RGBSpace):
    """Unclipped green/red of a blackbody in ``space`` and its slope d(g)/dT per kelvin."""
    grid = blackbody_table().temperature_k
    ideal = locus_ratios(space, clipped=False)[:, 0]
    value = np.interp(temperature_k, grid, ideal)
    slope = np.interp(temperature_k, grid, np.gradient(ideal, grid))
    return value, slope


def ideal_log_red(temperature_k, space: RGBSpace):
    """ln of the ideal camera's red for a blackbody (absolute XYZ of :mod:`glowtemp.physics.locus` in
    ``space``) and its slope d/dT per kelvin, for the brightness channel."""
    table = blackbody_table()
    log_red = np.log(np.clip(table.xyz @ space.xyz_to_rgb[0], 1e-300, None))
    value = np.interp(temperature_k, table.temperature_k, log_red)
    slope = np.interp(temperature_k, table.temperature_k, np.gradient(log_red, table.temperature_k))
    return value, slope


def brightness_residual(mean_red: float, red_error: float, exposure, reference_c: float, space: RGBSpace):
    """A pair's ln(recorded red / ideal red at the trusted heat), its sigma and slope per kelvin."""
    value, slope = ideal_log_red(celsius_to_kelvin(reference_c), space)
    return float(np.log(mean_red) - exposure.log_scale - value), float(red_error / mean_red), float(slope)


@dataclass(frozen=True)
class Pair:
    """One calibration pair: the photo's recorded green/red (None where green is lost), its
    brightness residual ln(recorded red / ideal red at the trusted heat) with that residual's
    slope d/dT (None without exposure data), and the trusted temperature."""

    photo: str
    green_ratio: float | None
    green_ratio_sigma: float | None
    reference_c: float
    reference_sigma_c: float
    reference_kind: str = "thermocouple"  # or "cone" or "magnet"
    cone: str | None = None
    region: str | None = None
    log_brightness: float | None = None
    log_brightness_sigma: float | None = None
    brightness_slope_per_k: float | None = None
    scene: str = "other"

    def to_dict(self) -> dict:
        return dict(self.__dict__)


@dataclass(frozen=True)
class RatioMap:
    """The fitted map g_recorded = offset + gain * g_ideal, with covariance of (offset, gain)."""

    offset: float
    gain: float
    covariance: np.ndarray
    scatter: float
    scatter_measured: bool

    def camera_term(self, fitted_span: tuple) -> CameraTerm:
        """The estimator's camera term; beyond ``fitted_span`` (ideal green/red at the ends of
        the pairs) the map's straightness is unverified, so its spread grows with the distance
        at the cameras' gain spread."""
        return CameraTerm(
            ratio_sigma=0.0,
            green_floor=self.scatter,
            green_gain=self.gain,
            green_offset=self.offset,
            offset_gain_covariance=tuple(map(tuple, self.covariance)),
            fitted_span=fitted_span,
            extrapolation_sigma=PRIOR_GAIN_SIGMA,
        )


@dataclass(frozen=True)
class BrightnessFit:
    """The camera's exposure constant (ln units) fitted from pairs, its spread and their scene."""

    log_constant: float
    sigma: float
    scene: str
    pairs: int

    def for_scene(self, scene: str):
        """(log response, its sigma, emissivity bounds or None for the scene's own) for a photo."""
        if scene == self.scene:
            return self.log_constant, self.sigma, (1.0, 1.0)
        low, high = scene_bounds(self.scene)
        middle, half = (np.log(low) + np.log(high)) / 2, (np.log(high) - np.log(low)) / 2
        return self.log_constant - middle, float(np.hypot(self.sigma, half / np.sqrt(3.0))), None

    def to_dict(self) -> dict:
        return dict(self.__dict__)


def fit_brightness(pairs: list[Pair]) -> BrightnessFit | None:
    """Weighted mean of the pairs' brightness residuals (None when no pair has one).

    Pairs of several scene kinds are brought to emissivity 1 first (each kind's mean ln
    emissivity taken out), and the fit is then kept for "other".
    """
    usable = [p for p in pairs if p.log_brightness is not None]
    if not usable:
        return None
    scenes = {p.scene for p in usable}
    scene = scenes.pop() if len(scenes) == 1 else "other"
    y = np.array([p.log_brightness for p in usable])
    if scene == "other" and any(p.scene != "other" for p in usable):
        y = y - np.array([np.mean(np.log(scene_bounds(p.scene))) for p in usable])
    variance = np.array([p.log_brightness_sigma**2 + (p.brightness_slope_per_k * p.reference_sigma_c) ** 2
                         for p in usable]) + BRIGHTNESS_SCATTER**2
    weights = 1.0 / variance
    return BrightnessFit(float((weights * y).sum() / weights.sum()), float(np.sqrt(1.0 / weights.sum())),
                         scene, len(usable))


def pair_green_ratio(mean_linear, standard_error) -> tuple[float, float]:
    """Recorded green/red of a region and its standard error; raises when green carries no signal."""
    ratios, errors = observed_ratios(mean_linear, standard_error)
    if not np.isfinite(ratios[0]) or ratios[0] <= MIN_RATIO_SIGNAL * errors[0]:
        raise ProfileError(
            "the photo's green channel is too weak to carry the colour ratio (glow too dim, "
            "too cool for this colour setting, or exposure too low)"
        )
    return float(ratios[0]), float(errors[0])


def fit_ratio_map(pairs: list[Pair], space: RGBSpace) -> RatioMap | None:
    """Weighted least squares of g_recorded on g_ideal(T_trusted), Orear's effective variance,
    over the pairs with a colour part (None when none has one)."""
    pairs = [p for p in pairs if p.green_ratio is not None]
    if not pairs:
        return None
    y = np.array([pair.green_ratio for pair in pairs])
    sigma_y = np.array([pair.green_ratio_sigma for pair in pairs])
    t = celsius_to_kelvin(np.array([pair.reference_c for pair in pairs]))
    sigma_t = np.array([pair.reference_sigma_c for pair in pairs])
    x, slope = ideal_green_ratio(t, space)
    if len(pairs) == 1:
        variance = sigma_y[0] ** 2 + (slope[0] * sigma_t[0]) ** 2 + PRIOR_SCATTER**2
        var_gain = PRIOR_GAIN_SIGMA**2
        covariance = np.array(
            [[variance + x[0] ** 2 * var_gain, -x[0] * var_gain], [-x[0] * var_gain, var_gain]]
        )
        return RatioMap(float(y[0] - x[0]), 1.0, covariance, PRIOR_SCATTER, False)
    gain = 1.0
    design = np.column_stack([np.ones_like(x), x])
    for _ in range(3):  # the effective variance depends on the gain: iterate
        weights = 1.0 / (sigma_y**2 + (gain * slope * sigma_t) ** 2)
        covariance = np.linalg.inv(design.T @ (design * weights[:, None]))
        offset, gain = covariance @ (design.T @ (weights * y))
    if len(pairs) == 2:
        return RatioMap(float(offset), float(gain), covariance, PRIOR_SCATTER, False)
    residual = y - (offset + gain * x)
    dof = len(pairs) - 2
    measured_sq = max(float((residual**2).sum()) / dof - float(np.mean(1.0 / weights)), 0.0)
    # A scatter measured on few degrees of freedom is itself uncertain: pool it with the prior
    # as a scaled inverse chi-square prior of PRIOR_SCATTER_DOF pseudo-observations would.
    pooled = (dof * measured_sq + PRIOR_SCATTER_DOF * PRIOR_SCATTER**2) / (dof + PRIOR_SCATTER_DOF)
    scatter = float(np.sqrt(pooled))
    chi2_dof = float((residual**2 * weights).sum()) / (len(pairs) - 2)
    return RatioMap(float(offset), float(gain), covariance * max(chi2_dof, 1.0), scatter, True)


@dataclass
class CameraProfile:
    """A named camera profile: the map, the pairs it came from, and the camera it belongs to."""

    name: str
    ratio_map: RatioMap | None
    pairs: list[Pair]
    colour_space: str
    camera: dict = field(default_factory=dict)  # make, model, white_balance, iso, exposure_time_s
    created: str = ""
    brightness: BrightnessFit | None = None

    @property
    def span_c(self) -> tuple[float, float]:
        refs = [pair.reference_c for pair in self.pairs]
        return (min(refs), max(refs))

    @property
    def space(self) -> RGBSpace:
        if self.colour_space in SPACES_BY_NAME:
            return SPACES_BY_NAME[self.colour_space]
        raise ProfileError(f"The profile's colour space {self.colour_space!r} is not one glowtemp knows.")

    def camera_term(self) -> CameraTerm | None:
        """The fitted colour map as a camera term (None when no pair had a colour part)."""
        if self.ratio_map is None:
            return None
        refs = [pair.reference_c for pair in self.pairs if pair.green_ratio is not None]
        ends_k = celsius_to_kelvin(np.array([min(refs), max(refs)]))
        low, high = ideal_green_ratio(ends_k, self.space)[0]
        return self.ratio_map.camera_term((float(low), float(high)))

    def inside_span(self, temperature_c: float) -> bool:
        low, high = self.span_c
        return low - SPAN_MARGIN_C <= temperature_c <= high + SPAN_MARGIN_C

    def residuals_c(self) -> list[float]:
        """Each pair's mapped-minus-trusted temperature, in °C (the map inverted on the table grid)."""
        grid = blackbody_table().temperature_k
        ideal = locus_ratios(self.space, clipped=False)[:, 0]
        rising = grid[ideal > ideal.min()]
        out = []
        for pair in self.pairs:
            if pair.green_ratio is None or self.ratio_map is None:
                continue
            target = (pair.green_ratio - self.ratio_map.offset) / self.ratio_map.gain
            mapped = np.interp(target, ideal[grid >= rising[0]], grid[grid >= rising[0]])
            out.append(float(mapped - celsius_to_kelvin(pair.reference_c)))
        return out

    def to_dict(self) -> dict:
        return {
            "format": PROFILE_FORMAT,
            "version": PROFILE_VERSION,
            "name": self.name,
            "created": self.created,
            "model": "green/red = offset + gain * ideal green/red",
            "colour_space": self.colour_space,
            "camera": self.camera,
            "parameters": None if self.ratio_map is None else {"offset": self.ratio_map.offset, "gain": self.ratio_map.gain},
            "covariance": None if self.ratio_map is None else self.ratio_map.covariance.tolist(),
            "scatter": None if self.ratio_map is None else self.ratio_map.scatter,
            "scatter_measured": None if self.ratio_map is None else self.ratio_map.scatter_measured,
            "brightness": None if self.brightness is None else self.brightness.to_dict(),
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
            ratio_map = None
            if record["parameters"] is not None:
                ratio_map = RatioMap(
                    offset=float(record["parameters"]["offset"]),
                    gain=float(record["parameters"]["gain"]),
                    covariance=np.array(record["covariance"], dtype=float).reshape(2, 2),
                    scatter=float(record["scatter"]),
                    scatter_measured=bool(record["scatter_measured"]),
                )
            brightness = record.get("brightness")
            pairs = [Pair(**pair) for pair in record["pairs"]]
            profile = cls(
                name=str(record["name"]),
                ratio_map=ratio_map,
                pairs=pairs,
                colour_space=str(record["colour_space"]),
                camera=dict(record.get("camera") or {}),
                created=str(record.get("created", "")),
                brightness=None if brightness is None else BrightnessFit(
                    float(brightness["log_constant"]), float(brightness["sigma"]),
                    str(brightness["scene"]), int(brightness["pairs"])),
            )
        except (KeyError, TypeError, ValueError) as error:
            raise ProfileError(f"This camera profile is damaged ({error}).") from None
        if not pairs:
            raise ProfileError("This camera profile is damaged (it holds no pairs).")
        return profile


def fit_profile(name: str, pairs: list[Pair], space: RGBSpace, camera: dict, created: str) -> CameraProfile:
    """Fit a profile from pairs (all from one camera, one colour space): the colour map from the
    pairs with a colour part, the exposure constant from those with exposure data."""
    if not pairs:
        raise ProfileError("A profile needs at least one photo paired with a trusted reading.")
    ratio_map, brightness = fit_ratio_map(pairs, space), fit_brightness(pairs)
    if ratio_map is None and brightness is None:
        raise ProfileError(
            "No pair carries usable colour or brightness: green is lost at these heats and the "
            "photos have no exposure data. Add pairs from hotter glow, or photos straight from the camera."
        )
    return CameraProfile(name, ratio_map, list(pairs), space.name, dict(camera), created, brightness)


assert TABLE_MIN_K < 800  # the map is fitted on the table; glow starts near 800 K
