"""Images: file bytes to upright pixel codes, their colour space, and the pixels of a region.

Owns the decoded photo record and its EXIF settings (:mod:`.decoded`), decoding JPEG, PNG,
TIFF and HEIC (:mod:`.photo`; a JPEG's pixels in a worker thread, :mod:`.jpeg_decoding`) and
raw DNG files (:mod:`.raw`), ICC profiles (:mod:`.icc`), regions and the glow finder
(:mod:`.region`), a region's usable pixels and their statistics (:mod:`.sampling`), display
colour for previews (:mod:`.display`) and reading a named file safely (:mod:`.regular_file`).

May import: :mod:`glowtemp.physics`. Knows nothing of temperatures, cameras' biases or the
firing log.
"""
