"""The camera population: the shipped table, how it is built, and what it carries."""

import colour
import numpy as np
import pytest

from glowtemp.render import population_build as build
from glowtemp.physics.colourspaces import SRGB
from glowtemp.estimation.estimate import GRID_K, population_cameras
from glowtemp.estimation.population import TABLE_PATH, camera_population
from glowtemp.render.synthetic_camera import MATRIX_FITS, chart_training_data, colour_matrix, measured_sensors


@pytest.fixture(scope="module")
def members():
    return build.draw_members()


@pytest.mark.parametrize("index", [0, 37, 101, 160, 255])
def test_shipped_table_is_what_the_builder_makes(members, index):
    # The shipped float16 table against a fresh build of the same member (relative 1e-3 is
    # float16's resolution); a drifting builder or a stale table fails here.
    population = camera_population()
    assert population.sensor[index] == members[index].sensor.name
    for space_index, space_name in enumerate([*build.SPACES, build.RAW_SPACE_NAME]):
        ratios, response = build.member_table(members[index], space_name)
        np.testing.assert_allclose(population.ratios[space_name][index], ratios, rtol=2e-3, atol=2e-4)
        np.testing.assert_allclose(population.log_response[space_name][index], response, atol=5e-3)


def test_population_spans_every_measured_maker_and_the_npl_cameras():
    # 38 measured cameras (Academy Software Foundation data, Apache-2.0) plus colour-science's
    # two NPL cameras, each with its draws; the parametric family is labelled "invented".
    population = camera_population()
    makers = set(population.maker)
    assert {"Canon", "Nikon", "Sony", "Fujifilm", "ARRI", "Hasselblad", "Sigma", "invented"} <= makers
    measured = set(measured_sensors())
    assert measured <= set(population.sensor)
    assert len(set(population.sensor)) == len(measured) + 2 + build.PARAMETRIC_SENSORS + build.STACKED_SENSORS


def test_attribution_travels_with_the_derived_table():
    # Apache License 2.0, section 4: redistributions keep the licence and a notice.
    data = TABLE_PATH.parent
    notice = (data / "NOTICE.md").read_text()
    assert "camera_population.npz" in notice and "Apache License 2.0" in notice
    assert "Apache License" in (data / "camera_sensitivities" / "LICENSE").read_text()


def test_leaving_a_maker_out_removes_its_members_and_keeps_one_weight_per_sensor():
    population = camera_population()
    without = population.without(maker="Canon", tone_curve="power-2.2")
    kept = without.keep
    assert not np.any(kept & (population.maker == "Canon"))
    assert not np.any(kept & (population.tone_curve == "power-2.2"))
    weights = without.weights
    assert weights.sum() == pytest.approx(1.0) and np.all(weights[~kept] == 0)
    per_sensor = {name: weights[kept & (population.sensor == name)].sum() for name in set(population.sensor[kept])}
    assert max(per_sensor.values()) == pytest.approx(min(per_sensor.values()))


@pytest.mark.parametrize("curve, reference", [
    ("srgb", lambda v: colour.cctf_encoding(v, function="sRGB")),  # IEC 61966-2-1 via colour-science
    ("power-2.2", lambda v: colour.gamma_function(v, 1 / 2.2)),
])
def test_tone_curves_match_colour_science(curve, reference):
    linear = np.linspace(0.001, 1.0, 50)
    np.testing.assert_allclose(build.TONE_CURVES[curve](linear), reference(linear), atol=1e-9)


def test_srgb_members_decode_to_ratios_that_do_not_depend_on_the_recorded_level(members):
    # With the sRGB curve and no roll-off, decoding undoes encoding (IEC 61966-2-1), so the
    # observed ratios are the camera's linear ones at every level; other curves are not.
    plain = next(m for m in members if m.tone_curve == "srgb" and m.rolloff_knee is None)
    ratios, _ = build.member_table(plain, "sRGB")
    np.testing.assert_allclose(ratios[0], ratios[-1], rtol=1e-6, atol=1e-9)
    bent = next(m for m in members if m.tone_curve == "power-2.6")
    ratios, _ = build.member_table(bent, "sRGB")
    assert np.abs(ratios[0, 50:, 0] - ratios[-1, 50:, 0]).max() > 0.01


@pytest.mark.parametrize("method", list(MATRIX_FITS))
def test_every_matrix_fit_reproduces_the_chart(method):
    # ISO 17321-1 characterisation on the ColorChecker ("BabelColor Average", colour-science):
    # each fit renders the chart within a mean CIE 2000 colour difference of 3 (colour-science's
    # delta_E), as camera makers' matrices do (common practice), and the white within 0.02.
    camera = measured_sensors()["Nikon D810"]
    rgb, xyz, white_rgb, white_xyz = chart_training_data(camera)
    matrix = colour_matrix(camera, method)
    white_xy = white_xyz[:2] / white_xyz.sum()
    lab_fit = colour.XYZ_to_Lab(rgb @ matrix.T / white_xyz[1], white_xy)
    lab_true = colour.XYZ_to_Lab(xyz / white_xyz[1], white_xy)
    assert float(np.mean(colour.delta_E(lab_fit, lab_true, method="CIE 2000"))) < 3.0
    assert np.abs(matrix @ white_rgb / white_xyz[1] - white_xyz / white_xyz[1]).max() < 0.02


def test_population_disagrees_more_where_green_is_faint():
    # The camera spread of green/red, relative to the ideal camera's own value (colour-science's
    # blackbody in sRGB), is larger at 1100 K than at 1700 K: where green is a few per cent of
    # red, matrices and tone curves move it most.
    cameras = population_cameras(SRGB, 0.6)
    ideal = {}
    for t in (1100.0, 1700.0):
        xyz = colour.sd_to_XYZ(colour.sd_blackbody(t), method="Integration")
        rgb = colour.XYZ_to_RGB(xyz, "sRGB")  # unclipped linear sRGB
        ideal[t] = rgb[1] / rgb[0]
    spread = {t: np.std(cameras.ratios[:, int(np.searchsorted(GRID_K, t)), 0]) / ideal[t] for t in ideal}
    assert spread[1100.0] > 1.5 * spread[1700.0]
