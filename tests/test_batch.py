"""Batch runs and firings from photo series, checked against single measurements."""

import csv
import fcntl
import json
import os
import pty
import struct
import termios
import select
import subprocess
import sys
from datetime import datetime, timedelta

import pytest
from PIL import Image

from glowtemp.shell.batch import BatchError, collect_photos, measure_many
from glowtemp.shell.cli import main
from glowtemp.firinglog.logbook import Logbook
from glowtemp.images.photo import load_photo
from glowtemp.estimation.reading import measure
from glowtemp.shell.series import SeriesError, firing_from_photos
from glowtemp.render.synthetic import encode_jpeg, render_photo
from glowtemp.render.synthetic_camera import ideal_camera

START = datetime(2025, 3, 8, 18, 0, 0)  # invented firing start


def shoot(folder, name, temperature_c, minutes=0):
    rendered = render_photo(temperature_c + 273.15, camera=ideal_camera(), size=(96, 64), seed=int(temperature_c),
                            taken_at=START + timedelta(minutes=minutes))  # fmt: skip
    path = folder / name
    path.write_bytes(encode_jpeg(rendered))
    return path


@pytest.fixture
def folder(tmp_path):
    photos = tmp_path / "photos"
    photos.mkdir()
    for k, temperature_c in enumerate((950, 1050, 1150, 1250)):
        shoot(photos, f"kiln-{k}.jpg", temperature_c, minutes=30 * k)
    (photos / "notes.txt").write_text("not a photo, and not collected")
    (photos / "broken.png").write_bytes(b"\x89PNG\r\n\x1a\n broken")
    return photos


def single(path, scene="other") -> dict:
    return measure(load_photo(path), photo_name=str(path), scene=scene).to_dict()


def test_folders_expand_to_their_photos_by_name_and_missing_paths_are_refused(folder, tmp_path):
    names = [os.path.basename(p) for p in collect_photos([folder])]
    assert names == ["broken.png", "kiln-0.jpg", "kiln-1.jpg", "kiln-2.jpg", "kiln-3.jpg"]
    with pytest.raises(BatchError, match="no file or folder"):
        collect_photos([tmp_path / "nowhere"])
    (tmp_path / "empty").mkdir()
    with pytest.raises(BatchError, match="holds no photos"):
        collect_photos([tmp_path / "empty"])


def test_two_processes_give_the_single_runs_results_in_input_order(folder):
    paths = collect_photos([folder])[1:][::-1]  # reversed, to see the order kept
    results = list(measure_many(paths, jobs=2, progress=False))
    assert [m.path for m in results] == paths
    for measured in results:
        assert measured.error is None and measured.format == "JPEG"
        assert measured.result == single(measured.path)


def test_csv_and_json_lines_match_single_runs_and_name_failures(folder, tmp_path, capsys):
    table, lines = tmp_path / "out.csv", tmp_path / "out.jsonl"
    status = main(["measure", str(folder), "--csv", str(table), "--jsonl", str(lines), "--jobs", "2"])
    assert status == 1  # one photo failed
    assert "broken.png" in capsys.readouterr().err
    records = [json.loads(line) for line in lines.read_text(encoding="utf-8").splitlines()]
    rows = list(csv.DictReader(table.open(encoding="utf-8")))  # RFC 4180, read back by Python's csv
    assert len(records) == len(rows) == 5
    assert "error" in records[0] and rows[0]["status"] == "error" and rows[0]["error"]
    for record, row in zip(records[1:], rows[1:]):
        assert record == single(record["photo"])
        assert row["photo"] == record["photo"]
        assert float(row["temperature_c"]) == record["temperature_c"]
        assert [float(row["band95_low_c"]), float(row["band95_high_c"])] == record["interval_95_c"]


