"""The firing log's store: firings, readings, photos, times, threads and bad input."""

import hashlib
import os
import sqlite3
import threading
from datetime import datetime, timedelta, timezone

import pytest

from glowtemp.firinglog.logbook import Logbook, LogbookError
from glowtemp.firinglog.photo_store import TEMPORARY_PREFIX

START = datetime(2024, 3, 1, 8, 0, tzinfo=timezone.utc)


def result_of(temperature_c, band68=None, band95=None, status="ok"):
    """A reading's JSON form as Reading.to_dict() lays it out (fields described in interfaces)."""
    band68 = band68 or [temperature_c - 15, temperature_c + 15]
    band95 = band95 or [temperature_c - 30, temperature_c + 30]
    return {
        "photo": "spy.jpg",
        "status": status,
        "temperature_c": temperature_c,
        "interval_68_c": band68,
        "interval_95_c": band95,
        "upper_bound_c": None,
        "resolution_c": 5,
        "warnings": [{"code": "auto-white-balance", "message": "m", "fix": "f"}],
        "region": {"kind": "circle", "cx": 10, "cy": 12, "radius": 5, "text": "circle:10,12,5", "found": True},
        "profile": None,
    }


@pytest.fixture
def log(tmp_path):
    with Logbook(tmp_path) as book:
        yield book


def add(log, firing_id, hours, temperature_c, data=None, **trusted):
    key = log.store_photo(data or f"photo at {hours} h".encode(), ".jpg")
    return log.add_reading(
        photo_key=key,
        photo_name=f"{hours}.jpg",
        result=result_of(temperature_c),
        taken_at=START + timedelta(hours=hours),
        firing_id=firing_id,
        **trusted,
    )


def test_photo_key_is_sha256_of_the_bytes(log):
    # FIPS 180-2, appendix B.1: SHA-256("abc").
    key = log.store_photo(b"abc", ".jpg")
    assert key == "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad.jpg"
    assert log.photo_path(key).read_bytes() == b"abc"
    assert log.store_photo(b"abc", ".jpg") == key  # same bytes, same single file
    assert [p.name for p in log.photo_path(key).parent.iterdir()] == [key]


@pytest.mark.parametrize("key", ["../glowtemp.sqlite3", "/etc/passwd", "abc.jpg", "A" * 64 + ".jpg", "x" * 64, ""])
def test_photo_path_refuses_anything_but_a_stored_name(log, key):
    with pytest.raises(LogbookError, match="photo"):
        log.photo_path(key)


@pytest.mark.parametrize("suffix", ["jpg", "../.jpg", ".JPG", ".j/g", ""])
def test_store_photo_refuses_odd_suffixes(log, suffix):
    with pytest.raises(LogbookError, match="suffix"):
        log.store_photo(b"data", suffix)
    assert list(log.photos.folder.iterdir()) == []


def test_firing_round_trip_and_edits(log):
    firing_id = log.create_firing(
        name="Cone 6 glaze", kiln="Big electric", kind="glaze", target_c=1222, target_cone="6",
        started_at="2024-03-01T09:00:00+01:00", notes="new shelf",
    )  # fmt: skip
    firing = log.get_firing(firing_id)
    assert firing["name"] == "Cone 6 glaze" and firing["kiln"] == "Big electric"
    assert firing["started_at"] == "2024-03-01T08:00:00+00:00"  # the same instant in UTC
    assert firing["status"] == "open" and firing["closed_at"] is None and firing["reading_count"] == 0
    assert log.update_firing(firing_id, name="Cone 6 glaze, slow cool", target_c=None)["target_c"] is None
    closed = log.close_firing(firing_id)
    assert closed["status"] == "closed" and closed["closed_at"] is not None
    assert log.update_firing(firing_id, status="open")["closed_at"] is None
    assert [f["id"] for f in log.list_firings()] == [firing_id]


@pytest.mark.parametrize(
    "change",
    [
        {"kind": "raku-ish"},
        {"name": "  "},
        {"target_c": "hot"},
        {"target_c": float("nan")},
        {"target_c": 99999},
        {"target_cone": "6a"},
        {"target_cone": "023"},
        {"started_at": "yesterday"},
        {"colour": "red"},
        {"status": "paused"},
        {"scene": "forge"},
        {"scene": None},
        {"scene": ["kiln"]},
    ],
)
def test_bad_firing_fields_are_refused_and_change_nothing(log, change):
    firing_id = log.create_firing(name="Bisque", kind="bisque", target_cone="04")
    before = log.get_firing(firing_id)
    with pytest.raises(LogbookError):
        log.update_firing(firing_id, **change)
    assert log.get_firing(firing_id) == before


def test_all_kinds_of_work_are_accepted(log):
    for kind in ("bisque", "glaze", "glass", "forging", "heat treatment", "other"):
        assert log.get_firing(log.create_firing(name=kind, kind=kind))["kind"] == kind


