"""A firing with its photos as one zip file, and restoring it into a firing log.

Layout of a bundle::

    manifest.json          {"format": "glowtemp-firing-bundle", "version": 2, "firing": {...},
                            "readings": [...], "photos": {key: {"sha256": ..., "bytes": ...}}}
    photos/<key>           each photo once, under its content key (SHA-256 hex + suffix)

Importing checks the whole bundle before anything is stored: only those names, at most
:data:`MOST_PHOTOS` photos, sizes within limits (from the zip's directory, before anything is
read, and held to as members are read), the format name and a known version, every field of
the firing and its readings (results by :mod:`glowtemp.firinglog.result_schema`, as the API's),
every reading's photo present, every photo a photo by its header, in the format its name
says, and its SHA-256 (FIPS 180-4) matching its name and the manifest. Members are read in
chunks, never whole. Photos are then stored, streamed from the zip, and the firing with its
readings is inserted in one transaction; if that fails, photos that only this import brought
are removed again.

Importing the same bundle twice makes a second firing: when the log already has a firing
of that name, the new one is named "<name> (imported copy)", then "(imported copy 2)" and
so on. Ids are new; every other field, each reading's times and results, and the photos'
bytes are kept exactly.

Version 2 adds the firing's ``scene`` and each reading's ``magnet``; a version-1 bundle is
still imported, its firing getting the scene its kind suggests and its readings no magnet
value. (A bundle of version 2 is refused by a glowtemp that reads only version 1, rather
than imported without its magnet values.)
"""

from __future__ import annotations

import hashlib
import json
import zipfile
from pathlib import Path

from .logbook import Logbook, LogbookError
from .logbook_fields import utc_now
from ..images.photo import LARGEST_FILE_BYTES, STORED_SUFFIXES, PhotoError, photo_format
from .photo_store import KEY_PATTERN

FORMAT_NAME = "glowtemp-firing-bundle"
FORMAT_VERSION = 2
READ_VERSIONS = (1, 2)  # version 1 has no scene and no magnet values
MANIFEST_NAME = "manifest.json"
PHOTO_FOLDER = "photos/"
LARGEST_PHOTO_BYTES = LARGEST_FILE_BYTES
LARGEST_MANIFEST_BYTES = 64 * 1024 * 1024
LARGEST_BUNDLE_BYTES = 20 * 1024 * 1024 * 1024  # unpacked, from the zip's directory (checked as read)
MOST_PHOTOS = 10_000
HASH_CHUNK_BYTES = 1 << 20

FIRING_KEYS = ("name", "kiln", "kind", "scene", "target_c", "target_cone", "started_at", "notes", "status", "closed_at",
               "created_at")  # fmt: skip
READING_KEYS = ("photo_key", "photo_name", "taken_at", "created_at", "result", "reference_c", "cone", "cone_state",
                "magnet", "note")  # fmt: skip


class BundleError(ValueError):
    """A bundle that cannot be made or restored, in plain words; nothing was stored."""


def write_bundle(log: Logbook, firing_id: int, destination) -> None:
    """Write the firing, its readings and its photos as a zip to ``destination`` (path or binary file)."""
    firing = log.get_firing(firing_id)
    if firing is None:
        raise BundleError(f"There is no firing number {firing_id} in the log.")
    readings = log.readings_in(firing_id)
    photos = {}
    for reading in readings:
        key = reading["photo_key"]
        if key not in photos:
            data = log.photo_path(key).read_bytes()
            photos[key] = {"sha256": hashlib.sha256(data).hexdigest(), "bytes": len(data)}
    manifest = {
        "format": FORMAT_NAME,
        "version": FORMAT_VERSION,
        "exported_at": utc_now(),
        "firing": {key: firing[key] for key in FIRING_KEYS},
        "readings": [{key: reading[key] for key in READING_KEYS} for reading in readings],
        "photos": photos,
    }
    with zipfile.ZipFile(destination, "w") as bundle:
        text = json.dumps(manifest, indent=1, ensure_ascii=False, allow_nan=False)
        bundle.writestr(MANIFEST_NAME, text, compress_type=zipfile.ZIP_DEFLATED)
        for key in photos:  # photos are compressed already: store them as they are
            bundle.write(log.photo_path(key), PHOTO_FOLDER + key, compress_type=zipfile.ZIP_STORED)


