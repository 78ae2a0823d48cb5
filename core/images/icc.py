"""ICC colour profiles of the matrix/TRC kind: read the ones photos embed, write small ones.

A phone or editor that saves a photo in Display P3 or Adobe RGB embeds an ICC profile saying
so. For an RGB display or input profile of the matrix/TRC kind the profile holds three
colorant tags (rXYZ, gXYZ, bXYZ: the XYZ of each full-scale primary, adapted to the D50
profile connection space) and three tone reproduction curves (rTRC, gTRC, bTRC: code value to
linear light). glowtemp reads those, undoes the D50 adaptation to recover the space's own
RGB to XYZ matrix, and recognises the common spaces by their matrices. Profiles that describe
the device only through lookup tables (A2B0 and friends) are refused with a plain message.

References
----------
- International Color Consortium, ICC.1:2010 (profile version 4.3.0.0), Image technology
  colour management - Architecture, profile format and data structure: sections 7.2 (header),
  7.3 (tag table), 9.2 (tags), 10 (tag types), Annex E (chromatic adaptation, ``chad``) and
  Annex F (matrix/TRC models).
- International Color Consortium, ICC.1:2001-04 (profile version 2.4.0), the same for v2
  profiles (``textDescriptionType``, ``curveType``).
- LittleCMS 2 (cmsio1.c): a v2 display profile without ``chad`` is read as adapted from its
  ``wtpt`` to D50 with Bradford; glowtemp follows the same convention.
"""

from __future__ import annotations

import struct
from dataclasses import dataclass
from datetime import datetime, timezone

import numpy as np

from ..physics.colourspaces import (
    D50_XY,
    D65_XY,
    KNOWN_SPACES,
    RGBSpace,
    bradford_adaptation,
    xy_to_xyz,
)

HEADER_SIZE = 128
ICC_D50_XYZ = (0.9642, 1.0, 0.8249)  # PCS illuminant, ICC.1:2010 section 7.2.16
KNOWN_SPACE_TOLERANCE = 0.002  # largest matrix element difference to call a space "known"
LUT_TAGS = (b"A2B0", b"A2B1", b"A2B2", b"B2A0", b"D2B0")


class IccError(ValueError):
    """An embedded colour profile that glowtemp cannot read, with the reason in plain words."""


@dataclass(frozen=True)
class ToneCurve:
    """One tone reproduction curve: code value in [0, 1] to linear light in [0, 1].

    ``kind`` is ``"identity"``, ``"gamma"`` (``params = (gamma,)``), ``"table"`` (``params``
    are the table values in [0, 1], sampled evenly over [0, 1]) or ``"parametric"``
    (``params = (function_type, g, a, b, ...)``, ICC.1:2010 Table 68).
    """

    kind: str
    params: tuple

    def __call__(self, encoded):
        x = np.asarray(encoded, dtype=float)
        if self.kind == "identity":
            y = x
        elif self.kind == "gamma":
            y = np.clip(x, 0.0, None) ** self.params[0]
        elif self.kind == "table":
            table = np.asarray(self.params, dtype=float)
            y = np.interp(x, np.linspace(0.0, 1.0, table.size), table)
        else:
            y = parametric_curve(x, self.params[0], self.params[1:])
        return np.clip(y, 0.0, 1.0)


def parametric_curve(x, function_type, params):
    """ICC ``parametricCurveType`` functions 0 to 4, ICC.1:2010 section 10.15, Table 68.

    >>> round(float(parametric_curve(0.5, 0, (2.2,))), 6)
    0.217638
    """
    x = np.asarray(x, dtype=float)
    g, a, b, c, d, e, f = (tuple(params) + (0.0,) * 7)[:7]
    if function_type == 0:
        return np.clip(x, 0.0, None) ** g
    if function_type in (1, 2):
        threshold = -b / a
        offset = c if function_type == 2 else 0.0
        return np.where(x >= threshold, np.clip(a * x + b, 0.0, None) ** g + offset, offset)
    if function_type == 3:
        return np.where(x >= d, np.clip(a * x + b, 0.0, None) ** g, c * x)
    if function_type == 4:
        return np.where(x >= d, np.clip(a * x + b, 0.0, None) ** g + e, c * x + f)
    raise IccError(f"The colour profile uses an unknown curve type ({function_type}).")


@dataclass(frozen=True)
class IccProfile:
    """What glowtemp needs from an RGB matrix/TRC profile."""

    description: str
    version: str
    rgb_space: RGBSpace
    curves: tuple  # three ToneCurve, red, green, blue

    def decode_table(self, max_code: int) -> np.ndarray:
        """Linear light in [0, 1] for every code value 0..max_code, float32, shape (3, max_code + 1)."""
        codes = np.arange(max_code + 1, dtype=float) / max_code
        return np.stack([curve(codes) for curve in self.curves]).astype(np.float32)


