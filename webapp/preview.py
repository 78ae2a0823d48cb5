"""A stored photo made fit to show in a browser: reduced, in sRGB, as a JPEG.

The measuring page shows a photo just taken from the file itself where the browser can decode
it; the preview is shown where it cannot (HEIC, raw DNG, TIFF in most browsers) and on the
firing pages. The photo's
codes are decoded to linear light (:meth:`glowtemp.photo.Photo.linear`), taken from the photo's
RGB space to linear sRGB through CIE XYZ, clipped to the sRGB gamut and encoded with the sRGB
transfer function. A raw photo is linear light at the sensor's exposure, with no tone curve:
it is scaled so the bright glow (the 99.5th percentile of the strongest channel) sits at full
scale, as a camera's own rendering would place it. Other photos keep the brightness their
camera gave them.

References
----------
- IEC 61966-2-1:1999 (sRGB primaries, white and transfer function).
- SMPTE RP 177-1993 (RGB to XYZ matrices from primaries and white).
"""

from __future__ import annotations

import io
from functools import lru_cache

import numpy as np

BRIGHT_GLOW_PERCENTILE = 99.5
JPEG_QUALITY = 85
# Linear light is encoded through a table this fine: a step is under 0.25 of an 8-bit code
# where the sRGB curve is steepest (its linear segment, slope 12.92).
ENCODING_STEPS = 16384


@lru_cache(maxsize=1)
def _srgb_codes() -> np.ndarray:
    """8-bit sRGB codes of linear light 0, 1/N, ..., 1 (IEC 61966-2-1 encoding)."""
    from glowtemp.colourspaces import srgb_encode

    return np.rint(srgb_encode(np.linspace(0.0, 1.0, ENCODING_STEPS + 1)) * 255).astype(np.uint8)


def display_codes(photo, long_side_px: int) -> np.ndarray:
    """The photo as 8-bit sRGB codes (H, W, 3), reduced by whole steps to no less than ``long_side_px``."""
    from glowtemp.colourspaces import SRGB

    step = max(1, max(photo.width, photo.height) // long_side_px)
    linear = photo.linear(photo.codes[::step, ::step])
    rgb = linear @ (SRGB.xyz_to_rgb @ photo.space.rgb_to_xyz).T.astype(np.float32)
    if photo.format == "DNG":
        bright = float(np.percentile(rgb.max(axis=2), BRIGHT_GLOW_PERCENTILE))
        if bright > 0:
            rgb /= bright
    steps = np.rint(np.clip(rgb, 0.0, 1.0) * ENCODING_STEPS).astype(np.intp)
    return _srgb_codes()[steps]


def preview_jpeg(photo, long_side_px: int) -> bytes:
    """The photo as a JPEG in sRGB whose longer side is at most ``long_side_px``."""
    from PIL import Image

    image = Image.fromarray(display_codes(photo, long_side_px))
    image.thumbnail((long_side_px, long_side_px))
    out = io.BytesIO()
    image.save(out, "JPEG", quality=JPEG_QUALITY)
    return out.getvalue()
