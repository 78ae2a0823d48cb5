"""Export and restore: the zip bundle round trip, refusing bad bundles, and CSV escaping."""

import csv
import doctest
import hashlib
import io
import json
import zipfile
from datetime import datetime, timedelta, timezone

import pytest

import glowtemp.firinglog.logbook_csv
from glowtemp.firinglog.bundle import BundleError, import_bundle, write_bundle
from glowtemp.firinglog.logbook import Logbook
from glowtemp.firinglog.logbook_csv import COLUMNS, firing_csv, neutralise_cell

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


def tiny_jpeg(hours: float) -> bytes:
    """A small JPEG of an invented glowing patch, different for each ``hours``."""
    from PIL import Image

    out = io.BytesIO()
    Image.new("RGB", (16, 16), (200 + int(hours * 10), 80, 10)).save(out, "JPEG")
    return out.getvalue()


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
        key = log.store_photo(tiny_jpeg(hours), ".jpg")
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


def test_a_steel_firing_with_a_magnet_reading_comes_back_with_both(log, tmp_path):
    firing_id = log.create_firing(name="Knife blanks", kind="heat treatment", scene="other", started_at=START)
    result = {**result_of(770), "scene": "other", "emissivity": [0.2, 1.0], "channels": ["colour", "brightness"],
              "channels_text": "from brightness: the colour only shows a ceiling at this heat"}  # fmt: skip
    key = log.store_photo(tiny_jpeg(0.5), ".jpg")
    log.add_reading(photo_key=key, photo_name="quench.jpg", result=result, taken_at=START + timedelta(hours=0.5),
                    firing_id=firing_id, magnet="let go")  # fmt: skip
    with Logbook(tmp_path / "elsewhere") as other:
        new_id = import_bundle(other, io.BytesIO(bundle_bytes(log, firing_id)))
        firing, (reading,) = other.get_firing(new_id), other.readings_in(new_id)
        assert firing["scene"] == "other"  # as chosen, not the "steel" its kind would suggest
        assert reading["magnet"] == "let go" and reading["result"] == result


def version_1_bundle(data: bytes) -> io.BytesIO:
    """A bundle as glowtemp wrote it before scenes and magnet values: version 1, neither key."""
    def change(manifest, members):
        manifest["version"] = 1
        del manifest["firing"]["scene"]
        for reading in manifest["readings"]:
            del reading["magnet"]

    return rebuild(data, change)


@pytest.mark.parametrize("kind, scene", [("glaze", "kiln"), ("forging", "steel"), ("other", "other")])
def test_a_version_1_bundle_imports_with_the_scene_its_kind_suggests(log, tmp_path, kind, scene):
    firing_id = make_firing(log)
    log.update_firing(firing_id, kind=kind)
    with Logbook(tmp_path / "elsewhere") as other:
        new_id = import_bundle(other, version_1_bundle(bundle_bytes(log, firing_id)))
        assert other.get_firing(new_id)["scene"] == scene
        restored = other.readings_in(new_id)
        assert [r["magnet"] for r in restored] == [None] * 4
        assert [r["reference_c"] for r in restored] == [r["reference_c"] for r in log.readings_in(firing_id)]


def test_bundle_layout(log):
    data = bundle_bytes(log, make_firing(log))
    with zipfile.ZipFile(io.BytesIO(data)) as bundle:
        names = bundle.namelist()
        manifest = json.loads(bundle.read("manifest.json"))
    assert manifest["format"] == "glowtemp-firing-bundle" and manifest["version"] == 2
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
    manifest["version"] = 3


def version_as_true(manifest, members):
    manifest["version"] = True  # equal to 1 in Python, but no version number


def other_format(manifest, members):
    manifest["format"] = "some-other-archive"


def bad_kind(manifest, members):
    manifest["firing"]["kind"] = "raku party"


def bad_reading_time(manifest, members):
    manifest["readings"][1]["taken_at"] = "teatime"


