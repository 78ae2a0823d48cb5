"""Temperature maps on rendered scenes whose temperature field is known pixel by pixel."""

import io
import json
import xml.etree.ElementTree as ElementTree

import numpy as np
import pytest
from PIL import Image

from glowtemp.images.photo import load_photo
from glowtemp.estimation.reading import measure
from glowtemp.images.region import Circle, Rectangle, RegionError
from glowtemp.estimation.scales import celsius_to_fahrenheit
from glowtemp.render.synthetic import encode_jpeg, render_photo
from glowtemp.render.synthetic_camera import ideal_camera
from glowtemp.estimation.tilemap import MIN_TILE_PX, temperature_map, tile_grid, with_map
from glowtemp.estimation.tilemap_chart import draw_map

COOL_END_C, HOT_END_C = 1000.0, 1350.0
BAR_END = 0.68  # where the rendered bar ends, as a share of the width (glowtemp.render.synthetic_scenes)
COLORIMETRIC = {"camera": ideal_camera(), "white_balance": (1.0, 1.0, 1.0)}  # records CIE XYZ itself


def hot_bar(size=(240, 160), **options):
    """A bar heated at its free end: from 1000 °C where it enters the frame to 1350 °C at its end."""
    field = lambda x, y: COOL_END_C + 273.15 + (HOT_END_C - COOL_END_C) * np.clip(x / BAR_END, 0, 1)  # noqa: E731
    return render_photo(field, scene="bar", size=size, seed=4, **{**COLORIMETRIC, **options})


@pytest.fixture(scope="module")
def bar():
    rendered = hot_bar()
    photo = load_photo(encode_jpeg(rendered))
    x0, y0, x1, y1 = rendered.region.box
    region = Rectangle(x0, y0 + 2, x1 - x0, y1 - y0 - 4)
    return rendered, photo, region, temperature_map(photo, region)


def tile_truth_c(rendered, tile) -> float:
    x0, y0, x1, y1 = tile.region.bounds()
    return float(np.nanmean(rendered.truth_k[y0:y1, x0:x1])) - 273.15


def test_the_grid_partitions_the_region_box_into_near_square_tiles():
    rows, columns, cells = tile_grid(Rectangle(10, 20, 203, 61), 400, 300, tiles=8)
    assert columns == 8 and rows == 2  # 203 / 8 = 25 px cells: 61 px makes 2 rows
    assert sum(c.width * c.height for c in cells) == 203 * 61
    assert min(min(c.width, c.height) for c in cells) >= MIN_TILE_PX
    assert {c.bounds()[0] for c in cells} == {c.bounds()[0] for c in cells[:columns]}


def test_bad_tile_counts_and_regions_off_the_photo_are_refused():
    with pytest.raises(RegionError, match="whole number of tiles"):
        tile_grid(Rectangle(0, 0, 50, 50), 100, 100, tiles=0)
    with pytest.raises(RegionError, match="outside"):
        tile_grid(Rectangle(500, 500, 50, 50), 100, 100)


def test_hot_end_is_found_hottest_and_tiles_warm_towards_it(bar):
    rendered, photo, region, tile_map = bar
    hottest, coolest = tile_map.hottest, tile_map.coolest
    assert hottest.column == tile_map.columns - 1
    assert coolest.column in (0, 1)
    temperatures = [t.reading.estimate.temperature_k for t in tile_map.tiles if t.row == 0]
    assert np.corrcoef(np.arange(len(temperatures)), temperatures)[0, 1] > 0.9  # warming along the bar
    assert tile_map.bands_overlap() is False  # a 350 K gradient is beyond doubt


def test_each_tile_band_holds_the_rendered_temperature_of_its_pixels(bar):
    rendered, photo, region, tile_map = bar
    assert len(tile_map.usable) == len(tile_map.tiles)
    hits = [
        t.reading.estimate.interval_95_k[0] - 273.15 <= tile_truth_c(rendered, t) <= t.reading.estimate.interval_95_k[1] - 273.15
        for t in tile_map.tiles
    ]
    assert np.mean(hits) >= 0.9


