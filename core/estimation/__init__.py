"""The estimate: a temperature and its band from a region's colour and brightness.

Owns the camera prior (:mod:`.population`), the brightness channel (:mod:`.brightness`), the
grid posterior and its refusals (:mod:`.estimate`), camera profiles and their files
(:mod:`.profile`, :mod:`.profile_store`), the cone table (:mod:`.cones`), warnings and their
fixes (:mod:`.advice`), units and rounding to the band (:mod:`.scales`), the measuring
pipeline and its JSON form (:mod:`.reading`), and temperature maps with their picture
(:mod:`.tilemap`, :mod:`.tilemap_chart`).

May import: :mod:`glowtemp.physics` and :mod:`glowtemp.images`. Never the synthetic renderer:
nothing on the measuring path imports colour-science.
"""
