"""Camera profiles on disk, and fitting one from a CSV of photos paired with trusted readings.

Profiles are human-readable JSON files in ``<data>/profiles/``, written to a temporary file,
flushed and renamed into place, so a profile is either whole or absent. A pairs CSV has the
columns ``photo`` and ``reference_c`` (a thermocouple or controller reading in °C), ``cone``
(a witness cone that bent) or ``magnet`` ("let go": plain carbon steel stopped attracting a
magnet, iron's Curie point), and optionally ``region`` (``X,Y,W,H`` or ``circle:CX,CY,R``) and
``scene`` (kiln, steel or other); photo paths are relative to the CSV's folder.
"""

from __future__ import annotations

import csv
import hashlib
import json
import os
import re
import tempfile
from datetime import datetime, timezone
from pathlib import Path

import numpy as np

from .cones import CONE_SIGMA_C, ConeError, cone_temperature_c
from ..physics.locus import blackbody_table, locus_ratios
from .brightness import SCENES, exposure_from
from .profile import (
    CURIE_POINT_IRON_C,
    MAGNET_SIGMA_C,
    CameraProfile,
    Pair,
    ProfileError,
    brightness_residual,
    fit_profile,
    fit_ratio_map,
    ideal_green_ratio,
    pair_green_ratio,
    thermocouple_sigma_c,
)
from .scales import celsius_to_kelvin
from ..images.regular_file import FileRefused, read_regular_file

PLAUSIBLE_REFERENCE_C = (400.0, 1800.0)
WILD_RESIDUAL_C = 150.0  # a pair this far off a fit of the others is refused as a mistake (noisy
# low-heat pairs of real cameras missed by up to ~100 °C in bench/accuracy.py, typos by more)
MOST_PAIRS = 1000  # rows of a pairs file
LARGEST_PAIRS_FILE_BYTES = 1024 * 1024  # a pairs CSV of MOST_PAIRS rows is well under 100 KB
NAME_PATTERN = re.compile(r"^[A-Za-z0-9][A-Za-z0-9 _.\-]{0,59}$")


def _profiles_dir(data_dir: Path) -> Path:
    return Path(data_dir) / "profiles"


def _profile_path(data_dir: Path, name: str) -> Path:
    if not NAME_PATTERN.match(name or ""):
        raise ProfileError(
            f"A profile name uses letters, digits, spaces, dots, dashes or underscores (up to 60); got {name!r}."
        )
    return _profiles_dir(data_dir) / (name.replace(" ", "_") + ".json")


def save_profile(data_dir: Path, profile: CameraProfile) -> Path:
    """Write a profile atomically (temporary file, fsync, rename); returns its path."""
    path = _profile_path(data_dir, profile.name)
    path.parent.mkdir(parents=True, exist_ok=True)
    handle, temporary = tempfile.mkstemp(prefix=".incoming-", suffix=".json", dir=path.parent)
    try:
        with os.fdopen(handle, "w", encoding="utf-8") as out:
            json.dump(profile.to_dict(), out, indent=2, ensure_ascii=False)
            out.flush()
            os.fsync(out.fileno())
        os.replace(temporary, path)
    except BaseException:
        Path(temporary).unlink(missing_ok=True)
        raise
    return path


def load_profile(data_dir: Path, name: str) -> CameraProfile:
    path = _profile_path(data_dir, name)
    if not path.is_file():
        known = ", ".join(p["name"] for p in list_profiles(data_dir)) or "none yet"
        raise ProfileError(f"There is no camera profile called {name!r} (profiles: {known}).")
    try:
        record = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, ValueError) as error:
        raise ProfileError(f"The camera profile {name!r} cannot be read ({error}).") from None
    return CameraProfile.from_dict(record)


def list_profiles(data_dir: Path) -> list[dict]:
    """Summaries of the stored profiles: name, camera model, colour space, pairs, span in °C."""
    summaries = []
    for path in sorted(_profiles_dir(data_dir).glob("*.json")):
        try:
            profile = CameraProfile.from_dict(json.loads(path.read_text(encoding="utf-8")))
        except (OSError, ValueError):
            continue
        summaries.append(
            {
                "name": profile.name,
                "camera_model": profile.camera.get("camera_model"),
                "colour_space": profile.colour_space,
                "pairs": len(profile.pairs),
                "span_c": list(profile.span_c),
                "created": profile.created,
            }
        )
    return summaries


def delete_profile(data_dir: Path, name: str) -> None:
    path = _profile_path(data_dir, name)
    if not path.is_file():
        raise ProfileError(f"There is no camera profile called {name!r}.")
    path.unlink()


MAGNET_WORDS = ("let go", "yes", "1")


