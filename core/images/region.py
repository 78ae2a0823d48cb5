"""Where the glow is: user regions (rectangle or circle), their pixel masks, and a glow finder.

Coordinates are pixels of the upright photo (after EXIF orientation), origin at the top left,
x to the right, y down, as the photo is shown on screen.

The automatic finder smooths a reduced copy of the photo's red channel (3 x 3 mean), thresholds
it with Otsu's method, keeps the connected bright area that holds the brightest glow, and
returns a circle for a round area (a spy hole) or a rectangle otherwise (a bar end), shrunk
slightly so the cooler rim is left out. When glow fills the frame it takes the middle half.

References
----------
- N. Otsu, "A threshold selection method from gray-level histograms", IEEE Trans. Syst. Man
  Cybern. 9 (1979) 62-66.
- R. C. Gonzalez and R. E. Woods, Digital Image Processing, 4th ed. (2018), section 9.5
  (morphological reconstruction, used here to grow the connected bright area from a seed).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

FINDER_SIZE_PX = 256  # long side of the reduced copy the finder works on
RIM_SHRINK = 0.8  # keep the inner 80 % of the found area's size
FILLED_FRAME = 0.5  # when even the dimmest 5 % is this bright (of the peak), glow fills the frame
MIN_GLOW_PX = 64  # a found area smaller than this is a speck, not the glow
DIM_FRACTION = 0.2  # a photo whose brightest red stays below this share of full scale shows no glow
LARGEST_COORDINATE_PX = 1_000_000  # far beyond any photo's side; keeps pixel arithmetic in int64
# A number written with the ASCII digits 0-9 only: Python's float() also reads other scripts'
# digits ("١٠") and underscores ("1_0"), which no region text needs.
ASCII_NUMBER = re.compile(r"[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?|[+-]?(nan|inf|infinity)", re.ASCII | re.IGNORECASE)


class RegionError(ValueError):
    """A region that cannot be used, with the reason in plain words."""


@dataclass(frozen=True)
class Rectangle:
    x: int
    y: int
    width: int
    height: int

    kind = "rectangle"

    def bounds(self):
        return self.x, self.y, self.x + self.width, self.y + self.height

    def inside(self, xs, ys):
        return np.ones(np.broadcast(xs, ys).shape, dtype=bool)

    def to_text(self) -> str:
        return f"{self.x},{self.y},{self.width},{self.height}"

    def to_dict(self) -> dict:
        return {"kind": self.kind, "x": self.x, "y": self.y, "width": self.width, "height": self.height}


@dataclass(frozen=True)
class Circle:
    cx: int
    cy: int
    radius: int

    kind = "circle"

    def bounds(self):
        return self.cx - self.radius, self.cy - self.radius, self.cx + self.radius + 1, self.cy + self.radius + 1

    def inside(self, xs, ys):
        # written as a comparison of the two broadcast parts, so a row and a column of whole
        # pixel numbers give the mask without a window-sized array of squared distances
        return (ys - self.cy) ** 2 <= self.radius**2 - (xs - self.cx) ** 2

    def to_text(self) -> str:
        return f"circle:{self.cx},{self.cy},{self.radius}"

    def to_dict(self) -> dict:
        return {"kind": self.kind, "cx": self.cx, "cy": self.cy, "radius": self.radius}


def _integers(text: str, count: int, form: str) -> list[int]:
    parts = [p.strip() for p in str(text).split(",")]
    if len(parts) != count:
        raise RegionError(f"A region needs {count} whole numbers as {form}; got {text!r}.")
    try:
        if not all(ASCII_NUMBER.fullmatch(p) for p in parts):
            raise ValueError("not written with the digits 0-9")
        values = [float(p) for p in parts]
    except ValueError:
        raise RegionError(f"A region needs whole numbers as {form}; got {text!r}.") from None
    if not all(np.isfinite(v) and v == int(v) for v in values):
        raise RegionError(f"A region needs whole pixel numbers as {form}; got {text!r}.")
    if any(abs(v) > LARGEST_COORDINATE_PX for v in values):
        raise RegionError(f"A region's numbers lie within ±{LARGEST_COORDINATE_PX} pixels; got {text!r}.")
    return [int(v) for v in values]


def parse_rectangle(text: str) -> Rectangle:
    """Parse ``X,Y,W,H`` (pixels) into a :class:`Rectangle`.

    >>> parse_rectangle("10, 20, 30, 40")
    Rectangle(x=10, y=20, width=30, height=40)
    """
    x, y, width, height = _integers(text, 4, "X,Y,W,H")
    if width <= 0 or height <= 0:
        raise RegionError(f"A rectangle needs a positive width and height; got {text!r}.")
    if x < 0 or y < 0:
        raise RegionError(f"A rectangle's corner must not be left of or above the photo; got {text!r}.")
    return Rectangle(x, y, width, height)


def parse_circle(text: str) -> Circle:
    """Parse ``CX,CY,R`` (pixels) into a :class:`Circle`.

    >>> parse_circle("50,40,12")
    Circle(cx=50, cy=40, radius=12)
    """
    cx, cy, radius = _integers(text, 3, "CX,CY,R")
    if radius <= 0:
        raise RegionError(f"A circle needs a positive radius; got {text!r}.")
    return Circle(cx, cy, radius)


def parse_region(text: str):
    """Parse a region as ``X,Y,W,H`` or ``circle:CX,CY,R`` (the form stored in CSV files and logs)."""
    text = str(text).strip()
    if text.lower().startswith("circle:"):
        return parse_circle(text[len("circle:"):])
    return parse_rectangle(text)


def region_window(region, width: int, height: int):
    """The part of ``region`` inside a ``width`` x ``height`` photo: (slice_y, slice_x, mask).

    ``mask`` covers the window only, so large photos never need a full-size mask.
    Raises :class:`RegionError` when the region misses the photo or holds too few pixels.
    """
    x0, y0, x1, y1 = region.bounds()
    cx0, cy0, cx1, cy1 = max(x0, 0), max(y0, 0), min(x1, width), min(y1, height)
    if cx0 >= cx1 or cy0 >= cy1:
        raise RegionError(
            f"The region {region.to_text()} lies outside the {width} x {height} pixel photo."
        )
    ys, xs = np.arange(cy0, cy1)[:, None], np.arange(cx0, cx1)[None, :]
    mask = np.broadcast_to(region.inside(xs, ys), (cy1 - cy0, cx1 - cx0))
    if int(mask.sum()) < 4:
        raise RegionError(f"The region {region.to_text()} covers fewer than 4 pixels of the photo.")
    return slice(cy0, cy1), slice(cx0, cx1), mask


def otsu_threshold(values: np.ndarray, levels: int = 256) -> float:
    """Threshold that maximises the between-class variance of a histogram (Otsu 1979).

    >>> otsu_threshold(np.r_[np.zeros(50), np.full(50, 200.0)]) in range(0, 200)
    True
    """
    hist, edges = np.histogram(values, bins=levels, range=(0, levels))
    weight = np.cumsum(hist).astype(float)
    total = weight[-1]
    mean = np.cumsum(hist * np.arange(levels))
    between = (mean[-1] * weight / total - mean) ** 2 / np.maximum(weight * (total - weight), 1e-12)
    return int(np.argmax(between[:-1]))


def _box_mean(image: np.ndarray) -> np.ndarray:
    """3 x 3 mean filter with edge replication, so a lone noisy pixel cannot seed the glow."""
    padded = np.pad(image, 1, mode="edge")
    height, width = image.shape
    return sum(padded[dy : dy + height, dx : dx + width] for dy in range(3) for dx in range(3)) / 9


def dilate(mask: np.ndarray) -> np.ndarray:
    """Binary dilation by the 4-connected cross (Gonzalez and Woods, section 9.2)."""
    grown = mask.copy()
    grown[1:] |= mask[:-1]
    grown[:-1] |= mask[1:]
    grown[:, 1:] |= mask[:, :-1]
    grown[:, :-1] |= mask[:, 1:]
    return grown


def _grow(seed: np.ndarray, allowed: np.ndarray) -> np.ndarray:
    """Morphological reconstruction by dilation: the part of ``allowed`` connected to ``seed``."""
    region = seed & allowed
    while True:
        grown = dilate(region) & allowed
        if np.array_equal(grown, region):
            return region
        region = grown


def find_glow(codes: np.ndarray, linear_table: np.ndarray | None = None):
    """Find the bright area of a photo; returns a Circle or Rectangle.

    ``codes`` are encoded values (integers at the file's scale, or floats on a 0-255 scale),
    one channel (H x W) or colour (H x W x 3), where each pixel's brightest channel counts: glow
    is brightest in red, but a green or blue light is found too, so that the estimator can say
    it is no glow instead of the finder saying nothing is bright. With ``linear_table`` (raw data:
    codes to linear light per channel, (3, codes)) the reduced copy is decoded and square-rooted
    first (a rough display encoding), so a bright core does not hide the rest. Raises :class:`RegionError` when the photo is too dim or only a speck stands out.
    """
    height, width = codes.shape[:2]
    step = max(1, int(np.ceil(max(height, width) / FINDER_SIZE_PX)))
    reduced = codes[::step, ::step]
    full_scale = np.iinfo(codes.dtype).max if codes.dtype.kind in "ui" else 255.0
    if linear_table is not None:
        reduced = np.sqrt(np.clip(linear_table[np.arange(3), reduced], 0.0, None)) * np.float32(255)
        full_scale = 255.0
    if reduced.ndim == 3:
        reduced = np.maximum(np.maximum(reduced[..., 0], reduced[..., 1]), reduced[..., 2])
    reduced = reduced.astype(np.float32)
    small = _box_mean(reduced)
    if small.max() < DIM_FRACTION * full_scale:
        raise RegionError(
            "Nothing in this photo is bright enough to be glow; raise the exposure, or draw the "
            "region by hand."
        )
    scale = 255.0 / max(float(small.max()), 1.0)
    small *= scale
    flat = small.ravel()
    fifth_percentile = np.partition(flat, len(flat) // 20)[len(flat) // 20]
    if fifth_percentile >= FILLED_FRAME * 255.0:  # glow fills the frame: take its middle
        return Rectangle(width // 4, height // 4, max(1, width // 2), max(1, height // 2))
    threshold = max(otsu_threshold(small), 0.25 * float(small.max()))
    bright = small > threshold
    brightest = np.unravel_index(np.argmax(np.where(bright, small, -1)), small.shape)
    seed = np.zeros_like(bright)
    seed[brightest] = True
    area = _grow(seed, bright)
    if area.sum() * step**2 < MIN_GLOW_PX:
        raise RegionError("Only a speck of glow stands out in this photo; draw the region by hand.")
    ys, xs = np.nonzero(area)
    y0, y1, x0, x1 = ys.min(), ys.max() + 1, xs.min(), xs.max() + 1
    box_w, box_h = (x1 - x0) * step, (y1 - y0) * step
    centre_x, centre_y = (x0 + x1) / 2 * step, (y0 + y1) / 2 * step
    radius = min(box_w, box_h) / 2
    fill = area.sum() * step**2 / (np.pi * radius**2) if radius > 0 else 0.0
    roundish = 0.75 <= box_w / max(box_h, 1) <= 1.33 and 0.7 <= fill <= 1.15
    if roundish:
        return Circle(round(centre_x), round(centre_y), max(1, round(radius * RIM_SHRINK)))
    new_w, new_h = max(1, round(box_w * RIM_SHRINK)), max(1, round(box_h * RIM_SHRINK))
    return Rectangle(
        max(0, round(centre_x - new_w / 2)), max(0, round(centre_y - new_h / 2)), new_w, new_h
    )
