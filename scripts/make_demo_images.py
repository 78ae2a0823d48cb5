"""Render glowtemp's demo photos into demo_images/, with README.md and truth.csv beside them.

Everything written here is rendered demo data from an invented scenario: a glaze firing at the
fictional "Alder Lane Pottery", photographed through the spy hole every hour, and a bar at the
fictional "Bellwether Smithy" forge. No real kiln, forge or phone took these pictures. The
renders are deterministic (fixed seeds), so running the script again gives the same files.

Run: python scripts/make_demo_images.py
"""

from __future__ import annotations

import csv
from dataclasses import dataclass
from datetime import datetime
from pathlib import Path

import colour

from glowtemp.physics.colourspaces import DISPLAY_P3, SRGB
from glowtemp.estimation.scales import celsius_to_kelvin
from glowtemp.render.synthetic import encode_jpeg, render_light_photo, render_photo
from glowtemp.render.synthetic_camera import CAMERAS
from glowtemp.render.synthetic_scenes import BAR_END

OUT = Path(__file__).resolve().parent.parent / "demo_images"
KILN_CAMERA = "Nikon 5100 (NPL)"
JPEG_QUALITY = 90


@dataclass(frozen=True)
class DemoShot:
    file: str
    true_c: float | None  # None: not glow
    camera: str
    taken_at: datetime
    notes: str
    scene: str = "spy_hole"
    size: tuple = (800, 600)
    white_balance: str = "daylight"
    output_space: object = SRGB
    tone_curve: str = "srgb"
    overexpose: float = 1.0
    ambient: float = 0.01
    edge_c: float | None = None  # bar temperature at the left edge of the frame (gradient)


def _firing_shots():
    day = datetime(2024, 3, 9)
    plan = [  # hour, °C, extra settings, note
        (9, 650, {}, "early in the firing, faint glow, a long exposure"),
        (10, 760, {}, "heating"),
        (11, 870, {}, "heating"),
        (12, 980, {"white_balance": "auto"}, "auto white balance left on: looks hotter than it is"),
        (13, 1080, {"tone_curve": "phone"}, "invented phone tone curve, still tagged sRGB"),
        (14, 1170, {"overexpose": 4.0}, "overexposed: red channel clipped"),
        (15, 1240, {}, "near the peak of the firing"),
    ]
    return [
        DemoShot(file=f"alder_lane_{hour:02d}00_{celsius}C.jpg", true_c=celsius, camera=KILN_CAMERA,
                 taken_at=day.replace(hour=hour), notes=f"glaze firing, spy hole; {note}", **extra)
        for hour, celsius, extra, note in plan
    ]


def _forge_shots():
    day = datetime(2024, 3, 16)
    return [
        DemoShot(file="bellwether_forge_810C.jpg", true_c=810, edge_c=740, camera="Parametric broad-overlap",
                 taken_at=day.replace(hour=10, minute=20), scene="bar", size=(1024, 768), ambient=0.03,
                 notes="bar end at hardening heat; cooler towards the left edge"),
        DemoShot(file="bellwether_forge_1100C_p3.jpg", true_c=1100, edge_c=1010, camera=KILN_CAMERA,
                 taken_at=day.replace(hour=11, minute=5), scene="bar", size=(1024, 768), ambient=0.03,
                 output_space=DISPLAY_P3, notes="bar end near forging heat; Display P3 file"),
    ]


NOT_GLOW = DemoShot(file="led_panel_not_glow.jpg", true_c=None, camera=KILN_CAMERA,
                    taken_at=datetime(2024, 3, 16, 12, 0), ambient=0.0,
                    notes="cool-white LED (CIE LED-B5 spectrum) seen through a round opening: not glow")


def _temperature(shot: DemoShot):
    tip_k = float(celsius_to_kelvin(shot.true_c))
    if shot.edge_c is None:
        return tip_k
    edge_k = float(celsius_to_kelvin(shot.edge_c))
    return lambda x, y: edge_k + (tip_k - edge_k) * x / BAR_END


