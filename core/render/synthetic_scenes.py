"""Scenes for the synthetic renderer: where the glow is, how hot, and how strongly it emits.

A :class:`Scene` holds, per pixel, a temperature in kelvin and an emitting weight (grey-body
emissivity times a view factor; 0 where nothing glows). Weights scale radiance and so never
change colour: for a grey body the colour ratio does not depend on emissivity (Kirchhoff's law
with a wavelength-independent emissivity). The geometry is invented for tests and demos.

- "spy_hole": the glowing interior seen through a round spy hole, radius 15 % of the short
  side, centred; with ``wall="cool"`` the bore around it glows 60 K to 300 K cooler and fades,
  with ``wall="black"`` the kiln face around the hole is dark.
- "bar": the end of a round bar entering from the left, 20 % of the short side thick, ending at
  68 % of the width; its view factor falls towards the top and bottom edges like a cylinder's.
- "uniform": the whole frame at one temperature.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .synthetic_camera import RAW_TABLE_MAX_K, RAW_TABLE_MIN_K, SyntheticInputError

SCENES = ("spy_hole", "bar", "uniform")
SPY_HOLE_RADIUS = 0.15  # of the short side
BORE_OUTER = 1.35  # bore ring outer radius, in hole radii
BAR_THICKNESS = 0.20  # of the short side
BAR_END = 0.68  # of the width
MAX_SIDE_PX = 8000


@dataclass(frozen=True)
class Region:
    """Where the measured glow is: a box (x0, y0, x1, y1), end-exclusive, and maybe a circle (cx, cy, r)."""

    box: tuple
    circle: tuple | None = None

    def mask(self, height: int, width: int) -> np.ndarray:
        """Boolean mask of the region's pixels (pixel centres inside the circle or box)."""
        y, x = np.mgrid[0:height, 0:width] + 0.5
        if self.circle is not None:
            cx, cy, r = self.circle
            return (x - cx) ** 2 + (y - cy) ** 2 <= r**2
        x0, y0, x1, y1 = self.box
        return (x >= x0) & (x < x1) & (y >= y0) & (y < y1)


@dataclass(frozen=True)
class Scene:
    """Per-pixel temperature (K, float32, (H, W)), emitting weight (float32, (H, W)) and the region."""

    temperature_k: np.ndarray
    weight: np.ndarray
    region: Region


def _coordinates(size):
    width, height = size
    if not (isinstance(width, (int, np.integer)) and isinstance(height, (int, np.integer))):
        raise SyntheticInputError("size must be two whole numbers (width, height) in pixels.")
    if not (8 <= width <= MAX_SIDE_PX and 8 <= height <= MAX_SIDE_PX):
        raise SyntheticInputError(f"Image sides must be between 8 and {MAX_SIDE_PX} pixels.")
    x = ((np.arange(width, dtype=np.float32) + 0.5) / width)[None, :]
    y = ((np.arange(height, dtype=np.float32) + 0.5) / height)[:, None]
    return width, height, x, y


def _field(temperature_k, x, y):
    if callable(temperature_k):
        field = np.asarray(temperature_k(x, y), dtype=np.float32)
    else:
        field = np.asarray(temperature_k, dtype=np.float32)
        if field.shape != ():
            raise SyntheticInputError("temperature_k must be a number or a function f(x, y).")
    field = np.broadcast_to(field, np.broadcast_shapes(x.shape, y.shape)).astype(np.float32)
    if not np.all((field >= RAW_TABLE_MIN_K) & (field <= RAW_TABLE_MAX_K)):
        raise SyntheticInputError(
            f"Glow temperatures must lie between {RAW_TABLE_MIN_K:.0f} K and {RAW_TABLE_MAX_K:.0f} K."
        )
    return field


def spy_hole(size, temperature_k, wall="cool") -> Scene:
    """A bright disc of glow through a spy hole; see the module notes."""
    if wall not in ("cool", "black"):
        raise SyntheticInputError("wall must be 'cool' or 'black'.")
    width, height, x, y = _coordinates(size)
    radius = SPY_HOLE_RADIUS * min(width, height)
    distance = np.hypot((x - 0.5) * width, (y - 0.5) * height) / radius  # in hole radii
    field = _field(temperature_k, x, y)
    inside = distance <= 1.0
    weight = inside.astype(np.float32)
    temperature = np.where(inside, field, 0.0).astype(np.float32)
    if wall == "cool":
        bore = (distance > 1.0) & (distance <= BORE_OUTER)
        fade = (distance - 1.0) / (BORE_OUTER - 1.0)
        temperature = np.where(bore, field - 60.0 - 240.0 * fade, temperature).astype(np.float32)
        weight = np.where(bore, 0.9, weight).astype(np.float32)  # bore emissivity 0.9, invented
    region = Region(
        box=(int(np.floor(width / 2 - radius)), int(np.floor(height / 2 - radius)),
             int(np.ceil(width / 2 + radius)), int(np.ceil(height / 2 + radius))),
        circle=(width / 2, height / 2, radius),
    )
    return Scene(temperature, weight, region)


def bar(size, temperature_k) -> Scene:
    """The glowing end of a round bar; a function ``temperature_k`` gives a gradient along it."""
    width, height, x, y = _coordinates(size)
    half = BAR_THICKNESS * min(width, height) / 2 / height  # in units of the height
    across = (y - 0.5) / half
    on_bar = (np.abs(across) < 1.0) & (x < BAR_END)
    view_factor = 0.55 + 0.45 * np.sqrt(np.clip(1.0 - across**2, 0.0, 1.0))  # invented limb fall-off
    weight = np.where(on_bar, view_factor, 0.0).astype(np.float32)
    temperature = np.where(on_bar, _field(temperature_k, x, y), 0.0).astype(np.float32)
    y0 = int(np.floor((0.5 - half) * height))
    region = Region(box=(0, y0, int(np.ceil(BAR_END * width)), height - y0))
    return Scene(temperature, weight, region)


def uniform(size, temperature_k) -> Scene:
    """The whole frame glowing at one temperature (or a field)."""
    width, height, x, y = _coordinates(size)
    temperature = _field(temperature_k, x, y)
    return Scene(temperature, np.ones_like(temperature), Region(box=(0, 0, width, height)))


def build_scene(name: str, size, temperature_k, *, wall="cool", emissivity=1.0) -> Scene:
    """Build a named scene and apply a grey-body emissivity to its weights."""
    if name == "spy_hole":
        scene = spy_hole(size, temperature_k, wall)
    elif name == "bar":
        scene = bar(size, temperature_k)
    elif name == "uniform":
        scene = uniform(size, temperature_k)
    else:
        raise SyntheticInputError(f"Unknown scene {name!r}; use one of {', '.join(SCENES)}.")
    return Scene(scene.temperature_k, scene.weight * np.float32(emissivity), scene.region)
