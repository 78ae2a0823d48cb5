"""A firing's trusted readings as calibration pairs: a camera profile in one step.

Each reading with a thermocouple value, with "magnet let go" (plain carbon steel stopped
attracting a magnet: iron's Curie point, :data:`glowtemp.estimation.profile.CURIE_POINT_IRON_C`), or with a
cone seen bent becomes one pair of the pairs CSV that :func:`glowtemp.estimation.profile_store.fit_from_csv`
reads (photo, reference_c, cone or magnet, region, scene), the photos copied beside it under the
reading's number. When a reading has several, the tightest reference is kept: a thermocouple,
then the magnet (1-sigma :data:`glowtemp.estimation.profile.MAGNET_SIGMA_C`), then the cone
(:data:`glowtemp.estimation.cones.CONE_SIGMA_C`). The photos are the firing log's stored files; the region
is the one the reading was measured in, so the profile sees the same pixels the user checked,
and each pair's scene is the firing's, which the brightness part of the profile needs to take
emissivity out.
"""

from __future__ import annotations

import csv
import shutil
import tempfile
from pathlib import Path

from .logbook_fields import MAGNET_LET_GO

PAIR_COLUMNS = ("photo", "reference_c", "cone", "magnet", "region", "scene")


def _reference(reading: dict) -> dict | None:
    """The reading's tightest trusted value as pairs-CSV cells, or None when it has none."""
    if reading["reference_c"] is not None:
        return {"reference_c": repr(reading["reference_c"]), "cone": "", "magnet": ""}
    if reading.get("magnet") == MAGNET_LET_GO:
        return {"reference_c": "", "cone": "", "magnet": MAGNET_LET_GO}
    if reading["cone"] and reading["cone_state"] == "bent":
        return {"reference_c": "", "cone": reading["cone"], "magnet": ""}
    return None


def calibration_pairs(readings: list[dict], scene: str = "other") -> list[dict]:
    """Pairs-CSV rows for the readings that carry a trusted value, one per photo, each of ``scene``
    (the firing's scene kind).

    Photos are named ``reading-<id><suffix>``, as :func:`fit_profile_from_firing` lays them out.
    """
    rows, photos = [], set()
    for reading in readings:
        reference = _reference(reading)
        if reference is None:
            continue
        if reading["photo_key"] in photos:  # the same photo twice would count as two pairs
            continue
        photos.add(reading["photo_key"])
        suffix = "." + reading["photo_key"].partition(".")[2]
        rows.append({"photo": f"reading-{reading['id']}{suffix}", **reference, "region": reading["region_text"] or "",
                     "scene": scene, "photo_key": reading["photo_key"]})  # fmt: skip
    return rows


def fit_profile_from_firing(log, firing_id: int, name: str):
    """Fit and save the camera profile ``name`` from a firing's trusted readings; returns it.

    Raises :class:`glowtemp.estimation.profile.ProfileError` in plain words when the pairs cannot make
    a profile (none, a bad name, pairs that disagree); nothing is saved then.
    """
    from ..estimation.profile import ProfileError
    from ..estimation.profile_store import fit_from_csv

    readings = log.readings_in(firing_id)  # refuses a firing that is not in the log
    rows = calibration_pairs(readings, log.get_firing(firing_id)["scene"])
    if not rows:
        raise ProfileError(
            "This firing has no reading with a thermocouple value, a bent cone or a magnet that let go; "
            "add one to a reading first."
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
