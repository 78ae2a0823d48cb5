"""The colour of a blackbody: CIE 1931 XYZ, chromaticity and linear RGB from 700 K to 4000 K.

Common correlated-colour-temperature routines start at 1000 K or higher, but glow starts near
800 K (the Draper point, 977 °F or 798 K: J. W. Draper, Phil. Mag. 30 (1847) 345), so glowtemp integrates its own table from Planck's law and the CIE
1931 2-degree colour-matching functions (shipped in ``data/``, exported from colour-science by
``scripts/export_tables.py``). The integrated table is shipped too, so no start pays for it.

Below about 1900 K a blackbody lies outside the sRGB gamut: its linear sRGB blue is negative
(colour-science, CIE 1931 2-degree integration with the IEC 61966-2-1 matrix, crosses zero at
1900 K), and below about 964 K its green too.
A camera clips such components to zero, so :func:`clipped_linear_rgb` returns what an ideal
colorimetric camera would record in a given RGB space, not the unclipped colour.

References
----------
- CIE 015:2018 Colorimetry, 4th ed., section 7 (tristimulus integration) and Table 1 (CMFs).
- G. Wyszecki and W. S. Stiles, Color Science, 2nd ed., Wiley (1982), section 3.3 (Planckian locus).
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

import numpy as np

from .colourspaces import SRGB, RGBSpace, srgb_swatch_hex
from .radiation import SECOND_RADIATION_C2, spectral_radiance

DATA_DIR = Path(__file__).parent.parent / "data"
TABLE_MIN_K = 700.0
TABLE_MAX_K = 4000.0
TABLE_STEP_K = 1.0


@lru_cache(maxsize=1)
def colour_matching_functions():
    """CIE 1931 2-degree CMFs: (wavelengths in nm, array of shape (n, 3)), 360-830 nm by 1 nm."""
    table = np.loadtxt(DATA_DIR / "cie1931_2deg_cmf.csv", delimiter=",", comments="#")
    return table[:, 0], table[:, 1:4]


def blackbody_xyz(temperature_k, c2=SECOND_RADIATION_C2):
    """CIE 1931 XYZ of a blackbody by summation over 1 nm steps (CIE 015:2018, section 7.1).

    Absolute scale: W sr^-1 m^-2 weighted by the CMFs (Y is luminance / 683 lm W^-1).
    Returns an array of shape ``temperature_k.shape + (3,)``.
    """
    wavelengths_nm, cmfs = colour_matching_functions()
    temperature_k = np.atleast_1d(np.asarray(temperature_k, dtype=float))
    radiance = spectral_radiance(wavelengths_nm[None, :] * 1e-9, temperature_k.reshape(-1, 1), c2)
    xyz = radiance @ cmfs * 1e-9  # d(lambda) = 1 nm
    return xyz.reshape(temperature_k.shape + (3,))


def xyz_to_xy(xyz):
    """Chromaticity coordinates x = X / (X + Y + Z), y = Y / (X + Y + Z) (CIE 015:2018)."""
    xyz = np.asarray(xyz, dtype=float)
    return xyz[..., :2] / xyz.sum(axis=-1, keepdims=True)


@dataclass(frozen=True)
class BlackbodyTable:
    """Blackbody XYZ and chromaticity on a 1 K grid from 700 K to 4000 K."""

    temperature_k: np.ndarray
    xyz: np.ndarray

    @property
    def xy(self) -> np.ndarray:
        return xyz_to_xy(self.xyz)


def table_grid() -> np.ndarray:
    """The table's temperatures: 700 K to 4000 K in 1 K steps."""
    return np.arange(TABLE_MIN_K, TABLE_MAX_K + TABLE_STEP_K / 2, TABLE_STEP_K)


@lru_cache(maxsize=1)
def blackbody_table() -> BlackbodyTable:
    """The blackbody table, read from ``data/blackbody_xyz.npy`` (written by
    ``scripts/export_tables.py`` with :func:`blackbody_xyz`; a test checks it stays equal)."""
    return BlackbodyTable(temperature_k=table_grid(), xyz=np.load(DATA_DIR / "blackbody_xyz.npy"))


def clipped_linear_rgb(xyz, space: RGBSpace = SRGB):
    """Linear RGB of XYZ in ``space`` with negative components set to zero, as a camera records it."""
    rgb = np.asarray(xyz, dtype=float) @ space.xyz_to_rgb.T
    return np.clip(rgb, 0.0, None)


@lru_cache(maxsize=16)
def _locus_ratios(space: RGBSpace, clipped: bool):
    table = blackbody_table()
    rgb = table.xyz @ space.xyz_to_rgb.T
    if clipped:
        rgb = np.clip(rgb, 0.0, None)
    ratios = rgb[:, 1:] / rgb[:, :1]
    ratios.setflags(write=False)
    return ratios


def locus_ratios(space: RGBSpace = SRGB, clipped: bool = True) -> np.ndarray:
    """Green/red and blue/red of linear RGB along the table grid, shape (n, 2).

    With ``clipped`` (the default) negative components are set to zero first, as a camera
    records them; without it the ratios go negative where the colour is out of gamut. Red is
    the strongest channel of every blackbody below about 6000 K, so it is the reference.

    >>> g_over_r = locus_ratios()[:, 0]
    >>> bool(0.005 < g_over_r[300] < 0.02)  # 1000 K
    True
    >>> bool(locus_ratios(clipped=False)[200, 0] < 0)  # 900 K: green out of the sRGB gamut
    True
    """
    return _locus_ratios(space, clipped)


def blackbody_swatch_hex(temperature_k) -> str:
    """sRGB hex colour of a blackbody, normalised so its strongest channel is full scale.

    A display swatch, gamut-clipped as a camera would clip it (IEC 61966-2-1 encoding).

    >>> blackbody_swatch_hex(1273.15)
    '#ff4e00'
    """
    return srgb_swatch_hex(clipped_linear_rgb(blackbody_xyz(temperature_k)[0]))
