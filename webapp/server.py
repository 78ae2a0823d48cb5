"""Run the web app on waitress, a production WSGI server, and say where to open it.

On loopback (the default) only this computer can reach the page and nothing asks for pairing.
On any other address (``--lan`` picks this machine's address on the local network) every
device must pair first: the server prints the pairing address with a one-time code and a QR
code of it, and prints a fresh code each time one is used (:mod:`glowtemp.web.access`).

Before serving, the data folder must take a real write (a read-only or full folder stops the
start with a plain message, :func:`glowtemp.firinglog.storage.check_writable`), and the firing log is
checked: a damaged database stops the start with a plain message (:meth:`glowtemp.firinglog.logbook.Logbook.check_database`), readings whose photo is missing are
reported, and whole photos that no reading names (left by a process killed between storing the
photo and committing its row) are removed once they are an hour old.
"""

from __future__ import annotations

import io
import json
import os
import socket
import sys
from pathlib import Path

SERVER_THREADS = 4
QR_BORDER_MODULES = 4  # the quiet zone ISO/IEC 18004 asks for
WHITE_ON_BLACK = ("\x1b[97;40m", "\x1b[0m")  # ANSI: light modules white on black, on any theme
WAITRESS_SLACK_BYTES = 1024 * 1024  # waitress refuses only beyond the app's own limit, before reading the body


def lan_address() -> str | None:
    """This machine's address on the local network (the route a packet to the LAN would take)."""
    with socket.socket(socket.AF_INET, socket.SOCK_DGRAM) as probe:
        try:
            probe.connect(("192.0.2.1", 9))  # TEST-NET-1 (RFC 5737): nothing is sent
            return probe.getsockname()[0]
        except OSError:
            return None


def addresses_to_open(host: str, port: int) -> list[str]:
    """The URLs a person can type: every interface means the LAN address as well as this machine."""
    if host in ("0.0.0.0", "::", ""):
        lan = lan_address()
        return [f"http://127.0.0.1:{port}/"] + ([f"http://{lan}:{port}/"] if lan else [])
    shown = f"[{host}]" if ":" in host else host
    return [f"http://{shown}:{port}/"]


def needs_pairing(host: str) -> bool:
    """Whether serving on ``host`` lets other devices connect (anything but loopback)."""
    from .access import is_loopback_name

    return not is_loopback_name(host)


def qr_text(url: str, colour: bool) -> str:
    """A QR code of ``url`` in text (two modules a character, ISO/IEC 18004 via segno)."""
    import segno

    drawn = io.StringIO()
    segno.make(url, error="m").terminal(out=drawn, compact=True, border=QR_BORDER_MODULES)
    lines = drawn.getvalue().rstrip("\n").split("\n")
    if colour:
        lines = [WHITE_ON_BLACK[0] + line + WHITE_ON_BLACK[1] for line in lines]
    return "\n".join(lines)


def pairing_message(base_url: str, code: str, colour: bool = False) -> str:
    """What the terminal shows so that a device can pair: the address with the code, and its QR."""
    from .pairing import shown_code

    url = f"{base_url}pair?code={code}"
    return (
        f"Pairing code {shown_code(code)} (one device; a new code follows each pairing).\n"
        f"Scan the QR code with the phone's camera, or open {url}\n{qr_text(url, colour)}"
    )


def open_app(data_dir: Path, pairing: bool, limits: dict | None = None, out=sys.stdout):
    """The app on ``data_dir`` after the start-up checks; raises LogbookError if the log is damaged
    and StorageError if the data folder cannot be written."""
    from glowtemp.firinglog.logbook import DATABASE_NAME, PHOTOS_FOLDER
    from glowtemp.firinglog.storage import check_writable

    from . import create_app

    data_dir = Path(data_dir)
    check_writable(data_dir, folders=[data_dir / PHOTOS_FOLDER], files=[data_dir / DATABASE_NAME])

    app = create_app({"DATA_DIR": data_dir, "PAIRING": pairing, **(limits or {})})
    log = app.extensions["glowtemp"]["logbook"]
    log.check_database()
    missing = log.missing_photos()
    if missing:
        print(f"Warning: {len(missing)} photo file(s) named by readings are missing from {log.photos.folder}.", file=out)
    swept = log.forget_orphan_photos()
    if swept:
        print(f"Removed {swept} stored photo file(s) that no reading names (left by an interrupted upload).", file=out)
    return app


