"""Run the web app on waitress, a production WSGI server, and say where to open it."""

from __future__ import annotations

import socket
from pathlib import Path

SERVER_THREADS = 4


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


def serve(host: str, port: int, data_dir: Path, demo_dir: Path | None = None) -> None:
    """Serve until interrupted; ``port`` 0 picks a free port."""
    from waitress.server import create_server

    from . import create_app

    app = create_app({"DATA_DIR": data_dir})
    if demo_dir is not None:
        from glowtemp.demo import seed_demo

        if seed_demo(app.extensions["glowtemp"]["logbook"], Path(demo_dir)) is not None:
            print(f"Added a demo firing made from the photos in {demo_dir}", flush=True)
        else:
            print(f"No demo firing added: the log already has firings, or {demo_dir} holds no demo photos.", flush=True)
    server = create_server(app, host=host, port=port, threads=SERVER_THREADS)
    print(f"glowtemp is serving the data folder {data_dir}", flush=True)
    for url in addresses_to_open(host, server.effective_port):
        print(f"Open {url}", flush=True)
    if host in ("127.0.0.1", "localhost", "::1"):
        print("Only this computer can reach it; use --host 0.0.0.0 to reach it from a phone on the same network.", flush=True)
    try:
        server.run()
    except KeyboardInterrupt:
        pass
    finally:
        server.close()
