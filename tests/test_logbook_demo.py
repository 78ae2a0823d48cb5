"""Demo data: the glaze firing made from the rendered demo photos and their truth.csv."""

import csv
import shutil
from pathlib import Path

import pytest

from glowtemp.firinglog.logbook import Logbook
from glowtemp.firinglog.demo import DEMO_FIRING_NAME, seed_demo

DEMO_DIR = Path(__file__).resolve().parent.parent / "demo_images"


def glaze_rows():
    with open(DEMO_DIR / "truth.csv", newline="", encoding="utf-8") as handle:
        return [row for row in csv.DictReader(handle) if row["notes"].startswith("glaze firing")]


@pytest.fixture
def log(tmp_path):
    with Logbook(tmp_path / "data") as book:
        yield book


def test_demo_firing_from_truth_csv(log):
    firing_id = seed_demo(log, DEMO_DIR)
    firing = log.get_firing(firing_id)
    assert firing["name"] == DEMO_FIRING_NAME and "invented" in firing["name"]
    assert "Demo data" in firing["notes"] and firing["kind"] == "glaze"
    readings = log.readings_in(firing_id)
    rows = {row["file"]: row for row in glaze_rows()}
    assert sorted(r["photo_name"] for r in readings) == sorted(rows)
    with_thermocouple = [r for r in readings if r["reference_c"] is not None]
    assert 2 <= len(with_thermocouple) < len(readings)
    for reading in with_thermocouple:
        assert "Demo data" in reading["note"]  # invented values are labelled as such
    assert any(r["cone"] == "6" for r in readings)
    assert all(r["result"]["photo"] == r["photo_name"] for r in readings)  # measured, not copied


def test_demo_estimates_hold_the_rendered_truth(log):
    # demo_images/truth.csv holds the temperature each demo photo was rendered at (Planck's law
    # through colour-science's NPL-measured Nikon): every reading that gives a band must hold it,
    # and the plain daylight-balanced photos must read within 40 °C of it.
    firing_id = seed_demo(log, DEMO_DIR)
    rows = {row["file"]: row for row in glaze_rows()}
    checked = 0
    for reading in log.readings_in(firing_id):
        result, row = reading["result"], rows[reading["photo_name"]]
        true_c = float(row["true_c"])
        if result["interval_95_c"] is None:
            assert result["status"] == "clipped" and "overexposed" in row["notes"]
            continue
        low, high = result["interval_95_c"]
        assert low <= true_c <= high, (reading["photo_name"], result["interval_95_c"])
        if row["white_balance"] == "daylight" and "tone curve" not in row["notes"]:
            assert abs(result["temperature_c"] - true_c) <= 40
            checked += 1
    assert checked >= 4


def test_demo_is_added_only_to_an_empty_log(log, tmp_path):
    assert seed_demo(log, tmp_path / "no such folder") is None
    assert log.list_firings() == []
    log.create_firing(name="My own firing")
    assert seed_demo(log, DEMO_DIR) is None
    assert len(log.list_firings()) == 1


def test_demo_skips_photos_that_are_missing(log, tmp_path):
    partial = tmp_path / "partial"
    partial.mkdir()
    shutil.copy(DEMO_DIR / "truth.csv", partial)
    first = glaze_rows()[1]["file"]
    shutil.copy(DEMO_DIR / first, partial)
    firing_id = seed_demo(log, partial)
    assert [r["photo_name"] for r in log.readings_in(firing_id)] == [first]
