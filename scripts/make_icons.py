"""Draw glowtemp's home-screen icon: a glowing disc inside a light ring, on the studio-dark tile.

One geometry gives every file: ``webapp/static/icon.svg`` (any size), PNG copies at the sizes
the web app manifest names (W3C Web Application Manifest, "icons"), and a "maskable" PNG with
square corners: its disc and ring stay inside the central 80 % circle, so a phone may crop it
to a circle or a rounded square of its own.

Run: python scripts/make_icons.py
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
from PIL import Image

STATIC = Path(__file__).resolve().parent.parent / "webapp" / "static"
PNG_SIZES = (180, 192, 512)  # 180: the home-screen size iOS asks for (apple-touch-icon)
MASKABLE_SIZE = 512
SUPERSAMPLE = 4

# In units of the 512-wide tile.
TILE, CORNER = 512, 96
DISC_R, RING_R, RING_WIDTH = 150, 180, 20
BACKGROUND = "#16120e"
RING = "#f7f0e6"
GLOW = (("0", "#fff3c4"), ("0.45", "#ffb347"), ("1", "#c0391b"))  # centre to edge of the disc

SVG = f"""<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {TILE} {TILE}">
  <defs>
    <radialGradient id="glow">
{chr(10).join(f'      <stop offset="{at}" stop-color="{colour}"/>' for at, colour in GLOW)}
    </radialGradient>
  </defs>
  <rect width="{TILE}" height="{TILE}" rx="{CORNER}" fill="{BACKGROUND}"/>
  <circle cx="{TILE // 2}" cy="{TILE // 2}" r="{DISC_R}" fill="url(#glow)"/>
  <circle cx="{TILE // 2}" cy="{TILE // 2}" r="{RING_R}" fill="none" stroke="{RING}" stroke-width="{RING_WIDTH}"/>
</svg>
"""


def _rgb(hex_colour: str) -> np.ndarray:
    return np.array([int(hex_colour[i : i + 2], 16) for i in (1, 3, 5)], dtype=float)


def _glow(fraction: np.ndarray) -> np.ndarray:
    """The disc's colour at a fraction of its radius: the SVG gradient's stops, linearly between."""
    stops = [float(at) for at, _ in GLOW]
    colours = np.array([_rgb(c) for _, c in GLOW])
    return np.stack([np.interp(fraction, stops, colours[:, k]) for k in range(3)], axis=-1)


def draw_png(size: int, corner: float = CORNER) -> Image.Image:
    """The icon at ``size`` pixels, drawn at a higher resolution and reduced (box filter)."""
    n = size * SUPERSAMPLE
    scale = TILE / n
    y, x = (np.mgrid[0:n, 0:n] + 0.5) * scale
    r = np.hypot(x - TILE / 2, y - TILE / 2)
    corner_x = np.clip(np.abs(x - TILE / 2) - (TILE / 2 - corner), 0, None)
    corner_y = np.clip(np.abs(y - TILE / 2) - (TILE / 2 - corner), 0, None)
    inside_tile = np.hypot(corner_x, corner_y) <= corner
    rgba = np.zeros((n, n, 4))
    rgba[inside_tile] = [*_rgb(BACKGROUND), 255]
    disc = r <= DISC_R
    rgba[disc, :3] = _glow(r[disc] / DISC_R)
    ring = np.abs(r - RING_R) <= RING_WIDTH / 2
    rgba[ring] = [*_rgb(RING), 255]
    reduced = rgba.reshape(size, SUPERSAMPLE, size, SUPERSAMPLE, 4).mean(axis=(1, 3))
    return Image.fromarray(np.round(reduced).astype(np.uint8), "RGBA")


def main() -> None:
    (STATIC / "icon.svg").write_text(SVG, encoding="utf-8")
    for size in PNG_SIZES:
        draw_png(size).save(STATIC / f"icon-{size}.png", optimize=True)
    draw_png(MASKABLE_SIZE, corner=0).save(STATIC / f"icon-maskable-{MASKABLE_SIZE}.png", optimize=True)
    print(f"wrote icon.svg, icon-{{{','.join(map(str, PNG_SIZES))}}}.png and icon-maskable-{MASKABLE_SIZE}.png in {STATIC}")


if __name__ == "__main__":
    main()
