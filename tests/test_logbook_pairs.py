"""A camera profile in one step from a firing's trusted readings (rendered photos, known truth)."""

from datetime import datetime, timedelta, timezone

import pytest

from glowtemp.firinglog.logbook import Logbook
from glowtemp.firinglog.logbook_pairs import calibration_pairs, fit_profile_from_firing
from glowtemp.images.photo import load_photo
from glowtemp.estimation.profile import ProfileError
from glowtemp.estimation.profile_store import list_profiles
from glowtemp.estimation.reading import measure
from glowtemp.render.synthetic import encode_jpeg, render_photo
from glowtemp.render.synthetic_camera import CAMERAS

NIKON = CAMERAS["Nikon 5100 (NPL)"]  # colour-science's NPL-measured camera sensitivities
START = datetime(2024, 3, 9, 8, tzinfo=timezone.utc)


def add_rendered(log, firing_id, temperature_c, seed, **trusted):
    """A spy-hole photo rendered at a known temperature, measured and logged."""
    data = encode_jpeg(render_photo(temperature_c + 273.15, camera=NIKON, size=(160, 120), seed=seed))
    result = measure(load_photo(data), photo_name=f"{temperature_c}.jpg").to_dict()
    key = log.store_photo(data, ".jpg")
    return log.add_reading(photo_key=key, photo_name=f"{temperature_c}.jpg", result=result, firing_id=firing_id,
                           taken_at=START + timedelta(hours=seed), **trusted)  # fmt: skip


@pytest.fixture
def log(tmp_path):
    with Logbook(tmp_path / "data") as book:
        yield book


def test_trusted_readings_make_a_profile(log):
    firing_id = log.create_firing(name="Calibration firing")
    for seed, temperature_c in enumerate((850, 1000, 1150)):
        add_rendered(log, firing_id, temperature_c, seed, reference_c=temperature_c)  # rendered truth as reference
    add_rendered(log, firing_id, 1200, 5, cone="6", cone_state="standing")  # a standing cone proves nothing
    add_rendered(log, firing_id, 1100, 6)  # no trusted value
    assert len(calibration_pairs(log.readings_in(firing_id))) == 3
    profile = fit_profile_from_firing(log, firing_id, "studio-nikon").to_dict()
    assert len(profile["pairs"]) == 3
    assert profile["span_c"] == pytest.approx([850, 1150])
    assert [p["name"] for p in list_profiles(log.data_dir)] == ["studio-nikon"]


def test_bent_cone_counts_and_thermocouple_wins_when_both(log):
    firing_id = log.create_firing(name="Cones")
    bent = add_rendered(log, firing_id, 1000, 1, cone="06", cone_state="bent")
    both = add_rendered(log, firing_id, 1100, 2, reference_c=1102, cone="02", cone_state="bent")
    rows = {row["photo"]: row for row in calibration_pairs(log.readings_in(firing_id))}
    assert rows[f"reading-{bent}.jpg"]["cone"] == "06" and rows[f"reading-{bent}.jpg"]["reference_c"] == ""
    assert rows[f"reading-{both}.jpg"]["reference_c"] == "1102.0" and rows[f"reading-{both}.jpg"]["cone"] == ""


def test_no_trusted_reading_no_profile(log):
    firing_id = log.create_firing(name="Plain")
    add_rendered(log, firing_id, 1000, 1)
    with pytest.raises(ProfileError, match="no reading with a thermocouple value"):
        fit_profile_from_firing(log, firing_id, "x")
    assert list_profiles(log.data_dir) == []


def add_rendered_steel(log, firing_id, temperature_c, seed, **trusted):
    """A bar of oxidised steel (emissivity 0.85, inside the steel scene's 0.7-0.95) rendered at a
    known temperature with its exposure data in EXIF, measured as hot steel and logged."""
    data = encode_jpeg(render_photo(temperature_c + 273.15, camera=NIKON, scene="bar", size=(160, 120),
                                    emissivity=0.85, seed=seed))  # fmt: skip
    result = measure(load_photo(data), photo_name=f"{temperature_c}.jpg", scene="steel").to_dict()
    key = log.store_photo(data, ".jpg")
    return data, log.add_reading(photo_key=key, photo_name=f"{temperature_c}.jpg", result=result, firing_id=firing_id,
                                 taken_at=START + timedelta(hours=seed), **trusted)  # fmt: skip


def test_a_magnet_that_let_go_is_a_pair_at_iron_s_curie_point_of_the_firing_s_scene(log):
    from glowtemp.estimation.profile import CURIE_POINT_IRON_C

    firing_id = log.create_firing(name="Hardening a blade", kind="heat treatment")  # hot steel by its kind
    # The smith's test: plain carbon steel stops attracting a magnet at iron's Curie point, 770 °C
    # (CRC Handbook of Chemistry and Physics, "Curie temperatures"); the photo is rendered there.
    _, let_go = add_rendered_steel(log, firing_id, 770, 1, magnet="let go")
    add_rendered_steel(log, firing_id, 700, 2)  # no trusted value
    (row,) = calibration_pairs(log.readings_in(firing_id), "steel")
    assert row["photo"] == f"reading-{let_go}.jpg"
    assert (row["magnet"], row["reference_c"], row["cone"], row["scene"]) == ("let go", "", "", "steel")
    profile = fit_profile_from_firing(log, firing_id, "smithy").to_dict()
    (pair,) = profile["pairs"]
    assert (pair["reference_kind"], pair["reference_c"], pair["scene"]) == ("magnet", CURIE_POINT_IRON_C, "steel")
    assert profile["brightness"]["scene"] == "steel" and profile["brightness"]["pairs"] == 1


def test_the_magnet_profile_reads_another_photo_of_the_same_steel(log):
    from glowtemp.estimation.profile_store import load_profile

    firing_id = log.create_firing(name="Forge day", kind="forging")
    add_rendered_steel(log, firing_id, 770, 3, magnet="let go")
    fit_profile_from_firing(log, firing_id, "forge phone")
    data, _ = add_rendered_steel(log, firing_id, 820, 4)
    reading = measure(load_photo(data), scene="steel", profile=load_profile(log.data_dir, "forge phone")).to_dict()
    assert reading["profile"] == "forge phone" and "brightness" in reading["channels"]
    low, high = reading["interval_95_c"]
    assert low <= 820 <= high  # the rendered truth (Planck's law through the camera model)


def test_a_thermocouple_beats_the_magnet_and_the_magnet_beats_a_bent_cone(log):
    firing_id = log.create_firing(name="Both", kind="other")
    both = add_rendered(log, firing_id, 780, 1, reference_c=781, magnet="let go")
    magnet_and_cone = add_rendered(log, firing_id, 790, 2, magnet="let go", cone="014", cone_state="bent")
    rows = {row["photo"]: row for row in calibration_pairs(log.readings_in(firing_id))}
    assert (rows[f"reading-{both}.jpg"]["reference_c"], rows[f"reading-{both}.jpg"]["magnet"]) == ("781.0", "")
    assert (rows[f"reading-{magnet_and_cone}.jpg"]["magnet"], rows[f"reading-{magnet_and_cone}.jpg"]["cone"]) == ("let go", "")
    assert {row["scene"] for row in rows.values()} == {"other"}