# --- reading -----------------------------------------------------------------------------


def _s15fixed16(data: bytes, offset: int, count: int) -> np.ndarray:
    values = struct.unpack_from(f">{count}i", data, offset)
    return np.array(values, dtype=float) / 65536.0


def _tag_table(data: bytes) -> dict:
    (count,) = struct.unpack_from(">I", data, HEADER_SIZE)
    if HEADER_SIZE + 4 + 12 * count > len(data):
        raise IccError("The colour profile is truncated (its tag table is cut off).")
    tags = {}
    for index in range(count):
        signature, offset, size = struct.unpack_from(">4sII", data, HEADER_SIZE + 4 + 12 * index)
        if offset + size > len(data) or size < 8:
            raise IccError(f"The colour profile is truncated (tag {signature.decode('latin-1')}).")
        tags[signature] = data[offset : offset + size]
    return tags


def _read_xyz(tag: bytes) -> np.ndarray:
    if tag[:4] != b"XYZ " or len(tag) < 20:
        raise IccError("The colour profile has a malformed XYZ tag.")
    return _s15fixed16(tag, 8, 3)


def _read_chad(tag: bytes) -> np.ndarray:
    if tag[:4] != b"sf32" or len(tag) < 44:
        raise IccError("The colour profile has a malformed chromatic adaptation (chad) tag.")
    return _s15fixed16(tag, 8, 9).reshape(3, 3)


def _read_curve(tag: bytes) -> ToneCurve:
    kind = tag[:4]
    if kind == b"curv" and len(tag) >= 12:
        (count,) = struct.unpack_from(">I", tag, 8)
        if len(tag) < 12 + 2 * count:
            raise IccError("The colour profile's tone curve is truncated.")
        if count == 0:
            return ToneCurve("identity", ())
        if count == 1:
            (gamma,) = struct.unpack_from(">H", tag, 12)
            return ToneCurve("gamma", (gamma / 256.0,))  # u8Fixed8Number
        values = np.array(struct.unpack_from(f">{count}H", tag, 12)) / 65535.0
        return ToneCurve("table", tuple(values.tolist()))
    if kind == b"para" and len(tag) >= 12:
        (function_type,) = struct.unpack_from(">H", tag, 8)
        n_params = {0: 1, 1: 3, 2: 4, 3: 5, 4: 7}.get(function_type)
        if n_params is None:
            raise IccError(f"The colour profile uses an unknown curve type ({function_type}).")
        if len(tag) < 12 + 4 * n_params:
            raise IccError("The colour profile's tone curve is truncated.")
        params = _s15fixed16(tag, 12, n_params)
        return ToneCurve("parametric", (function_type, *params.tolist()))
    raise IccError("The colour profile has a tone curve glowtemp cannot read.")


def _read_description(tag: bytes | None) -> str:
    if tag is None:
        return ""
    if tag[:4] == b"desc" and len(tag) >= 12:  # textDescriptionType, ICC.1:2001-04 6.5.17
        (count,) = struct.unpack_from(">I", tag, 8)
        return tag[12 : 12 + count].split(b"\0")[0].decode("latin-1").strip()
    if tag[:4] == b"mluc" and len(tag) >= 16:  # multiLocalizedUnicodeType, ICC.1:2010 10.13
        records, record_size = struct.unpack_from(">II", tag, 8)
        texts = {}
        for index in range(records):
            start = 16 + index * record_size
            if start + 12 > len(tag):
                break
            language, country, length, offset = struct.unpack_from(">2s2sII", tag, start)
            texts[language] = tag[offset : offset + length].decode("utf-16-be", "replace")
        text = texts.get(b"en") or next(iter(texts.values()), "")
        return text.strip("\0 ").strip()
    if tag[:4] == b"text":
        return tag[8:].split(b"\0")[0].decode("latin-1").strip()
    return ""


def _identify_space(rgb_to_xyz: np.ndarray, description: str) -> RGBSpace:
    """The known RGBSpace whose matrix agrees with ``rgb_to_xyz``, else one built from it."""
    for space in KNOWN_SPACES:
        if np.max(np.abs(space.rgb_to_xyz - rgb_to_xyz)) < KNOWN_SPACE_TOLERANCE:
            return space
    columns = rgb_to_xyz.T
    primaries = tuple(
        (float(col[0] / col.sum()), float(col[1] / col.sum())) for col in columns
    )
    white = rgb_to_xyz.sum(axis=1)
    white_xy = (float(white[0] / white.sum()), float(white[1] / white.sum()))
    return RGBSpace(description or "Embedded RGB profile", primaries, white_xy)