def reading_without_result(manifest, members):
    del manifest["readings"][2]["result"]


def replace_photo(new_bytes: bytes, suffix: str = ".jpg"):
    """A change that swaps the first photo for ``new_bytes`` under its own SHA-256 name, listed
    consistently in the manifest, so only what the bytes are can give it away."""
    def change(manifest, members):
        old_name = photo_names(members)[0]
        old_key = old_name.removeprefix("photos/")
        new_key = hashlib.sha256(new_bytes).hexdigest() + suffix
        del members[old_name]
        members["photos/" + new_key] = new_bytes
        del manifest["photos"][old_key]
        manifest["photos"][new_key] = {"sha256": new_key.partition(".")[0], "bytes": len(new_bytes)}
        for reading in manifest["readings"]:
            if reading["photo_key"] == old_key:
                reading["photo_key"] = new_key

    return change


def png_bytes() -> bytes:
    from PIL import Image

    out = io.BytesIO()
    Image.new("RGB", (16, 16), (200, 80, 10)).save(out, "PNG")
    return out.getvalue()


def on_result(key, value, index=0):
    def change(manifest, members):
        manifest["readings"][index]["result"][key] = value

    return change


def on_reading(key, value, index=0):
    def change(manifest, members):
        manifest["readings"][index][key] = value

    return change


def on_firing(key, value):
    def change(manifest, members):
        manifest["firing"][key] = value

    return change


def wrong_listed_size(manifest, members):
    key = next(iter(manifest["photos"]))
    manifest["photos"][key]["bytes"] += 1


