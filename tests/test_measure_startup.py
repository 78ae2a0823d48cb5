"""What a cold `glowtemp measure` loads, and the faster paths that must give the same numbers.

The speed-only rewrites are checked bit for bit against the numpy functions they replace
(``np.interp``, ``mean``/``std`` along an axis, ``np.load``), numpy being the reference.
"""

import json
import subprocess
import sys
import threading

import numpy as np
import pytest

from glowtemp.estimation import estimate
from glowtemp.images import sampling
from glowtemp.images.jpeg_decoding import JpegDecoding
from glowtemp.images.photo import PhotoError, begin_loading, load_photo
from glowtemp.estimation.population import TABLE_PATH, camera_population
from glowtemp.render.synthetic import encode_jpeg, render_photo
from glowtemp.render.synthetic_camera import CAMERAS

# Modules a JPEG measure has no use for: HEIC and raw decoders, the progress bar, the worker
# pool, colour-science (tables are shipped), plotting, the web stack and the firing log.
NOT_FOR_A_JPEG = ("pillow_heif", "rawpy", "tqdm", "concurrent.futures.process", "colour", "matplotlib",
                  "flask", "waitress", "sqlite3")
CLI_MEASURE = """
import json, sys
from glowtemp.shell import cli
from glowtemp.estimation.population import camera_population
code = cli.main(['measure', sys.argv[1], '--json'])
loaded = [name for name in sys.argv[2:] if name in sys.modules]
tables = [camera_population().ratios.loaded, camera_population().log_response.loaded, camera_population().auto_ratios.loaded]
print(json.dumps({'code': code, 'loaded': loaded, 'tables': tables}))
"""


@pytest.fixture(scope="module")
def jpeg_file(tmp_path_factory):
    rendered = render_photo(1273.15, camera=CAMERAS["Nikon 5100 (NPL)"], size=(320, 240), seed=3)
    path = tmp_path_factory.mktemp("startup") / "glow.jpg"
    path.write_bytes(encode_jpeg(rendered))
    return path


def test_a_jpeg_measure_loads_only_what_measuring_needs(jpeg_file):
    result = subprocess.run([sys.executable, "-c", CLI_MEASURE, str(jpeg_file), *NOT_FOR_A_JPEG],
                            capture_output=True, text=True, check=True)
    report = json.loads(result.stdout.strip().splitlines()[-1])
    assert report["code"] == 0
    assert report["loaded"] == []
    assert report["tables"] == [["sRGB"], ["sRGB"], []]  # one space's colour and brightness tables, no other


def test_the_measure_command_gives_the_in_process_reading(jpeg_file, capsys):
    from glowtemp.shell import cli
    from glowtemp.estimation.reading import measure

    assert cli.main(["measure", str(jpeg_file), "--json"]) == 0
    printed = json.loads(capsys.readouterr().out)
    assert printed == json.loads(json.dumps(measure(load_photo(jpeg_file), photo_name=str(jpeg_file)).to_dict()))


def test_tables_read_on_demand_are_the_files_arrays():
    # Reference: numpy's own reading of the shipped file.
    population = camera_population()
    with np.load(TABLE_PATH) as table:
        spaces = {str(table[key]): key.split("_")[1] for key in table.files if key.startswith("space_")}
        assert sorted(population.ratios) == sorted(spaces)
        for name, index in spaces.items():
            np.testing.assert_array_equal(population.ratios[name], table[f"ratios_{index}"])
            np.testing.assert_array_equal(population.log_response[name], table[f"log_response_{index}"])
            assert population.knows(name, True) == (f"auto_ratios_{index}" in table.files)


@pytest.mark.parametrize("level", [0.0, 0.3, 0.62, 1.0])
def test_population_rows_interpolate_as_np_interp(level):
    population = camera_population()
    ratios, response = population.at_level("sRGB", level)
    for rows in (ratios[..., 0], ratios[..., 1], response):
        expected = np.stack([np.interp(estimate.GRID_K, population.temperature_k, row) for row in rows])
        np.testing.assert_array_equal(estimate._interpolate_rows(population.temperature_k, rows), expected)


