"""Recently decoded photos kept in memory, so moving the region does not decode the file again.

A 12-megapixel photo decodes to about 36 MB of codes; the cache holds a few, least recently
used first out, and at most :data:`BYTES_KEPT` of codes in all: a 49-megapixel 16-bit photo
(294 MB) is not kept, so it does not hold memory once its request is answered. It is shared
by the server's threads.
"""

from __future__ import annotations

import threading
from collections import OrderedDict

PHOTOS_KEPT = 2
BYTES_KEPT = 128 * 1024 * 1024


class PhotoCache:
    """A small least-recently-used map from photo key to decoded :class:`glowtemp.images.decoded.Photo`."""

    def __init__(self, size: int = PHOTOS_KEPT, bytes_kept: int = BYTES_KEPT):
        self.size = size
        self.bytes_kept = bytes_kept
        self._photos: OrderedDict = OrderedDict()
        self._lock = threading.Lock()

    def get(self, key: str):
        with self._lock:
            photo = self._photos.get(key)
            if photo is not None:
                self._photos.move_to_end(key)
            return photo

    def put(self, key: str, photo) -> None:
        with self._lock:
            self._photos.pop(key, None)
            if photo.codes.nbytes > self.bytes_kept:
                return
            self._photos[key] = photo
            while len(self._photos) > self.size or sum(p.codes.nbytes for p in self._photos.values()) > self.bytes_kept:
                self._photos.popitem(last=False)