def _open(source) -> zipfile.ZipFile:
    try:
        return zipfile.ZipFile(source)
    except (zipfile.BadZipFile, OSError) as error:
        raise BundleError(f"This is not a readable zip file ({error}); glowtemp export makes bundles.") from None


def _check_names(bundle: zipfile.ZipFile) -> list[str]:
    """The photo keys in the bundle; refuses any other member name (such as '../x' or '/etc/x')."""
    keys = []
    total = 0
    seen = set()
    members = bundle.infolist()
    if len(members) > MOST_PHOTOS + 1:
        raise BundleError(f"The bundle holds {len(members)} files; a firing's bundle holds at most {MOST_PHOTOS} photos.")
    for info in members:
        total += info.file_size
        name = info.filename
        if name in seen:
            raise BundleError(f"The bundle holds {name!r} twice; it was not made by glowtemp export.")
        seen.add(name)
        if name == MANIFEST_NAME:
            continue
        key = name[len(PHOTO_FOLDER):] if name.startswith(PHOTO_FOLDER) else None
        if key is None or not KEY_PATTERN.fullmatch(key):
            raise BundleError(
                f"The bundle holds {name!r}, which is neither {MANIFEST_NAME} nor a photo named by "
                "its content; it was not made by glowtemp export and is not imported."
            )
        if info.file_size > LARGEST_PHOTO_BYTES:
            raise BundleError(f"The photo {key} in the bundle is larger than {LARGEST_PHOTO_BYTES // 2**20} MB.")
        keys.append(key)
    if total > LARGEST_BUNDLE_BYTES:
        raise BundleError(f"The bundle unpacks to more than {LARGEST_BUNDLE_BYTES // 2**30} GB; it is not imported.")
    return keys


def _read_manifest(bundle: zipfile.ZipFile) -> dict:
    try:
        info = bundle.getinfo(MANIFEST_NAME)
    except KeyError:
        raise BundleError(f"The bundle has no {MANIFEST_NAME}; it was not made by glowtemp export.") from None
    if info.file_size > LARGEST_MANIFEST_BYTES:
        raise BundleError(f"The bundle's {MANIFEST_NAME} is too large to be a firing's record.")
    try:
        manifest = json.loads(bundle.read(info).decode("utf-8"))
    except RecursionError:  # json's C parser stops deep nesting this way
        raise BundleError(f"The bundle's {MANIFEST_NAME} nests too deeply to be a firing's record.") from None
    except (ValueError, UnicodeDecodeError, zipfile.BadZipFile) as error:
        raise BundleError(f"The bundle's {MANIFEST_NAME} cannot be read ({error}).") from None
    if not isinstance(manifest, dict) or manifest.get("format") != FORMAT_NAME:
        raise BundleError(f"The bundle's {MANIFEST_NAME} does not describe a {FORMAT_NAME}.")
    version = manifest.get("version")
    if type(version) is not int or version not in READ_VERSIONS:  # true and 1.0 equal 1 in Python
        raise BundleError(
            f"The bundle has format version {version!r}; this glowtemp reads versions "
            f"{' and '.join(map(str, READ_VERSIONS))}. Update glowtemp to import it."
        )
    firing, readings, photos = manifest.get("firing"), manifest.get("readings"), manifest.get("photos")
    if not isinstance(firing, dict) or not isinstance(readings, list) or not isinstance(photos, dict):
        raise BundleError(f"The bundle's {MANIFEST_NAME} lacks its firing, readings or photos.")
    if not all(isinstance(r, dict) for r in readings):
        raise BundleError(f"The bundle's {MANIFEST_NAME} has a reading that is not a record.")
    return manifest