def test_tiles_have_their_own_masks_and_together_cover_the_region():
    rendered = render_photo(1273.15, scene="spy_hole", size=(160, 120), **COLORIMETRIC)
    photo = load_photo(encode_jpeg(rendered))
    circle = Circle(80, 60, 16)
    tile_map = temperature_map(photo, circle, tiles=4)
    whole = measure(photo, circle)
    assert sum(t.reading.statistics.pixels_total for t in tile_map.tiles) == whole.statistics.pixels_total
    corner = tile_map.tiles[0].reading.statistics.pixels_total
    centre = max(t.reading.statistics.pixels_total for t in tile_map.tiles)
    assert corner < centre  # the circle cuts the corner tile


def test_blown_out_tiles_are_never_the_hottest():
    rendered = hot_bar(overexpose=3.0)  # the hot end clips red
    photo = load_photo(encode_jpeg(rendered))
    x0, y0, x1, y1 = rendered.region.box
    tile_map = temperature_map(photo, Rectangle(x0, y0 + 2, x1 - x0, y1 - y0 - 4))
    statuses = {t.column: t.reading.estimate.status for t in tile_map.tiles if t.row == 0}
    assert statuses[tile_map.columns - 1] == "clipped"
    assert tile_map.hottest.reading.estimate.status == "ok"
    assert tile_map.hottest.column < tile_map.columns - 1


def test_the_map_travels_with_the_reading_as_json(bar):
    rendered, photo, region, tile_map = bar
    result = with_map(measure(photo, region), tile_map).to_dict()
    record = json.loads(json.dumps(result))["temperature_map"]
    assert record["rows"] * record["columns"] == len(record["tiles"])
    hot = record["hottest"]
    assert hot["column"] == record["columns"] - 1
    low, high = hot["interval_95_c"]
    assert low <= hot["temperature_c"] <= high
    assert hot["temperature_f"] == pytest.approx(celsius_to_fahrenheit(hot["temperature_c"]), abs=hot["resolution_f"])


def test_the_overlay_is_a_png_or_an_svg_with_its_legend_unit(bar):
    rendered, photo, region, tile_map = bar
    png = Image.open(io.BytesIO(draw_map(photo, tile_map)))
    assert png.format == "PNG" and min(png.size) > 200
    svg = draw_map(photo, tile_map, unit="F", image_format="svg").decode("utf-8")
    ElementTree.fromstring(svg)  # well-formed XML
    assert "°F" in svg or "&#176;F" in svg
    # The picture quotes the core's °F values (rounded to their own band), not converted °C.
    hot = tile_map.to_dict()["hottest"]
    low, high = hot["interval_95_f"]
    assert f"{hot['temperature_f']} °F (95 %: {low}-{high})" in svg.replace("&#176;", "°")
    with pytest.raises(ValueError, match="'C' or 'F'"):
        draw_map(photo, tile_map, unit="K")


def test_the_measure_command_draws_the_map_and_reports_it(tmp_path, capsys):
    from glowtemp.shell.cli import main

    rendered = hot_bar()
    photo_path, map_path = tmp_path / "bar.jpg", tmp_path / "map.png"
    photo_path.write_bytes(encode_jpeg(rendered))
    x0, y0, x1, y1 = rendered.region.box
    region = f"{x0},{y0 + 2},{x1 - x0},{y1 - y0 - 4}"
    assert main(["measure", str(photo_path), "--region", region, "--map", str(map_path), "--json"]) == 0
    record = json.loads(capsys.readouterr().out)["temperature_map"]
    assert record["hottest"]["column"] == record["columns"] - 1
    assert Image.open(map_path).format == "PNG"
    assert main(["measure", str(photo_path), str(photo_path), "--map", str(map_path)]) == 2
    assert "one photo" in capsys.readouterr().err