def parse_icc_profile(data: bytes) -> IccProfile:
    """Read an RGB matrix/TRC ICC profile (v2 or v4), ICC.1:2010 sections 7 and 9, Annex F.

    The colorant tags are relative to the D50 connection space. The adaptation is undone with
    the inverse of ``chad`` when present, else (v2 convention) with Bradford from D50 to the
    profile's ``wtpt`` (or D65 when that is missing too), giving the RGB to XYZ matrix of the
    space itself, which is then matched against :data:`KNOWN_SPACES`.

    Raises :class:`IccError` with a plain reason for truncated, non-RGB or LUT-only profiles.
    """
    data = bytes(data)
    if len(data) < HEADER_SIZE + 4:
        raise IccError("The colour profile is truncated (shorter than its header).")
    if data[36:40] != b"acsp":
        raise IccError("The embedded colour profile is not an ICC profile.")
    (declared_size,) = struct.unpack_from(">I", data, 0)
    if declared_size > len(data):
        raise IccError(
            f"The colour profile is truncated ({len(data)} of {declared_size} bytes)."
        )
    colour_space = data[16:20]
    if colour_space != b"RGB ":
        name = colour_space.decode("latin-1").strip()
        raise IccError(f"The embedded colour profile is for {name} images, not RGB.")
    tags = _tag_table(data)
    description = _read_description(tags.get(b"desc"))
    needed = (b"rXYZ", b"gXYZ", b"bXYZ", b"rTRC", b"gTRC", b"bTRC")
    if not all(sig in tags for sig in needed):
        if any(sig in tags for sig in LUT_TAGS):
            raise IccError(
                "The colour profile describes colour with lookup tables (LUT-based), "
                "which glowtemp does not read; only matrix/TRC profiles are supported."
            )
        raise IccError("The colour profile lacks the colorant or tone curve tags.")
    if data[20:24] != b"XYZ ":
        raise IccError("The colour profile's matrix is not relative to XYZ, so it cannot be used.")

    rgb_to_pcs = np.column_stack([_read_xyz(tags[sig]) for sig in (b"rXYZ", b"gXYZ", b"bXYZ")])
    if b"chad" in tags:
        adaptation_to_pcs = _read_chad(tags[b"chad"])
    else:
        white = _read_xyz(tags[b"wtpt"]) if b"wtpt" in tags else xy_to_xyz(D65_XY)
        white_xy = (white[0] / white.sum(), white[1] / white.sum())
        adaptation_to_pcs = bradford_adaptation(white_xy, D50_XY)
    rgb_to_xyz = np.linalg.solve(adaptation_to_pcs, rgb_to_pcs)

    version = f"{data[8]}.{data[9] >> 4}.{data[9] & 0x0F}"
    return IccProfile(
        description=description,
        version=version,
        rgb_space=_identify_space(rgb_to_xyz, description),
        curves=tuple(_read_curve(tags[sig]) for sig in (b"rTRC", b"gTRC", b"bTRC")),
    )


# --- writing -----------------------------------------------------------------------------


def _fixed(values) -> bytes:
    return b"".join(struct.pack(">i", round(float(v) * 65536)) for v in values)


def _xyz_tag(xyz) -> bytes:
    return b"XYZ \0\0\0\0" + _fixed(xyz)


def _mluc_tag(text: str) -> bytes:
    encoded = text.encode("utf-16-be")
    return b"mluc\0\0\0\0" + struct.pack(">II2s2sII", 1, 12, b"en", b"US", len(encoded), 28) + encoded


def _text_description_tag(text: str) -> bytes:
    ascii_text = text.encode("ascii", "replace") + b"\0"
    return (
        b"desc\0\0\0\0" + struct.pack(">I", len(ascii_text)) + ascii_text
        + struct.pack(">II", 0, 0)  # no Unicode description
        + struct.pack(">HB", 0, 0) + b"\0" * 67  # no ScriptCode description
    )


def _curve_tag(transfer: str, gamma: float | None, version: int) -> bytes:
    if transfer == "gamma":
        if version == 4:
            return b"para\0\0\0\0" + struct.pack(">HH", 0, 0) + _fixed([gamma])
        return b"curv\0\0\0\0" + struct.pack(">IH", 1, round(gamma * 256))
    # IEC 61966-2-1 sRGB curve
    params = (2.4, 1 / 1.055, 0.055 / 1.055, 1 / 12.92, 0.04045)
    if version == 4:
        return b"para\0\0\0\0" + struct.pack(">HH", 3, 0) + _fixed(params)
    table = parametric_curve(np.linspace(0.0, 1.0, 1024), 3, params)
    return b"curv\0\0\0\0" + struct.pack(">I", table.size) + struct.pack(
        f">{table.size}H", *np.round(table * 65535).astype(int).tolist()
    )


