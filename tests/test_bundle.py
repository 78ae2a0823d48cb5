"""Export and restore: the zip bundle round trip, refusing bad bundles, and CSV escaping."""

import csv
import doctest
import hashlib
import io
import json
import zipfile
from datetime import datetime, timedelta, timezone

import pytest

import glowtemp.logbook_csv
from glowtemp.bundle import BundleError, import_bundle, write_bundle
from glowtemp.logbook import Logbook
from glowtemp.logbook_csv import COLUMNS, firing_csv, neutralise_cell

START = datetime(2024, 3, 9, 8, 0, tzinfo=timezone.utc)


def result_of(temperature_c):
    """A reading's JSON form as laid out by Reading.to_dict() (see the interfaces notes)."""
    return {
        "photo": "p.jpg", "status": "ok", "temperature_c": temperature_c,
        "interval_68_c": [temperature_c - 10, temperature_c + 10],
        "interval_95_c": [temperature_c - 25, temperature_c + 25], "upper_bound_c": None,
        "temperature_f": temperature_c * 9 / 5 + 32, "glow_name": "orange",
        "warnings": [{"code": "auto-white-balance", "message": "m", "fix": "f"}, {"code": "few-pixels", "message": "m", "fix": "f"}],
        "region": {"kind": "rectangle", "x": 1, "y": 2, "width": 3, "height": 4, "text": "1,2,3,4", "found": False},
        "profile": "phone-a",
    }  # fmt: skip


@pytest.fixture
def log(tmp_path):
    with Logbook(tmp_path / "home") as book:
        yield book


def make_firing(log):
    firing_id = log.create_firing(
        name="Cone 6 glaze", kiln="Electric, shelf 3", kind="glaze", target_cone="6",
        started_at=START, notes="slow cool\nsecond line",
    )  # fmt: skip
    for hours, temperature_c, trusted in (
        (1.0, 900, {"reference_c": 912.5}),
        (2.5, 1100, {"cone": "06", "cone_state": "bent", "note": "=cmd|' /C calc'!A0"}),
        (3.0, 1180, {"reference_c": -5.0, "note": "-5"}),
    ):
        key = log.store_photo(f"jpeg bytes {hours}".encode() * 100, ".jpg")
        log.add_reading(photo_key=key, photo_name=f"spy {hours}.jpg", result=result_of(temperature_c),
                        taken_at=START + timedelta(hours=hours), firing_id=firing_id, **trusted)  # fmt: skip
    shared = log.readings_in(firing_id)[0]["photo_key"]  # the same photo used twice is stored once
    log.add_reading(photo_key=shared, photo_name="again.jpg", result=result_of(905), taken_at=START + timedelta(hours=1.1),
                    firing_id=firing_id)  # fmt: skip
    log.close_firing(firing_id)
    return firing_id


def without_ids(firing, readings):
    firing = {k: v for k, v in firing.items() if k != "id"}
    return firing, [{k: v for k, v in r.items() if k not in ("id", "firing_id")} for r in readings]


def bundle_bytes(log, firing_id) -> bytes:
    out = io.BytesIO()
    write_bundle(log, firing_id, out)
    return out.getvalue()


def test_bundle_restores_the_firing_exactly(log, tmp_path):
    firing_id = make_firing(log)
    data = bundle_bytes(log, firing_id)
    with Logbook(tmp_path / "elsewhere") as other:
        other.create_firing(name="Something else first")  # so the ids differ
        new_id = import_bundle(other, io.BytesIO(data))
        assert new_id != firing_id
        assert without_ids(other.get_firing(new_id), other.readings_in(new_id)) == without_ids(
            log.get_firing(firing_id), log.readings_in(firing_id)
        )
        for reading in other.readings_in(new_id):
            restored = other.photo_path(reading["photo_key"]).read_bytes()
            assert restored == log.photo_path(reading["photo_key"]).read_bytes()
        assert len(other.photos.keys()) == 3


def test_bundle_layout(log):
    data = bundle_bytes(log, make_firing(log))
    with zipfile.ZipFile(io.BytesIO(data)) as bundle:
        names = bundle.namelist()
        manifest = json.loads(bundle.read("manifest.json"))
    assert manifest["format"] == "glowtemp-firing-bundle" and manifest["version"] == 1
    assert len(manifest["readings"]) == 4 and len(manifest["photos"]) == 3
    assert sorted(names) == sorted(["manifest.json"] + ["photos/" + key for key in manifest["photos"]])


def test_importing_twice_makes_a_clearly_named_copy(log):
    firing_id = make_firing(log)
    data = bundle_bytes(log, firing_id)
    first = import_bundle(log, io.BytesIO(data))
    second = import_bundle(log, io.BytesIO(data))
    assert log.get_firing(first)["name"] == "Cone 6 glaze (imported copy)"
    assert log.get_firing(second)["name"] == "Cone 6 glaze (imported copy 2)"
    assert len(log.readings_in(second)) == 4
    assert len(log.photos.keys()) == 3  # same photos, same files


