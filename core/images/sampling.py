"""Which pixels of a region carry the glow's colour, and their channel statistics.

A pixel is left out when it is *clipped* (any channel at or near the file's largest code: its
true value is unknown and its colour ratios are wrong), too *dark* to carry colour, or an
*outlier* whose green/red ratio lies far from the region's median (a reflection or a speck).
Outliers are judged robustly by the median absolute deviation (Hampel's identifier).

A large region is sampled on an even grid (every k-th pixel across and down) to about 131 000
pixels: with one independent sample per 16 pixels that still gives a statistical error far
below the camera term, and it keeps a 12-megapixel photo fast. Pixel counts refer to the
sampled grid.

Light that is not glow (daylight, shop lamps) is broad-band: it lifts every channel of the
surroundings, where glow lifts red alone. So the surroundings' weakest channel, relative to the
region's red, measures how much such light is about (it also reflects off the work).

The standard error of each channel mean allows for two things besides pixel scatter:
neighbouring pixels of a demosaiced, chroma-subsampled JPEG are not independent, and a mean of
coarsely quantised values is only as fine as one code step unless noise dithers it.

References
----------
- F. R. Hampel, "The influence curve and its role in robust estimation", J. Am. Stat. Assoc.
  69 (1974) 383-393 (median absolute deviation with the 1.4826 consistency factor).
- B. Widrow and I. Kollar, Quantization Noise, Cambridge University Press (2008), ch. 4-5
  (uniform quantisation noise of variance step^2 / 12; dither by noise larger than a step).
- ITU-T T.81 / ISO 10918-1 (JPEG) and JFIF 1.02: 4:2:0 chroma subsampling shares one chroma
  sample among 2 x 2 pixels; 8 x 8 DCT blocks.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .region import dilate, region_window

CLIP_FRACTION = 250 / 255  # a channel at or above this share of the largest code is clipped
CLIP_REACH_PX = 2  # neighbours of a clipped pixel this close are dropped with it
DARK_FLOOR_LINEAR = 0.01  # a brightest channel below this linear level is too dark to carry colour
DARK_RELATIVE = 0.15  # ... or below this share of the region's bright (99th percentile) level
OUTLIER_MADS = 6.0  # Hampel identifier cut, in robust standard deviations
PIXELS_PER_INDEPENDENT_SAMPLE = 16  # correlation area of demosaicing + 4:2:0 chroma + DCT (hedge)
DITHER_CODES = 0.5  # pixel scatter (in code steps) above which quantisation averages out
MAX_SAMPLE_PIXELS = 1 << 17  # larger regions are sampled on an even grid to about this many
BACKGROUND_STEP_PX = 256  # the background is judged on a copy reduced to about this long side


@dataclass(frozen=True)
class RegionStatistics:
    """Linear channel statistics of a region's usable pixels (all arrays are R, G, B)."""

    mean_linear: np.ndarray
    standard_error: np.ndarray
    spread_linear: np.ndarray
    mean_codes: np.ndarray
    pixels_total: int
    pixels_used: int
    pixels_clipped: int
    pixels_dark: int
    pixels_outlier: int
    background_level: float  # median of the weakest channel outside the region / region mean red

    def to_dict(self) -> dict:
        return {
            "mean_linear": [float(v) for v in self.mean_linear],
            "standard_error": [float(v) for v in self.standard_error],
            "pixels_total": self.pixels_total,
            "pixels_used": self.pixels_used,
            "pixels_clipped": self.pixels_clipped,
            "pixels_dark": self.pixels_dark,
            "pixels_outlier": self.pixels_outlier,
            "background_level": float(self.background_level),
        }


def _near_clipped(window: np.ndarray, max_code: int, reach: int) -> np.ndarray:
    """Pixels with a channel at or near full scale, and their neighbours within CLIP_REACH_PX.

    Neighbours are dropped too: demosaicing and JPEG's 8 x 8 blocks spread a blown-out pixel's
    error into the pixels around it (ITU-T T.81).
    """
    limit = CLIP_FRACTION * max_code
    near = (window[..., 0] >= limit) | (window[..., 1] >= limit) | (window[..., 2] >= limit)
    for _ in range(reach):
        near = dilate(near)
    return near