def _assemble(header_fields: dict, tags: list) -> bytes:
    """Lay out header, tag table and 4-byte aligned tag data; identical data is shared."""
    table_size = 4 + 12 * len(tags)
    offset = HEADER_SIZE + table_size
    entries, blobs, placed = [], [], {}
    for signature, blob in tags:
        if blob not in placed:
            placed[blob] = offset
            padded = blob + b"\0" * (-len(blob) % 4)
            blobs.append(padded)
            offset += len(padded)
        entries.append(struct.pack(">4sII", signature, placed[blob], len(blob)))
    body = struct.pack(">I", len(tags)) + b"".join(entries) + b"".join(blobs)
    now = header_fields["created"]
    header = (
        struct.pack(">I", HEADER_SIZE + len(body))
        + b"\0\0\0\0"  # preferred CMM: none
        + struct.pack(">I", header_fields["version"])
        + b"mntr" + b"RGB " + b"XYZ "
        + struct.pack(">6H", now.year, now.month, now.day, now.hour, now.minute, now.second)
        + b"acsp" + b"\0" * 4  # primary platform: none
        + b"\0" * 4 + b"\0" * 4 + b"\0" * 4 + b"\0" * 8  # flags, manufacturer, model, attributes
        + struct.pack(">I", 0)  # rendering intent: perceptual
        + _fixed(ICC_D50_XYZ)
        + b"\0" * 4  # creator
        + b"\0" * 16  # profile ID, filled below for v4
        + b"\0" * 28
    )
    profile = bytearray(header + body)
    if header_fields["version"] >= 0x04000000:
        # Profile ID: MD5 of the profile with flags, intent and ID zeroed, ICC.1:2010 7.2.18
        import hashlib  # only profile writing needs it; decoding photos must start fast

        scratch = bytearray(profile)
        scratch[44:48] = scratch[64:68] = b"\0" * 4
        profile[84:100] = hashlib.md5(bytes(scratch)).digest()
    return bytes(profile)


def build_matrix_profile(
    space: RGBSpace,
    transfer: str = "srgb",
    gamma: float | None = None,
    description: str | None = None,
    version: int = 4,
) -> bytes:
    """A small RGB display profile (matrix/TRC) for ``space``, ICC.1:2010 Annex F.

    ``transfer`` is ``"srgb"`` (IEC 61966-2-1 curve) or ``"gamma"`` (pure power ``gamma``,
    e.g. 563/256 for Adobe RGB (1998)). ``version`` 4 writes ``para`` curves, a D50 ``wtpt``,
    a ``chad`` tag and the MD5 profile ID; ``version`` 2 writes ``curv`` curves and the
    space's own white as ``wtpt`` (ICC.1:2001-04), read back by the Bradford convention.

    >>> from glowtemp.physics.colourspaces import DISPLAY_P3
    >>> parse_icc_profile(build_matrix_profile(DISPLAY_P3)).rgb_space.name
    'Display P3'
    """
    if transfer not in ("srgb", "gamma"):
        raise ValueError(f"transfer must be 'srgb' or 'gamma', not {transfer!r}")
    if transfer == "gamma" and not (gamma and gamma > 0):
        raise ValueError("a gamma transfer needs a positive gamma")
    if version not in (2, 4):
        raise ValueError(f"version must be 2 or 4, not {version!r}")
    description = description or space.name
    chad = bradford_adaptation(space.white_xy, D50_XY)
    rgb_to_pcs = chad @ space.rgb_to_xyz
    curve = _curve_tag(transfer, gamma, version)
    notice = "No copyright, use freely"
    if version == 4:
        text_tags = [(b"desc", _mluc_tag(description)), (b"cprt", _mluc_tag(notice))]
        white_tags = [
            (b"wtpt", _xyz_tag(ICC_D50_XYZ)),
            (b"chad", b"sf32\0\0\0\0" + _fixed(chad.ravel())),
        ]
    else:
        text_tags = [
            (b"desc", _text_description_tag(description)),
            (b"cprt", b"text\0\0\0\0" + notice.encode("ascii") + b"\0"),
        ]
        white_tags = [(b"wtpt", _xyz_tag(xy_to_xyz(space.white_xy)))]
    tags = [
        *text_tags,
        *white_tags,
        (b"rXYZ", _xyz_tag(rgb_to_pcs[:, 0])),
        (b"gXYZ", _xyz_tag(rgb_to_pcs[:, 1])),
        (b"bXYZ", _xyz_tag(rgb_to_pcs[:, 2])),
        (b"rTRC", curve),
        (b"gTRC", curve),
        (b"bTRC", curve),
    ]
    header = {
        "version": 0x04300000 if version == 4 else 0x02100000,
        "created": datetime.now(timezone.utc),
    }
    return _assemble(header, tags)
