"""Batch runs: many photos measured on all cores, in input order, as CSV or JSON Lines rows.

Each photo is measured exactly as one ``glowtemp measure`` does (decode, region, estimate);
photos are shared between this process and worker processes, in chunks of a few photos so
the cost of passing work between processes stays small next to a photo's decoding. Workers are
forked from this process while it runs a single thread, so they start at once with glowtemp
loaded; otherwise they come from *forkserver* (a clean process that imports glowtemp once and
forks workers from itself; *spawn* where forkserver is missing). Results come back in the
order the photos were given.

A progress bar (tqdm) is drawn on standard error only when it is a terminal.

References
----------
- Python documentation, ``concurrent.futures.ProcessPoolExecutor`` and ``multiprocessing``
  start methods (fork, spawn, forkserver).
- RFC 4180 (CSV); JSON Lines (jsonlines.org): one JSON value per line, UTF-8.
"""

from __future__ import annotations

import csv
import os
import sys
from dataclasses import dataclass
from functools import partial
from pathlib import Path

PHOTO_SUFFIXES = (".jpg", ".jpeg", ".png", ".tif", ".tiff", ".heic", ".heif", ".dng")
MAX_CHUNK = 8  # photos handed to a worker at a time
POOL_FROM_PHOTOS = 6  # by default fewer photos are measured in-process (a pool takes ~0.5 s to start)
CSV_COLUMNS = (
    "photo", "status", "temperature_c", "band68_low_c", "band68_high_c", "band95_low_c",
    "band95_high_c", "upper_bound_c", "resolution_c", "glow_name", "pixels_used", "region",
    "colour_space", "profile", "taken_at", "camera_model", "warnings", "error",
)  # fmt: skip


class BatchError(ValueError):
    """Photos that cannot be gathered for a batch run, in plain words."""


@dataclass(frozen=True)
class Measured:
    """One photo's outcome: the reading's JSON form, or the plain-words reason it failed."""

    path: str
    result: dict | None
    error: str | None = None
    format: str | None = None


def collect_photos(inputs) -> list[str]:
    """Files as given, and the photos (by suffix, sorted by name) directly inside given folders."""
    paths = []
    for given in inputs:
        path = Path(given)
        if path.is_dir():
            found = sorted(p for p in path.iterdir() if p.is_file() and p.suffix.lower() in PHOTO_SUFFIXES)
            if not found:
                raise BatchError(f"The folder {given} holds no photos ({', '.join(PHOTO_SUFFIXES)}).")
            paths += [str(p) for p in found]
        elif path.exists():
            paths.append(str(given))
        else:
            raise BatchError(f"There is no file or folder {given}.")
    return paths


def measure_file(path: str, region=None, profile=None, scene: str = "other", head_start=None) -> Measured:
    """Decode and measure one photo file, as ``glowtemp measure`` does; ``head_start`` is the
    file's decode if one was started already (:class:`glowtemp.images.jpeg_decoding.HeadStart`)."""
    from ..images.photo import PhotoError, begin_loading
    from ..images.region import RegionError

    try:
        loading = begin_loading(head_start or path)
        from ..estimation.estimate import read_population_tables  # while a JPEG's pixels decode: the
        from ..estimation.reading import measure  # measuring modules, and the camera prior's tables

        if loading.space is not None and profile is None:
            read_population_tables(loading.space, loading.metadata.white_balance == "auto")
        photo = loading.finish()
        reading = measure(photo, region, photo_name=path, profile=profile, scene=scene)
    except (PhotoError, RegionError, OSError) as error:
        return Measured(path, None, getattr(error, "strerror", None) or str(error))
    return Measured(path, reading.to_dict(), None, photo.format)


def start_method() -> str:
    """How worker processes start: *fork* while this process runs a single thread (the worker is
    a copy of it, glowtemp already loaded, ready at once), otherwise *forkserver* (*spawn*
    where that is missing), since a child forked from a process with other threads may inherit
    a lock that one of them held (Python documentation, multiprocessing, "Contexts and start
    methods")."""
    import multiprocessing  # loaded only for a pool: it slows every start otherwise
    import threading

    methods = multiprocessing.get_all_start_methods()
    if threading.active_count() == 1 and "fork" in methods:
        return "fork"
    return "forkserver" if "forkserver" in methods else "spawn"