@pytest.mark.parametrize(
    "change, words",
    [
        (replace_photo(b"<!doctype html><script>alert(1)</script>" * 20), "not a photo"),
        (replace_photo(b""), "not a photo"),
        (replace_photo(png_bytes()), "PNG photo under a name for another kind"),
        (wrong_listed_size, "with its size"),
        (on_reading("reference_c", 10**400), "thermocouple reading must lie between"),
        (on_firing("target_c", -(10**400)), "target temperature must lie between"),
        (on_firing("name", "kiln \ud800"), "surrogate"),
        (on_reading("note", "\udfff"), "surrogate"),
        (on_result("photo", "\ud800.jpg"), "surrogate"),
        (on_result("interval_68_c", [900]), "interval_68_c must be a list of two numbers"),
        (on_result("interval_95_c", [1000, 900]), "interval_95_c must run from low to high"),
        (on_result("temperature_c", "900"), "temperature_c must be a number"),
        (on_result("temperature_c", 10**400), "temperature_c must lie between"),
        (on_result("warnings", "none"), "warnings must be a list"),
        (on_result("pixels_used", -4), "pixels_used must be a whole number"),
        (on_result("region", "1,2,3,4"), "region must be an object"),
        (on_result("status", ["ok"]), "status must be a status word"),
        (on_reading("taken_at", "0001-01-01T00:00:00+01:00"), "between the years"),
        (on_firing("created_at", "9999-12-31T23:59:59-01:00"), "between the years"),
        (drop_photo, "lacks the photo"),
        (alter_photo, "SHA-256"),
        (alter_listed_hash, "SHA-256"),
        (traversal, "neither manifest.json nor a photo"),
        (absolute_path, "neither manifest.json nor a photo"),
        (unknown_version, "format version 3"),
        (version_as_true, "format version True"),
        (on_firing("scene", "forge"), "scene .what is photographed. must be one of kiln, steel, other"),
        (on_reading("magnet", "stuck"), "magnet value is 'let go'"),
        (on_result("scene", "forge"), "scene must be one of kiln, steel, other"),
        (on_result("emissivity", [0.9, 1.5]), "emissivity must hold numbers above 0 and at most 1"),
        (on_result("channels", ["colour", "smell"]), "channels must be a list of colour or brightness"),
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
    assert rows[0]["photo_sha256"] == hashlib.sha256(tiny_jpeg(1.0)).hexdigest()
    assert rows[2]["cone"] == "06" and rows[2]["cone_state"] == "bent"
    assert {row["magnet"] for row in rows} == {""}  # none of these readings had a magnet test


def test_csv_carries_the_magnet_the_scene_and_the_channels(log):
    firing_id = log.create_firing(name="Hardening", kind="heat treatment", started_at=START)
    result = {**result_of(770), "scene": "steel", "emissivity": [0.7, 0.95], "channels": ["colour", "brightness"]}
    key = log.store_photo(tiny_jpeg(0.5), ".jpg")
    log.add_reading(photo_key=key, photo_name="bar.jpg", result=result, taken_at=START, firing_id=firing_id,
                    magnet="let go")  # fmt: skip
    (row,) = csv.DictReader(io.StringIO(firing_csv(log.get_firing(firing_id), log.readings_in(firing_id))))
    assert (row["magnet"], row["scene"], row["channels"]) == ("let go", "steel", "colour brightness")
    assert (row["emissivity_low"], row["emissivity_high"]) == ("0.7", "0.95")


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
    assert doctest.testmod(glowtemp.firinglog.logbook_csv).failed == 0


def test_a_bundle_of_more_photos_than_the_limit_is_refused_before_reading(tmp_path, log, monkeypatch):
    from glowtemp.firinglog import bundle as bundle_module

    data = bundle_bytes(log, make_firing(log))
    monkeypatch.setattr(bundle_module, "MOST_PHOTOS", 2)  # the firing has 3 photos
    with Logbook(tmp_path / "fresh") as fresh:
        with pytest.raises(BundleError, match="holds 4 files; a firing's bundle holds at most 2 photos"):
            import_bundle(fresh, io.BytesIO(data))
        assert fresh.list_firings() == [] and list(fresh.photos.folder.iterdir()) == []


def test_highly_compressible_members_are_read_in_chunks_not_whole(tmp_path, log):
    # Three 60 MB photos that deflate to a few hundred KB: a valid JPEG followed by zeros (data
    # after the EOI marker is ignored, ITU-T T.81 B.2.1). The last one's listed hash is wrong, so
    # every member is read and checked and nothing is stored. Python's tracemalloc counts the
    # bytes objects that reading them makes.
    import tracemalloc

    firing_id = log.create_firing(name="Padded", started_at=START)
    padding = 60 * 1024 * 1024
    for number in range(3):
        photo = tiny_jpeg(number) + b"\0" * padding
        key = log.store_photo(photo, ".jpg")
        log.add_reading(photo_key=key, photo_name=f"{number}.jpg", result=result_of(900), taken_at=START, firing_id=firing_id)
        del photo
    source = tmp_path / "padded.zip"
    with zipfile.ZipFile(source, "w", compression=zipfile.ZIP_DEFLATED) as out:
        manifest = None
        with zipfile.ZipFile(io.BytesIO(bundle_bytes(log, firing_id))) as made:  # stored, so about 180 MB
            manifest = json.loads(made.read("manifest.json"))
            manifest["photos"][sorted(manifest["photos"])[-1]]["sha256"] = "0" * 64
            out.writestr("manifest.json", json.dumps(manifest))
            for name in made.namelist():
                if name != "manifest.json":
                    with made.open(name) as member, out.open(name, "w") as copy:
                        for chunk in iter(lambda: member.read(1 << 20), b""):
                            copy.write(chunk)
    assert source.stat().st_size < 3 * padding / 20
    with Logbook(tmp_path / "fresh") as fresh:
        tracemalloc.start()
        try:
            with pytest.raises(BundleError, match="SHA-256"):
                import_bundle(fresh, source)
            _, peak = tracemalloc.get_traced_memory()
        finally:
            tracemalloc.stop()
        assert peak < 16 * 1024 * 1024, peak  # a 60 MB member was never held whole
        assert fresh.list_firings() == [] and list(fresh.photos.folder.iterdir()) == []
