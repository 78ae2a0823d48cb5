"""The firing log's commands: glowtemp firings, export and import."""

import io
import json
import zipfile
from datetime import datetime, timezone

import pytest
from PIL import Image

from glowtemp.shell.cli import main
from glowtemp.firinglog.logbook import Logbook


@pytest.fixture
def data(tmp_path):
    folder = tmp_path / "data"
    with Logbook(folder) as log:
        firing_id = log.create_firing(name="Bisque 04", kind="bisque", target_cone="04")
        photo = io.BytesIO()
        Image.new("RGB", (16, 16), (220, 90, 10)).save(photo, "JPEG")  # an invented glowing patch
        key = log.store_photo(photo.getvalue(), ".jpg")
        result = {"status": "ok", "temperature_c": 1000, "interval_68_c": [990, 1010], "interval_95_c": [975, 1025]}
        log.add_reading(photo_key=key, photo_name="spy.jpg", result=result, firing_id=firing_id,
                        taken_at=datetime(2024, 3, 1, 12, tzinfo=timezone.utc), reference_c=-1, note="=2+2")  # fmt: skip
    return folder


def test_firings_lists_the_log(data, capsys, tmp_path):
    assert main(["firings", "--data", str(data)]) == 0
    line = capsys.readouterr().out
    assert "Bisque 04" in line and "1 readings" in line and "cone 04" in line
    assert main(["firings", "--data", str(tmp_path / "empty")]) == 0
    assert "empty" in capsys.readouterr().out


def test_export_zip_then_import(data, tmp_path, capsys):
    bundle = tmp_path / "b.zip"
    assert main(["export", "Bisque 04", "-o", str(bundle), "--data", str(data)]) == 0
    with zipfile.ZipFile(bundle) as archive:
        assert json.loads(archive.read("manifest.json"))["firing"]["name"] == "Bisque 04"
    other = tmp_path / "other"
    assert main(["import", str(bundle), "--data", str(other)]) == 0
    assert "imported as firing 1: Bisque 04 (1 readings)" in capsys.readouterr().out
    with Logbook(other) as log, Logbook(data) as first:
        (reading,) = log.readings_in(1)
        (original,) = first.readings_in(1)
        assert log.photo_path(reading["photo_key"]).read_bytes() == first.photo_path(original["photo_key"]).read_bytes()


def test_export_csv_to_standard_output_and_curve(data, tmp_path, capsys):
    curve = tmp_path / "curve.png"
    assert main(["export", "1", "--csv", "-o", "-", "--curve", str(curve), "--data", str(data)]) == 0
    out = capsys.readouterr().out
    assert out.startswith('"reading_id","taken_at","elapsed_h"')
    assert ",-1.0," in out and "\"'=2+2\"" in out  # numbers stay numbers, formulas are defused
    assert Image.open(curve).format == "PNG"
    only_curve = tmp_path / "only.png"
    assert main(["export", "1", "--curve", str(only_curve), "--fahrenheit", "--data", str(data)]) == 0
    assert Image.open(only_curve).size == (840, 624)


def test_errors_are_plain_and_change_nothing(data, tmp_path, capsys):
    assert main(["export", "7", "--data", str(data)]) == 2
    assert "no firing '7'" in capsys.readouterr().err
    broken = tmp_path / "broken.zip"
    broken.write_bytes(b"not a zip at all")
    assert main(["import", str(broken), "--data", str(data)]) == 2
    assert "not a readable zip file" in capsys.readouterr().err
    with Logbook(data) as log:
        assert len(log.list_firings()) == 1