def test_csv_cells_that_look_like_formulas_are_defused(tmp_path, monkeypatch):
    # OWASP "CSV Injection": a leading = is prefixed with an apostrophe
    shoot(tmp_path, "=HYPERLINK(1).jpg", 1100)
    monkeypatch.chdir(tmp_path)
    table = tmp_path / "out.csv"
    assert main(["measure", "=HYPERLINK(1).jpg", "--csv", str(table)]) == 0
    row = next(csv.DictReader(table.open(encoding="utf-8")))
    assert row["photo"].startswith("'=")


def batch_command(folder) -> list:
    return [sys.executable, "-m", "glowtemp.shell.cli", "measure", str(folder / "kiln-0.jpg"), str(folder / "kiln-1.jpg"),
            "--jsonl", os.devnull, "--jobs", "1"]  # fmt: skip


def test_the_progress_bar_shows_on_a_terminal_only(folder):
    piped = subprocess.run(batch_command(folder), capture_output=True, text=True).stderr
    assert "2/2" not in piped and "photo/s" not in piped
    primary, secondary = pty.openpty()  # a pseudo-terminal as standard error, 80 columns wide
    fcntl.ioctl(secondary, termios.TIOCSWINSZ, struct.pack("HHHH", 24, 80, 0, 0))
    try:
        subprocess.run(batch_command(folder), stdout=subprocess.DEVNULL, stderr=secondary, check=True)
        shown = b""
        while select.select([primary], [], [], 0.5)[0]:
            shown += os.read(primary, 65536)
        shown = shown.decode("utf-8", "replace")
    finally:
        os.close(secondary)
        os.close(primary)
    assert "2/2" in shown  # tqdm's "n/total" counter


def test_a_firing_is_made_from_a_timed_series_in_time_order(folder, tmp_path):
    data = tmp_path / "data"
    paths = collect_photos([folder])[1:]
    shuffled = [paths[2], paths[0], paths[3], paths[1]]
    assert main(["firing", "from-photos", "Glaze 12", *shuffled, "--data", str(data), "--jobs", "2"]) == 0
    with Logbook(data) as log:
        (firing,) = log.list_firings()
        readings = log.readings_in(firing["id"])
    assert firing["name"] == "Glaze 12" and firing["reading_count"] == 4
    assert [r["photo_name"] for r in readings] == ["kiln-0.jpg", "kiln-1.jpg", "kiln-2.jpg", "kiln-3.jpg"]
    assert datetime.fromisoformat(firing["started_at"]) == START.astimezone()  # EXIF time is local time
    # A glaze firing photographs a kiln's inside: each photo is measured as that scene.
    assert firing["scene"] == "kiln"
    assert [r["result"] for r in readings] == [single(p, "kiln") for p in paths]


def test_a_series_is_measured_as_the_scene_given_or_the_one_its_kind_suggests(folder, tmp_path):
    paths = collect_photos([folder])[1:3]
    with Logbook(tmp_path / "data") as log:
        forged = log.get_firing(firing_from_photos(log, "Forge", paths, jobs=1, kind="forging"))
        told = log.get_firing(firing_from_photos(log, "Enamel", paths, jobs=1, kind="glaze", scene="steel"))
        assert (forged["scene"], told["scene"]) == ("steel", "steel")
        assert {r["result"]["scene"] for r in log.readings_in(forged["id"]) + log.readings_in(told["id"])} == {"steel"}


def test_an_untimed_or_unreadable_photo_stops_the_series_and_stores_nothing(folder, tmp_path):
    data = tmp_path / "data"
    untimed = tmp_path / "untimed.png"
    glow = render_photo(1373.15, camera=ideal_camera(), size=(96, 64))
    Image.fromarray(glow.codes).save(untimed)  # no EXIF at all
    with Logbook(data) as log:
        with pytest.raises(SeriesError, match="no time taken"):
            firing_from_photos(log, "Glaze 13", [str(folder / "kiln-0.jpg"), str(untimed)], jobs=1)
        with pytest.raises(SeriesError, match="cannot be measured"):
            firing_from_photos(log, "Glaze 13", [str(folder / "kiln-0.jpg"), str(folder / "broken.png")], jobs=1)
        assert log.list_firings() == []
    assert not any((data / "photos").iterdir())
