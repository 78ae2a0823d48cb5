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

import numpy as np

BRIGHT_GLOW_PERCENTILE = 99.5
JPEG_QUALITY = 85


def display_codes(photo, long_side_px: int) -> np.ndarray:
    """The photo as 8-bit sRGB codes (H, W, 3), reduced by whole steps to no less than ``long_side_px``."""
    from glowtemp.colourspaces import SRGB, srgb_encode

    step = max(1, max(photo.width, photo.height) // long_side_px)
    linear = photo.linear(photo.codes[::step, ::step]).astype(np.float64)
    rgb = linear @ (SRGB.xyz_to_rgb @ photo.space.rgb_to_xyz).T
    if photo.format == "DNG":
        bright = float(np.percentile(rgb.max(axis=2), BRIGHT_GLOW_PERCENTILE))
        if bright > 0:
            rgb = rgb / bright
    return np.rint(srgb_encode(np.clip(rgb, 0.0, 1.0)) * 255).astype(np.uint8)


def preview_jpeg(photo, long_side_px: int) -> bytes:
    """The photo as a JPEG in sRGB whose longer side is at most ``long_side_px``."""
    from PIL import Image

    image = Image.fromarray(display_codes(photo, long_side_px))
    image.thumbnail((long_side_px, long_side_px))
    out = io.BytesIO()
    image.save(out, "JPEG", quality=JPEG_QUALITY)
    return out.getvalue()
