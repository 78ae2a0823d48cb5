"""The measuring path end to end on the command line: what it loads, and dull red steel."""

import json
import subprocess
import sys

from glowtemp.render.synthetic import encode_jpeg, render_photo
from glowtemp.render.synthetic_camera import measured_sensors

SYNTHETIC_SIDE = ("colour", "glowtemp.render.synthetic", "glowtemp.render.synthetic_camera", "glowtemp.render.population_build",
                  "glowtemp.render.heldout", "matplotlib")


def test_measuring_loads_no_colour_science_and_nothing_of_the_renderer(tmp_path):
    # The camera prior ships as a table (core/data/camera_population.npz), so a measure needs
    # numpy and Pillow only: colour-science and the renderer stay out of the process.
    photo = tmp_path / "kiln.jpg"
    photo.write_bytes(encode_jpeg(render_photo(1273.15, camera=measured_sensors()["Canon EOS 5D"], size=(160, 120))))
    code = (
        "import sys, json; from glowtemp.shell import cli;"
        f"cli.main(['measure', {str(photo)!r}, '--json', '--scene', 'kiln']);"
        f"print(json.dumps(sorted(m for m in {SYNTHETIC_SIDE!r} if m in sys.modules)))"
    )
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    reading_line, loaded_line = result.stdout.strip().splitlines()
    assert json.loads(loaded_line) == []
    assert json.loads(reading_line)["status"] == "ok"


def test_dull_red_steel_at_800_c_reads_about_800_c_with_a_band_on_the_command_line(tmp_path, capsys):
    # A bar end of oxidised steel (emissivity 0.8) at 800 °C, hardening heat (common practice),
    # photographed with a daylight preset; its EXIF carries the exposure (ISO 12232 SOS). Truth:
    # Planck's law through Nikon D810's measured sensitivities (Academy Software Foundation data).
    from glowtemp.shell import cli

    rendered = render_photo(1073.15, camera=measured_sensors()["Nikon D810"], scene="bar", emissivity=0.8,
                            size=(320, 240), seed=8)
    photo = tmp_path / "bar.jpg"
    photo.write_bytes(encode_jpeg(rendered))
    assert cli.main(["measure", str(photo), "--scene", "steel", "--json"]) == 0
    result = json.loads(capsys.readouterr().out)
    assert result["status"] == "ok" and result["scene"] == "steel" and result["emissivity"] == [0.7, 0.95]
    assert result["channels"] == ["colour", "brightness"]
    low, high = result["interval_95_c"]
    assert low <= 800 <= high and high - low <= 120
    assert abs(result["temperature_c"] - 800) <= 30
    assert cli.main(["measure", str(photo), "--scene", "steel"]) == 0
    line = capsys.readouterr().out
    assert "°C" in line and "(95 %)" in line and "from" in line and "brightness" in line