def _reference(row: dict, number: int, data_dir: Path) -> tuple[float, float, str, str | None]:
    text = (row.get("reference_c") or "").strip()
    cone = (row.get("cone") or "").strip()
    magnet = (row.get("magnet") or "").strip().lower()
    if sum(map(bool, (text, cone, magnet))) > 1:
        raise ProfileError(f"Row {number}: give one of reference_c, cone or magnet, not several.")
    if magnet:
        if magnet not in MAGNET_WORDS:
            raise ProfileError(f"Row {number}: magnet is {magnet!r}; write \"let go\" when the magnet stopped holding.")
        return CURIE_POINT_IRON_C, MAGNET_SIGMA_C, "magnet", None
    if cone:
        try:
            return cone_temperature_c(cone, data_dir), CONE_SIGMA_C, "cone", cone
        except ConeError as error:
            raise ProfileError(f"Row {number}: {error}") from None
    try:
        value = float(text)
    except ValueError:
        raise ProfileError(f"Row {number}: reference_c {text!r} is not a number of °C.") from None
    low, high = PLAUSIBLE_REFERENCE_C
    if not low <= value <= high:
        raise ProfileError(
            f"Row {number}: reference {value:g} °C is outside {low:.0f}-{high:.0f} °C, where glow can be measured."
        )
    return value, thermocouple_sigma_c(value), "thermocouple", None


def read_pairs(csv_path: Path, data_dir: Path):
    """Load and measure every row of a pairs CSV; returns (pairs, camera, space).

    Raises :class:`ProfileError` naming the row for any problem; nothing is written.
    """
    from ..images.photo import LARGEST_FILE_BYTES, PhotoError, load_photo
    from .reading import measure
    from ..images.region import RegionError, parse_region

    csv_path = Path(csv_path)
    try:
        text = read_regular_file(csv_path, LARGEST_PAIRS_FILE_BYTES, "pairs file").decode("utf-8-sig")
    except FileRefused as error:
        raise ProfileError(str(error)) from None
    except (OSError, UnicodeDecodeError) as error:
        raise ProfileError(f"Cannot read the pairs file {csv_path}: {error}") from None
    reader = csv.DictReader(text.splitlines())
    columns = set(reader.fieldnames or [])
    if "photo" not in columns or not ({"reference_c", "cone", "magnet"} & columns):
        raise ProfileError(
            "The pairs file needs a header with the columns photo and reference_c (or cone, or "
            f"magnet), optionally region and scene; it has: {', '.join(sorted(columns)) or 'no header'}."
        )
    rows = list(reader)
    if len(rows) > MOST_PAIRS:
        raise ProfileError(
            f"The pairs file has {len(rows)} rows; a profile takes at most {MOST_PAIRS} (a few dozen "
            "pairs across the working heats are plenty): split the file or leave rows out."
        )
    pairs, seen, camera, space = [], {}, None, None
    for number, row in enumerate(rows, start=2):
        name = (row.get("photo") or "").strip()
        if not name:
            raise ProfileError(f"Row {number}: the photo column is empty.")
        reference_c, sigma_c, kind, cone = _reference(row, number, data_dir)
        path = (csv_path.parent / name).resolve()
        try:
            data = read_regular_file(path, LARGEST_FILE_BYTES, "photo")
        except FileRefused as error:
            raise ProfileError(f"Row {number}: {error}") from None
        except OSError as error:
            raise ProfileError(f"Row {number}: cannot read the photo {name}: {error.strerror}.") from None
        digest = hashlib.sha256(data).hexdigest()
        if digest in seen:
            raise ProfileError(f"Row {number}: {name} is the same photo as row {seen[digest]}.")
        seen[digest] = number
        region_text = (row.get("region") or "").strip() or None
        scene = (row.get("scene") or "").strip() or "other"
        if scene not in SCENES:
            raise ProfileError(f"Row {number}: scene {scene!r} is not one of {', '.join(SCENES)}.")
        try:
            region = parse_region(region_text) if region_text else None
            photo = load_photo(data)
            reading = measure(photo, region, photo_name=name, scene=scene)
            ratio, ratio_sigma, brightness = pair_channels(photo, reading, reference_c)
        except (PhotoError, RegionError, ProfileError) as error:
            raise ProfileError(f"Row {number} ({name}): {error}") from None
        if space is None:
            space, camera = photo.space, camera_settings(photo)
        elif photo.space.name != space.name:
            raise ProfileError(
                f"Row {number} ({name}): saved in {photo.space.name}, but earlier rows are "
                f"{space.name}; make one profile per colour setting."
            )
        pairs.append(
            Pair(name, ratio, ratio_sigma, reference_c, sigma_c, kind, cone, reading.region.to_text(),
                 *brightness, scene=scene)
        )
    if not pairs:
        raise ProfileError("The pairs file has a header but no rows.")
    return pairs, camera, space


