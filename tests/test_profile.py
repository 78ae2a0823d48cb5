"""Camera profiles fitted on rendered photos: recovery, pair counts, span, bad input, files."""

import json

import numpy as np
import pytest

from glowtemp.shell import cli
from glowtemp.estimation.cones import CONE_SIGMA_C, cone_temperature_c
from glowtemp.images.photo import load_photo
from glowtemp.estimation.profile import (
    CameraProfile,
    Pair,
    PROFILE_VERSION,
    ProfileError,
    fit_profile,
    fit_ratio_map,
    ideal_green_ratio,
    thermocouple_sigma_c,
)
from glowtemp.physics.colourspaces import DISPLAY_P3, SRGB
from glowtemp.estimation.profile_store import fit_from_csv, list_profiles, load_profile, save_profile
from glowtemp.estimation.reading import measure
from glowtemp.estimation.scales import celsius_to_kelvin
from glowtemp.render.synthetic import encode_jpeg, render_photo
from glowtemp.render.synthetic_camera import CAMERAS

NIKON = CAMERAS["Nikon 5100 (NPL)"]  # colour-science's NPL-measured camera sensitivities


def shoot(folder, name, temperature_c, seed, camera=NIKON, **settings):
    """Render a spy-hole photo at a known temperature (rendered truth) and save it as JPEG."""
    rendered = render_photo(temperature_c + 273.15, camera=camera, size=(160, 120), seed=seed, **settings)
    path = folder / name
    path.write_bytes(encode_jpeg(rendered))
    return path


def write_pairs(folder, rows, header="photo,reference_c"):
    path = folder / "pairs.csv"
    path.write_text(header + "\n" + "\n".join(rows) + "\n", encoding="utf-8")
    return path


@pytest.fixture
def three_pair_profile(tmp_path):
    rows = []
    for k, temperature_c in enumerate((800, 1050, 1300)):
        shoot(tmp_path, f"pair{k}.jpg", temperature_c, seed=10 + k)
        rows.append(f"pair{k}.jpg,{temperature_c}")
    data = tmp_path / "data"
    return fit_from_csv("nikon", write_pairs(tmp_path, rows), data), data, tmp_path


def test_thermocouple_uncertainty_follows_iec_60584_class_2():
    # IEC 60584-1 type K class 2: +/-2.5 °C or +/-0.0075 |t|; as a rectangular bound, sigma = tol / sqrt(3) (GUM 4.3.7).
    assert thermocouple_sigma_c(200.0) == pytest.approx(2.5 / np.sqrt(3))
    assert thermocouple_sigma_c(1000.0) == pytest.approx(7.5 / np.sqrt(3))


def test_profile_recovers_rendered_truth_inside_its_span(three_pair_profile):
    # Rendered truth (NPL-measured Nikon sensitivities through glowtemp.render.synthetic): the
    # uncalibrated estimate of this camera reads 70-90 °C hot; the profile must bring it within
    # a thermocouple's tolerance and keep the truth inside its 95 % band.
    profile, data, folder = three_pair_profile
    for k, temperature_c in enumerate((900, 1000, 1150, 1250)):
        photo = load_photo(shoot(folder, f"check{k}.jpg", temperature_c, seed=100 + k))
        calibrated = measure(photo, profile=profile).to_dict()
        plain = measure(photo).to_dict()
        low, high = calibrated["interval_95_c"]
        assert low <= temperature_c <= high
        assert abs(calibrated["temperature_c"] - temperature_c) <= 15
        assert abs(calibrated["temperature_c"] - temperature_c) < abs(plain["temperature_c"] - temperature_c)
        assert calibrated["profile"] == "nikon"
        assert "outside-profile-span" not in [w["code"] for w in calibrated["warnings"]]


