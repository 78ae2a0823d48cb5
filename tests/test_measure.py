"""The whole measuring path on rendered photos, and the measure command."""

import json

import colour
import numpy as np
import pytest

from glowtemp.shell import cli
from glowtemp.physics.colourspaces import DISPLAY_P3
from glowtemp.images.photo import load_photo
from glowtemp.estimation.population import camera_population
from glowtemp.estimation.reading import measure
from glowtemp.images.region import Circle
from glowtemp.render.synthetic import encode_jpeg, render_photo
from glowtemp.render.synthetic_camera import CAMERAS

PHONE = CAMERAS["Parametric broad-overlap"]


def photo_of(temperature_c, camera=PHONE, **settings):
    """A rendered spy-hole photo (truth from Planck's law through the camera model)."""
    rendered = render_photo(temperature_c + 273.15, camera=camera, size=(200, 150), seed=2, **settings)
    return load_photo(encode_jpeg(rendered)), rendered


MAKERS = {"Nikon 5100 (NPL)": "Nikon", "Sigma SDMerill (NPL)": "Sigma",
          "Parametric narrow-band": "invented", "Parametric broad-overlap": "invented"}


@pytest.mark.parametrize("camera_name", list(CAMERAS))
@pytest.mark.parametrize("temperature_c", [950, 1150, 1300])
def test_reading_holds_and_centres_on_the_rendered_truth(camera_name, temperature_c):
    # Truth: Planck's law through colour-science's NPL-measured cameras and two invented ones,
    # a spy hole (emissivity 1) read as a kiln, with the camera's maker left out of the prior.
    photo, _ = photo_of(temperature_c, CAMERAS[camera_name])
    result = measure(photo, scene="kiln", prior=camera_population().without(maker=MAKERS[camera_name])).to_dict()
    low, high = result["interval_95_c"]
    assert low <= temperature_c <= high
    assert result["channels"] == ["colour", "brightness"]
    if result["status"] == "wide":  # the narrow-band camera's colour can disagree with its brightness
        assert camera_name == "Parametric narrow-band"
        assert [w["code"] for w in result["warnings"]] == ["wide-range", "channels-disagree"]
        return
    assert abs(result["temperature_c"] - temperature_c) <= 50
    assert (high - low) / 2 <= 100
    assert result["warnings"] == []


def test_reading_fields_and_units():
    photo, _ = photo_of(1100)
    result = measure(photo, photo_name="kiln.jpg").to_dict()
    assert result["photo"] == "kiln.jpg" and result["status"] == "ok"
    low68, high68 = result["interval_68_c"]
    low95, high95 = result["interval_95_c"]
    assert low95 <= low68 <= result["temperature_c"] <= high68 <= high95
    # NIST SP 811: t_F = 1.8 t_C + 32, and K = °C + 273.15 (to the shown resolution)
    assert result["temperature_f"] == pytest.approx(result["temperature_c"] * 1.8 + 32, abs=result["resolution_f"])
    assert result["temperature_k"] == pytest.approx(result["temperature_c"] + 273, abs=result["resolution_c"])
    step = result["resolution_c"]
    assert all(v % step == 0 for v in (result["temperature_c"], low68, high68, low95, high95))
    assert result["pixels_used"] > 1000
    # H. M. Howe's heat colours as printed in C. R. Darling, Pyrometry (1920), ch. VI: 1050 °C
    # light yellow, 1150 °C white.
    howe = [(1050, "light yellow"), (1150, "white")]
    expected = [name for start, name in howe if result["temperature_c"] >= start]
    assert expected and result["glow_name"] == expected[-1]
    # The estimate's swatch is colour-science's blackbody at the estimate in sRGB (clipped,
    # brightest channel full, IEC 61966-2-1 encoding), to within one code per channel.
    xyz = colour.sd_to_XYZ(colour.sd_blackbody(result["temperature_c"] + 273.15), method="Integration")
    rgb = np.clip(colour.XYZ_to_RGB(xyz, "sRGB"), 0, None)
    codes = np.round(colour.cctf_encoding(rgb / rgb.max()) * 255)
    shown = [int(result["estimate_colour_hex"][i : i + 2], 16) for i in (1, 3, 5)]
    assert np.abs(np.array(shown) - codes).max() <= 2
    assert result["region_colour_hex"].startswith("#")
    assert result["region"]["kind"] == "circle" and result["region"]["found"]


