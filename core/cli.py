"""The ``glowtemp`` command: a thin shell over the core calls.

Sub-commands import what they need when they run, so ``glowtemp measure`` starts fast and
never loads colour-science or the web stack.
"""

from __future__ import annotations

import argparse
import json
import sys


def _measure(args) -> int:
    from .photo import PhotoError, load_photo
    from .reading import INSTRUMENT_NOTICE, measure
    from .region import RegionError, parse_circle, parse_rectangle

    try:
        region = None
        if args.region:
            region = parse_rectangle(args.region)
        elif args.circle:
            region = parse_circle(args.circle)
        profile = _load_named_profile(args)
    except ValueError as error:  # RegionError, ProfileError
        print(f"glowtemp: {error}", file=sys.stderr)
        return 2
    failures = 0
    for path in args.photos:
        try:
            photo = load_photo(path)
            reading = measure(photo, region, photo_name=path, profile=profile)
        except (PhotoError, RegionError, OSError) as error:
            failures += 1
            message = getattr(error, "strerror", None) or str(error)
            if args.json:
                print(json.dumps({"photo": path, "error": message}))
            print(f"glowtemp: {path}: {message}", file=sys.stderr)
            continue
        result = reading.to_dict()
        print(json.dumps(result) if args.json else describe(result))
    if not args.json:
        print(INSTRUMENT_NOTICE, file=sys.stderr)
    return 1 if failures else 0


def _load_named_profile(args):
    if not args.profile:
        return None
    from .datadir import data_dir
    from .profile_store import load_profile

    return load_profile(data_dir(args.data), args.profile)


def _profile_command(args) -> int:
    from .datadir import data_dir
    from .profile import ProfileError
    from . import profile_store

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
    scatter = "measured" if record["scatter_measured"] else "assumed (fewer than 3 pairs)"
    lines = [
        f"profile {record['name']}: {camera}, {record['colour_space']}, "
        f"{len(record['pairs'])} pairs spanning {low:.0f}-{high:.0f} °C",
        f"  green/red = {record['parameters']['offset']:+.4f} + {record['parameters']['gain']:.3f} x ideal; "
        f"scatter {record['scatter']:.4f}, {scatter}",
    ]
    for pair, residual in zip(record["pairs"], record["residuals_c"]):
        source = f"cone {pair['cone']}" if pair["cone"] else "thermocouple"
        lines.append(f"  {pair['photo']}: trusted {pair['reference_c']:.0f} °C ({source}), residual {residual:+.0f} °C")
    return "\n".join(lines)


def describe(result: dict) -> str:
    """One readable line for a reading's JSON form."""
    name = result["photo"]
    if result["temperature_c"] is not None:
        low68, high68 = result["interval_68_c"]
        low95, high95 = result["interval_95_c"]
        text = (
            f"{name}: {result['temperature_c']} °C, likely {low68}-{high68} °C (68 %), "
            f"{low95}-{high95} °C (95 %), {result['glow_name']}"
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
    from .datadir import data_dir
    from .web.server import serve

    try:
        serve(args.host, args.port, data_dir(args.data), args.demo)
    except OSError as error:
        print(f"glowtemp: cannot serve on {args.host}:{args.port}: {error.strerror or error}", file=sys.stderr)
        return 1
    return 0


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="glowtemp",
        description="Estimate the temperature of incandescent glow from photos, with an honest band.",
    )
    commands = parser.add_subparsers(dest="command", required=True)

    measure = commands.add_parser("measure", help="estimate the temperature of glow in photos")
    measure.add_argument("photos", nargs="+", metavar="PHOTO")
    where = measure.add_mutually_exclusive_group()
    where.add_argument("--region", metavar="X,Y,W,H", help="rectangle in photo pixels")
    where.add_argument("--circle", metavar="CX,CY,R", help="circle in photo pixels")
    measure.add_argument("--profile", metavar="NAME", help="camera profile to apply")
    measure.add_argument("--data", metavar="DIR", help="data folder (profiles, firing log)")
    measure.add_argument("--json", action="store_true", help="one JSON object per photo per line")
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
    serve.add_argument("--host", default="127.0.0.1", help="address to listen on (0.0.0.0: the whole LAN)")
    serve.add_argument("--port", type=int, default=8000, help="port to listen on (0: any free port)")
    serve.add_argument("--data", metavar="DIR", help="data folder (profiles, firing log)")
    serve.add_argument("--demo", metavar="DIR", help="add the demo photos in DIR to the firing log first")
    serve.set_defaults(run=_serve)

    from .logbook_cli import add_logbook_commands  # firings, export, import (lazy handlers)

    add_logbook_commands(commands)
    return parser


def main(argv=None) -> int:
    args = build_parser().parse_args(argv)
    return args.run(args)


if __name__ == "__main__":
    sys.exit(main())