def rebuild(data: bytes, change) -> io.BytesIO:
    """A copy of a bundle with ``change(manifest, members)`` applied; members maps names to bytes."""
    with zipfile.ZipFile(io.BytesIO(data)) as bundle:
        members = {name: bundle.read(name) for name in bundle.namelist()}
    manifest = json.loads(members.pop("manifest.json"))
    change(manifest, members)
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w") as bundle:
        if manifest is not None:
            bundle.writestr("manifest.json", json.dumps(manifest))
        for name, member in members.items():
            bundle.writestr(name, member)
    out.seek(0)
    return out


def photo_names(members):
    return [name for name in members if name.startswith("photos/")]


def drop_photo(manifest, members):
    del members[photo_names(members)[0]]


def alter_photo(manifest, members):
    name = photo_names(members)[0]
    members[name] = members[name][:-1] + b"X"


def alter_listed_hash(manifest, members):
    key = next(iter(manifest["photos"]))
    manifest["photos"][key]["sha256"] = "0" * 64


def traversal(manifest, members):
    members["../glowtemp.sqlite3"] = b"overwrite"


def absolute_path(manifest, members):
    members["/etc/cron.d/x"] = b"x"


def unknown_version(manifest, members):
    manifest["version"] = 2


def other_format(manifest, members):
    manifest["format"] = "some-other-archive"


def bad_kind(manifest, members):
    manifest["firing"]["kind"] = "raku party"


def bad_reading_time(manifest, members):
    manifest["readings"][1]["taken_at"] = "teatime"


def reading_without_result(manifest, members):
    del manifest["readings"][2]["result"]


@pytest.mark.parametrize(
    "change, words",
    [
        (drop_photo, "lacks the photo"),
        (alter_photo, "SHA-256"),
        (alter_listed_hash, "SHA-256"),
        (traversal, "neither manifest.json nor a photo"),
        (absolute_path, "neither manifest.json nor a photo"),
        (unknown_version, "format version 2"),
        (other_format, "does not describe"),
        (bad_kind, "kind of firing"),
        (bad_reading_time, "time the photo was taken"),
        (reading_without_result, "result"),
    ],
)
def test_bad_bundles_are_refused_with_nothing_stored(tmp_path, log, change, words):
    data = bundle_bytes(log, make_firing(log))
    with Logbook(tmp_path / "fresh") as fresh:
        with pytest.raises(BundleError, match=words):
            import_bundle(fresh, rebuild(data, change))
        assert fresh.list_firings() == []
        assert list(fresh.photos.folder.iterdir()) == []
    assert not (tmp_path / "glowtemp.sqlite3").exists()


def test_not_a_zip_and_no_manifest(tmp_path, log):
    with pytest.raises(BundleError, match="not a readable zip file"):
        import_bundle(log, io.BytesIO(b"PK\x03\x04 certainly not a zip"))
    empty = io.BytesIO()
    zipfile.ZipFile(empty, "w").close()
    with pytest.raises(BundleError, match="no manifest.json"):
        import_bundle(log, io.BytesIO(empty.getvalue()))
    assert log.list_firings() == []


def test_csv_has_units_in_headers_and_one_row_per_reading(log):
    firing_id = make_firing(log)
    text = firing_csv(log.get_firing(firing_id), log.readings_in(firing_id))
    rows = list(csv.DictReader(io.StringIO(text)))
    assert tuple(rows[0]) == COLUMNS
    assert {"estimate_c", "band95_low_c", "band95_high_c", "reference_c", "elapsed_h"} <= set(COLUMNS)
    assert [row["elapsed_h"] for row in rows] == ["1.0", "1.1", "2.5", "3.0"]
    assert rows[0]["estimate_c"] == "900" and rows[0]["band95_low_c"] == "875" and rows[0]["reference_c"] == "912.5"
    assert rows[0]["warnings"] == "auto-white-balance few-pixels"
    assert rows[0]["photo_sha256"] == hashlib.sha256(b"jpeg bytes 1.0" * 100).hexdigest()
    assert rows[2]["cone"] == "06" and rows[2]["cone_state"] == "bent"


def test_csv_defuses_formulas_but_keeps_negative_numbers(log):
    firing_id = make_firing(log)
    text = firing_csv(log.get_firing(firing_id), log.readings_in(firing_id))
    rows = list(csv.DictReader(io.StringIO(text)))
    assert rows[2]["note"] == "'=cmd|' /C calc'!A0"  # OWASP CSV injection: leading apostrophe
    assert rows[3]["reference_c"] == "-5.0" and rows[3]["note"] == "-5"
    assert ",-5.0," in text  # a number, written unquoted (RFC 4180 quoting only where text)
    # OWASP CSV injection: =, +, -, @, tab (0x09) and carriage return (0x0D) start formulas.
    # Digits of other scripts are text to a spreadsheet, not a number: "-١٢" (Arabic-Indic 12).
    for dangerous in ("=1+1", "+1+1", "-1+1", "@SUM(A1)", "\tx", "\rx", "-\u0661\u0662", "-\u0967.\u0968"):
        assert neutralise_cell(dangerous) == "'" + dangerous
    for harmless in ("-12.5", "-3", "plain", "", 12.5, -7):
        assert neutralise_cell(harmless) == harmless


def test_csv_module_examples():
    assert doctest.testmod(glowtemp.logbook_csv).failed == 0