def _plain_words_channel(upload_limit_bytes: int):
    """A waitress connection whose own refusals (a body beyond its limit, a malformed request)
    answer in the app's words: JSON ``{"error": ...}`` under /api/, a short text elsewhere."""
    from waitress.channel import HTTPChannel
    from waitress.task import ErrorTask

    from .errors import upload_too_large

    class PlainWordsErrorTask(ErrorTask):
        def execute(self):
            error = self.request.error
            message = upload_too_large(upload_limit_bytes) if error.code == 413 else f"{error.reason}: {error.body}"
            if (self.request.path or "").startswith("/api/"):
                body, kind = json.dumps({"error": message}).encode("utf-8"), "application/json"
            else:
                body, kind = message.encode("utf-8"), "text/plain; charset=utf-8"
            self.status = f"{error.code} {error.reason}"
            self.response_headers.append(("Content-Type", kind))
            self.set_close_on_finish()
            self.content_length = len(body)
            self.write(body)

    class PlainWordsChannel(HTTPChannel):
        error_task_class = PlainWordsErrorTask

    return PlainWordsChannel


def build_server(app, host: str, port: int):
    """A waitress server for ``app``; ``port`` 0 picks a free port."""
    from waitress.server import create_server

    body_limit = app.config["MAX_CONTENT_LENGTH"] + WAITRESS_SLACK_BYTES
    server = create_server(app, host=host, port=port, threads=SERVER_THREADS, max_request_body_size=body_limit)
    server.channel_class = _plain_words_channel(app.config["MAX_CONTENT_LENGTH"])
    return server


def serve(host: str, port: int, data_dir: Path, demo_dir: Path | None = None, *, pairing: bool | None = None,
          limits: dict | None = None, out=sys.stdout) -> None:  # fmt: skip
    """Serve until interrupted. ``pairing`` None means: pair unless ``host`` is loopback.

    Raises :class:`glowtemp.firinglog.folder_lock.FolderInUse` while another server holds the data folder.
    """
    from glowtemp.firinglog.folder_lock import FolderLock
    from glowtemp.firinglog.storage import check_writable

    pairing = needs_pairing(host) if pairing is None else pairing
    check_writable(data_dir)  # the lock file is written there
    lock = FolderLock(data_dir)
    lock.take()
    try:
        _serve_locked(host, port, data_dir, demo_dir, pairing, limits, out, lock)
    finally:
        lock.release()


def _serve_locked(host, port, data_dir, demo_dir, pairing: bool, limits, out, lock) -> None:
    app = open_app(data_dir, pairing, limits, out)
    if demo_dir is not None:
        from glowtemp.firinglog.demo import seed_demo

        if seed_demo(app.extensions["glowtemp"]["logbook"], Path(demo_dir)) is not None:
            print(f"Added a demo firing made from the photos in {demo_dir}", file=out, flush=True)
        else:
            print(f"No demo firing added: the log already has firings, or {demo_dir} holds no demo photos.", file=out, flush=True)
    server = build_server(app, host, port)
    print(f"glowtemp is serving the data folder {data_dir}", file=out, flush=True)
    urls = addresses_to_open(host, server.effective_port)
    lock.describe(f"process {os.getpid()}, serving {urls[0]}")
    for url in urls:
        print(f"Open {url}", file=out, flush=True)
    if pairing:
        colour = out.isatty()
        codes = app.extensions["glowtemp"]["pairing"]
        codes.on_new_code = lambda code: print(pairing_message(urls[-1], code, colour), file=out, flush=True)
        print("Every device must pair first; 'glowtemp sessions revoke' unpairs them all.", file=out, flush=True)
        codes.on_new_code(codes.code)
    else:
        print("Only this computer can reach it; use --lan to reach it from a phone on the same network.", file=out, flush=True)
    try:
        server.run()
    except KeyboardInterrupt:
        pass
    finally:
        server.close()
