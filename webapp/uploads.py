"""Taking an uploaded photo into the firing log: checked, measured and stored, or nothing at all.

Every upload goes through :func:`take_upload`: the measuring page's ``POST /api/readings`` and a
firing's readings (its page form and ``POST /api/firings/<id>/readings``).

- The cheap checks come first (region, camera profile, scene, trusted values), then the photo is
  decoded. Its type is decided by its content (:func:`glowtemp.images.photo.load_photo`), its size is
  bounded by ``MAX_CONTENT_LENGTH`` (413, before any of it is read into the app) and its pixel
  count by ``MAX_PHOTO_PIXELS`` (422, from the header, before any pixel is decoded). Decodes
  running at once share a budget of memory (:mod:`glowtemp.web.decode_gate`).
- The name a photo is kept under is made here from its content and format
  (``photo-3f2a9c1b04de.jpg``): nothing the client sends, such as its file name, is stored.
- The photo file is complete on disk before the reading's row is committed, and removed again
  when the row is refused, so a failed upload leaves nothing behind.
- An ``upload_id`` made by the page for each photo makes sending it again harmless: a retry
  after a lost answer gets the reading already stored (``created`` False), found before the
  photo is measured again and, for two copies sent at once, in the transaction that stores the
  row (:meth:`glowtemp.firinglog.logbook.Logbook.add_uploaded_reading`). The same id with another photo
  or firing is refused with 409.
- The time a reading was taken: a trusted ``taken_at`` sent with it, else the photo's EXIF
  DateTimeOriginal, else ``captured_at`` (when the page got the photo, sent with a photo that
  waited to be sent), else the moment it arrives.
- The scene (what is photographed: ``kiln``, ``steel`` or ``other``, the brightness channel's
  emissivity prior, :data:`glowtemp.estimation.brightness.SCENES`): a ``scene`` sent with it, else the
  firing's scene, else ``other``.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime, timezone

from flask import current_app, request

from .errors import ApiError

PHOTO_FIELD = "photo"
SHOWN_KEY_DIGITS = 12  # of the photo's SHA-256 in its name: plenty to tell a firing's photos apart
LONGEST_REGION_TEXT = 100  # "circle:" and three numbers, or four, with room to spare


@dataclass(frozen=True)
class Taken:
    """A stored reading: its id, the decoded photo and the reading's JSON form."""

    reading_id: int
    photo: object
    result: dict
    created: bool = True  # False: this upload id was stored before (a retry after a lost answer)


def _text(fields: dict, name: str) -> str:
    value = fields.get(name)
    return "" if value is None else str(value).strip()


def region_from(fields: dict):
    """The region asked for (``region``: X,Y,W,H or circle:CX,CY,R; ``circle``: CX,CY,R), or None."""
    from glowtemp.images.region import RegionError, parse_circle, parse_region

    region, circle = _text(fields, "region"), _text(fields, "circle")
    if max(len(region), len(circle)) > LONGEST_REGION_TEXT:
        raise ApiError(
            f"A region is a few whole numbers such as 10,20,300,200 or circle:160,120,40 (at most "
            f"{LONGEST_REGION_TEXT} characters); got {max(len(region), len(circle))} characters."
        )
    if region and circle:
        raise ApiError("Send either a region or a circle, not both.")
    try:
        if circle:
            return parse_circle(circle)
        return parse_region(region) if region else None
    except RegionError as error:
        raise ApiError(str(error)) from None


def profile_from(fields: dict):
    """The stored camera profile named in ``profile``, or None for the uncalibrated estimate."""
    name = _text(fields, "profile")
    if not name:
        return None
    from glowtemp.estimation.profile import ProfileError
    from glowtemp.estimation.profile_store import load_profile

    try:
        return load_profile(current_app.config["DATA_DIR"], name)
    except ProfileError as error:
        raise ApiError(str(error)) from None


def scene_from(fields: dict, default: str) -> str:
    """The ``scene`` asked for, or ``default`` when none is sent; an unknown one answers 400
    naming the allowed scenes."""
    from glowtemp.firinglog.logbook_fields import LogbookError, scene

    value = _text(fields, "scene")
    if not value:
        return default
    try:
        return scene(value)
    except LogbookError as error:
        raise ApiError(str(error)) from None


def stored_scene(stored: dict) -> str:
    """The scene a stored reading was measured as: its result's, else its firing's (a reading
    measured before results carried one), else ``other``."""
    from glowtemp.estimation.brightness import DEFAULT_SCENE

    kept = stored["result"].get("scene")
    if kept:
        return kept
    if stored["firing_id"] is None:
        return DEFAULT_SCENE
    return current_app.extensions["glowtemp"]["logbook"].get_firing(stored["firing_id"])["scene"]


def upload_id_from(fields: dict) -> str | None:
    """The client-made ``upload_id`` of the request, or None."""
    from glowtemp.firinglog.logbook_fields import LogbookError, upload_id

    try:
        return upload_id(_text(fields, "upload_id"))
    except LogbookError as error:
        raise ApiError(str(error)) from None


def captured_at_from(fields: dict) -> str | None:
    """``captured_at``: when the page got the photo (ISO 8601), used when the photo has no EXIF time."""
    from glowtemp.firinglog.logbook_fields import LogbookError, time_text

    value = _text(fields, "captured_at")
    try:
        return time_text(value, "time the page got the photo (captured_at)") if value else None
    except LogbookError as error:
        raise ApiError(str(error)) from None


