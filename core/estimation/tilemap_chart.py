"""A temperature map drawn over the photo with matplotlib (Agg, no display): PNG or SVG.

The photo around the region is shown in its own colours (converted to sRGB for display),
each usable tile is painted with a colour from a perceptually uniform scale ("inferno") and
labelled with its temperature; tiles that give only a ceiling are hatched and labelled "<X",
tiles without an estimate are outlined only. The hottest and coolest tiles are framed and
named with their 95 % bands under the picture, and a colour bar gives the legend in °C or °F.

matplotlib is imported when a map is drawn, so nothing else pays its start-up time; drawing
is serialised by a lock because matplotlib's font caches are shared between threads.

References
----------
- IEC 61966-2-1:1999 (sRGB encoding of the display copy).
- N. Smith and S. van der Walt, "A better default colormap for Matplotlib" (SciPy 2015): the
  perceptually uniform colour maps, of which "inferno" runs from black through red to yellow.
"""

from __future__ import annotations

import io
import threading

import numpy as np

from ..images.display import display_srgb

# Names come from people ("$5 glaze", a cone "$6"): matplotlib would read text between dollar
# signs as mathtext (matplotlib docs, "Writing mathematical expressions"); draw it literally.
LITERAL_TEXT = {"text.parse_math": False}

COLOUR_MAP = "inferno"
TILE_ALPHA = 0.62
MARGIN = 0.3  # of the region's size, shown around it
DISPLAY_SIDE_PX = 640  # the photo is reduced to about this long side for drawing
FIGURE_WIDTH_IN = 6.4
HOTTEST_COLOUR, COOLEST_COLOUR = "#ffffff", "#35c4ff"

# matplotlib's text and font caches are shared by every chart: one lock serialises all drawing.
DRAWING_LOCK = threading.Lock()


def _unit(unit: str):
    """The JSON key suffix and symbol of a unit: values are the core's, rounded to their band."""
    if unit == "C":
        return "_c", "°C"
    if unit == "F":
        return "_f", "°F"
    raise ValueError(f"The map unit must be 'C' or 'F'; got {unit!r}.")


def display_copy(photo, box):
    """The photo inside ``box`` (x0, y0, x1, y1) as sRGB display values in [0, 1] and its step."""
    x0, y0, x1, y1 = box
    step = max(1, int(np.ceil(max(x1 - x0, y1 - y0) / DISPLAY_SIDE_PX)))
    return display_srgb(photo, photo.codes[y0:y1:step, x0:x1:step], bright_to_full=True), step


def _view_box(tile_map, photo):
    x0, y0, x1, y1 = tile_map.region.bounds()
    pad_x, pad_y = MARGIN * (x1 - x0), MARGIN * (y1 - y0)
    return (
        max(0, int(x0 - pad_x)), max(0, int(y0 - pad_y)),
        min(photo.width, int(np.ceil(x1 + pad_x))), min(photo.height, int(np.ceil(y1 + pad_y))),
    )  # fmt: skip


def _band_text(tile, suffix, symbol) -> str:
    low, high = tile[f"interval_95{suffix}"]
    return f"{tile[f'temperature{suffix}']} {symbol} (95 %: {low}-{high})"


