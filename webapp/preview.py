"""A stored photo made fit to show in a browser: reduced, in sRGB, as a JPEG.

The measuring page shows a photo just taken from the file itself where the browser can decode
it; the preview is shown where it cannot (HEIC, raw DNG, TIFF in most browsers) and on the
firing pages. The colour conversion is :func:`glowtemp.images.display.display_srgb`.
"""

from __future__ import annotations

import io

import numpy as np

JPEG_QUALITY = 85


def display_codes(photo, long_side_px: int) -> np.ndarray:
    """The photo as 8-bit sRGB codes (H, W, 3), reduced by whole steps to no less than ``long_side_px``."""
    from glowtemp.images.display import display_srgb

    step = max(1, max(photo.width, photo.height) // long_side_px)
    return np.rint(display_srgb(photo, photo.codes[::step, ::step]) * 255).astype(np.uint8)


def preview_jpeg(photo, long_side_px: int) -> bytes:
    """The photo as a JPEG in sRGB whose longer side is at most ``long_side_px``."""
    from PIL import Image

    image = Image.fromarray(display_codes(photo, long_side_px))
    image.thumbnail((long_side_px, long_side_px))
    out = io.BytesIO()
    image.save(out, "JPEG", quality=JPEG_QUALITY)
    return out.getvalue()