def progress_bar(total: int, enabled: bool | None = None):
    """A tqdm bar on standard error, or None when there is none to draw (``enabled=None``: only
    when stderr is a terminal). The bar runs no monitor thread (tqdm's ``monitor_interval``),
    which would keep worker processes from starting by fork."""
    if not (sys.stderr.isatty() if enabled is None else enabled):
        return None
    from tqdm import tqdm

    class Bar(tqdm):
        monitor_interval = 0

    return Bar(total=total, unit="photo", file=sys.stderr)


def measure_chunk(work, paths) -> list:
    return [work(path) for path in paths]


def _shared_work(work, paths, jobs: int):
    """Chunks of ``paths`` measured by ``jobs - 1`` worker processes *and* this one, in order.

    This process measures the next chunk nobody has taken whenever the pool is busy, so the
    pool's start-up (a new interpreter importing glowtemp, about 0.3 s) is not time lost.
    """
    from concurrent.futures import ProcessPoolExecutor

    chunk = max(1, min(MAX_CHUNK, len(paths) // (8 * jobs)))
    chunks = [paths[i : i + chunk] for i in range(0, len(paths), chunk)]
    import multiprocessing

    context = multiprocessing.get_context(start_method())
    if context.get_start_method() == "forkserver":
        context.set_forkserver_preload(["glowtemp.shell.batch", "glowtemp.estimation.reading", "glowtemp.images.photo"])
    pool = ProcessPoolExecutor(jobs - 1, mp_context=context)
    futures, finished, taken = {}, {}, 0
    try:
        for index in range(len(chunks)):
            while index not in finished:
                while taken < len(chunks) and len(futures) < 2 * (jobs - 1):  # keep the pool fed
                    futures[taken] = pool.submit(measure_chunk, work, chunks[taken])
                    taken += 1
                if index in futures and (futures[index].done() or taken == len(chunks)):
                    finished[index] = futures.pop(index).result()
                elif taken < len(chunks):
                    finished[taken] = measure_chunk(work, chunks[taken])
                    taken += 1
                else:
                    finished[index] = futures.pop(index).result()
                for ready in [i for i, f in futures.items() if f.done()]:
                    finished[ready] = futures.pop(ready).result()
            yield from finished.pop(index)
    finally:
        pool.shutdown(cancel_futures=True)


def measure_many(paths, *, region=None, profile=None, scene: str = "other", jobs: int | None = None,
                 progress: bool | None = None):
    """Measure photo files on ``jobs`` processes; yields :class:`Measured` in the order of ``paths``.

    ``jobs=None`` uses all cores from :data:`POOL_FROM_PHOTOS` photos on, else this process.
    ``progress`` as :func:`progress_bar` (never for one photo).
    """
    paths = list(paths)
    if jobs is None:
        jobs = (os.cpu_count() or 1) if len(paths) >= POOL_FROM_PHOTOS else 1
    jobs = max(1, min(jobs, len(paths)))
    work = partial(measure_file, region=region, profile=profile, scene=scene)
    results = map(work, paths) if jobs == 1 else _shared_work(work, paths, jobs)
    bar = progress_bar(len(paths), progress) if len(paths) > 1 else None
    try:
        for measured in results:
            if bar is not None:
                bar.update(1)
            yield measured
    finally:
        if bar is not None:
            bar.close()


def csv_row(measured: Measured) -> dict:
    """One CSV row (see :data:`CSV_COLUMNS`): °C values, bands as low/high columns."""
    from ..firinglog.logbook_csv import neutralise_cell
    from ..estimation.reading import band_columns

    result = measured.result or {}
    camera = result.get("camera") or {}
    row = {
        "photo": measured.path,
        "status": result.get("status", "error"),
        **band_columns(result),
        "resolution_c": result.get("resolution_c"),
        "glow_name": result.get("glow_name"),
        "pixels_used": result.get("pixels_used"),
        "region": (result.get("region") or {}).get("text"),
        "colour_space": result.get("colour_space"),
        "profile": result.get("profile"),
        "taken_at": camera.get("taken_at"),
        "camera_model": camera.get("camera_model"),
        "warnings": " ".join(w["code"] for w in result.get("warnings", [])),
        "error": measured.error,
    }
    return {key: neutralise_cell(value) for key, value in row.items()}


def csv_writer(handle) -> csv.DictWriter:
    """A CSV writer with the header already written (RFC 4180, text cells quoted)."""
    writer = csv.DictWriter(handle, fieldnames=CSV_COLUMNS, quoting=csv.QUOTE_NONNUMERIC, lineterminator="\n")
    writer.writeheader()
    return writer