def test_band_widens_and_is_flagged_outside_the_span(three_pair_profile):
    profile, data, folder = three_pair_profile
    inside = measure(load_photo(shoot(folder, "in.jpg", 1000, seed=7)), profile=profile).to_dict()
    outside = measure(load_photo(shoot(folder, "out.jpg", 1420, seed=8)), profile=profile).to_dict()
    width = lambda r: r["interval_95_c"][1] - r["interval_95_c"][0]  # noqa: E731
    assert width(outside) > 1.3 * width(inside)
    assert "outside-profile-span" in [w["code"] for w in outside["warnings"]]
    assert outside["interval_95_c"][0] <= 1420 <= outside["interval_95_c"][1]


def pair_at(temperature_c, offset=0.01, gain=1.1, sigma=0.001):
    """A pair whose green/red follows a known affine map of the ideal sRGB camera."""
    ideal, _ = ideal_green_ratio(temperature_c + 273.15, SRGB)
    return Pair(f"p{temperature_c}", float(offset + gain * ideal), sigma, float(temperature_c), 0.1)


def test_one_pair_fits_an_offset_only():
    fitted = fit_ratio_map([pair_at(1000)], SRGB)
    assert fitted.gain == 1.0 and not fitted.scatter_measured
    ideal, _ = ideal_green_ratio(1273.15, SRGB)
    assert fitted.offset == pytest.approx(0.01 + 0.1 * ideal, abs=1e-9)


def test_two_pairs_fit_offset_and_gain_with_an_assumed_scatter():
    fitted = fit_ratio_map([pair_at(900), pair_at(1250)], SRGB)
    assert fitted.gain == pytest.approx(1.1, abs=1e-3)
    assert fitted.offset == pytest.approx(0.01, abs=1e-4)
    assert not fitted.scatter_measured


def test_many_pairs_measure_their_scatter():
    rng = np.random.default_rng(3)
    pairs = [pair_at(t, offset=0.01 + rng.normal(0, 0.004)) for t in range(800, 1351, 50)]
    fitted = fit_ratio_map(pairs, SRGB)
    assert fitted.scatter_measured
    assert 0.002 < fitted.scatter < 0.007  # the 0.004 scatter put in, recovered roughly
    clean = fit_ratio_map([pair_at(t) for t in range(800, 1351, 50)], SRGB)
    assert clean.scatter < 0.0015  # only the prior's pooled share (2 of 12 pseudo-pairs) is left


def test_profile_file_reads_back_identically(tmp_path):
    profile = fit_profile("round trip", [pair_at(900), pair_at(1100), pair_at(1300)], SRGB, {"camera_model": "X"}, "2026-01-01T00:00:00+00:00")
    save_profile(tmp_path, profile)
    again = load_profile(tmp_path, "round trip")
    assert again.to_dict() == profile.to_dict()
    assert json.loads((tmp_path / "profiles" / "round_trip.json").read_text())["version"] == PROFILE_VERSION == 2


def test_newer_profile_format_is_refused_plainly(tmp_path):
    record = fit_profile("new", [pair_at(1000)], SRGB, {}, "").to_dict()
    record["version"] = 99
    (tmp_path / "profiles").mkdir()
    (tmp_path / "profiles" / "new.json").write_text(json.dumps(record))
    with pytest.raises(ProfileError, match="newer glowtemp"):
        load_profile(tmp_path, "new")


