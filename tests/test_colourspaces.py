"""RGB encodings against IEC 61966-2-1 and colour-science's colourspace definitions."""

import colour
import numpy as np
import pytest

from glowtemp.physics import colourspaces as cs


@pytest.mark.parametrize(
    "ours, name",
    [(cs.SRGB, "sRGB"), (cs.DISPLAY_P3, "Display P3"), (cs.ADOBE_RGB, "Adobe RGB (1998)")],
)
def test_matrices_agree_with_colour_science(ours, name):
    # Reference library: colour.RGB_COLOURSPACES (IEC 61966-2-1, SMPTE EG 432-1, Adobe RGB 1998).
    reference = colour.RGB_COLOURSPACES[name]
    np.testing.assert_allclose(ours.rgb_to_xyz, reference.matrix_RGB_to_XYZ, atol=2e-4)


def test_srgb_matrix_matches_iec_61966_2_1_published_values():
    # IEC 61966-2-1:1999, equation (7): the rounded XYZ -> linear sRGB matrix.
    published = [[3.2406, -1.5372, -0.4986], [-0.9689, 1.8758, 0.0415], [0.0557, -0.2040, 1.0570]]
    np.testing.assert_allclose(cs.SRGB.xyz_to_rgb, published, atol=6e-4)


@pytest.mark.parametrize(
    "encoded, linear",
    # IEC 61966-2-1 transfer function: linear segment below 0.04045, 2.4 power above.
    [(0.0, 0.0), (0.04045, 0.04045 / 12.92), (0.5, 0.214041), (1.0, 1.0), (10 / 255, 0.003035)],
)
def test_srgb_transfer_function_iec_61966_2_1(encoded, linear):
    assert float(cs.srgb_decode(encoded)) == pytest.approx(linear, abs=2e-6)


def test_srgb_decode_agrees_with_colour_science_and_round_trips():
    # Reference library: colour.cctf_decoding / cctf_encoding for sRGB.
    codes = np.arange(256) / 255
    np.testing.assert_allclose(cs.srgb_decode(codes), colour.cctf_decoding(codes, "sRGB"), atol=1e-9)
    np.testing.assert_allclose(cs.srgb_encode(cs.srgb_decode(codes)), codes, atol=1e-9)


def test_bradford_adaptation_agrees_with_colour_science():
    # Reference library: colour.adaptation.matrix_chromatic_adaptation_VonKries, Bradford (Lam 1985).
    reference = colour.adaptation.matrix_chromatic_adaptation_VonKries(
        cs.xy_to_xyz(cs.D50_XY), cs.xy_to_xyz(cs.D65_XY), transform="Bradford"
    )
    np.testing.assert_allclose(cs.bradford_adaptation(cs.D50_XY, cs.D65_XY), reference, atol=1e-6)
