"""A photo's pixels as display colour: linear light taken to sRGB and encoded for a screen.

The codes are decoded to linear light (:meth:`glowtemp.images.decoded.Photo.linear`), taken from the
photo's RGB space to linear sRGB through CIE XYZ, clipped to the sRGB gamut and encoded with
the sRGB transfer function through a fine table. Raw photos are linear light at the sensor's
exposure with no tone curve; they are scaled so the bright glow (the 99.5th percentile of the
strongest channel) sits at full scale, as a camera's own rendering would place it.

References
----------
- IEC 61966-2-1:1999 (sRGB primaries, white and transfer function).
- SMPTE RP 177-1993 (RGB to XYZ matrices from primaries and white).
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from ..physics.colourspaces import SRGB, srgb_encode

BRIGHT_GLOW_PERCENTILE = 99.5
# Linear light is encoded through a table this fine: a step is under 0.25 of an 8-bit code
# where the sRGB curve is steepest (its linear segment, slope 12.92).
ENCODING_STEPS = 16384


@lru_cache(maxsize=1)
def _encoding_table() -> np.ndarray:
    """sRGB-encoded values of linear light 0, 1/N, ..., 1 (IEC 61966-2-1)."""
    return srgb_encode(np.linspace(0.0, 1.0, ENCODING_STEPS + 1)).astype(np.float32)


def display_srgb(photo, codes: np.ndarray, bright_to_full: bool = False) -> np.ndarray:
    """sRGB-encoded display values in [0, 1] of ``codes`` (any (..., 3) array of the photo's).

    ``bright_to_full`` scales the bright glow to full scale (always done for raw photos).
    """
    linear = photo.linear(codes)
    rgb = linear @ (SRGB.xyz_to_rgb @ photo.space.rgb_to_xyz).T.astype(np.float32)
    if bright_to_full or photo.format == "DNG":
        bright = float(np.percentile(rgb.max(axis=-1), BRIGHT_GLOW_PERCENTILE))
        if bright > 0:
            rgb /= bright
    steps = np.rint(np.clip(rgb, 0.0, 1.0) * ENCODING_STEPS).astype(np.intp)
    return _encoding_table()[steps]