@pytest.mark.parametrize(
    "header, rows, message",
    [
        ("photo,temperature", ["a.jpg,1000"], "columns photo and reference_c"),
        ("photo,reference_c", ["a.jpg,hot"], "Row 2: reference_c 'hot' is not a number"),
        ("photo,reference_c", ["a.jpg,350"], "Row 2: reference 350 °C is outside"),
        ("photo,reference_c", ["a.jpg,1900"], "Row 2: reference 1900 °C is outside"),
        ("photo,reference_c", ["a.jpg,1000", "missing.jpg,1100"], "Row 3: cannot read the photo missing.jpg"),
        ("photo,reference_c", ["a.jpg,1000", "a.jpg,1100"], "Row 3: a.jpg is the same photo as row 2"),
        ("photo,reference_c", ["notes.txt,1000"], "Row 2 \\(notes.txt\\)"),
        ("photo,reference_c,region", ["a.jpg,1000,5,5,0,0"], "Row 2"),
        ("photo,cone", ["a.jpg,42"], "Row 2: Cone '42' is not in"),
        ("photo,reference_c", [], "no rows"),
        ("photo,reference_c", ["a.jpg,1000"] * 1001, "1001 rows; a profile takes at most 1000"),
    ],
)
def test_bad_pairs_files_fail_cleanly_and_store_nothing(tmp_path, header, rows, message):
    shoot(tmp_path, "a.jpg", 1000, seed=1)
    (tmp_path / "notes.txt").write_text("not a photo")
    data = tmp_path / "data"
    with pytest.raises(ProfileError, match=message):
        fit_from_csv("bad", write_pairs(tmp_path, rows, header), data)
    assert list_profiles(data) == []
    assert not (data / "profiles").exists() or not any((data / "profiles").iterdir())


def test_a_pair_far_off_the_others_is_named_and_refused(tmp_path):
    rows = []
    for k, temperature_c in enumerate((800, 950, 1100, 1250)):
        shoot(tmp_path, f"p{k}.jpg", temperature_c, seed=20 + k)
        # the third reference is mistyped by 200 °C
        rows.append(f"p{k}.jpg,{temperature_c + (200 if k == 2 else 0)}")
    data = tmp_path / "data"
    with pytest.raises(ProfileError, match="p2.jpg disagrees"):
        fit_from_csv("typo", write_pairs(tmp_path, rows), data)
    assert list_profiles(data) == []


def test_cone_references_count_with_a_wider_uncertainty(tmp_path):
    # Cone 06 bends near 999 °C at about 60 °C/h (approximate, from memory; see core/data/cones_approx.csv).
    shoot(tmp_path, "c.jpg", cone_temperature_c("06"), seed=3)
    shoot(tmp_path, "t.jpg", 1150, seed=4)
    csv_path = write_pairs(tmp_path, ["c.jpg,,06", "t.jpg,1150,"], header="photo,reference_c,cone")
    profile = fit_from_csv("cones", csv_path, tmp_path / "data")
    cone_pair, thermocouple_pair = profile.pairs
    assert cone_pair.reference_kind == "cone" and cone_pair.reference_sigma_c == CONE_SIGMA_C
    assert thermocouple_pair.reference_sigma_c < CONE_SIGMA_C / 2


def test_users_cone_chart_replaces_the_shipped_table(tmp_path):
    (tmp_path / "cones.csv").write_text("cone,temperature_c\n6,1230\n", encoding="utf-8")
    assert cone_temperature_c("6", tmp_path) == 1230.0
    assert cone_temperature_c("6") == 1222.0


def test_other_camera_is_warned_and_other_colour_space_is_not_applied(three_pair_profile):
    profile, data, folder = three_pair_profile
    sigma = load_photo(shoot(folder, "s.jpg", 1000, seed=5, camera=CAMERAS["Sigma SDMerill (NPL)"]))
    other = measure(sigma, profile=profile).to_dict()
    assert "profile-camera-mismatch" in [w["code"] for w in other["warnings"]]
    own = measure(load_photo(shoot(folder, "n.jpg", 1000, seed=5)), profile=profile).to_dict()
    width = lambda r: r["interval_95_c"][1] - r["interval_95_c"][0]  # noqa: E731
    assert width(other) > 2 * width(own)
    p3 = load_photo(shoot(folder, "p3.jpg", 1000, seed=6, output_space=DISPLAY_P3))
    result = measure(p3, profile=profile).to_dict()
    assert result["profile"] is None
    assert "profile-not-applied" in [w["code"] for w in result["warnings"]]