def test_found_region_sits_on_the_spy_hole():
    photo, rendered = photo_of(1000)
    found = measure(photo).region
    cx, cy, radius = rendered.region.circle
    assert isinstance(found, Circle)
    assert abs(found.cx - cx) <= 3 and abs(found.cy - cy) <= 3 and found.radius <= radius


def test_overexposed_glow_warns_to_lower_the_exposure():
    # A saturated sensor records less than the light (EMVA 1288, saturation capacity): a
    # blown-out red reads low, so green/red and blue/red read high, i.e. too hot.
    photo, _ = photo_of(1150, overexpose=4.0)
    result = measure(photo).to_dict()
    assert "clipped-pixels" in [w["code"] for w in result["warnings"]]
    fix = next(w["fix"] for w in result["warnings"] if w["code"] == "clipped-pixels")
    assert "exposure" in fix
    assert result["temperature_c"] is None or result["interval_95_c"][0] <= 1150


def test_auto_white_balance_warns_and_widens_instead_of_reading_hot():
    photo, _ = photo_of(980, white_balance="auto")
    result = measure(photo).to_dict()
    assert "auto-white-balance" in [w["code"] for w in result["warnings"]]
    assert result["interval_95_c"][0] <= 980 <= result["interval_95_c"][1]
    locked, _ = photo_of(980)
    narrow = measure(locked).to_dict()["interval_95_c"]
    assert (narrow[1] - narrow[0]) * 3 < result["interval_95_c"][1] - result["interval_95_c"][0]


def test_ambient_daylight_is_flagged_and_dim_surroundings_are_not():
    photo, _ = photo_of(900, ambient=0.3)
    assert "ambient-light" in [w["code"] for w in measure(photo).to_dict()["warnings"]]
    photo, _ = photo_of(900, ambient=0.0)
    assert "ambient-light" not in [w["code"] for w in measure(photo).to_dict()["warnings"]]


def test_display_p3_photo_is_read_in_p3():
    photo, _ = photo_of(900, output_space=DISPLAY_P3)
    result = measure(photo).to_dict()
    assert result["colour_space"] == "Display P3"
    assert result["interval_95_c"][0] <= 900 <= result["interval_95_c"][1]


def test_measure_command_json_lines_and_a_bad_file(tmp_path, capsys):
    good = tmp_path / "good.jpg"
    good.write_bytes(encode_jpeg(render_photo(1373.15, camera=PHONE, size=(160, 120), seed=1)))
    bad = tmp_path / "bad.jpg"
    bad.write_bytes(b"this is not a photo")
    status = cli.main(["measure", str(bad), str(good), "--json"])
    out, err = capsys.readouterr()
    lines = [json.loads(line) for line in out.splitlines()]
    assert status == 1
    assert lines[0]["photo"] == str(bad) and "error" in lines[0]
    required = {"photo", "temperature_c", "interval_68_c", "interval_95_c", "warnings", "pixels_used",
                "pixels_clipped", "glow_name", "profile"}
    assert required <= set(lines[1])
    assert lines[1]["interval_95_c"][0] <= 1100 <= lines[1]["interval_95_c"][1]
    assert "bad.jpg" in err


def test_measure_command_plain_line_and_region_errors(tmp_path, capsys):
    good = tmp_path / "good.jpg"
    good.write_bytes(encode_jpeg(render_photo(1273.15, camera=PHONE, size=(160, 120), seed=1)))
    assert cli.main(["measure", str(good), "--circle", "80,60,15"]) == 0
    out, err = capsys.readouterr()
    assert "°C" in out and "(95 %)" in out and "not a calibrated instrument" in err
    assert "(names are loose)" in out  # heat-colour names: published tables differ by 100-150 °C
    assert cli.main(["measure", str(good), "--region", "0,0,0,5"]) == 2
    assert "positive width" in capsys.readouterr().err
    assert cli.main(["measure", str(good), "--region", "500,500,10,10"]) == 1
    assert "outside" in capsys.readouterr().err


