"""The ``glowtemp`` command: a thin shell over the core calls.

Sub-commands import what they need when they run, so ``glowtemp measure`` starts fast and
never loads colour-science or the web stack.
"""

from __future__ import annotations

import argparse
import json
import os
import sys

# The measuring path multiplies nothing larger than 3 x 3 matrices, so a pool of BLAS threads
# only costs it: OpenBLAS starts its threads (one per core unless OPENBLAS_NUM_THREADS says
# otherwise) when numpy loads, which on a busy machine delays a cold start. Set before numpy
# loads, and only where the user has not set it.
SINGLE_BLAS_THREAD = {"OPENBLAS_NUM_THREADS": "1"}


def _measure(args) -> int:
    for name, value in SINGLE_BLAS_THREAD.items():
        os.environ.setdefault(name, value)
    head_start = None
    if len(args.photos) == 1 and not args.map:  # one photo: decode it while the rest loads
        from ..images.jpeg_decoding import HeadStart

        head_start = HeadStart.begin(args.photos[0])
    from .batch import BatchError, collect_photos
    from ..images.region import parse_circle, parse_rectangle

    try:
        region = None
        if args.region:
            region = parse_rectangle(args.region)
        elif args.circle:
            region = parse_circle(args.circle)
        profile = _load_named_profile(args)
        paths = collect_photos(args.photos)
        if args.map and len(paths) != 1:
            raise BatchError(f"--map draws one photo's map; {len(paths)} photos were given.")
    except ValueError as error:  # RegionError, ProfileError, BatchError
        print(f"glowtemp: {error}", file=sys.stderr)
        return 2
    if args.map:
        failures = _measure_with_map(args, paths[0], region, profile)
    else:
        failures = _measure_files(args, paths, region, profile, head_start)
    if not (args.json or args.csv or args.jsonl):
        from ..estimation.reading import INSTRUMENT_NOTICE

        print(INSTRUMENT_NOTICE, file=sys.stderr)
    return 1 if failures else 0


def _measure_files(args, paths, region, profile, head_start=None) -> int:
    """Measure on all cores, writing each result in input order; returns the failure count.
    ``head_start``: the one photo's decode, started already."""
    from contextlib import ExitStack

    from .batch import csv_writer, csv_row, measure_file, measure_many

    failures = 0
    with ExitStack() as files:
        table = csv_writer(files.enter_context(open(args.csv, "w", encoding="utf-8", newline=""))) if args.csv else None
        lines = files.enter_context(open(args.jsonl, "w", encoding="utf-8")) if args.jsonl else None
        if head_start is not None:
            results = [measure_file(paths[0], region, profile, args.scene, head_start)]
        else:
            results = measure_many(paths, region=region, profile=profile, scene=args.scene, jobs=args.jobs)
        for measured in results:
            record = measured.result or {"photo": measured.path, "error": measured.error}
            if measured.error:
                failures += 1
                print(f"glowtemp: {measured.path}: {measured.error}", file=sys.stderr)
            if table is not None:
                table.writerow(csv_row(measured))
            if lines is not None:
                lines.write(json.dumps(record) + "\n")
            if args.json:
                print(json.dumps(record))
            elif not (table or lines) and measured.result:
                print(describe(measured.result))
    return failures


def _measure_with_map(args, path, region, profile) -> int:
    """One photo's reading and its temperature map, drawn to ``args.map`` (PNG or SVG)."""
    from ..images.photo import PhotoError, load_photo
    from ..estimation.reading import measure
    from ..images.region import RegionError
    from ..estimation.tilemap import temperature_map, with_map
    from ..estimation.tilemap_chart import draw_map

    image_format = "svg" if args.map.lower().endswith(".svg") else "png"
    try:
        photo = load_photo(path)
        reading = measure(photo, region, photo_name=path, profile=profile, scene=args.scene)
        tile_map = temperature_map(photo, reading.region, tiles=args.tiles, profile=profile, scene=args.scene)
        drawn = draw_map(photo, tile_map, unit="F" if args.fahrenheit else "C", image_format=image_format)
        with open(args.map, "wb") as handle:
            handle.write(drawn)
    except (PhotoError, RegionError, OSError) as error:
        message = getattr(error, "strerror", None) or str(error)
        print(json.dumps({"photo": path, "error": message}) if args.json else f"glowtemp: {path}: {message}",
              file=sys.stdout if args.json else sys.stderr)  # fmt: skip
        return 1
    result = with_map(reading, tile_map).to_dict()
    print(json.dumps(result) if args.json else describe(result) + "\n" + _describe_map(result["temperature_map"]))
    print(f"temperature map of {path} written to {args.map}", file=sys.stderr)
    return 0


def _describe_map(record: dict) -> str:
    """The map's hottest and coolest tiles for people."""
    if record["hottest"] is None:
        return f"  map: none of the {len(record['tiles'])} tiles gives a central estimate"
    lines = [f"  map: {record['usable_tiles']} of {len(record['tiles'])} tiles give an estimate"]
    for key in ("hottest", "coolest"):
        tile = record[key]
        low, high = tile["interval_95_c"]
        lines.append(
            f"  {key}: {tile['temperature_c']} °C ({low}-{high} °C, 95 %) at row {tile['row'] + 1}, "
            f"column {tile['column'] + 1} (pixels {tile['x']},{tile['y']},{tile['width']},{tile['height']})"
        )
    if record["bands_overlap"] is False:
        lines.append("  their 95 % bands do not overlap: the difference is real")
    return "\n".join(lines)


