"""The firing log's sub-commands of ``glowtemp``: ``firings``, ``export`` and ``import``.

Each handler imports the storage and drawing modules when it runs, so other commands
never load SQLite code or matplotlib.
"""

from __future__ import annotations

import sys


def _open_log(args):
    from ..firinglog.datadir import data_dir
    from ..firinglog.logbook import Logbook

    return Logbook(data_dir(args.data))


def _find_firing(log, wanted: str) -> dict:
    """A firing by its number or its exact name."""
    from ..firinglog.logbook import LogbookError

    if wanted.isdigit() and log.get_firing(int(wanted)):
        return log.get_firing(int(wanted))
    named = [f for f in log.list_firings() if f["name"] == wanted]
    if len(named) == 1:
        return named[0]
    if named:
        raise LogbookError(f"{len(named)} firings are named {wanted!r}; give its number instead (see glowtemp firings).")
    raise LogbookError(f"There is no firing {wanted!r} in the log; glowtemp firings lists them.")


def _firings(args) -> int:
    from ..firinglog.logbook import LogbookError

    try:
        log = _open_log(args)
    except LogbookError as error:
        print(f"glowtemp: {error}", file=sys.stderr)
        return 2
    with log:
        firings = log.list_firings()
    if not firings:
        print("The firing log is empty.")
    for firing in firings:
        target = f"{firing['target_c']:g} °C" if firing["target_c"] is not None else (
            f"cone {firing['target_cone']}" if firing["target_cone"] else "no target")  # fmt: skip
        print(
            f"{firing['id']:>4}  {firing['status']:<6}  {firing['started_at'][:16].replace('T', ' ')}  "
            f"{firing['kind']:<14}  {firing['reading_count']:>3} readings  {target:<12}  {firing['name']}"
        )
    return 0


def _export(args) -> int:
    from ..firinglog.bundle import BundleError, write_bundle
    from ..firinglog.logbook import LogbookError

    try:
        with _open_log(args) as log:
            firing = _find_firing(log, args.firing)
            if args.curve:
                from ..firinglog.curve_chart import draw_firing

                png = draw_firing(log, firing["id"], unit="F" if args.fahrenheit else "C", image_format="png",
                                  title=firing["name"])  # fmt: skip
                with open(args.curve, "wb") as handle:
                    handle.write(png)
                print(f"curve of firing {firing['id']} written to {args.curve}", file=sys.stderr)
                if not (args.csv or args.zip or args.output):
                    return 0
            if args.csv:
                from ..firinglog.logbook_csv import firing_csv

                text = firing_csv(firing, log.readings_in(firing["id"]))
                target = args.output or f"firing-{firing['id']}.csv"
                if target == "-":
                    sys.stdout.write(text)
                    return 0
                with open(target, "w", encoding="utf-8", newline="") as handle:
                    handle.write(text)
            else:
                target = args.output or f"firing-{firing['id']}.zip"
                write_bundle(log, firing["id"], target)
    except (LogbookError, BundleError, OSError) as error:
        print(f"glowtemp: {getattr(error, 'strerror', None) or error}", file=sys.stderr)
        return 2
    print(f"firing {firing['id']} ({firing['reading_count']} readings) written to {target}", file=sys.stderr)
    return 0


def _import(args) -> int:
    from ..firinglog.bundle import BundleError, import_bundle
    from ..firinglog.logbook import LogbookError
    from ..firinglog.storage import StorageError

    try:
        with _open_log(args) as log:
            firing_id = import_bundle(log, args.bundle)
            firing = log.get_firing(firing_id)
    except (LogbookError, BundleError, StorageError, OSError) as error:
        print(f"glowtemp: {args.bundle}: {getattr(error, 'strerror', None) or error}", file=sys.stderr)
        return 2
    print(f"imported as firing {firing_id}: {firing['name']} ({firing['reading_count']} readings)")
    return 0


def add_logbook_commands(commands) -> None:
    """Add ``firings``, ``export`` and ``import`` to the ``glowtemp`` sub-command parsers."""
    firings = commands.add_parser("firings", help="list the firings in the log")
    firings.set_defaults(run=_firings)

    export = commands.add_parser("export", help="write a firing as a zip bundle (with photos), CSV or curve")
    export.add_argument("firing", metavar="FIRING", help="the firing's number or exact name")
    form = export.add_mutually_exclusive_group()
    form.add_argument("--zip", action="store_true", help="a bundle with the photos that glowtemp import restores (default)")
    form.add_argument("--csv", action="store_true", help="one row per reading, units in the headers")
    export.add_argument("-o", "--output", metavar="FILE", help="where to write (CSV: '-' for standard output)")
    export.add_argument("--curve", metavar="CURVE.png", help="also draw the firing curve as a PNG image")
    export.add_argument("--fahrenheit", action="store_true", help="draw the curve in °F")
    export.set_defaults(run=_export)

    restore = commands.add_parser("import", help="restore a firing from a zip bundle as a new firing")
    restore.add_argument("bundle", metavar="BUNDLE.zip")
    restore.set_defaults(run=_import)

    for sub in (firings, export, restore):
        sub.add_argument("--data", metavar="DIR", help="data folder (profiles, firing log)")
