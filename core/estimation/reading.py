"""One reading: photo -> region -> pixel statistics -> estimate -> what the user is shown.

This is the single entry point that the command line, the web app and the firing log call;
none of them computes physics of its own.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np

from . import advice
from .brightness import DEFAULT_SCENE, DEPARTURE_SIGMA, exposure_from, scene_bounds
from ..physics.colourspaces import SRGB, srgb_swatch_hex
from .estimate import (
    UNCALIBRATED,
    Cameras,
    CameraTerm,
    TemperatureEstimate,
    brightness_observation,
    estimate_temperature,
    population_cameras,
    auto_white_balance_factors,
    refused,
    uncalibrated_term,
)
from ..physics.locus import blackbody_swatch_hex
from .population import Population
from ..images.raw import RAW_SPACE
from ..images.region import find_glow
from ..images.sampling import RegionStatistics, region_statistics
from .scales import (
    celsius_to_fahrenheit,
    heat_colour_name,
    kelvin_to_celsius,
    round_to,
    rounding_step,
)

MOSTLY_CLIPPED = 0.5  # with more of the region blown out, the rest is the rim: no estimate

INSTRUMENT_NOTICE = (
    "An estimate from a photo's colour and brightness, not a calibrated instrument: check it "
    "against a thermocouple or witness cones before relying on it."
)


@dataclass(frozen=True)
class Reading:
    """Everything one measurement found, in kelvin internally and °C / °F for people."""

    photo_name: str
    region: object
    region_found: bool
    statistics: RegionStatistics
    estimate: TemperatureEstimate
    warnings: tuple
    colour_space: str
    space_source: str
    metadata: dict
    profile: str | None = None
    region_colour_hex: str | None = None
    scene: str = DEFAULT_SCENE
    emissivity_fitted: bool = False  # a profile made on this kind of scene holds the emissivity itself
    extra: dict = field(default_factory=dict)

    def _shown(self, from_kelvin):
        """Central value, 68 % and 95 % intervals, ceiling and step in one unit, each rounded to
        a step the 68 % band supports in that unit (bands outwards, so they never shrink)."""
        e = self.estimate
        if e.status == "upper-bound":
            return None, None, None, round_to(from_kelvin(e.interval_95_k[1]), 10), 10
        if not e.usable:
            return None, None, None, None, None
        low68, high68 = (from_kelvin(t) for t in e.interval_68_k)
        step = rounding_step((high68 - low68) / 2)
        down = lambda t: int(np.floor(from_kelvin(t) / step) * step)  # noqa: E731
        up = lambda t: int(np.ceil(from_kelvin(t) / step) * step)  # noqa: E731
        band95 = [down(e.interval_95_k[0]), up(e.interval_95_k[1])]
        if e.status == "wide":  # a range only: one central number would look surer than it is
            return None, None, band95, None, step
        central = round_to(from_kelvin(e.temperature_k), step)
        return central, [down(e.interval_68_k[0]), up(e.interval_68_k[1])], band95, None, step

    def to_dict(self) -> dict:
        """The JSON form shared by ``glowtemp measure --json``, the web API and the firing log."""
        central, band68, band95, ceiling, step = self._shown(kelvin_to_celsius)
        central_f, band68_f, band95_f, ceiling_f, step_f = self._shown(
            lambda t: celsius_to_fahrenheit(kelvin_to_celsius(t))
        )
        central_k, *_ = self._shown(lambda t: t)
        return {
            "photo": self.photo_name,
            "status": self.estimate.status,
            "temperature_c": central,
            "interval_68_c": band68,
            "interval_95_c": band95,
            "upper_bound_c": ceiling,
            "resolution_c": step,
            "temperature_f": central_f,
            "interval_68_f": band68_f,
            "interval_95_f": band95_f,
            "upper_bound_f": ceiling_f,
            "resolution_f": step_f,
            "temperature_k": central_k,
            "glow_name": None if central is None else heat_colour_name(central),
            "estimate_colour_hex": None
            if central is None
            else blackbody_swatch_hex(self.estimate.temperature_k),
            "region_colour_hex": self.region_colour_hex,
            "warnings": [w.to_dict() for w in self.warnings],
            "pixels_used": self.statistics.pixels_used,
            "pixels_clipped": self.statistics.pixels_clipped,
            "pixels_dark": self.statistics.pixels_dark,
            "pixels_outlier": self.statistics.pixels_outlier,
            "pixels_total": self.statistics.pixels_total,
            "region": {**self.region.to_dict(), "text": self.region.to_text(), "found": self.region_found},
            "colour_space": self.colour_space,
            "colour_space_source": self.space_source,
            "camera": self.metadata,
            "profile": self.profile,
            "scene": self.scene,
            "emissivity": None if self.emissivity_fitted else list(scene_bounds(self.scene)),
            "channels": list(self.estimate.channels),
            "channels_text": channels_text(self.estimate),
            "notice": INSTRUMENT_NOTICE,
            **self.extra,
        }


def channels_text(estimate: TemperatureEstimate) -> str | None:
    """Which channels set the band, in words."""
    if not estimate.usable:
        return None
    if estimate.channels_disagree:
        return "from colour or brightness: they disagree, so the range holds both"
    if estimate.channels == ("colour", "brightness"):
        if estimate.colour_status == "upper-bound" and estimate.status != "upper-bound":
            return "from brightness: the colour only shows a ceiling at this heat"
        return "from colour and brightness"
    return "from colour alone"


def band_columns(result: dict) -> dict:
    """A reading's °C estimate and bands as flat columns (for CSV files and database rows)."""
    band68 = result.get("interval_68_c") or (None, None)
    band95 = result.get("interval_95_c") or (None, None)
    return {
        "temperature_c": result.get("temperature_c"),
        "band68_low_c": band68[0],
        "band68_high_c": band68[1],
        "band95_low_c": band95[0],
        "band95_high_c": band95[1],
        "upper_bound_c": result.get("upper_bound_c"),
    }


