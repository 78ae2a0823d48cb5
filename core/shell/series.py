"""A firing made in one step from a timed series of photos (their EXIF DateTimeOriginal).

Every photo is decoded and measured first (on all cores, :mod:`glowtemp.shell.batch`); only when all
of them can be read and carry the time they were taken is anything written: the firing,
starting at the first photo's time, then each photo and its reading in time order. A failure
while writing removes the new firing and the photos only it used, so the log is as before.

EXIF times are the camera's local time without a zone (CIPA DC-008, DateTimeOriginal); they
are stored as the computer's local time, as the firing log does for every photo. The photos are
measured as the firing's scene (what is photographed), the one given or else the one its kind
of work suggests (:func:`glowtemp.firinglog.logbook_fields.scene_for_kind`).
"""

from __future__ import annotations

import sys
from datetime import datetime
from pathlib import Path


LISTED_PROBLEMS = 5  # a refusal names at most this many photos


class SeriesError(ValueError):
    """A series of photos that cannot become a firing, in plain words."""


def _named(items) -> str:
    shown = "; ".join(items[:LISTED_PROBLEMS])
    return shown + (f"; and {len(items) - LISTED_PROBLEMS} more" if len(items) > LISTED_PROBLEMS else "")


def measured_series(paths, *, region=None, profile=None, scene="other", jobs=None, progress=None) -> list:
    """(taken_at, Measured) for every photo, in time order; raises :class:`SeriesError` if any
    photo cannot be measured or has no EXIF time."""
    from .batch import measure_many

    measured = list(measure_many(paths, region=region, profile=profile, scene=scene, jobs=jobs, progress=progress))
    failed = [f"{m.path}: {m.error}" for m in measured if m.error]
    if failed:
        raise SeriesError(f"{len(failed)} of {len(measured)} photos cannot be measured, so no firing was made: {_named(failed)}")
    untimed = [m.path for m in measured if not m.result["camera"]["taken_at"]]
    if untimed:
        raise SeriesError(
            f"{len(untimed)} photos carry no time taken (EXIF DateTimeOriginal), so they cannot be "
            f"placed in a firing: {_named(untimed)}. Leave them out or add them by hand."
        )
    timed = [(datetime.fromisoformat(m.result["camera"]["taken_at"]), m) for m in measured]
    return sorted(timed, key=lambda item: (item[0], item[1].path))


def firing_from_photos(log, name: str, paths, *, region=None, profile=None, jobs=None, progress=None, kind="glaze",
                       scene=None) -> int:  # fmt: skip
    """Create a firing named ``name`` from photo files; returns its id. All or nothing."""
    from ..firinglog.logbook_fields import scene_for_kind
    from ..images.photo import STORED_SUFFIXES

    scene = scene or scene_for_kind(kind)
    series = measured_series(paths, region=region, profile=profile, scene=scene, jobs=jobs, progress=progress)
    firing_id = log.create_firing(name=name, kind=kind, scene=scene, started_at=series[0][0])
    stored = []
    try:
        for taken_at, measured in series:
            key = log.store_photo(Path(measured.path).read_bytes(), STORED_SUFFIXES[measured.format])
            stored.append(key)
            log.add_reading(
                photo_key=key, photo_name=Path(measured.path).name, result=measured.result,
                taken_at=taken_at, firing_id=firing_id,
            )  # fmt: skip
    except BaseException:
        log.delete_firing(firing_id)
        log.forget_unused_photos(stored)
        raise
    return firing_id


def _from_photos(args) -> int:
    from .batch import BatchError, collect_photos

    from ..firinglog.datadir import data_dir
    from ..firinglog.logbook import Logbook, LogbookError

    try:
        paths = collect_photos(args.photos)
        with Logbook(data_dir(args.data)) as log:
            firing_id = firing_from_photos(log, args.name, paths, jobs=args.jobs, kind=args.kind, scene=args.scene)
            firing = log.get_firing(firing_id)
            times = [r["taken_at"] for r in log.readings_in(firing_id)]
    except (BatchError, SeriesError, LogbookError, OSError) as error:
        print(f"glowtemp: {getattr(error, 'strerror', None) or error}", file=sys.stderr)
        return 2
    print(
        f"firing {firing_id} ({firing['name']}): {firing['reading_count']} readings "
        f"from {times[0][:16].replace('T', ' ')} to {times[-1][:16].replace('T', ' ')} UTC"
    )
    return 0


def add_series_commands(commands) -> None:
    """Add ``firing from-photos`` to the ``glowtemp`` sub-command parsers."""
    firing = commands.add_parser("firing", help="make a firing in the log")
    actions = firing.add_subparsers(dest="action", required=True)
    series = actions.add_parser("from-photos", help="a firing from photos in the order they were taken (EXIF time)")
    series.add_argument("name", metavar="NAME", help="the new firing's name")
    series.add_argument("photos", nargs="+", metavar="PHOTO", help="photo files or folders of photos")
    series.add_argument("--kind", default="glaze", help="bisque, glaze, glass, forging, heat treatment or other")
    series.add_argument("--scene", choices=("kiln", "steel", "other"),
                        help="what the photos show (default: kilns kiln, forging and heat treatment steel)")
    series.add_argument("--jobs", type=int, metavar="N", help="processes to measure with (default: all cores)")
    series.add_argument("--data", metavar="DIR", help="data folder (profiles, firing log)")
    series.set_defaults(run=_from_photos)