def stored_photo(key: str):
    """The decoded stored photo with ``key``, from the cache of recently decoded photos if there."""
    from glowtemp.images.photo import decoded_bytes, load_photo

    services = current_app.extensions["glowtemp"]
    photo = services["photos"].get(key)
    if photo is None:
        data = services["logbook"].photo_path(key).read_bytes()
        with services["decodes"].admit(decoded_bytes(data)):  # see glowtemp.web.decode_gate
            photo = load_photo(data)
        services["photos"].put(key, photo)
    return photo


def _stored_before(upload_id: str | None, data: bytes, firing_id: int | None) -> Taken | None:
    """The reading already stored for ``upload_id`` with these photo bytes, or None if there is none."""
    from glowtemp.firinglog.logbook import UploadConflict, check_same_upload
    from glowtemp.firinglog.photo_store import photo_key

    stored = None if upload_id is None else current_app.extensions["glowtemp"]["logbook"].reading_for_upload(upload_id)
    if stored is None:
        return None
    suffix = "." + stored["photo_key"].rpartition(".")[2]
    try:
        check_same_upload(stored, photo_key(data, suffix), firing_id)
    except UploadConflict as error:
        raise ApiError(str(error), 409) from None
    return Taken(stored["id"], stored_photo(stored["photo_key"]), stored["result"], created=False)


def uploaded_bytes() -> bytes:
    """The bytes of the first non-empty ``photo`` file of the request (a page may offer two inputs)."""
    for upload in request.files.getlist(PHOTO_FIELD):
        data = upload.read()
        if data:
            return data
    if request.files.getlist(PHOTO_FIELD):
        raise ApiError("The photo file is empty (0 bytes); take or choose the photo again.")
    raise ApiError(f"Send the photo as a file in a form field named '{PHOTO_FIELD}'; take or choose it again.")


def decode(data: bytes):
    """The decoded photo; a file that is not a usable photo is refused with 422."""
    from glowtemp.images.photo import PhotoError, load_photo

    try:
        return load_photo(data, max_pixels=current_app.config["MAX_PHOTO_PIXELS"])
    except PhotoError as error:
        raise ApiError(str(error), 422) from None


def measure_reading(photo, region, profile, photo_name: str, scene: str):
    """The :class:`glowtemp.estimation.reading.Reading`; when the glow finder finds nothing, 422 asks for a drawn region."""
    from glowtemp.estimation.reading import measure
    from glowtemp.images.region import RegionError

    try:
        return measure(photo, region, photo_name=photo_name, profile=profile, scene=scene)
    except RegionError as error:
        if region is None:
            raise ApiError(str(error), 422, draw_region=True) from None
        raise ApiError(str(error)) from None


def measure_photo(photo, region, profile, photo_name: str, scene: str) -> dict:
    """The reading's JSON form (see :func:`measure_reading`)."""
    return measure_reading(photo, region, profile, photo_name, scene).to_dict()


def stored_name(data: bytes, photo) -> str:
    """The name a photo is shown under: made from its content and decoded format only."""
    from glowtemp.images.photo import STORED_SUFFIXES
    from glowtemp.firinglog.photo_store import photo_key

    suffix = STORED_SUFFIXES[photo.format]
    return f"photo-{photo_key(data, suffix)[:SHOWN_KEY_DIGITS]}{suffix}"


def take_upload(fields: dict, firing_id: int | None = None, trusted: dict | None = None) -> Taken:
    """Measure the request's photo and store it with its reading (and trusted values, in a firing).

    ``fields`` are the request's text fields (region, circle, profile, scene, upload_id,
    captured_at); ``trusted`` are already gathered trusted values (reference_c, cone,
    cone_state, magnet, note, taken_at). The photo is measured as the ``scene`` sent, else as
    the firing's scene. Raises :class:`ApiError` with nothing stored when any part is refused.
    """
    from glowtemp.estimation.brightness import DEFAULT_SCENE
    from glowtemp.firinglog.logbook import LogbookError, UploadConflict
    from glowtemp.images.photo import STORED_SUFFIXES, decoded_bytes

    upload_id, captured_at = upload_id_from(fields), captured_at_from(fields)
    data = uploaded_bytes()
    again = _stored_before(upload_id, data, firing_id)
    if again is not None:
        return again
    region, profile = region_from(fields), profile_from(fields)
    services = current_app.extensions["glowtemp"]
    log = services["logbook"]
    firing = log.get_firing(firing_id) if firing_id is not None else None
    scene = scene_from(fields, firing["scene"] if firing else DEFAULT_SCENE)
    with services["decodes"].admit(decoded_bytes(data)):  # see glowtemp.web.decode_gate
        photo = decode(data)
        name = stored_name(data, photo)
        result = measure_photo(photo, region, profile, name, scene)
    trusted = dict(trusted or {})
    trusted.setdefault("taken_at", photo.metadata.taken_at or captured_at or datetime.now(timezone.utc))
    try:
        key = log.store_photo(data, STORED_SUFFIXES[photo.format])
    except LogbookError as error:
        raise ApiError(str(error)) from None
    try:
        reading_id, created = log.add_uploaded_reading(
            upload_id, photo_key=key, photo_name=name, result=result, firing_id=firing_id, **trusted
        )
    except LogbookError as error:
        log.forget_unused_photos([key])
        raise ApiError(str(error), 409 if isinstance(error, UploadConflict) else 400) from None
    except BaseException:
        log.forget_unused_photos([key])
        raise
    if not created:  # sent twice at once: the other copy stored it first
        stored = log.get_reading(reading_id)
        return Taken(reading_id, photo, stored["result"], created=False)
    services["photos"].put(key, photo)
    return Taken(reading_id, photo, result)