def region_colour_hex(mean_linear, space) -> str | None:
    """The region's mean colour as an sRGB display swatch (IEC 61966-2-1), brightest channel full."""
    if not np.all(np.isfinite(mean_linear)):
        return None
    return srgb_swatch_hex(SRGB.xyz_to_rgb @ (space.rgb_to_xyz @ np.asarray(mean_linear)))


def _advice_for(photo, stats: RegionStatistics, estimate: TemperatureEstimate, colour_only_reason) -> list:
    found = []
    if photo.profile_problem:
        found.append(advice.colour_profile_problem(photo.profile_problem))
    if photo.matrix_illuminant_unstated:
        found.append(advice.raw_calibration_unstated())
    if photo.missing_data:
        found.append(advice.incomplete_image())
    if photo.metadata.white_balance == "auto":
        found.append(advice.auto_white_balance())
    if stats.pixels_total and stats.pixels_clipped / stats.pixels_total > advice.CLIPPED_SHARE_WARN:
        found.append(advice.clipped_pixels(stats.pixels_clipped / stats.pixels_total))
    if stats.pixels_used == 0:
        found.append(advice.no_usable_pixels())
        return found
    if stats.pixels_dark > stats.pixels_total / 2:
        found.append(advice.too_dark())
    if stats.pixels_used < advice.FEW_PIXELS:
        found.append(advice.few_pixels(stats.pixels_used))
    if stats.background_level > advice.BACKGROUND_LEVEL_WARN:
        found.append(advice.ambient_light())
    if estimate.refusal == "daylight-or-lamp":
        found.append(advice.daylight_or_lamp())
    elif estimate.status == "not-glow" or estimate.scale_factor > 1.0:
        found.append(advice.not_glow_colour())
    if estimate.usable and estimate.modes > 1 and not estimate.channels_disagree:
        found.append(advice.ambiguous())
    if estimate.status == "upper-bound":
        ceiling_c = round_to(kelvin_to_celsius(estimate.interval_95_k[1]), 10)
        found.append(advice.colour_floor(photo.space.name, ceiling_c))
    elif estimate.status == "wide":
        found.append(advice.wide_range())
    elif estimate.usable and kelvin_to_celsius(estimate.temperature_k) < advice.BELOW_GLOW_C:
        found.append(advice.below_glow())
    if estimate.usable and colour_only_reason:
        found.append(advice.colour_only(colour_only_reason))
    if estimate.channels_disagree:
        found.append(advice.channels_disagree())
    return found


def find_region(photo):
    """The glow finder on a photo (:func:`glowtemp.images.region.find_glow`): raw data are found in
    linear light through the decoding table (codes sit on a pedestal), square-rooted."""
    return find_glow(photo.codes, linear_table=photo.decode_table if photo.space is RAW_SPACE else None)


def _with_profile(profile, photo, cameras: Cameras, scene: str):
    """The cameras a profile gives for this photo, the profile if applied, its advice, and the
    emissivity bounds the brightness channel uses (None: the scene's own).

    The colour map replaces the population; the exposure constant replaces the members'
    brightness response. A photo from another camera model or white-balance setting gets the
    profile with the uncalibrated spreads added, since it may not carry over.
    """
    if profile.colour_space != photo.space.name:
        return cameras, None, [advice.profile_space_mismatch(profile.colour_space, photo.space.name)], None
    made_with = (profile.camera.get("camera_model"), profile.camera.get("white_balance"))
    taken_with = (photo.metadata.camera_model, photo.metadata.white_balance)
    mismatch = made_with != taken_with
    term = profile.camera_term()
    if term is not None:
        if mismatch:
            loose = uncalibrated_term(photo)
            term = replace(term, green_floor=float(np.hypot(term.green_floor, loose.green_floor)),
                           ratio_sigma=loose.ratio_sigma)
        cameras = term.cameras(photo.space)
    bounds = None
    if profile.brightness is not None:
        log_response, sigma, bounds = profile.brightness.for_scene(scene)
        if mismatch:
            sigma = float(np.hypot(sigma, DEPARTURE_SIGMA))
        cameras = replace(cameras, log_response=np.full_like(cameras.log_response, log_response),
                          departure_sigma=sigma)
    notes = [advice.profile_camera_mismatch(made_with, taken_with)] if mismatch else []
    return cameras, profile, notes, bounds


