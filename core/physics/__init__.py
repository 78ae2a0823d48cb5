"""Physics and colorimetry: what glow is and how a standard observer sees it.

Owns Planck's and Wien's laws with the CODATA constants (:mod:`.radiation`), the RGB
encodings sRGB, Display P3, Adobe RGB and linear ROMM with their transfer functions and
matrices (:mod:`.colourspaces`), and the blackbody locus in CIE 1931 XYZ and each space's
linear RGB, from tables shipped in ``glowtemp/data`` (:mod:`.locus`).

May import: numpy and the standard library only. Every other area builds on this one; it
imports none of them.
"""
