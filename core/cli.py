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
    except RegionError as error:
        print(f"glowtemp: {error}", file=sys.stderr)
        return 2
    failures = 0
    for path in args.photos:
        try:
            photo = load_photo(path)
            reading = measure(photo, region, photo_name=path)
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
    elif result["upper_bound_c"] is not None:
        text = f"{name}: below about {result['upper_bound_c']} °C (95 %), colour gives only a ceiling"
    else:
        text = f"{name}: no estimate"
    codes = [w["code"] for w in result["warnings"]]
    text += f"; {result['pixels_used']} pixels used"
    return text + (f"; warnings: {', '.join(codes)}" if codes else "")


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
    return parser


def main(argv=None) -> int:
    args = build_parser().parse_args(argv)
    return args.run(args)


if __name__ == "__main__":
    sys.exit(main())