def recorded_red_level(photo, mean_red: float) -> float:
    """The recorded (encoded) red level of a linear red, share of full code, by the photo's own
    decoding table inverted."""
    codes = np.arange(photo.max_code + 1, dtype=float)
    return float(np.interp(mean_red, photo.decode_table[0], codes) / photo.max_code)


def _brightness(photo, stats: RegionStatistics, scene: str, bounds=None):
    """The brightness observation, or (None, why colour alone) when the photo cannot give one.
    ``bounds`` replaces the scene's emissivity bounds (a profile that measured them)."""
    exposure, reason = exposure_from(photo.metadata, raw=photo.space is RAW_SPACE)
    if exposure is None:
        return None, reason
    if photo.metadata.white_balance == "auto":
        return None, "the white balance was automatic, which moves the red level by an unknown amount"
    red = float(stats.mean_linear[0]) * photo.linear_scale
    red_error = float(stats.standard_error[0]) * photo.linear_scale
    if not (np.isfinite(red) and red > 0):
        return None, "the region has no usable red"
    observation = brightness_observation(red, red_error, exposure, scene, photo.space)
    return (observation if bounds is None else replace(observation, emissivity_bounds=bounds)), None


def measure(
    photo,
    region=None,
    camera: CameraTerm | None = None,
    photo_name: str = "photo",
    profile=None,
    scene: str = DEFAULT_SCENE,
    prior: Population | None = None,
) -> Reading:
    """Measure one decoded photo (:class:`glowtemp.images.decoded.Photo`) in ``region`` (found when None).

    Without ``camera`` the camera population is the prior (at the photo's recorded red level).
    With a :class:`glowtemp.estimation.profile.CameraProfile` the camera's own fitted map replaces it
    (unless the profile was made in another colour space). ``scene`` ("kiln", "steel" or
    "other", :data:`glowtemp.estimation.brightness.SCENES`) sets the emissivity prior of the brightness
    channel, which joins colour when the photo carries its exposure data. ``prior`` replaces the
    shipped camera population (validation leaves makers out with it).
    """
    scene_bounds(scene)  # an unknown scene is refused before any work
    region_found = region is None
    if region_found:
        region = find_region(photo)
    stats = region_statistics(photo, region)
    auto = photo.metadata.white_balance == "auto"
    population = None
    if camera is None:
        level = recorded_red_level(photo, float(stats.mean_linear[0])) if np.isfinite(stats.mean_linear[0]) else 0.5
        population = population_cameras(photo.space, level, prior, auto_white_balance=auto)
    cameras = population or (camera or UNCALIBRATED).cameras(photo.space)
    notes, applied, bounds = [], None, None
    if profile is not None:
        cameras, applied, notes, bounds = _with_profile(profile, photo, cameras, scene)
    if auto and cameras.weights.size == 1:  # one camera (a profile): auto white balance as unknown factors
        cameras = replace(cameras, white_balance_factors=auto_white_balance_factors(photo.space))
    bright, colour_only_reason = _brightness(photo, stats, scene, bounds)
    if stats.pixels_clipped > MOSTLY_CLIPPED * stats.pixels_total:
        estimate = refused("clipped")
    else:
        estimate = estimate_temperature(stats.mean_linear, stats.standard_error, photo.space, cameras, bright)
    if applied is not None and estimate.temperature_k is not None:
        if not applied.inside_span(kelvin_to_celsius(estimate.temperature_k)):
            notes.append(advice.outside_profile_span(applied.span_c))
    return Reading(
        photo_name=photo_name,
        region=region,
        region_found=region_found,
        statistics=stats,
        estimate=estimate,
        warnings=tuple(_advice_for(photo, stats, estimate, colour_only_reason) + notes),
        colour_space=photo.space.name,
        space_source=photo.space_source,
        metadata=photo.metadata.to_dict(),
        profile=applied.name if applied is not None else None,
        region_colour_hex=region_colour_hex(stats.mean_linear, photo.space),
        scene=scene,
        emissivity_fitted=bounds is not None and bright is not None,
    )
