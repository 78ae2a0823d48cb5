"""Test helper: lay out ICC profiles byte by byte from the ICC.1:2010 structure (sections 7.2, 7.3).

Written independently of glowtemp.images.icc's writer, so tests can make profiles it never writes
(other curve types, LUT-only, truncated) and check glowtemp's reader and LittleCMS on them.
"""

import struct

import numpy as np

from glowtemp.physics.colourspaces import D50_XY, bradford_adaptation


def s15(values) -> bytes:
    """s15Fixed16Number encoding, ICC.1:2010 section 4.6."""
    return b"".join(struct.pack(">i", round(v * 65536)) for v in values)


def xyz_tag(xyz) -> bytes:
    return b"XYZ \0\0\0\0" + s15(xyz)


def para_tag(function_type: int, params) -> bytes:
    return b"para\0\0\0\0" + struct.pack(">HH", function_type, 0) + s15(params)


def curv_tag(values_0_to_1) -> bytes:
    values = [round(v * 65535) for v in values_0_to_1]
    return b"curv\0\0\0\0" + struct.pack(f">I{len(values)}H", len(values), *values)


def text_tag(text: str) -> bytes:
    return b"text\0\0\0\0" + text.encode("ascii") + b"\0"


def profile_bytes(tags: dict, colour_space: bytes = b"RGB ", version: int = 0x04300000) -> bytes:
    """Header, tag table and tag data (each padded to 4 bytes), with D50 as PCS illuminant."""
    offset = 128 + 4 + 12 * len(tags)
    table, body = b"", b""
    for signature, data in tags.items():
        table += struct.pack(">4sII", signature, offset + len(body), len(data))
        body += data + b"\0" * (-len(data) % 4)
    size = offset + len(body)
    header = (
        struct.pack(">I4sI", size, b"\0\0\0\0", version)
        + b"mntr" + colour_space + b"XYZ " + b"\0" * 12 + b"acsp" + b"\0" * 28
        + s15((0.9642, 1.0, 0.8249)) + b"\0" * 48
    )
    assert len(header) == 128
    return header + struct.pack(">I", len(tags)) + table + body


def matrix_trc_profile(space, curve: bytes, description: str = "test profile") -> bytes:
    """A v4 RGB display profile for ``space`` with the same TRC tag on all three channels."""
    chad = bradford_adaptation(space.white_xy, D50_XY)
    colorants = chad @ space.rgb_to_xyz
    return profile_bytes(
        {
            b"desc": text_tag(description),
            b"wtpt": xyz_tag((0.9642, 1.0, 0.8249)),
            b"chad": b"sf32\0\0\0\0" + s15(np.ravel(chad)),
            b"rXYZ": xyz_tag(colorants[:, 0]),
            b"gXYZ": xyz_tag(colorants[:, 1]),
            b"bXYZ": xyz_tag(colorants[:, 2]),
            b"rTRC": curve,
            b"gTRC": curve,
            b"bTRC": curve,
        }
    )