@pytest.mark.parametrize("count", [1, 8, 8193, 131_073])
def test_channel_moments_are_numpys_to_the_last_bit(count):
    rng = np.random.default_rng(count)
    linear = rng.random((count, 3)).astype(np.float32)
    codes = rng.integers(0, 256, (count, 3)).astype(np.uint8)
    for pixels in (linear, codes):
        mean, spread = sampling._moments([np.ascontiguousarray(pixels[:, c]) for c in range(3)])
        np.testing.assert_array_equal(mean, pixels.mean(axis=0, dtype=np.float64))
        np.testing.assert_array_equal(spread, pixels.std(axis=0, dtype=np.float64))


@pytest.fixture
def decoding_threads(monkeypatch):
    """The threads JpegDecoding ran its decode in."""
    threads, run = [], JpegDecoding.run
    monkeypatch.setattr(JpegDecoding, "run", lambda self: (threads.append(threading.current_thread()), run(self)))
    return threads


def test_jpeg_pixels_decode_in_a_worker_thread(jpeg_file, decoding_threads):
    photo = begin_loading(jpeg_file).finish()
    assert len(decoding_threads) == 1 and decoding_threads[0] is not threading.main_thread()
    # Reference: Pillow's own decode of the same file (the same libjpeg-turbo).
    from PIL import Image

    with Image.open(jpeg_file) as image:
        np.testing.assert_array_equal(photo.codes, np.asarray(image.convert("RGB")))


def test_a_jpegs_colour_space_and_settings_are_known_before_its_pixels(jpeg_file):
    loading = begin_loading(jpeg_file)
    space, metadata = loading.space, loading.metadata
    photo = loading.finish()
    assert space is photo.space and metadata == photo.metadata
    assert metadata.iso is not None  # the renderer's EXIF, read from the header


def test_a_cut_jpeg_is_left_to_pillow_which_reports_it(jpeg_file, decoding_threads):
    data = jpeg_file.read_bytes()
    with pytest.raises(PhotoError, match="truncated or damaged"):
        begin_loading(data[: len(data) * 3 // 4]).finish()  # no EOI marker
    assert decoding_threads == []


def test_workers_are_forked_only_from_a_single_threaded_process():
    from glowtemp.shell.batch import start_method

    alone = subprocess.run([sys.executable, "-c", "from glowtemp.shell.batch import start_method; print(start_method())"],
                           capture_output=True, text=True, check=True)
    assert alone.stdout.strip() == "fork"
    release = threading.Event()
    other = threading.Thread(target=release.wait)
    other.start()
    try:
        assert start_method() in ("forkserver", "spawn")
    finally:
        release.set()
        other.join()


def test_no_progress_bar_means_no_tqdm_thread():
    from glowtemp.shell.batch import progress_bar

    before = set(threading.enumerate())
    assert progress_bar(5, enabled=False) is None
    bar = progress_bar(5, enabled=True)
    try:
        assert set(threading.enumerate()) <= before  # no monitor thread, so workers can still fork
    finally:
        bar.close()


def test_the_program_leaves_at_once_with_its_output_whole(jpeg_file, tmp_path):
    # `measure` as the program skips the interpreter's teardown: what it printed and wrote
    # must be complete all the same, and its exit status kept.
    lines, table = tmp_path / "out.jsonl", tmp_path / "out.csv"
    done = subprocess.run([sys.executable, "-m", "glowtemp.shell.cli", "measure", str(jpeg_file), "--jsonl", str(lines),
                           "--csv", str(table), "--json"], capture_output=True, text=True)
    assert done.returncode == 0
    printed = json.loads(done.stdout)
    assert json.loads(lines.read_text()) == printed
    assert table.read_text().count("\n") == 2 and str(jpeg_file) in table.read_text()
    missing = subprocess.run([sys.executable, "-m", "glowtemp.shell.cli", "measure", str(tmp_path / "none.jpg")],
                             capture_output=True, text=True)
    assert missing.returncode == 2 and "no file or folder" in missing.stderr
