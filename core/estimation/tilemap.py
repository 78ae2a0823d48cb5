"""A temperature map of a region: the region cut into tiles, each measured on its own.

Each tile is the part of the region inside one cell of a grid laid over the region's bounding
box. A tile is measured exactly as a whole reading is (:func:`glowtemp.estimation.reading.measure`): its
own pixel mask (clipped, dark and outlier pixels dropped within the tile), its own statistics
and its own posterior with 68 % and 95 % bands. No new physics: the map is many readings.

The hottest and coolest *usable* tiles are those with a central estimate (status ``"ok"``);
tiles that give only a ceiling, a wide range or no estimate are kept in the map with their
status. The camera term (or the profile) is the same for every tile, so the bands, which
include it, are wider than the uncertainty of the difference between two tiles: when the
hottest and coolest bands do not overlap, the difference is certain.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

from .brightness import DEFAULT_SCENE
from .estimate import CameraTerm
from .reading import Reading, find_region, measure
from ..images.region import RegionError

DEFAULT_TILES = 8  # tiles across the longer side of the region's bounding box
MIN_TILE_PX = 8  # a tile is at least this many pixels on each side
TILE_KEYS = (
    "status", "temperature_c", "interval_68_c", "interval_95_c", "upper_bound_c", "resolution_c",
    "temperature_f", "interval_68_f", "interval_95_f", "upper_bound_f", "resolution_f", "glow_name",
    "estimate_colour_hex", "pixels_used", "pixels_clipped", "pixels_total",
)  # fmt: skip


@dataclass(frozen=True)
class TileRegion:
    """One tile: a rectangle of photo pixels, masked by the region it was cut from."""

    x: int
    y: int
    width: int
    height: int
    parent: object

    kind = "tile"

    def bounds(self):
        return self.x, self.y, self.x + self.width, self.y + self.height

    def inside(self, xs, ys):
        return self.parent.inside(xs, ys)

    def to_text(self) -> str:
        return f"{self.x},{self.y},{self.width},{self.height}"

    def to_dict(self) -> dict:
        return {"kind": self.kind, "x": self.x, "y": self.y, "width": self.width, "height": self.height}


@dataclass(frozen=True)
class Tile:
    """A tile's place in the grid and its reading."""

    row: int
    column: int
    region: TileRegion
    reading: Reading

    @property
    def usable(self) -> bool:
        return self.reading.estimate.status == "ok"

    def to_dict(self) -> dict:
        result = self.reading.to_dict()
        return {
            "row": self.row,
            "column": self.column,
            **self.region.to_dict(),
            **{key: result[key] for key in TILE_KEYS},
            "warnings": [w["code"] for w in result["warnings"]],
        }


@dataclass(frozen=True)
class TileMap:
    """Tiles of a region (row by row), the grid size and the hottest and coolest usable tiles."""

    region: object
    rows: int
    columns: int
    tiles: tuple

    @property
    def usable(self) -> list:
        return [tile for tile in self.tiles if tile.usable]

    @property
    def hottest(self) -> Tile | None:
        usable = self.usable
        return max(usable, key=lambda t: t.reading.estimate.temperature_k) if usable else None

    @property
    def coolest(self) -> Tile | None:
        usable = self.usable
        return min(usable, key=lambda t: t.reading.estimate.temperature_k) if usable else None

    def bands_overlap(self) -> bool | None:
        """Whether the hottest and coolest tiles' 95 % bands overlap (None without two tiles)."""
        hot, cool = self.hottest, self.coolest
        if hot is None or hot is cool:
            return None
        return hot.reading.estimate.interval_95_k[0] <= cool.reading.estimate.interval_95_k[1]

    def to_dict(self) -> dict:
        """The JSON form (stored with a reading under ``temperature_map``)."""
        hot, cool = self.hottest, self.coolest
        return {
            "region": {**self.region.to_dict(), "text": self.region.to_text()},
            "rows": self.rows,
            "columns": self.columns,
            "tiles": [tile.to_dict() for tile in self.tiles],
            "usable_tiles": len(self.usable),
            "hottest": None if hot is None else hot.to_dict(),
            "coolest": None if cool is None else cool.to_dict(),
            "bands_overlap": self.bands_overlap(),
        }


def _edges(start: int, length: int, count: int) -> list[int]:
    return [start + round(length * k / count) for k in range(count + 1)]


def tile_grid(region, width: int, height: int, tiles: int = DEFAULT_TILES) -> tuple[int, int, list]:
    """Cut the region's bounding box (inside a ``width`` x ``height`` photo) into a grid.

    ``tiles`` cells go across the longer side, as many across the shorter side as keep the cells
    near square, each at least :data:`MIN_TILE_PX` on a side. Returns (rows, columns, regions).

    >>> from glowtemp.images.region import Rectangle
    >>> rows, columns, cells = tile_grid(Rectangle(0, 0, 80, 40), 100, 100, tiles=4)
    >>> rows, columns, cells[1].to_text()
    (2, 4, '20,0,20,20')
    """
    if not isinstance(tiles, int) or tiles < 1:
        raise RegionError(f"A temperature map needs a whole number of tiles of at least 1; got {tiles!r}.")
    x0, y0, x1, y1 = region.bounds()
    x0, y0, x1, y1 = max(x0, 0), max(y0, 0), min(x1, width), min(y1, height)
    box_w, box_h = x1 - x0, y1 - y0
    if box_w <= 0 or box_h <= 0:
        raise RegionError(f"The region {region.to_text()} lies outside the {width} x {height} pixel photo.")
    cell = max(max(box_w, box_h) / tiles, MIN_TILE_PX)
    columns = max(1, min(round(box_w / cell), box_w // MIN_TILE_PX))
    rows = max(1, min(round(box_h / cell), box_h // MIN_TILE_PX))
    xs, ys = _edges(x0, box_w, columns), _edges(y0, box_h, rows)
    cells = [
        TileRegion(xs[c], ys[r], xs[c + 1] - xs[c], ys[r + 1] - ys[r], region)
        for r in range(rows)
        for c in range(columns)
    ]
    return rows, columns, cells


def temperature_map(
    photo,
    region=None,
    *,
    tiles: int = DEFAULT_TILES,
    camera: CameraTerm | None = None,
    profile=None,
    scene: str = DEFAULT_SCENE,
) -> TileMap:
    """Measure every tile of ``region`` (found as :func:`glowtemp.estimation.reading.measure` does when None).

    ``camera``, ``profile`` and ``scene`` are used as by :func:`~glowtemp.estimation.reading.measure`; a tile in which
    the region covers fewer than 4 pixels is left out. Raises :class:`RegionError` for a region
    outside the photo or a bad tile count.
    """
    if region is None:
        region = find_region(photo)
    rows, columns, cells = tile_grid(region, photo.width, photo.height, tiles)
    measured = []
    for index, cell in enumerate(cells):
        try:
            reading = measure(photo, cell, camera=camera, photo_name=f"tile {index}", profile=profile, scene=scene)
        except RegionError:  # the region barely touches this cell
            continue
        measured.append(Tile(index // columns, index % columns, cell, reading))
    return TileMap(region, rows, columns, tuple(measured))


def with_map(reading: Reading, tile_map: TileMap) -> Reading:
    """The reading with its temperature map in the JSON form, under ``temperature_map``."""
    return replace(reading, extra={**reading.extra, "temperature_map": tile_map.to_dict()})