def render(shot: DemoShot, seed: int):
    settings = dict(camera=CAMERAS[shot.camera], scene=shot.scene, size=shot.size,
                    white_balance=shot.white_balance, output_space=shot.output_space,
                    tone_curve=shot.tone_curve, overexpose=shot.overexpose, ambient=shot.ambient,
                    seed=seed, taken_at=shot.taken_at, tripod=True)  # the phone rests on the kiln shelf or a vice
    if shot.true_c is None:
        led = colour.SDS_ILLUMINANTS["LED-B5"]
        return render_light_photo(led.wavelengths, led.values, **settings)
    return render_photo(_temperature(shot), **settings)


TONE_NAMES = {"srgb": "sRGB", "phone": "invented phone"}


def _shutter(seconds: float) -> str:
    return f"{seconds:.1f} s" if seconds >= 0.5 else f"1/{round(1 / seconds)} s"


def _settings_text(shot: DemoShot, rendered) -> str:
    parts = [f"{shot.scene.replace('_', ' ')}", f"{shot.size[0]}x{shot.size[1]}",
             f"white balance {rendered.white_balance}", rendered.output_space.name,
             f"{TONE_NAMES[shot.tone_curve]} tone curve", f"ISO {rendered.iso}", _shutter(rendered.exposure_time_s)]
    if shot.overexpose != 1.0:
        parts.append(f"overexposed x{shot.overexpose:g}")
    if shot.ambient:
        parts.append(f"ambient daylight {shot.ambient:g}")
    return ", ".join(parts)


README_HEAD = """# Demo images (rendered, not real photographs)

Every image in this folder is **synthetic demo data** rendered by glowtemp's own forward model
(`glowtemp.render.synthetic`: Planck radiance -> camera spectral sensitivities -> noise -> white balance
-> colour matrix -> tone curve -> JPEG with EXIF and ICC). The places are invented: "Alder Lane
Pottery" and "Bellwether Smithy" do not exist. The camera names are the spectral sensitivity
sets the renderer used (two measured by NPL and shipped with colour-science, and invented
Gaussian ones); EXIF Make is "glowtemp demo".

Use them to try the app and to see its warnings; do not treat them as evidence that glowtemp
works on real photos. `truth.csv` lists the true temperature of each file (for the bars, the
temperature at the hot end). Regenerate with `python scripts/make_demo_images.py`.

| file | true °C | camera | settings | notes |
|---|---|---|---|---|
"""


def main():
    OUT.mkdir(exist_ok=True)
    shots = _firing_shots() + _forge_shots() + [NOT_GLOW]
    rows = []
    for seed, shot in enumerate(shots):
        rendered = render(shot, seed)
        (OUT / shot.file).write_bytes(encode_jpeg(rendered, quality=JPEG_QUALITY))
        true_text = "none (not glow)" if shot.true_c is None else f"{shot.true_c:g}"
        notes = shot.notes + (f"; {shot.edge_c:g} °C at the left edge" if shot.edge_c is not None else "")
        rows.append((shot.file, true_text, shot.camera, rendered.white_balance, _settings_text(shot, rendered), notes))
        print(f"wrote {shot.file} ({(OUT / shot.file).stat().st_size // 1024} KiB)")
    with open(OUT / "truth.csv", "w", newline="") as handle:
        writer = csv.writer(handle)
        writer.writerow(["file", "true_c", "camera", "white_balance", "notes"])
        for file, true_text, camera, white_balance, _, notes in rows:
            writer.writerow([file, "" if true_text.startswith("none") else true_text, camera, white_balance, notes])
    lines = [f"| {file} | {true_text} | {camera} | {settings} | {notes} |"
             for file, true_text, camera, _, settings, notes in rows]
    (OUT / "README.md").write_text(README_HEAD + "\n".join(lines) + "\n")


if __name__ == "__main__":
    main()
