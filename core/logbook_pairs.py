"""A firing's trusted readings as calibration pairs: a camera profile in one step.

Each reading with a thermocouple value, or with a cone seen bent, becomes one pair of the
pairs CSV that :func:`glowtemp.profile_store.fit_from_csv` reads (photo, reference_c or cone,
region), the photos copied beside it under the reading's number. A thermocouple value is preferred when a reading has both: it is the tighter
reference. The photos are the firing log's stored files; the region is the one the reading
was measured in, so the profile sees the same pixels the user checked.
"""

from __future__ import annotations

import csv
import shutil
import tempfile
from pathlib import Path

PAIR_COLUMNS = ("photo", "reference_c", "cone", "region")


def calibration_pairs(readings: list[dict]) -> list[dict]:
    """Pairs-CSV rows for the readings that carry a trusted value, one per photo.

    Photos are named ``reading-<id><suffix>``, as :func:`fit_profile_from_firing` lays them out.
    """
    rows, photos = [], set()
    for reading in readings:
        if reading["reference_c"] is not None:
            reference = {"reference_c": repr(reading["reference_c"]), "cone": ""}
        elif reading["cone"] and reading["cone_state"] == "bent":
            reference = {"reference_c": "", "cone": reading["cone"]}
        else:
            continue
        if reading["photo_key"] in photos:  # the same photo twice would count as two pairs
            continue
        photos.add(reading["photo_key"])
        suffix = "." + reading["photo_key"].partition(".")[2]
        rows.append({"photo": f"reading-{reading['id']}{suffix}", **reference, "region": reading["region_text"] or "",
                     "photo_key": reading["photo_key"]})  # fmt: skip
    return rows


def fit_profile_from_firing(log, firing_id: int, name: str):
    """Fit and save the camera profile ``name`` from a firing's trusted readings; returns it.

    Raises :class:`glowtemp.profile.ProfileError` in plain words when the pairs cannot make
    a profile (none, a bad name, pairs that disagree); nothing is saved then.
    """
    from .profile import ProfileError
    from .profile_store import fit_from_csv

    rows = calibration_pairs(log.readings_in(firing_id))
    if not rows:
        raise ProfileError(
            "This firing has no reading with a thermocouple value or a bent cone; add one to a reading first."
        )
    with tempfile.TemporaryDirectory() as folder:
        for row in rows:
            shutil.copyfile(log.photo_path(row["photo_key"]), Path(folder) / row["photo"])
        pairs_csv = Path(folder) / "pairs.csv"
        with open(pairs_csv, "w", newline="", encoding="utf-8") as handle:
            writer = csv.DictWriter(handle, fieldnames=PAIR_COLUMNS, extrasaction="ignore")
            writer.writeheader()
            writer.writerows(rows)
        return fit_from_csv(name, pairs_csv, log.data_dir)