def pair_channels(photo, reading, reference_c: float):
    """A pair's colour part (green/red and sigma, or None where green is lost) and brightness part
    (residual, sigma, slope; Nones without exposure data); raises when it has neither."""
    stats = reading.statistics
    try:
        ratio, ratio_sigma = pair_green_ratio(stats.mean_linear, stats.standard_error)
    except ProfileError as weak:
        ratio, ratio_sigma, colour_problem = None, None, weak
    else:
        colour_problem = None
    exposure, missing = exposure_from(photo.metadata, raw=photo.format == "DNG")
    red = float(stats.mean_linear[0]) * photo.linear_scale
    if exposure is None or not np.isfinite(red) or red <= 0:
        if colour_problem is not None:
            raise ProfileError(f"{colour_problem}, and {missing or 'the region has no usable red'}") from None
        return ratio, ratio_sigma, (None, None, None)
    red_error = float(stats.standard_error[0]) * photo.linear_scale
    return ratio, ratio_sigma, brightness_residual(red, red_error, exposure, reference_c, photo.space)


def camera_settings(photo) -> dict:
    """The camera and settings a profile records from a photo's EXIF, to spot other cameras."""
    meta = photo.metadata
    return {
        "format": photo.format,
        "camera_make": meta.camera_make,
        "camera_model": meta.camera_model,
        "white_balance": meta.white_balance,
        "iso": meta.iso,
        "exposure_time_s": meta.exposure_time_s,
    }


def fit_from_csv(name: str, csv_path: Path, data_dir: Path) -> CameraProfile:
    """Fit and save a profile from a pairs CSV; all or nothing."""
    _profile_path(data_dir, name)  # validate the name before any work
    pairs, camera, space = read_pairs(csv_path, data_dir)
    created = datetime.now(timezone.utc).isoformat(timespec="seconds")
    profile = fit_profile(name, pairs, space, camera, created)
    colour_pairs = [pair for pair in pairs if pair.green_ratio is not None]
    if len(colour_pairs) >= 3:
        _refuse_wild_pairs(colour_pairs, space)
    save_profile(data_dir, profile)
    return profile


def _leave_one_out(pairs: list[Pair], space) -> tuple[np.ndarray, np.ndarray]:
    """For each pair, the map fitted to all the others: (each left-out pair's miss in °C, the rms
    miss of the others in °C), in time linear in the number of pairs.

    The weighted least-squares sums of all pairs, less one pair's terms, give the fit without it
    (a rank-one downdate of the normal equations), with Orear's effective variances taken at
    the gain of the fit to all pairs. The others' misses are first-order ones, a green/red
    residual divided by the slope of the mapped locus (JCGM 100:2008, 5.1.2).
    """
    y = np.array([pair.green_ratio for pair in pairs])
    sigma_y = np.array([pair.green_ratio_sigma for pair in pairs])
    reference_k = celsius_to_kelvin(np.array([pair.reference_c for pair in pairs]))
    sigma_t = np.array([pair.reference_sigma_c for pair in pairs])
    x, slope = ideal_green_ratio(reference_k, space)
    gain_all = fit_ratio_map(pairs, space).gain
    w = 1.0 / (sigma_y**2 + (gain_all * slope * sigma_t) ** 2)

    def without_each(terms):
        return terms.sum() - terms

    s, sx, sy = without_each(w), without_each(w * x), without_each(w * y)
    sxx, sxy = without_each(w * x * x), without_each(w * x * y)
    gain = (s * sxy - sx * sy) / (s * sxx - sx**2)
    offset = (sy - gain * sx) / s
    grid = blackbody_table().temperature_k
    ideal = locus_ratios(space, clipped=False)[:, 0]
    rising = grid >= grid[ideal > ideal.min()][0]
    missed_k = np.interp((y - offset) / gain, ideal[rising], grid[rising]) - reference_k
    # The others' misses: sum over j != i of ((u_j - offset_i v_j - gain_i t_j) / gain_i)^2.
    u, v, t = y / slope, 1.0 / slope, x / slope
    squares = (without_each(u * u) + offset**2 * without_each(v * v) + gain**2 * without_each(t * t)
               - 2 * offset * without_each(u * v) - 2 * gain * without_each(u * t)
               + 2 * offset * gain * without_each(v * t))  # fmt: skip
    rest_rms = np.sqrt(np.maximum(squares, 0.0) / (len(pairs) - 1)) / np.abs(gain)
    return missed_k, rest_rms


def _refuse_wild_pairs(pairs: list[Pair], space) -> None:
    """Refuse pairs that disagree: likely a mistyped reference, a wrong region or another setting.

    Each pair is left out in turn and predicted from a map fitted to the others
    (:func:`_leave_one_out`). With four or more pairs the suspect is the one whose removal
    leaves the others agreeing best; with three the pairs cannot say which one is wrong, so all
    are named.
    """
    missed, rest_rms = _leave_one_out(pairs, space)
    worst_miss = float(np.max(np.abs(missed)))
    if worst_miss <= WILD_RESIDUAL_C:
        return
    if len(pairs) == 3:
        names = ", ".join(pair.photo for pair in pairs)
        raise ProfileError(
            f"The pairs {names} disagree by up to {worst_miss:.0f} °C: check their reference "
            "values, regions and camera settings."
        )
    suspect = int(np.argmin(rest_rms))
    raise ProfileError(
        f"The pair {pairs[suspect].photo} disagrees with the others by {missed[suspect]:+.0f} °C: check its "
        "reference value, region and camera settings, or leave it out."
    )