def _check_photos(bundle: zipfile.ZipFile, manifest: dict, keys: list[str]) -> list[str]:
    """The keys of the photos the readings use, each checked without storing anything: listed in
    the manifest with its size, a photo by its header (:func:`glowtemp.images.photo.photo_format`) in
    the format its name says, and its bytes' SHA-256 (read in chunks) matching its name."""
    wanted = {reading.get("photo_key") for reading in manifest["readings"]}
    missing = sorted(str(key) for key in wanted - set(keys))
    if missing:
        raise BundleError(f"The bundle lacks the photo {missing[0]} that a reading needs ({len(missing)} missing).")
    for key in keys:
        info = bundle.getinfo(PHOTO_FOLDER + key)
        listed = manifest["photos"].get(key)
        if not isinstance(listed, dict) or listed.get("bytes") != info.file_size:
            raise BundleError(f"The photo {key} in the bundle is not listed in its {MANIFEST_NAME} with its size.")
        try:
            with bundle.open(info) as member:
                fmt = photo_format(member)
            if STORED_SUFFIXES.get(fmt) != "." + key.partition(".")[2]:
                raise PhotoError(f"it is a {fmt} photo under a name for another kind")
            digest = hashlib.sha256()
            with bundle.open(info) as member:
                for chunk in iter(lambda: member.read(HASH_CHUNK_BYTES), b""):
                    digest.update(chunk)
        except PhotoError as error:
            raise BundleError(f"The file {key} in the bundle is not a photo glowtemp can use: {error}") from None
        except (zipfile.BadZipFile, OSError, EOFError) as error:  # e.g. a CRC mismatch
            raise BundleError(f"The photo {key} in the bundle is damaged ({error}).") from None
        if digest.hexdigest() != key.partition(".")[0] or listed.get("sha256") != digest.hexdigest():
            raise BundleError(f"The photo {key} in the bundle does not match its SHA-256 hash; it may be damaged.")
    return [key for key in keys if key in wanted]  # a photo no reading uses is checked but not kept


def _free_name(log: Logbook, name) -> str:
    taken = {firing["name"] for firing in log.list_firings()}
    if name not in taken:
        return name
    candidate, number = f"{name} (imported copy)", 2
    while candidate in taken:
        candidate, number = f"{name} (imported copy {number})", number + 1
    return candidate


def import_bundle(log: Logbook, source: str | Path) -> int:
    """Restore a bundle as a new firing; returns its id. Refuses bad bundles with nothing stored.

    Everything is checked first (names, sizes, the manifest, every record, every photo); only
    then are photos stored, streamed from the zip, and then the rows in one transaction.
    """
    with _open(source) as bundle:
        keys = _check_names(bundle)
        manifest = _read_manifest(bundle)
        firing = dict(manifest["firing"])
        if not isinstance(firing.get("name"), str):
            raise BundleError("The bundle's firing has no name.")
        firing["name"] = _free_name(log, firing["name"].strip())
        try:
            checked = log.check_restored(firing, manifest["readings"])
        except LogbookError as error:
            raise BundleError(f"The bundle's records cannot be restored: {error}") from None
        wanted = _check_photos(bundle, manifest, keys)
        brought = [key for key in wanted if not log.photo_path(key).exists()]
        try:
            for key in wanted:
                with bundle.open(PHOTO_FOLDER + key) as member:
                    log.store_photo_stream(member, key)
            return log.insert_restored(checked)
        except BaseException as error:
            log.forget_unused_photos(brought)
            if isinstance(error, (LogbookError, zipfile.BadZipFile)):
                raise BundleError(f"The bundle cannot be restored: {error}") from None
            raise
