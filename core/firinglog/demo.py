"""Demo data for an empty firing log: a glaze firing made from the rendered demo photos.

``truth.csv`` in the demo folder (columns ``file``, ``true_c``, ``notes``, ...) lists the
rendered photos and the temperature they were rendered at. The glaze-firing photos (notes
starting "glaze firing") become one firing, plainly named as invented data. Each photo that
measures without a warning gets a thermocouple value (so the demo can make a camera profile
from its trusted readings): the rendered temperature read 0.6 % low, like an aged
type K thermocouple still inside the IEC 60584-1 class 2 tolerance of 0.75 % (an invented,
plausible offset, said so in each note). The last two photos carry a cone 6 observation,
standing or bent by the cone table's temperature.
"""

from __future__ import annotations

import csv
from datetime import timedelta
from pathlib import Path

from ..estimation.cones import cone_table

DEMO_FIRING_NAME = "Demo: test glaze firing (invented data)"
DEMO_NOTES = (
    "Demo data: rendered photos of an invented pottery, not a real firing. The thermocouple "
    "values are invented too. Delete this firing whenever you like."
)
GLAZE_NOTES_START = "glaze firing"
THERMOCOUPLE_READS_LOW = 0.006  # fraction; within IEC 60584-1 type K class 2 (0.0075 |t|)
DEMO_CONE = "6"
DEMO_SCENE = "kiln"  # spy-hole photos of a kiln's inside


def demo_rows(demo_dir: Path) -> list[dict]:
    """The glaze-firing rows of ``truth.csv`` whose photo files exist."""
    path = Path(demo_dir) / "truth.csv"
    if not path.is_file():
        return []
    with open(path, newline="", encoding="utf-8") as handle:
        rows = list(csv.DictReader(handle))
    return [
        row for row in rows
        if (row.get("notes") or "").startswith(GLAZE_NOTES_START) and row.get("true_c") and (Path(demo_dir) / row["file"]).is_file()
    ]  # fmt: skip


def seed_demo(log, demo_dir: Path) -> int | None:
    """When ``log`` has no firings, add the demo firing; returns its id, or None if nothing was added."""
    from ..images.photo import STORED_SUFFIXES, load_photo
    from ..estimation.reading import measure

    if log.list_firings():
        return None
    rows = demo_rows(demo_dir)
    if not rows:
        return None
    measured = []
    for row in rows:
        data = (Path(demo_dir) / row["file"]).read_bytes()
        photo = load_photo(data)
        result = measure(photo, photo_name=row["file"], scene=DEMO_SCENE).to_dict()
        measured.append((row, data, photo, result))
    measured.sort(key=lambda item: (item[2].metadata.taken_at is None, item[2].metadata.taken_at, item[0]["file"]))
    first_time = measured[0][2].metadata.taken_at
    cone_c = cone_table(log.data_dir)[0].get(DEMO_CONE)
    firing_id = log.create_firing(
        name=DEMO_FIRING_NAME, kiln="Invented electric kiln", kind="glaze",
        target_cone=DEMO_CONE if cone_c is not None else None,
        started_at=(first_time - timedelta(hours=1)) if first_time else None, notes=DEMO_NOTES,
    )  # fmt: skip
    for index, (row, data, photo, result) in enumerate(measured):
        true_c = float(row["true_c"])
        trusted = {}
        if result["status"] == "ok" and not result["warnings"]:
            trusted["reference_c"] = round(true_c * (1 - THERMOCOUPLE_READS_LOW), 1)
            trusted["note"] = "Demo data: invented thermocouple value (the rendered temperature, read 0.6 % low)."
        if cone_c is not None and index >= len(measured) - 2:
            trusted.update(cone=DEMO_CONE, cone_state="bent" if true_c >= cone_c else "standing")
        key = log.store_photo(data, STORED_SUFFIXES[photo.format])
        log.add_reading(
            photo_key=key, photo_name=row["file"], result=result, firing_id=firing_id,
            taken_at=photo.metadata.taken_at or log.get_firing(firing_id)["started_at"], **trusted,
        )  # fmt: skip
    return firing_id