def _figure(photo, tile_map, unit: str, title: str | None):
    from matplotlib import colormaps
    from matplotlib.colors import Normalize
    from matplotlib.figure import Figure
    from matplotlib.patches import Rectangle as Patch

    suffix, symbol = _unit(unit)
    record = tile_map.to_dict()
    box = _view_box(tile_map, photo)
    picture, step = display_copy(photo, box)
    aspect = (box[3] - box[1]) / max(box[2] - box[0], 1)
    figure = Figure(figsize=(FIGURE_WIDTH_IN, FIGURE_WIDTH_IN * min(max(aspect, 0.35), 1.6) + 1.2),
                    layout="constrained")  # fmt: skip
    axes = figure.subplots()
    axes.imshow(picture, extent=(box[0], box[0] + picture.shape[1] * step, box[1] + picture.shape[0] * step, box[1]))
    axes.set_xlim(box[0], box[2])
    axes.set_ylim(box[3], box[1])
    axes.set_xticks([])
    axes.set_yticks([])

    estimates = [t[f"temperature{suffix}"] for t in record["tiles"] if t[f"temperature{suffix}"] is not None]
    low, high = (min(estimates), max(estimates)) if estimates else (0.0, 1.0)
    if high - low < 10:
        low, high = low - 5, high + 5
    scale = Normalize(low, high)
    colours = colormaps[COLOUR_MAP]
    for tile in record["tiles"]:
        corner, width, height = (tile["x"], tile["y"]), tile["width"], tile["height"]
        centre = (tile["x"] + width / 2, tile["y"] + height / 2)
        label_size = max(5.0, min(9.0, 0.9 * width / max(box[2] - box[0], 1) * FIGURE_WIDTH_IN * 72 / 3))
        if tile[f"temperature{suffix}"] is not None:
            value = tile[f"temperature{suffix}"]
            axes.add_patch(Patch(corner, width, height, facecolor=colours(scale(value)), alpha=TILE_ALPHA,
                                 edgecolor="#000000", linewidth=0.4))  # fmt: skip
            shade = "#000000" if scale(value) > 0.6 else "#ffffff"
            axes.text(*centre, f"{value:.0f}", ha="center", va="center", color=shade, fontsize=label_size)
        elif tile[f"upper_bound{suffix}"] is not None:
            axes.add_patch(Patch(corner, width, height, fill=False, hatch="///", edgecolor="#bbbbbb", linewidth=0.4))
            axes.text(*centre, f"<{tile[f'upper_bound{suffix}']}", ha="center", va="center",
                      color="#ffffff", fontsize=label_size)  # fmt: skip
        else:
            axes.add_patch(Patch(corner, width, height, fill=False, edgecolor="#888888", linewidth=0.4, linestyle=":"))
    lines = []
    for key, colour, name in (("hottest", HOTTEST_COLOUR, "hottest"), ("coolest", COOLEST_COLOUR, "coolest")):
        tile = record[key]
        if tile is None:
            continue
        axes.add_patch(Patch((tile["x"], tile["y"]), tile["width"], tile["height"], fill=False,
                             edgecolor=colour, linewidth=2.2))  # fmt: skip
        lines.append(f"{name} (framed {'white' if key == 'hottest' else 'blue'}): {_band_text(tile, suffix, symbol)}")
    if not lines:
        lines.append("no tile gives a central estimate")
    elif record["bands_overlap"] is False:
        lines.append("their 95 % bands do not overlap: the difference is real")
    axes.set_xlabel("\n".join(lines), fontsize="small")
    bar = figure.colorbar(scale_mappable(scale, colours), ax=axes, shrink=0.85, pad=0.02)
    bar.set_label(f"estimated temperature ({symbol})")
    figure.suptitle(title or f"Temperature map: {record['usable_tiles']} of {len(record['tiles'])} tiles "
                    "with an estimate", fontsize="medium")  # fmt: skip
    return figure


def scale_mappable(scale, colours):
    from matplotlib.cm import ScalarMappable

    return ScalarMappable(norm=scale, cmap=colours)


def draw_map(photo, tile_map, unit: str = "C", image_format: str = "png", title: str | None = None) -> bytes:
    """The map over the photo as PNG or SVG bytes; ``unit`` is "C" or "F"."""
    if image_format not in ("png", "svg"):
        raise ValueError(f"The map can be drawn as png or svg, not {image_format!r}.")
    import matplotlib


    with DRAWING_LOCK, matplotlib.rc_context(LITERAL_TEXT):
        figure = _figure(photo, tile_map, unit, title)
        out = io.BytesIO()
        figure.savefig(out, format=image_format, dpi=120)
    return out.getvalue()