@pytest.mark.parametrize("kind, scene", [("bisque", "kiln"), ("glaze", "kiln"), ("glass", "kiln"),
                                         ("forging", "steel"), ("heat treatment", "steel"), ("other", "other")])  # fmt: skip
def test_a_firing_s_scene_follows_its_kind_unless_chosen_and_is_remembered(log, kind, scene):
    # A kiln's inside through a spy hole, hot steel at the forge (common practice).
    assert log.get_firing(log.create_firing(name="by kind", kind=kind))["scene"] == scene
    chosen = log.create_firing(name="chosen", kind=kind, scene="other" if scene != "other" else "kiln")
    kept = log.update_firing(chosen, kind="glaze", name="renamed")
    assert kept["scene"] == ("other" if scene != "other" else "kiln")
    assert log.update_firing(chosen, scene="steel")["scene"] == "steel"


def test_a_magnet_that_let_go_is_kept_and_can_be_cleared(log):
    firing_id = log.create_firing(name="Hardening", kind="heat treatment")
    reading_id = add(log, firing_id, 1, 780, magnet=" Let go ")
    assert log.get_reading(reading_id)["magnet"] == "let go"
    assert log.update_reading(reading_id, magnet=None)["magnet"] is None
    assert log.update_reading(reading_id, magnet="let go", reference_c=772)["magnet"] == "let go"


def test_reading_round_trip(log):
    firing_id = log.create_firing(name="Glaze")
    reading_id = add(log, firing_id, 2, 1010, reference_c=1003.5, cone="06", cone_state="bent", note="peep 2")
    reading = log.get_reading(reading_id)
    assert reading["result"] == result_of(1010)
    assert reading["temperature_c"] == 1010
    assert reading["interval_68_c"] == [995, 1025] and reading["interval_95_c"] == [980, 1040]
    assert reading["region_text"] == "circle:10,12,5"
    assert reading["reference_c"] == 1003.5 and reading["cone"] == "06" and reading["cone_state"] == "bent"
    assert reading["taken_at"] == "2024-03-01T10:00:00+00:00"
    assert log.photo_path(reading["photo_key"]).read_bytes() == b"photo at 2 h"
    assert log.get_firing(firing_id)["reading_count"] == 1
    assert log.get_reading(reading_id + 1) is None


def test_reading_without_estimate_keeps_empty_columns(log):
    key = log.store_photo(b"dark", ".png")
    result = {**result_of(0), "status": "no-data", "temperature_c": None, "interval_68_c": None, "interval_95_c": None}
    reading = log.get_reading(log.add_reading(photo_key=key, photo_name="d.png", result=result, taken_at=START))
    assert reading["temperature_c"] is None and reading["interval_95_c"] is None and reading["firing_id"] is None


def test_reading_needs_its_photo_stored_first(log):
    with pytest.raises(LogbookError, match="not in the photo store"):
        log.add_reading(photo_key="0" * 64 + ".jpg", photo_name="x.jpg", result=result_of(900), taken_at=START)
    assert log._read("SELECT COUNT(*) FROM readings")[0][0] == 0


@pytest.mark.parametrize(
    "trusted",
    [
        {"reference_c": "warm"},
        {"cone": "6½"},  # no cone 6½ in the cone table (common practice: half cones are 05½ and 5½)
        {"cone": "15"},  # beyond the shipped table
        {"cone_state": "melted", "cone": "6"},
        {"cone_state": "bent"},
        {"firing_id": 999},
        {"taken_at": 5},
        {"magnet": "stuck"},
        {"magnet": True},
        {"magnet": "yes"},  # the pairs CSV's shorthand; the log keeps the one plain value
    ],
)
def test_bad_trusted_values_are_refused_and_store_nothing(log, trusted):
    firing_id = log.create_firing(name="Glaze")
    key = log.store_photo(b"x", ".jpg")
    arguments = {"photo_key": key, "photo_name": "x.jpg", "result": result_of(900), "taken_at": START,
                 "firing_id": firing_id, **trusted}  # fmt: skip
    with pytest.raises(LogbookError):
        log.add_reading(**arguments)
    assert log.readings_in(firing_id) == []


def test_bad_result_is_refused(log):
    key = log.store_photo(b"x", ".jpg")
    for result in ({"temperature_c": 900}, "900", {"status": "ok", "temperature_c": float("inf")}):
        with pytest.raises(LogbookError, match="result"):
            log.add_reading(photo_key=key, photo_name="x.jpg", result=result, taken_at=START)


