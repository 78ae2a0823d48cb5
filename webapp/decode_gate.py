"""A budget for photo decodes running at once, so concurrent uploads cannot add up without bound.

Each decode (and the measuring that follows it) reserves the bytes its pixels will take,
read from the file's header before any pixel is decoded (:func:`glowtemp.images.photo.decoded_bytes`),
and waits while the reservations in flight would pass the budget. The budget is sized by the
pixel limit: one photo of ``MAX_PHOTO_PIXELS`` at 16 bits per channel, so four 49-megapixel
16-bit PNGs are decoded one after another while 12-megapixel JPEGs still go side by side. A
decode larger than the whole budget waits until it can run alone.
"""

from __future__ import annotations

import threading
from contextlib import contextmanager

BYTES_PER_PIXEL_AT_16_BITS = 6  # three channels of two bytes


class DecodeGate:
    """Reservations of decoded bytes against ``budget_bytes``, shared by the server's threads."""

    def __init__(self, budget_bytes: int):
        self.budget_bytes = budget_bytes
        self._reserved = 0
        self._changed = threading.Condition()

    @classmethod
    def for_pixel_limit(cls, max_pixels: int) -> "DecodeGate":
        return cls(max_pixels * BYTES_PER_PIXEL_AT_16_BITS)

    @property
    def reserved_bytes(self) -> int:
        with self._changed:
            return self._reserved

    @contextmanager
    def admit(self, cost_bytes: int):
        """Hold ``cost_bytes`` of the budget for the ``with`` block, waiting for room first."""
        cost = max(0, min(int(cost_bytes), self.budget_bytes))
        with self._changed:
            self._changed.wait_for(lambda: self._reserved + cost <= self.budget_bytes)
            self._reserved += cost
        try:
            yield
        finally:
            with self._changed:
                self._reserved -= cost
                self._changed.notify_all()