# Names that are not photo files. Each command runs in a child process held to 2 GB of address
# space and 60 s, so a regression fails instead of hanging or filling the machine's memory.
def run_bounded(arguments, cwd):
    import resource
    import subprocess
    import sys

    def limit():
        resource.setrlimit(resource.RLIMIT_AS, (2 << 30, 2 << 30))

    return subprocess.run([sys.executable, "-m", "glowtemp.shell.cli", *arguments], cwd=cwd, capture_output=True,
                          text=True, timeout=60, preexec_fn=limit, stdin=subprocess.DEVNULL)  # fmt: skip


def a_fifo(folder):
    import os

    os.mkfifo(folder / "pipe.jpg")
    return str(folder / "pipe.jpg")


def a_huge_sparse_file(folder):
    with open(folder / "huge.jpg", "wb") as handle:
        handle.truncate(300 * 1024 * 1024)  # sparse: takes no disk space
    return str(folder / "huge.jpg")


NOT_PHOTO_FILES = [
    ("a FIFO", a_fifo, "pipe (FIFO)"),
    ("the endless device /dev/zero", lambda folder: "/dev/zero", "a device"),
    ("a file beyond the size limit", a_huge_sparse_file, "larger than 200 MB"),
]


@pytest.mark.parametrize("name, make, words", NOT_PHOTO_FILES, ids=[case[0] for case in NOT_PHOTO_FILES])
def test_measure_refuses_what_is_not_a_regular_photo_file(tmp_path, name, make, words):
    done = run_bounded(["measure", make(tmp_path), "--json"], tmp_path)
    assert done.returncode == 1
    assert words in json.loads(done.stdout.splitlines()[0])["error"]


@pytest.mark.parametrize("name, make, words", NOT_PHOTO_FILES, ids=[case[0] for case in NOT_PHOTO_FILES])
def test_profile_fit_refuses_a_pairs_row_naming_what_is_not_a_regular_file(tmp_path, name, make, words):
    (tmp_path / "pairs.csv").write_text(f"photo,reference_c\n{make(tmp_path)},1000\n", encoding="utf-8")
    done = run_bounded(["profile", "fit", "p", str(tmp_path / "pairs.csv"), "--data", str(tmp_path / "data")], tmp_path)
    assert done.returncode == 2 and "Row 2" in done.stderr and words in done.stderr
    assert not (tmp_path / "data" / "profiles").exists()


def test_profile_fit_refuses_a_pairs_file_that_is_a_fifo(tmp_path):
    done = run_bounded(["profile", "fit", "p", a_fifo(tmp_path), "--data", str(tmp_path / "data")], tmp_path)
    assert done.returncode == 2 and "pipe (FIFO)" in done.stderr


@pytest.mark.parametrize("peak_nm, width_nm", [(530, 15), (460, 12)], ids=["green LED", "blue LED"])
def test_a_coloured_led_is_found_and_called_no_glow_colour(peak_nm, width_nm):
    # A narrow-band LED (Gaussian spectrum; CIE 1931 colour far from the Planckian locus,
    # colour-science) through a round opening: the finder must find it (its brightest channel is
    # not red) and the reading must name its colour, not darkness or exposure.
    import numpy as np

    from glowtemp.render.synthetic import render_light_photo

    wavelengths = np.arange(380.0, 781.0)
    spectrum = np.exp(-0.5 * ((wavelengths - peak_nm) / width_nm) ** 2)
    rendered = render_light_photo(wavelengths, spectrum, camera=PHONE, size=(200, 150), seed=4)
    photo = load_photo(encode_jpeg(rendered))
    for region in (None, Circle(*(round(v) for v in rendered.region.circle))):
        result = measure(photo, region).to_dict()
        codes = [w["code"] for w in result["warnings"]]
        assert result["status"] == "not-glow" and "not-glow-colour" in codes
        assert not {"too-dark", "no-usable-pixels"} & set(codes)