def test_editing_trusted_values_and_result(log):
    firing_id = log.create_firing(name="Glaze")
    reading_id = add(log, firing_id, 1, 900)
    edited = log.update_reading(reading_id, reference_c=912, cone="010", cone_state="standing", note="shelf 2")
    assert (edited["reference_c"], edited["cone"], edited["cone_state"], edited["note"]) == (912, "010", "standing", "shelf 2")
    assert log.update_reading(reading_id, cone="cone 5 1/2")["cone"] == "5.5"
    before = log.get_reading(reading_id)
    with pytest.raises(LogbookError):
        log.update_reading(reading_id, cone=None)  # would leave a cone state without its cone
    with pytest.raises(LogbookError):
        log.update_reading(reading_id, photo_key="0" * 64 + ".jpg")  # not a trusted value
    assert log.get_reading(reading_id) == before
    again = log.update_reading_result(reading_id, result_of(950, band68=[940, 960], band95=[930, 970]))
    assert again["temperature_c"] == 950 and again["interval_95_c"] == [930, 970]
    assert again["reference_c"] == 912  # trusted values stay
    with pytest.raises(LogbookError, match="no reading"):
        log.update_reading(reading_id + 5, note="x")


def test_readings_come_in_time_order_across_time_zones(log):
    firing_id = log.create_firing(name="Glaze")
    key = log.store_photo(b"x", ".jpg")
    # 10:30 at +02:00 is 08:30 UTC, earlier than 09:00 UTC.
    for taken_at in ("2024-03-01T09:00:00+00:00", "2024-03-01T10:30:00+02:00", "2024-03-01T08:45:00Z"):
        log.add_reading(photo_key=key, photo_name="x.jpg", result=result_of(900), taken_at=taken_at, firing_id=firing_id)
    assert [r["taken_at"][11:16] for r in log.readings_in(firing_id)] == ["08:30", "08:45", "09:00"]


def test_deleting_a_reading_removes_its_photo_only_when_unused(log):
    firing_id = log.create_firing(name="Glaze")
    shared = add(log, firing_id, 1, 900, data=b"same")
    twin = add(log, firing_id, 2, 910, data=b"same")
    path = log.photo_path(log.get_reading(shared)["photo_key"])
    log.delete_reading(shared)
    assert path.exists()
    log.delete_reading(twin)
    assert not path.exists()
    with pytest.raises(LogbookError):
        log.delete_reading(twin)


def test_deleting_a_firing_takes_its_readings_and_unshared_photos(log):
    first = log.create_firing(name="First")
    second = log.create_firing(name="Second")
    add(log, first, 1, 900, data=b"own")
    add(log, first, 2, 950, data=b"shared")
    kept = add(log, second, 1, 990, data=b"shared")
    own_key = hashlib.sha256(b"own").hexdigest() + ".jpg"
    log.delete_firing(first)
    assert log.get_firing(first) is None
    assert log._read("SELECT COUNT(*) FROM readings WHERE firing_id = ?", (first,))[0][0] == 0
    assert not log.photo_path(own_key).exists()
    assert log.photo_path(log.get_reading(kept)["photo_key"]).exists()
    with pytest.raises(LogbookError, match="no firing"):
        log.readings_in(first)


def test_store_survives_reopening_in_wal_mode(tmp_path):
    with Logbook(tmp_path) as log:
        firing_id = log.create_firing(name="Kept")
        add(log, firing_id, 1, 1000)
    with Logbook(tmp_path) as log:
        assert log.get_firing(firing_id)["reading_count"] == 1
    database = sqlite3.connect(tmp_path / "glowtemp.sqlite3")
    assert database.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
    database.close()


def test_several_threads_share_one_logbook(log):
    firing_id = log.create_firing(name="Busy")
    errors = []

    def writer(n):
        try:
            for i in range(10):
                add(log, firing_id, n * 10 + i, 900 + i, data=f"{n}-{i}".encode())
                log.list_firings()
        except Exception as error:  # reported below
            errors.append(error)

    threads = [threading.Thread(target=writer, args=(n,)) for n in range(4)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join()
    assert errors == []
    assert len(log.readings_in(firing_id)) == 40


def test_a_newer_schema_is_refused(tmp_path):
    Logbook(tmp_path).close()
    database = sqlite3.connect(tmp_path / "glowtemp.sqlite3")
    database.execute("INSERT INTO schema_version VALUES (99, '2030-01-01T00:00:00+00:00')")
    database.commit()
    database.close()
    with pytest.raises(LogbookError, match="newer glowtemp"):
        Logbook(tmp_path)


def test_opening_removes_temporary_files_of_dead_writers_only(tmp_path):
    photos = tmp_path / "photos"
    photos.mkdir()
    child = os.fork()
    if child == 0:
        os._exit(0)
    os.waitpid(child, 0)  # a process id that no longer runs
    dead = photos / f"{TEMPORARY_PREFIX}{child}-0123"
    live = photos / f"{TEMPORARY_PREFIX}{os.getpid()}-4567"
    dead.write_bytes(b"half a pho")
    live.write_bytes(b"still writ")
    with Logbook(tmp_path) as log:
        assert not dead.exists() and live.exists()
        assert log.photos.keys() == []