def _middle(values: np.ndarray) -> float:
    """The median (upper middle for an even count) by selection; ``np.median`` loads numpy.ma,
    which would cost a cold start more than the rest of the statistics."""
    return float(np.partition(values, len(values) // 2)[len(values) // 2])


def _robust_keep(values: np.ndarray, floor: float) -> np.ndarray:
    median = _middle(values)
    sigma = max(1.4826 * _middle(np.abs(values - median)), floor)
    return np.abs(values - median) <= OUTLIER_MADS * sigma


def _background_level(photo, region, region_red: float) -> float:
    step = max(1, int(np.ceil(max(photo.width, photo.height) / BACKGROUND_STEP_PX)))
    codes = photo.codes[::step, ::step]
    ys = np.arange(0, photo.height, step)[:, None]
    xs = np.arange(0, photo.width, step)[None, :]
    x0, y0, x1, y1 = region.bounds()
    outside = (xs < x0) | (xs >= x1) | (ys < y0) | (ys >= y1)
    if not outside.any() or region_red <= 0:
        return 0.0
    weakest = np.minimum.reduce(_channels(photo, codes[outside])[1])
    return _middle(weakest) / region_red


def _channels(photo, pixels: np.ndarray) -> tuple[list, list]:
    """(codes, linear light) of (n, 3) pixels as three contiguous arrays each, R, G, B: numpy
    works on one long array far faster than along an axis of three."""
    codes = [np.ascontiguousarray(pixels[:, channel]) for channel in range(3)]
    return codes, [photo.decode_table[channel][values] for channel, values in enumerate(codes)]


def _moments(channels: list) -> tuple[np.ndarray, np.ndarray]:
    """Mean and standard deviation (population) of each channel, in float64 summed in order from
    the first pixel on, as numpy's ``mean(axis=0)`` and ``std(axis=0)`` of the (n, 3) array do,
    so the numbers are the same to the last bit."""
    means, deviations = [], []
    values, sums = np.empty(channels[0].size), np.empty(channels[0].size)  # reused: fresh memory is slow
    for channel in channels:
        np.copyto(values, channel)
        mean = np.cumsum(values, out=sums)[-1] / values.size
        values -= mean
        values *= values
        means.append(mean)
        deviations.append(np.sqrt(np.cumsum(values, out=sums)[-1] / values.size))
    return np.array(means), np.array(deviations)


def region_statistics(photo, region) -> RegionStatistics:
    """Mask a region of ``photo`` (a :class:`glowtemp.images.decoded.Photo`) and summarise its usable pixels."""
    rows, cols, inside = region_window(region, photo.width, photo.height)
    step = int(np.ceil(np.sqrt(inside.sum() / MAX_SAMPLE_PIXELS)))  # 1 unless the region is large
    window, inside = photo.codes[rows, cols][::step, ::step], inside[::step, ::step]
    near_clipped = _near_clipped(window, photo.max_code, max(1, CLIP_REACH_PX // step))
    total = int(inside.sum())
    clipped_count = int((near_clipped & inside).sum())
    codes, linear = _channels(photo, window[inside & ~near_clipped])
    level = np.maximum(np.maximum(linear[0], linear[1]), linear[2])  # the brightest channel: red for glow, any colour for a lamp
    bright = float(np.partition(level, len(level) * 99 // 100)[len(level) * 99 // 100]) if len(level) else 0.0
    lit = level >= max(DARK_FLOOR_LINEAR, DARK_RELATIVE * bright)
    codes, linear = _where(lit, codes), _where(lit, linear)
    keep = np.ones(len(linear[0]), dtype=bool)
    if len(linear[0]) >= 8:
        step = 1.0 / photo.max_code
        reference = np.maximum(linear[0], step)  # ratios to red; a red-less light stays finite
        keep = _robust_keep(linear[1] / reference, step) & _robust_keep(linear[2] / reference, step)
    codes, linear = _where(keep, codes), _where(keep, linear)
    used = len(linear[0])
    if used:
        mean, spread = _moments(linear)
        mean_codes, code_scatter = _moments(codes)
        standard_error = _standard_error(photo, mean_codes, code_scatter, spread, used)
    else:
        mean = spread = mean_codes = standard_error = np.full(3, np.nan)
    return RegionStatistics(
        mean_linear=mean,
        standard_error=standard_error,
        spread_linear=spread,
        mean_codes=mean_codes,
        pixels_total=total,
        pixels_used=used,
        pixels_clipped=clipped_count,
        pixels_dark=int((~lit).sum()),
        pixels_outlier=int((~keep).sum()),
        background_level=_background_level(photo, region, float(mean[0]) if used else 0.0),
    )


def _where(chosen: np.ndarray, channels: list) -> list:
    """The chosen pixels of each channel (the arrays themselves when all are chosen)."""
    return channels if chosen.all() else [values[chosen] for values in channels]


def _standard_error(photo, mean_codes, code_scatter, spread, used) -> np.ndarray:
    """Standard error of each channel mean: pixel scatter over independent samples plus quantisation."""
    independent = max(1.0, used / PIXELS_PER_INDEPENDENT_SAMPLE)
    table = photo.decode_table
    at = np.clip(np.round(mean_codes).astype(int), 0, photo.max_code - 1)
    code_step = table[np.arange(3), at + 1] - table[np.arange(3), at]
    quantisation_var = code_step**2 / 12.0
    dithered = code_scatter >= DITHER_CODES
    quantisation_var = np.where(dithered, quantisation_var / independent, quantisation_var)
    return np.sqrt(spread**2 / independent + quantisation_var)
