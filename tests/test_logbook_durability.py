"""A writer killed with SIGKILL in the middle of many writes leaves a consistent store."""

import os
import signal
import subprocess
import sys

from glowtemp.firinglog.logbook import Logbook
from glowtemp.firinglog.photo_store import TEMPORARY_PREFIX, photo_key

WRITER = r"""
import sys, os
from datetime import datetime, timezone
from pathlib import Path
from glowtemp.firinglog.logbook import Logbook
log = Logbook(Path(sys.argv[1]))
firing_id = log.create_firing(name="Under fire")
print("ready", flush=True)
n = 0
while True:
    n += 1
    data = os.urandom(1024) * 1024  # 1 MB, so the kill often lands inside a photo write
    key = log.store_photo(data, ".jpg")
    log.add_reading(photo_key=key, photo_name=f"{n}.jpg", result={"status": "ok", "temperature_c": 900 + n},
                    taken_at=datetime.now(timezone.utc), firing_id=firing_id)
    print(n, flush=True)
"""
STORED_BEFORE_KILL = 6  # readings the writer reports stored before it is killed


def kill_writer_midway(folder) -> bool:
    """Run the writer, kill it, and tell whether it left a half-written temporary file."""
    writer = subprocess.Popen([sys.executable, "-c", WRITER, str(folder)], stdout=subprocess.PIPE)
    assert writer.stdout.readline().strip() == b"ready"
    while int(writer.stdout.readline()) < STORED_BEFORE_KILL:  # wait for progress, not for time
        pass
    photos = folder / "photos"
    for _ in range(200_000):  # until the next photo's temporary file exists (bounded)
        if any(p.name.startswith(TEMPORARY_PREFIX) for p in photos.iterdir()):
            break
    os.kill(writer.pid, signal.SIGKILL)  # the writer is now inside its next 1 MB photo write
    writer.wait()
    assert writer.returncode == -signal.SIGKILL
    return any(p.name.startswith(TEMPORARY_PREFIX) for p in (folder / "photos").iterdir())


def test_killed_writer_leaves_every_row_with_its_whole_photo(tmp_path):
    # Most kills land inside a 1 MB photo write; try a few times so a half-file is really seen.
    folders = [tmp_path / str(attempt) for attempt in range(6)]
    left_half_file = False
    for folder in folders:
        left_half_file = kill_writer_midway(folder)
        if left_half_file:
            break
    assert left_half_file

    with Logbook(folder) as log:
        (firing,) = log.list_firings()
        readings = log.readings_in(firing["id"])
        assert len(readings) >= STORED_BEFORE_KILL  # every reading it reported stored is there
        for reading in readings:
            data = log.photo_path(reading["photo_key"]).read_bytes()
            assert photo_key(data, ".jpg") == reading["photo_key"]  # complete: its hash matches its name
        leftovers = [p for p in log.photos.folder.iterdir() if p.name.startswith(TEMPORARY_PREFIX)]
        assert leftovers == []  # removed on open
        for key in log.photos.keys():  # photos stored just before the kill, not yet in a row, are whole too
            assert photo_key(log.photo_path(key).read_bytes(), ".jpg") == key
