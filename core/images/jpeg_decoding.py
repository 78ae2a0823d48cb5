"""JPEG pixels decoded by libjpeg-turbo in a worker thread, started as early as a caller likes.

:class:`JpegDecoding` decodes a complete RGB JPEG straight into an array (imagecodecs' binding
of libjpeg-turbo, the library Pillow uses too) while the caller does other work: the decoder
runs without Python's global lock.

A cold ``glowtemp measure`` of one photo would otherwise start decoding only after loading the
command's parser, Pillow and the measuring modules (``python -X importtime``).
:meth:`HeadStart.begin` needs none of them: it reads the file, finds the frame's size in its
header and starts the decode at once, so that the rest loads on the other core.
:func:`glowtemp.images.photo.begin_loading` then checks the file as it checks any other and
uses the running decode where it would have started its own. A head start decides nothing.

This module imports neither Pillow nor numpy at its top (imagecodecs brings numpy when a
decode starts).

References
----------
- ITU-T T.81 (1992) | ISO/IEC 10918-1, Digital compression and coding of continuous-tone still
  images: B.1.1.3 markers and fill bytes, B.1.1.4 marker segments, B.2.2 the frame header
  (SOFn: precision, number of lines, samples per line, components), B.2.1 EOI.
"""

from __future__ import annotations

import struct
import threading
from typing import NamedTuple

from .regular_file import FileRefused, read_regular_file

HEAD_START_MAX_PIXELS = 50_000_000  # as glowtemp.images.photo.load_photo's default limit
HEAD_START_MAX_BYTES = 200 * 1024 * 1024  # as glowtemp.images.photo.LARGEST_FILE_BYTES
# Start-of-frame markers (T.81 table B.1): C0-C3, C5-C7, C9-CB, CD-CF; C4, C8 and CC are not.
FRAME_MARKERS = frozenset(range(0xC0, 0xD0)) - {0xC4, 0xC8, 0xCC}
START_OF_SCAN = 0xDA


def complete_jpeg(data: bytes) -> bool:
    """Whether JPEG data end in the EOI marker (ITU-T T.81 B.2.1), trailing zero bytes aside."""
    return data.rstrip(b"\x00").endswith(b"\xff\xd9")


def frame_header(data: bytes) -> tuple[int, int, int] | None:
    """(width, height, components) from a JPEG's frame header (T.81 B.2.2), or None when the
    data are not a JPEG or no frame header comes before the first scan.

    >>> frame_header(b"\\xff\\xd8" + b"\\xff\\xc0" + struct.pack(">HBHHB", 11, 8, 3000, 4000, 3))
    (4000, 3000, 3)
    """
    if data[:2] != b"\xff\xd8":
        return None
    position = 2
    while position + 4 <= len(data):
        if data[position] != 0xFF:
            return None
        marker = data[position + 1]
        if marker == 0xFF:  # a fill byte before a marker (B.1.1.3)
            position += 1
            continue
        (length,) = struct.unpack_from(">H", data, position + 2)
        if marker in FRAME_MARKERS:
            if position + 10 > len(data):
                return None
            _, height, width, components = struct.unpack_from(">BHHB", data, position + 4)
            return width, height, components
        if marker == START_OF_SCAN or length < 2:
            return None
        position += 2 + length
    return None


class JpegDecoding(threading.Thread):
    """Baseline or progressive RGB JPEG decoded by libjpeg-turbo straight into an array, in a
    worker thread: the decoder runs without Python's global lock, so the caller reads EXIF and
    the colour profile (and may load what measuring needs) meanwhile.

    The same library as Pillow's, without Pillow's copy out of its own image memory. Used only
    for a complete file (ending in the EOI marker, ITU-T T.81 B.2.1), since a truncated one is
    decoded without complaint (:func:`complete_jpeg`); :meth:`pixels` is None when the decoder
    refuses the file or gives another shape, and the Pillow way is taken.
    """

    def __init__(self, data: bytes, size: tuple[int, int]):
        from imagecodecs import _jpeg8  # imported here, in the caller's thread

        super().__init__(name="jpeg-decode", daemon=True)
        self._decoder, self._data, self.size, self._pixels = _jpeg8, data, size, None
        self.start()

    def run(self) -> None:
        try:
            self._pixels = self._decoder.jpeg8_decode(self._data)
        except self._decoder.Jpeg8Error:
            self._pixels = None

    def pixels(self):
        """The (H, W, 3) uint8 codes as stored, or None; waits for the decode."""
        self.join()
        width, height = self.size
        pixels, self._pixels = self._pixels, None
        return pixels if pixels is not None and pixels.shape == (height, width, 3) else None



class HeadStart(NamedTuple):
    """A JPEG file's bytes and its decode, started before anything else was loaded."""

    data: bytes
    decoding: JpegDecoding

    @classmethod
    def begin(cls, path) -> HeadStart | None:
        """Read the file at ``path`` and start decoding it; None (and no decode) for a file
        that is not a complete three-component JPEG within the pixel limit, or not readable."""
        try:
            data = read_regular_file(path, HEAD_START_MAX_BYTES)
        except (FileRefused, OSError):
            return None
        frame = frame_header(data)
        if frame is None or not complete_jpeg(data):
            return None
        width, height, components = frame
        if components != 3 or not 0 < width * height <= HEAD_START_MAX_PIXELS:
            return None
        return cls(data, JpegDecoding(data, (width, height)))