def _load_named_profile(args):
    if not args.profile:
        return None
    from ..firinglog.datadir import data_dir
    from ..estimation.profile_store import load_profile

    return load_profile(data_dir(args.data), args.profile)


def _profile_command(args) -> int:
    from ..firinglog.datadir import data_dir
    from ..estimation.profile import ProfileError
    from ..estimation import profile_store

    folder = data_dir(args.data)
    try:
        if args.action == "fit":
            profile = profile_store.fit_from_csv(args.name, args.pairs, folder)
            print(describe_profile(profile.to_dict()))
        elif args.action == "list":
            for summary in profile_store.list_profiles(folder):
                low, high = summary["span_c"]
                print(
                    f"{summary['name']}: {summary['camera_model'] or 'unnamed camera'}, "
                    f"{summary['colour_space']}, {summary['pairs']} pairs, {low:.0f}-{high:.0f} °C"
                )
        elif args.action == "show":
            record = profile_store.load_profile(folder, args.name).to_dict()
            print(json.dumps(record, indent=2, ensure_ascii=False) if args.json else describe_profile(record))
        elif args.action == "delete":
            profile_store.delete_profile(folder, args.name)
            print(f"deleted profile {args.name}")
    except ProfileError as error:
        print(f"glowtemp: {error}", file=sys.stderr)
        return 2
    return 0


def describe_profile(record: dict) -> str:
    """A profile's fit, each pair's residual and the span, for people."""
    low, high = record["span_c"]
    camera = record["camera"].get("camera_model") or "unnamed camera"
    lines = [
        f"profile {record['name']}: {camera}, {record['colour_space']}, "
        f"{len(record['pairs'])} pairs spanning {low:.0f}-{high:.0f} °C",
    ]
    if record["parameters"] is not None:
        scatter = "measured" if record["scatter_measured"] else "assumed (fewer than 3 pairs)"
        lines.append(f"  green/red = {record['parameters']['offset']:+.4f} + {record['parameters']['gain']:.3f} x ideal; "
                     f"scatter {record['scatter']:.4f}, {scatter}")
    if record.get("brightness"):
        fit = record["brightness"]
        lines.append(f"  exposure constant ln {fit['log_constant']:+.2f} ± {fit['sigma']:.2f} "
                     f"from {fit['pairs']} pairs ({fit['scene']} scene)")
    residuals = iter(record["residuals_c"])
    for pair in record["pairs"]:
        source = {"cone": f"cone {pair['cone']}", "magnet": "magnet let go (approximate)"}.get(pair["reference_kind"], "thermocouple")
        residual = f", colour residual {next(residuals):+.0f} °C" if pair["green_ratio"] is not None else ", no colour part"
        lines.append(f"  {pair['photo']}: trusted {pair['reference_c']:.0f} °C ({source}){residual}")
    return "\n".join(lines)


def describe(result: dict) -> str:
    """One readable line for a reading's JSON form."""
    name = result["photo"]
    if result["temperature_c"] is not None:
        low68, high68 = result["interval_68_c"]
        low95, high95 = result["interval_95_c"]
        text = (
            f"{name}: {result['temperature_c']} °C, likely {low68}-{high68} °C (68 %), "
            f"{low95}-{high95} °C (95 %), heat colour {result['glow_name']} (names are loose), "
            f"{result['channels_text']}"
        )
    elif result["status"] == "wide":
        low95, high95 = result["interval_95_c"]
        text = f"{name}: somewhere in {low95}-{high95} °C (95 %), too wide to name one heat"
    elif result["upper_bound_c"] is not None:
        text = f"{name}: below about {result['upper_bound_c']} °C (95 %), colour gives only a ceiling"
    else:
        text = f"{name}: no estimate ({result['status']})"
    codes = [w["code"] for w in result["warnings"]]
    text += f"; {result['pixels_used']} pixels used"
    return text + (f"; warnings: {', '.join(codes)}" if codes else "")


