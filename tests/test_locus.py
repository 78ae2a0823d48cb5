"""The blackbody colour table against CIE 015:2018 and colour-science."""

import colour
import numpy as np
import pytest

from glowtemp.physics import colourspaces, locus


def test_shipped_cmfs_equal_colour_science_cie_1931():
    # CIE 015:2018 CIE 1931 2-degree observer as shipped by colour-science (reference library).
    wavelengths, cmfs = locus.colour_matching_functions()
    reference = colour.MSDS_CMFS["CIE 1931 2 Degree Standard Observer"]
    np.testing.assert_array_equal(wavelengths, reference.wavelengths)
    np.testing.assert_allclose(cmfs, reference.values, rtol=1e-6, atol=1e-12)


def test_illuminant_a_chromaticity():
    # CIE 015:2018 / ISO 11664-2: illuminant A is defined by Planck's law with c2 = 1.435e-2 m K
    # at T = 2848 K (which is 2856 K on the current c2 scale: 2848 * 1.4388 / 1.435), and has
    # chromaticity x = 0.44757, y = 0.40745.
    for temperature_k, c2 in ((2848.0, 1.435e-2), (2856.0, 1.438776877e-2)):
        xy = locus.xyz_to_xy(locus.blackbody_xyz(temperature_k, c2=c2))[0]
        assert xy[0] == pytest.approx(0.44757, abs=5e-5)
        assert xy[1] == pytest.approx(0.40745, abs=5e-5)


@pytest.mark.parametrize("temperature_k", [700.0, 900.0, 1200.0, 1600.0, 2500.0, 4000.0])
def test_chromaticity_agrees_with_colour_science_sd_to_xyz(temperature_k):
    # Reference library: colour.sd_blackbody + colour.sd_to_XYZ (CIE 015:2018 integration).
    cmfs = colour.MSDS_CMFS["CIE 1931 2 Degree Standard Observer"]
    sd = colour.sd_blackbody(temperature_k, cmfs.shape)
    reference = colour.XYZ_to_xy(colour.sd_to_XYZ(sd, cmfs, method="Integration"))
    ours = locus.xyz_to_xy(locus.blackbody_xyz(temperature_k))[0]
    np.testing.assert_allclose(ours, reference, atol=2e-5)


@pytest.mark.parametrize("temperature_k", [1100.0, 1500.0, 2000.0, 3000.0, 4000.0])
def test_table_inverts_through_ohno_2013(temperature_k):
    # Reference method: Ohno (2014), colour.temperature.uv_to_CCT_Ohno2013, valid above 1000 K.
    # A point on the Planckian locus has CCT equal to its temperature and Duv ~ 0.
    table = locus.blackbody_table()
    xy = table.xy[int(round(temperature_k - locus.TABLE_MIN_K))]
    uv = colour.xy_to_UCS_uv(xy)
    cct, duv = colour.temperature.uv_to_CCT_Ohno2013(uv)
    assert cct == pytest.approx(temperature_k, rel=2e-3)
    assert abs(duv) < 2e-4


def test_shipped_table_equals_a_fresh_integration():
    # The shipped data/blackbody_xyz.npy must be what Planck's law integrated against the CMFs
    # gives now (rerun scripts/export_tables.py after changing either).
    table = locus.blackbody_table()
    np.testing.assert_allclose(table.xyz, locus.blackbody_xyz(table.temperature_k), rtol=1e-12)


def test_table_spans_700_to_4000_kelvin_by_one_kelvin():
    grid = locus.blackbody_table().temperature_k
    assert grid[0] == 700.0 and grid[-1] == 4000.0
    np.testing.assert_allclose(np.diff(grid), 1.0)


def colour_science_linear_srgb(temperature_k: float) -> np.ndarray:
    """Linear sRGB of a blackbody by colour-science: CIE 1931 2-degree integration of Planck's
    law, then the IEC 61966-2-1 matrix (no chromatic adaptation: the light itself)."""
    cmfs = colour.MSDS_CMFS["CIE 1931 2 Degree Standard Observer"]
    xyz = colour.sd_to_XYZ(colour.sd_blackbody(temperature_k, cmfs.shape), cmfs, method="Integration")
    return colour.XYZ_to_RGB(xyz, colour.RGB_COLOURSPACES["sRGB"], chromatic_adaptation_transform=None,
                             apply_cctf_encoding=False)


def test_glow_is_outside_srgb_gamut_below_about_1900_kelvin():
    # colour-science puts a blackbody's linear sRGB blue below zero up to 1900 K (its sign
    # changes between 1895 K and 1905 K); the table must cross zero at the same place, and its
    # green/red must match colour-science's where blue is clipped.
    assert colour_science_linear_srgb(1895.0)[2] < 0 < colour_science_linear_srgb(1905.0)[2]
    table = locus.blackbody_table()
    unclipped = table.xyz @ colourspaces.SRGB.xyz_to_rgb.T
    crossing_k = table.temperature_k[np.argmax(unclipped[:, 2] > 0)]
    assert 1895.0 <= crossing_k <= 1905.0
    at = lambda t: int(t - locus.TABLE_MIN_K)  # noqa: E731
    ratios = locus.locus_ratios(colourspaces.SRGB)
    for temperature_k in (1000.0, 1600.0, 1850.0):
        reference = colour_science_linear_srgb(temperature_k)
        assert ratios[at(temperature_k), 0] == pytest.approx(reference[1] / reference[0], abs=2e-4)
        assert ratios[at(temperature_k), 1] == 0.0  # blue clipped, as a camera records it
    assert ratios[at(1950.0), 1] > 0.0


def test_display_p3_keeps_green_to_lower_temperatures_than_srgb():
    # Display P3's red primary (x = 0.680) lies beyond sRGB's (x = 0.640), SMPTE EG 432-1.
    srgb = locus.locus_ratios(colourspaces.SRGB)[:, 0]
    p3 = locus.locus_ratios(colourspaces.DISPLAY_P3)[:, 0]
    grid = locus.blackbody_table().temperature_k
    assert grid[np.argmax(p3 > 0)] < grid[np.argmax(srgb > 0)] - 100


def test_green_over_red_rises_monotonically_where_recorded():
    g = locus.locus_ratios()[:, 0]
    recorded = g > 0
    assert np.all(np.diff(g[recorded]) > 0)


def test_swatch_gets_yellower_with_heat():
    reds = [int(locus.blackbody_swatch_hex(t)[3:5], 16) for t in (1000.0, 1300.0, 1600.0, 2000.0)]
    assert reds == sorted(reds) and reds[0] < reds[-1]
