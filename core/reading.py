"""One reading: photo -> region -> pixel statistics -> estimate -> what the user is shown.

This is the single entry point that the command line, the web app and the firing log call;
none of them computes physics of its own.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np

from . import advice
from .colourspaces import SRGB, srgb_swatch_hex
from .estimate import (
    CameraTerm,
    TemperatureEstimate,
    estimate_temperature,
    with_auto_white_balance,
)
from .locus import TABLE_MAX_K, blackbody_swatch_hex
from .raw import RAW_SPACE, uncalibrated_term
from .region import find_glow
from .sampling import RegionStatistics, region_statistics
from .scales import (
    celsius_to_fahrenheit,
    heat_colour_name,
    kelvin_to_celsius,
    round_to,
    rounding_step,
)

MOSTLY_CLIPPED = 0.5  # with more of the region blown out, the rest is the rim: no estimate

INSTRUMENT_NOTICE = (
    "An estimate from colour, not a calibrated instrument: check it against a thermocouple or "
    "witness cones before relying on it."
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
            "notice": INSTRUMENT_NOTICE,
            **self.extra,
        }


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


def _advice_for(photo, stats: RegionStatistics, estimate: TemperatureEstimate) -> list:
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
    if estimate.status == "not-glow" or estimate.scale_factor > 1.0:
        found.append(advice.not_glow_colour())
    if estimate.status == "ambiguous":
        found.append(advice.ambiguous())
    if estimate.status == "upper-bound":
        ceiling_c = round_to(kelvin_to_celsius(estimate.interval_95_k[1]), 10)
        found.append(advice.colour_floor(photo.space.name, ceiling_c))
    elif estimate.status == "wide":
        found.append(advice.wide_range())
    elif estimate.usable and kelvin_to_celsius(estimate.temperature_k) < advice.BELOW_GLOW_C:
        found.append(advice.below_glow())
    if estimate.at_table_top:
        found.append(advice.above_range(kelvin_to_celsius(TABLE_MAX_K)))
    return found


def finder_red(photo) -> np.ndarray:
    """The red channel as the glow finder sees it: the file's codes, or for linear raw data
    their square root (a rough display encoding), so a bright core does not hide the rest."""
    red = photo.codes[:, :, 0]
    if photo.space is not RAW_SPACE:
        return red
    return np.sqrt(np.clip(photo.decode_table[0][red], 0.0, None)) * np.float32(255)


def _profile_camera(profile, photo):
    """The camera term a profile gives for this photo (None if it does not apply) and its advice.

    A photo from another camera model or white-balance setting gets the profile's map with the
    uncalibrated camera spread added, since the map may not carry over.
    """
    if profile.colour_space != photo.space.name:
        return None, [advice.profile_space_mismatch(profile.colour_space, photo.space.name)]
    camera = profile.camera_term()
    made_with = (profile.camera.get("camera_model"), profile.camera.get("white_balance"))
    taken_with = (photo.metadata.camera_model, photo.metadata.white_balance)
    if made_with == taken_with:
        return camera, []
    loose = uncalibrated_term(photo)
    widened = replace(
        camera,
        green_floor=float(np.hypot(camera.green_floor, loose.green_floor)),
        ratio_sigma=loose.ratio_sigma,
    )
    return widened, [advice.profile_camera_mismatch(made_with, taken_with)]


def measure(
    photo,
    region=None,
    camera: CameraTerm | None = None,
    photo_name: str = "photo",
    profile=None,
) -> Reading:
    """Measure one decoded photo (:class:`glowtemp.photo.Photo`) in ``region`` (found when None).

    Without ``camera`` the uncalibrated camera term for the photo's kind is used (raw photos
    have their own). With a :class:`glowtemp.profile.CameraProfile` the camera's own ratio map
    replaces it (unless the profile was made in another colour space).
    """
    if camera is None:
        camera = uncalibrated_term(photo)
    region_found = region is None
    if region_found:
        region = find_glow(finder_red(photo))
    stats = region_statistics(photo, region)
    notes, applied = [], None
    if profile is not None:
        profiled, notes = _profile_camera(profile, photo)
        if profiled is not None:
            camera, applied = profiled, profile
    if photo.metadata.white_balance == "auto":
        camera = with_auto_white_balance(camera)
    if stats.pixels_clipped > MOSTLY_CLIPPED * stats.pixels_total:
        estimate = TemperatureEstimate(None, None, None, np.inf, np.inf, "clipped")
    else:
        estimate = estimate_temperature(stats.mean_linear, stats.standard_error, photo.space, camera)
    if applied is not None and estimate.temperature_k is not None:
        if not applied.inside_span(kelvin_to_celsius(estimate.temperature_k)):
            notes.append(advice.outside_profile_span(applied.span_c))
    return Reading(
        photo_name=photo_name,
        region=region,
        region_found=region_found,
        statistics=stats,
        estimate=estimate,
        warnings=tuple(_advice_for(photo, stats, estimate) + notes),
        colour_space=photo.space.name,
        space_source=photo.space_source,
        metadata=photo.metadata.to_dict(),
        profile=applied.name if applied is not None else None,
        region_colour_hex=region_colour_hex(stats.mean_linear, photo.space),
    )