def _serve(args) -> int:
    from ..firinglog.datadir import data_dir
    from ..firinglog.folder_lock import FolderInUse
    from ..firinglog.logbook import LogbookError
    from ..firinglog.storage import StorageError
    from ..web.server import lan_address, serve

    host = lan_address() if args.lan else args.host
    if host is None:
        print("glowtemp: this computer has no address on a local network; connect it, or give --host.", file=sys.stderr)
        return 1
    limits = {}
    if args.max_upload_mb is not None:
        limits["MAX_CONTENT_LENGTH"] = int(args.max_upload_mb * 1024 * 1024)
    if args.max_megapixels is not None:
        limits["MAX_PHOTO_PIXELS"] = int(args.max_megapixels * 1e6)
    try:
        serve(host, args.port, data_dir(args.data), args.demo, pairing=True if args.pair else None, limits=limits)
    except (LogbookError, StorageError, FolderInUse) as error:
        print(f"glowtemp: {error}", file=sys.stderr)
        return 1
    except OSError as error:
        print(f"glowtemp: cannot serve on {host}:{args.port}: {error.strerror or error}", file=sys.stderr)
        return 1
    return 0


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="glowtemp",
        description="Estimate the temperature of incandescent glow from photos, with an honest band.",
    )
    commands = parser.add_subparsers(dest="command", required=True)

    measure = commands.add_parser("measure", help="estimate the temperature of glow in photos")
    measure.add_argument("photos", nargs="+", metavar="PHOTO", help="photo files or folders of photos")
    where = measure.add_mutually_exclusive_group()
    where.add_argument("--region", metavar="X,Y,W,H", help="rectangle in photo pixels")
    where.add_argument("--circle", metavar="CX,CY,R", help="circle in photo pixels")
    measure.add_argument("--profile", metavar="NAME", help="camera profile to apply")
    measure.add_argument("--scene", choices=("kiln", "steel", "other"), default="other",
                         help="what is photographed, for the brightness channel's emissivity: a kiln's "
                              "inside through a spy hole, hot oxidised steel, or other (default)")
    measure.add_argument("--data", metavar="DIR", help="data folder (profiles, firing log)")
    measure.add_argument("--json", action="store_true", help="one JSON object per photo per line")
    measure.add_argument("--csv", metavar="FILE", help="write one row per photo to a CSV file")
    measure.add_argument("--jsonl", metavar="FILE", help="write one JSON object per photo per line to a file")
    measure.add_argument("--jobs", type=int, metavar="N", help="processes to measure with (default: all cores for 6 or more photos)")
    measure.add_argument("--map", metavar="MAP.png", help="also draw a temperature map of the region (.png or .svg)")
    measure.add_argument("--tiles", type=int, default=8, metavar="N", help="map tiles across the region (default 8)")
    measure.add_argument("--fahrenheit", action="store_true", help="map legend in °F")
    measure.set_defaults(run=_measure)

    profile = commands.add_parser("profile", help="camera profiles learnt from trusted readings")
    actions = profile.add_subparsers(dest="action", required=True)
    fit = actions.add_parser("fit", help="fit a profile from a CSV of photo,reference_c[,region] or photo,cone")
    fit.add_argument("name")
    fit.add_argument("pairs", metavar="PAIRS.csv")
    actions.add_parser("list", help="list stored profiles")
    show = actions.add_parser("show", help="show one profile")
    show.add_argument("name")
    show.add_argument("--json", action="store_true", help="the stored JSON record")
    delete = actions.add_parser("delete", help="delete one profile")
    delete.add_argument("name")
    for sub in (fit, show, delete, actions.choices["list"]):
        sub.add_argument("--data", metavar="DIR", help="data folder (profiles, firing log)")
    profile.set_defaults(run=_profile_command)

    serve = commands.add_parser("serve", help="run the web page for phones (waitress)")
    reach = serve.add_mutually_exclusive_group()
    reach.add_argument("--host", default="127.0.0.1", help="address to listen on (default: this computer only)")
    reach.add_argument("--lan", action="store_true", help="listen on the local network; phones pair with a code")
    serve.add_argument("--pair", action="store_true",
                       help="ask every device to pair, even on this computer's address (e.g. behind a reverse proxy)")
    serve.add_argument("--port", type=int, default=8000, help="port to listen on (0: any free port)")
    serve.add_argument("--max-upload-mb", type=float, metavar="MB", help="largest upload accepted (default 64)")
    serve.add_argument("--max-megapixels", type=float, metavar="MP", help="largest photo accepted (default 50)")
    serve.add_argument("--data", metavar="DIR", help="data folder (profiles, firing log)")
    serve.add_argument("--demo", metavar="DIR", help="add the demo photos in DIR to the firing log first")
    serve.set_defaults(run=_serve)

    from .logbook_cli import add_logbook_commands  # firings, export, import (lazy handlers)
    from .series import add_series_commands  # firing from-photos (lazy handler)
    from .upkeep_cli import add_upkeep_commands  # backup, sessions (lazy handlers)

    add_logbook_commands(commands)
    add_series_commands(commands)
    add_upkeep_commands(commands)
    return parser


def main(argv=None) -> int:
    """Run one ``glowtemp`` command; ``argv=None`` is the program itself (``sys.argv``).

    As the program, ``measure`` in this one process (no worker pool) then leaves without
    tearing the interpreter down: its files are closed and its output is flushed here, and
    freeing numpy's and every module's objects one by one costs a cold measure about a tenth
    of its time. Other commands (which may hold the firing log open), and runs that started
    worker processes (whose shared semaphores are released at the ordinary exit), exit the
    ordinary way.
    """
    args = build_parser().parse_args(argv)
    code = args.run(args)
    if argv is None and args.run is _measure and "multiprocessing" not in sys.modules:
        sys.stdout.flush()
        sys.stderr.flush()
        os._exit(code)
    return code


if __name__ == "__main__":
    sys.exit(main())
