"""Region parsing, masks and the glow finder."""

import numpy as np
import pytest

from glowtemp.images.region import (
    Circle,
    Rectangle,
    RegionError,
    find_glow,
    otsu_threshold,
    parse_circle,
    parse_rectangle,
    parse_region,
    region_window,
)


@pytest.mark.parametrize(
    "text, why",
    [
        ("10,20,30", "three numbers for a rectangle"),
        ("a,b,c,d", "not numbers"),
        ("10,20,0,5", "zero width"),
        ("10,20,5,-5", "negative height"),
        ("-1,0,5,5", "corner left of the photo"),
        ("1.5,2,3,4", "fractional pixels"),
        ("nan,2,3,4", "not finite"),
        ("", "empty"),
    ],
)
def test_bad_rectangles_are_refused_in_plain_words(text, why):
    with pytest.raises(RegionError, match="rectangle|region"):
        parse_rectangle(text)


@pytest.mark.parametrize("text", ["1,2", "5,5,0", "5,5,-3", "x,y,z", "1,2,3,4"])
def test_bad_circles_are_refused(text):
    with pytest.raises(RegionError):
        parse_circle(text)


def test_region_text_round_trips():
    for region in (Rectangle(3, 4, 50, 60), Circle(40, 30, 12)):
        assert parse_region(region.to_text()) == region


def test_window_clips_to_the_photo_and_refuses_a_region_outside():
    rows, cols, mask = region_window(Rectangle(90, 90, 50, 50), 100, 100)
    assert mask.shape == (10, 10) and mask.all()
    with pytest.raises(RegionError, match="outside"):
        region_window(Rectangle(200, 200, 10, 10), 100, 100)


def test_circle_mask_area_is_close_to_pi_r_squared():
    # Geometry: a digital disc of radius r holds about pi r^2 pixels (Gauss circle problem).
    _, _, mask = region_window(Circle(50, 50, 20), 100, 100)
    assert mask.sum() == pytest.approx(np.pi * 20**2, rel=0.02)


def test_otsu_splits_two_populations():
    # Otsu (1979): for two well-separated classes the threshold lies between them.
    values = np.r_[np.full(500, 30.0), np.full(300, 180.0)]
    assert 30 <= otsu_threshold(values) < 180


def test_finder_returns_a_circle_for_a_spy_hole_and_a_rectangle_for_a_bar():
    ys, xs = np.mgrid[0:480, 0:640]
    hole = np.where((xs - 400) ** 2 + (ys - 200) ** 2 < 70**2, 200, 12).astype(np.uint8)
    found = find_glow(hole)
    assert isinstance(found, Circle)
    assert abs(found.cx - 400) <= 4 and abs(found.cy - 200) <= 4 and 45 <= found.radius <= 70
    bar = np.where((xs > 100) & (xs < 600) & (ys > 220) & (ys < 260), 210, 8).astype(np.uint8)
    found = find_glow(bar)
    assert isinstance(found, Rectangle)
    x0, y0, x1, y1 = found.bounds()
    assert 100 <= x0 and x1 <= 600 and 220 <= y0 and y1 <= 262


def test_finder_takes_the_middle_when_glow_fills_the_frame():
    # A close-up of a bar or a kiln interior: no edge to find, so the middle half is measured
    # (whether its colour is glow is the estimator's judgement, not the finder's).
    found = find_glow(np.full((100, 200), 180, dtype=np.uint8))
    assert found == Rectangle(50, 25, 100, 50)


def test_finder_refuses_a_photo_too_dim_for_glow():
    with pytest.raises(RegionError, match="bright enough"):
        find_glow(np.full((100, 200), 30, dtype=np.uint8))
    with pytest.raises(RegionError, match="bright enough"):
        find_glow(np.full((100, 200), 30 * 257, dtype=np.uint16))


def test_finder_refuses_a_lone_speck():
    rng = np.random.default_rng(1)
    photo = rng.integers(0, 12, (300, 400)).astype(np.uint8)
    photo[150:153, 200:203] = 255  # a few hot pixels (a spark, a reflection)
    with pytest.raises(RegionError, match="speck"):
        find_glow(photo)
