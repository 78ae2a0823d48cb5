"""Recently decoded photos kept in memory, so moving the region does not decode the file again.

A 12-megapixel photo decodes to about 36 MB of codes; the cache holds a few, least recently
used first out. It is shared by the server's threads.
"""

from __future__ import annotations

import threading
from collections import OrderedDict

PHOTOS_KEPT = 2


class PhotoCache:
    """A small least-recently-used map from photo key to decoded :class:`glowtemp.photo.Photo`."""

    def __init__(self, size: int = PHOTOS_KEPT):
        self.size = size
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
            self._photos[key] = photo
            self._photos.move_to_end(key)
            while len(self._photos) > self.size:
                self._photos.popitem(last=False)
