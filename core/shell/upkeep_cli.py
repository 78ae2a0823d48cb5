"""Sub-commands that look after the data folder: ``backup`` and ``sessions``.

Handlers import what they need when they run, so other commands never pay for them.
"""

from __future__ import annotations

import sys


def _backup(args) -> int:
    from ..firinglog.backup import BackupError, backup
    from ..firinglog.datadir import data_dir
    from ..firinglog.logbook import LogbookError

    try:
        summary = backup(data_dir(args.data), args.destination)
    except (BackupError, LogbookError) as error:
        print(f"glowtemp: {error}", file=sys.stderr)
        return 2
    except OSError as error:
        print(f"glowtemp: cannot write the backup to {args.destination}: {error.strerror or error}", file=sys.stderr)
        return 2
    print(
        f"backed up {summary.firings} firings, {summary.readings} readings and {summary.photos} photos "
        f"({summary.photos_copied} copied now) to {summary.destination}"
    )
    return 0


def _sessions(args) -> int:
    from ..firinglog.datadir import data_dir
    from ..firinglog.logbook import Logbook, LogbookError
    from ..firinglog.sessions import SessionStore

    try:
        log = Logbook(data_dir(args.data))
    except LogbookError as error:
        print(f"glowtemp: {error}", file=sys.stderr)
        return 2
    with log, SessionStore(log.database_path) as sessions:
        if args.action == "revoke":
            count = sessions.revoke_all()
            print(f"unpaired {count} device{'s' * (count != 1)}; each must pair again with a new code")
        else:
            devices = sessions.paired_devices()
            if not devices:
                print("No devices are paired.")
            for device in devices:
                print(f"{device['id']:>4}  paired {device['paired_at'][:16].replace('T', ' ')} UTC from {device['paired_from'] or 'unknown'}")
    return 0


def add_upkeep_commands(commands) -> None:
    """Add ``backup`` and ``sessions`` to the ``glowtemp`` sub-command parsers."""
    backup = commands.add_parser("backup", help="write a consistent copy of the data folder (safe while serving)")
    backup.add_argument("destination", metavar="DEST", help="folder to write the copy to (a data folder of its own)")
    backup.set_defaults(run=_backup)

    sessions = commands.add_parser("sessions", help="devices paired with glowtemp serve --lan")
    sessions.add_argument("action", choices=("list", "revoke"), help="list them, or unpair them all")
    sessions.set_defaults(run=_sessions)

    for sub in (backup, sessions):
        sub.add_argument("--data", metavar="DIR", help="data folder (profiles, firing log)")