def test_profile_commands(three_pair_profile, capsys):
    profile, data, folder = three_pair_profile
    assert cli.main(["profile", "list", "--data", str(data)]) == 0
    assert "nikon" in capsys.readouterr().out
    assert cli.main(["profile", "show", "nikon", "--data", str(data)]) == 0
    shown = capsys.readouterr().out
    assert "3 pairs spanning 800-1300 °C" in shown and "residual" in shown
    photo = shoot(folder, "m.jpg", 1000, seed=9)
    assert cli.main(["measure", str(photo), "--profile", "nikon", "--data", str(data), "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["profile"] == "nikon"
    assert cli.main(["measure", str(photo), "--profile", "nobody", "--data", str(data)]) == 2
    assert "no camera profile called 'nobody'" in capsys.readouterr().err
    assert cli.main(["profile", "delete", "nikon", "--data", str(data)]) == 0
    assert list_profiles(data) == []


def test_profile_from_dict_refuses_a_damaged_record():
    with pytest.raises(ProfileError, match="damaged"):
        CameraProfile.from_dict({"format": "glowtemp-camera-profile", "version": 1, "name": "x"})


def test_raw_photos_get_their_own_profile(tmp_path):
    # Rendered raw captures (colour-science's NPL Nikon sensitivities) written as DNG: a raw
    # profile fits and applies to raw photos, and is not applied to the same camera's JPEGs.
    from glowtemp.render.synthetic_raw import encode_dng, render_raw

    def dng(name, temperature_c, seed):
        rendered = render_raw(temperature_c + 273.15, camera=NIKON, size=(160, 120), seed=seed)
        (tmp_path / name).write_bytes(encode_dng(rendered))
        return tmp_path / name

    rows = [f"{dng(f'r{k}.dng', t, 30 + k).name},{t}" for k, t in enumerate((750, 1000, 1250))]
    profile = fit_from_csv("nikon raw", write_pairs(tmp_path, rows), tmp_path / "data")
    assert profile.camera["format"] == "DNG"
    result = measure(load_photo(dng("check.dng", 900, 40)), profile=profile).to_dict()
    assert result["profile"] == "nikon raw"
    assert result["interval_95_c"][0] <= 900 <= result["interval_95_c"][1]
    jpeg = measure(load_photo(shoot(tmp_path, "j.jpg", 900, seed=41)), profile=profile).to_dict()
    assert jpeg["profile"] is None
    assert "profile-not-applied" in [w["code"] for w in jpeg["warnings"]]


def test_leaving_each_pair_out_matches_refitting_without_it():
    # The rank-one downdate against a plain refit of the others (fit_ratio_map, then each pair's
    # residual by inverting the fitted map): on invented pairs, one with a mistyped reference.
    from glowtemp.estimation.profile_store import _leave_one_out

    rng = np.random.default_rng(5)
    truth_c = rng.uniform(800, 1300, 8)
    ideal, _ = ideal_green_ratio(celsius_to_kelvin(truth_c), SRGB)
    recorded = 0.02 + 1.05 * ideal + rng.normal(0, 0.002, 8)
    typed_c = truth_c + np.where(np.arange(8) == 5, 250.0, 0.0)
    pairs = [Pair(f"p{i}.jpg", float(recorded[i]), 0.002, float(typed_c[i]), 5.0) for i in range(8)]
    missed, rest_rms = _leave_one_out(pairs, SRGB)
    for i, pair in enumerate(pairs):
        others = pairs[:i] + pairs[i + 1:]
        fitted = fit_ratio_map(others, SRGB)
        refit_miss = CameraProfile("check", fitted, [pair], SRGB.name).residuals_c()[0]
        refit_rest = np.sqrt(np.mean(np.square(CameraProfile("check", fitted, others, SRGB.name).residuals_c())))
        assert missed[i] == pytest.approx(refit_miss, abs=2.0)  # °C
        assert rest_rms[i] == pytest.approx(refit_rest, rel=0.03)
    assert int(np.argmin(rest_rms)) == 5

