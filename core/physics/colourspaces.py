"""RGB colour encodings used by photos: primaries, white points, matrices and transfer functions.

A photo's pixel values are an *encoding* of linear light in some RGB space. glowtemp works
with linear RGB in the photo's own space, because the camera clipped negative components
in that space (see ``glowtemp.physics.locus``), and converts through CIE 1931 XYZ where needed.

References
----------
- IEC 61966-2-1:1999, Multimedia systems - Colour measurement and management - Default RGB
  colour space - sRGB (primaries, D65 white, transfer function).
- SMPTE RP 177-1993, Derivation of basic television colour equations (normalised primary matrix).
- SMPTE EG 432-1:2010 and Apple's Display P3 (P3 primaries, D65 white, sRGB transfer function).
- Adobe Systems, "Adobe RGB (1998) Color Image Encoding", version 2005-05 (gamma 563/256).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

D65_XY = (0.3127, 0.3290)  # IEC 61966-2-1 white point chromaticity
D50_XY = (0.3457, 0.3585)  # ICC profile connection space white (ICC.1:2010)


def xy_to_xyz(xy):
    """Chromaticity (x, y) to XYZ with Y = 1 (CIE 015:2018)."""
    x, y = xy
    return np.array([x / y, 1.0, (1 - x - y) / y])


def normalised_primary_matrix(primaries_xy, white_xy):
    """Matrix from linear RGB to XYZ such that RGB = (1, 1, 1) maps to the white, SMPTE RP 177-1993.

    >>> np.round(normalised_primary_matrix(SRGB.primaries_xy, D65_XY)[1], 4)
    array([0.2126, 0.7152, 0.0722])
    """
    primaries = np.array([xy_to_xyz(p) for p in primaries_xy]).T
    scale = np.linalg.solve(primaries, xy_to_xyz(white_xy))
    return primaries * scale


@dataclass(frozen=True)
class RGBSpace:
    """A linear RGB space: its name, primaries and the white point that RGB = (1, 1, 1) encodes."""

    name: str
    primaries_xy: tuple
    white_xy: tuple = D65_XY

    @property
    def rgb_to_xyz(self) -> np.ndarray:
        return normalised_primary_matrix(self.primaries_xy, self.white_xy)

    @property
    def xyz_to_rgb(self) -> np.ndarray:
        return np.linalg.inv(self.rgb_to_xyz)


SRGB = RGBSpace("sRGB", ((0.64, 0.33), (0.30, 0.60), (0.15, 0.06)))
DISPLAY_P3 = RGBSpace("Display P3", ((0.680, 0.320), (0.265, 0.690), (0.150, 0.060)))
ADOBE_RGB = RGBSpace("Adobe RGB (1998)", ((0.64, 0.33), (0.21, 0.71), (0.15, 0.06)))
KNOWN_SPACES = (SRGB, DISPLAY_P3, ADOBE_RGB)
# ROMM RGB primaries (ISO 22028-2:2013) with their D50 white, kept linear: wide enough that no
# blackbody from 700 K up has a negative component, so raw photos are read without clipping.
LINEAR_ROMM = RGBSpace(
    "Linear ROMM RGB (camera raw)", ((0.7347, 0.2653), (0.1596, 0.8404), (0.0366, 0.0001)), D50_XY
)
SPACES_BY_NAME = {space.name: space for space in (*KNOWN_SPACES, LINEAR_ROMM)}


def srgb_decode(encoded):
    """sRGB electro-optical transfer: encoded value in [0, 1] to linear light, IEC 61966-2-1.

    >>> round(float(srgb_decode(0.5)), 6)
    0.214041
    """
    v = np.asarray(encoded, dtype=float)
    return np.where(v <= 0.04045, v / 12.92, ((v + 0.055) / 1.055) ** 2.4)


def srgb_encode(linear):
    """Inverse of :func:`srgb_decode`, IEC 61966-2-1.

    >>> round(float(srgb_encode(0.0031308)), 5)
    0.04045
    """
    v = np.clip(np.asarray(linear, dtype=float), 0.0, None)
    return np.where(v <= 0.0031308, v * 12.92, 1.055 * v ** (1 / 2.4) - 0.055)


def srgb_swatch_hex(linear_srgb) -> str | None:
    """Hex display colour of linear sRGB, clipped to the gamut and scaled so its strongest
    channel is full scale, encoded as IEC 61966-2-1; None for black.

    >>> srgb_swatch_hex([0.5, 0.0015654, -0.1])  # green at the curve's knee: 0.04045 of full
    '#ff0a00'
    """
    rgb = np.clip(np.asarray(linear_srgb, dtype=float), 0.0, None)
    if rgb.max() <= 0:
        return None
    return "#" + "".join(f"{round(float(v) * 255):02x}" for v in srgb_encode(rgb / rgb.max()))


def gamma_decode(encoded, gamma):
    """Pure power-law decoding, ``linear = encoded ** gamma`` (Adobe RGB (1998): gamma = 563/256)."""
    return np.clip(np.asarray(encoded, dtype=float), 0.0, None) ** gamma


def bradford_adaptation(source_white_xy, target_white_xy):
    """Von Kries chromatic adaptation matrix in the Bradford cone space (Lam 1985; ICC.1:2010 Annex E).

    Multiply XYZ seen under the source white by this matrix to get the corresponding XYZ under
    the target white.
    """
    bradford = np.array(
        [[0.8951, 0.2664, -0.1614], [-0.7502, 1.7135, 0.0367], [0.0389, -0.0685, 1.0296]]
    )
    source = bradford @ xy_to_xyz(source_white_xy)
    target = bradford @ xy_to_xyz(target_white_xy)
    return np.linalg.inv(bradford) @ np.diag(target / source) @ bradford
