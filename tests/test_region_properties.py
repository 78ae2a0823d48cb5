"""Property-based tests (Hypothesis) of the region parser and the estimator on small images.

For any region text and any small image: parsing either gives a region or refuses with
RegionError; measuring either gives a reading or refuses with RegionError, never anything else.
A reading's intervals are ordered, the 68 % band lies inside the 95 % band, and the central
estimate lies inside both (the definition of a central credible interval; e.g. A. Gelman et
al., Bayesian Data Analysis, 3rd ed., section 2.3).
"""

from __future__ import annotations

import io

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from hypothesis.extra.numpy import arrays
from PIL import Image

from glowtemp.images.photo import load_photo
from glowtemp.estimation.reading import measure
from glowtemp.images.region import Circle, Rectangle, RegionError, parse_region

SIDES = st.integers(min_value=8, max_value=28)
COORDINATE = st.one_of(
    st.integers(min_value=-40, max_value=60),  # near and around a small photo
    st.integers(min_value=-(10**7), max_value=10**7),  # far off
    st.sampled_from([0, 1, -1, 2**31, 2**63, -(2**63), 10**300]),  # edges of integer types
)
NUMBER_TEXT = st.one_of(
    COORDINATE.map(str),
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.sampled_from(["", " ", "nan", "inf", "-0", "1e999", "0x10", "1_000", "٣"]),
)


@st.composite
def region_texts(draw) -> str:
    kind = draw(st.sampled_from(["rectangle", "circle", "reaching circle", "anything"]))
    if kind == "anything":
        return draw(st.text(max_size=40))
    if kind == "reaching circle":  # centred far outside the photo, its edge reaching back in
        cx, cy = draw(COORDINATE), draw(st.integers(-40, 60))
        return f"circle:{cx},{cy},{abs(cx) + draw(st.integers(0, 60))}"
    count = 4 if kind == "rectangle" else 3
    numbers = draw(st.lists(NUMBER_TEXT, min_size=count - 1, max_size=count + 1))
    text = ",".join(numbers)
    return f"circle:{text}" if kind == "circle" else text


@st.composite
def small_photos(draw):
    """A small 8-bit photo: random pixels, or a glowing patch on a dark ground with noise."""
    height, width = draw(SIDES), draw(SIDES)
    if draw(st.booleans()):
        codes = draw(arrays(np.uint8, (height, width, 3)))
    else:
        ground = draw(st.integers(0, 60))
        glow = draw(st.tuples(st.integers(0, 255), st.integers(0, 255), st.integers(0, 255)))
        noise = draw(st.integers(0, 30))
        rng = np.random.default_rng(draw(st.integers(0, 2**32 - 1)))
        codes = np.full((height, width, 3), ground, dtype=np.int32)
        y0, x0 = draw(st.integers(0, height - 2)), draw(st.integers(0, width - 2))
        codes[y0: y0 + draw(st.integers(1, height)), x0: x0 + draw(st.integers(1, width))] = glow
        codes = np.clip(codes + rng.integers(-noise, noise + 1, codes.shape), 0, 255).astype(np.uint8)
    out = io.BytesIO()
    Image.fromarray(codes).save(out, "PNG")
    return load_photo(out.getvalue())


@settings(max_examples=400, deadline=None)
@given(region_texts())
def test_the_parser_gives_a_region_or_a_plain_refusal(text):
    try:
        region = parse_region(text)
    except RegionError as error:
        assert str(error)  # plain words, never an empty message
        return
    assert isinstance(region, (Rectangle, Circle))
    assert parse_region(region.to_text()) == region  # the stored form reads back the same


def assert_ordered(reading: dict) -> None:
    for unit in ("c", "f"):
        centre = reading[f"temperature_{unit}"]
        band68, band95 = reading[f"interval_68_{unit}"], reading[f"interval_95_{unit}"]
        if band95 is not None:
            assert band95[0] <= band95[1]
        if band68 is not None:
            assert band68[0] <= band68[1]
            assert band95[0] <= band68[0] and band68[1] <= band95[1]
        if centre is not None:
            assert band68[0] <= centre <= band68[1]
            assert band95[0] <= centre <= band95[1]
    if reading["status"] == "upper-bound":
        assert reading["upper_bound_c"] is not None and reading["temperature_c"] is None


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(small_photos(), st.one_of(st.none(), region_texts()))
def test_measuring_any_region_of_any_small_photo_never_crashes(photo, text):
    try:
        region = None if text is None else parse_region(text)
        reading = measure(photo, region).to_dict()
    except RegionError as error:
        assert str(error)
        return
    assert reading["status"] in ("ok", "upper-bound", "not-glow", "ambiguous", "no-data", "wide", "clipped")
    assert 0 <= reading["pixels_used"] <= reading["pixels_total"]
    assert_ordered(reading)
