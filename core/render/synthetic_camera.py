"""Camera models for the synthetic renderer: spectral sensitivities, white balance, colour matrix.

This module is the "camera" half of glowtemp's forward model (spectrum -> camera -> file); the
scenes and file encoding live in ``glowtemp.render.synthetic``. It may import colour-science, because it
is used only to make test, benchmark and demo images; the measuring path never imports it.

A camera here is what a phone's image pipeline does to light, in order:

1. raw = sum over wavelength of scene spectral radiance x spectral sensitivity (1 nm steps);
2. white balance: per-channel gains that make a chosen illuminant neutral;
3. a 3 x 3 colour matrix from white-balanced raw to CIE 1931 XYZ (D65-referred), fitted once per
   camera by white-point preserving least squares on the ColorChecker under daylight.

References
----------
- CIE 015:2018 Colorimetry, 4th ed.: tristimulus summation, illuminants A, D55 and D65.
- G. D. Finlayson and M. S. Drew, "Constrained least-squares regression in color spaces",
  J. Electronic Imaging 6(4), 484-493 (1997): white-point preserving least squares.
- D. Pascale, "RGB coordinates of the Macbeth ColorChecker", BabelColor (2006): the averaged
  ColorChecker reflectances shipped by colour-science as "BabelColor Average".
- M. Mauer, D. Wueller et al. / NPL: the measured camera spectral sensitivities shipped by
  colour-science as ``MSDS_CAMERA_SENSITIVITIES`` ("Nikon 5100 (NPL)", "Sigma SDMerill (NPL)").
- G. Buchsbaum, "A spatial processor model for object colour perception", J. Franklin Inst.
  310(1), 1-26 (1980): the grey-world white balance estimate.
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

import colour
import numpy as np

from ..physics.colourspaces import D65_XY, bradford_adaptation
from ..physics.locus import colour_matching_functions
from ..physics.radiation import spectral_radiance

DAYLIGHT_ILLUMINANT = "D55"  # a phone's "daylight"/"sunny" preset sits near 5500 K (common practice)
TUNGSTEN_ILLUMINANT = "A"  # CIE illuminant A, Planckian at 2856 K (CIE 015:2018)
AUTO_WARMEST_K = 2800.0  # auto white balance keeps light warmer than about 2800 K warm (common practice, from memory)
RAW_TABLE_MIN_K = 500.0
RAW_TABLE_MAX_K = 4000.0
TRAINING_CHART = "BabelColor Average"
SENSITIVITIES_DIR = Path(__file__).parent.parent / "data" / "camera_sensitivities"


class SyntheticInputError(ValueError):
    """A synthetic-render request that cannot be honoured (unknown camera, bad temperature, ...)."""


@dataclass(frozen=True, eq=False)
class CameraModel:
    """A camera: its name and RGB spectral sensitivities (wavelengths in nm, array (n, 3)).

    ``colour_matrix`` (white-balanced raw -> XYZ) is fitted on the ColorChecker when None; give
    it only for idealised cameras such as :func:`ideal_camera`.
    """

    name: str
    wavelengths_nm: np.ndarray
    sensitivities: np.ndarray
    colour_matrix: np.ndarray | None = None
    maker: str = "invented"


def wavelength_grid_nm() -> np.ndarray:
    """The 1 nm grid (360 to 830 nm) of the CIE 1931 CMFs, on which every spectrum is summed."""
    return colour_matching_functions()[0]


def _on_grid(wavelengths_nm, values, left=0.0, right=0.0):
    return np.interp(wavelength_grid_nm(), wavelengths_nm, values, left=left, right=right)


@lru_cache(maxsize=None)
def measured_camera(name: str) -> CameraModel:
    """One of the two cameras measured by NPL and shipped by colour-science.

    Sensitivities are zero outside the measured range (the Sigma data stop at 680 nm).
    """
    if name not in colour.MSDS_CAMERA_SENSITIVITIES:
        known = ", ".join(colour.MSDS_CAMERA_SENSITIVITIES.keys())
        raise SyntheticInputError(f"No measured camera called {name!r}; known: {known}.")
    msds = colour.MSDS_CAMERA_SENSITIVITIES[name]
    return CameraModel(name, np.asarray(msds.wavelengths), np.asarray(msds.values), maker=name.split()[0])


@lru_cache(maxsize=1)
def measured_sensors() -> dict:
    """The 38 measured cameras shipped in ``data/camera_sensitivities`` (Apache-2.0, see its
    README), by "maker model", each with its maker. Sensitivities are zero beyond 380-780 nm."""
    cameras = {}
    for path in sorted(SENSITIVITIES_DIR.glob("*.json")):
        document = json.loads(path.read_text())
        header, table = document["header"], document["spectral_data"]["data"]["main"]
        wavelengths = np.array(sorted(table, key=float), dtype=float)
        values = np.array([table[key] for key in sorted(table, key=float)], dtype=float)
        name = f"{header['manufacturer']} {header['model']}"
        cameras[name] = CameraModel(name, wavelengths, values / values.max(), maker=header["manufacturer"])
    return cameras


def skewed_camera(name: str, peaks_nm, left_widths_nm, right_widths_nm, ir_cut_nm: float,
                  ir_cut_slope_nm: float = 6.0) -> CameraModel:
    """A sensor with split-Gaussian bands (a different width each side of the peak, for skew)
    behind an infrared-cut filter modelled as a logistic edge at ``ir_cut_nm`` (50 % point).

    >>> camera = skewed_camera("demo", (600, 535, 460), (30, 30, 25), (40, 35, 30), 660)
    >>> bool(camera.sensitivities[-1, 0] < 1e-6)  # 830 nm: the IR-cut filter blocks it
    True
    """
    grid = wavelength_grid_nm()
    peaks = np.asarray(peaks_nm, dtype=float)
    widths = np.where(grid[:, None] < peaks, np.asarray(left_widths_nm, float), np.asarray(right_widths_nm, float))
    bands = np.exp(-0.5 * ((grid[:, None] - peaks) / widths) ** 2)
    filter_ = 1.0 / (1.0 + np.exp((grid - ir_cut_nm) / ir_cut_slope_nm))
    return CameraModel(name, grid, bands * filter_[:, None])


def parametric_family(count: int, seed: int, stacked: bool = False) -> list:
    """``count`` invented sensors drawn to span what measured sensors show.

    Bayer sensors (default): red peak 585-625 nm, green 520-550 nm, blue 445-470 nm, widths
    20-45 nm with skew, an IR-cut filter edge at 630-700 nm (ranges read off the measured
    cameras in ``measured_sensors``). ``stacked``: sensors whose colour comes from depth in the
    silicon, as in stacked-photodiode (Foveon-type) designs, with broad overlapping bands,
    widths 45-80 nm (from memory), and the same IR-cut edges.
    """
    rng = np.random.default_rng(seed)
    family = []
    widths = (45, 80) if stacked else (20, 45)
    label = "Parametric stacked" if stacked else "Parametric family"
    for index in range(count):
        peaks = (rng.uniform(585, 625), rng.uniform(520, 550), rng.uniform(445, 470))
        left = rng.uniform(*widths, size=3)
        right = left * rng.uniform(0.7, 1.4, size=3)
        family.append(skewed_camera(f"{label} {seed}-{index}", peaks, left, right, rng.uniform(630, 700)))
    return family


def parametric_camera(name: str, peaks_nm, widths_nm) -> CameraModel:
    """A camera with Gaussian sensitivities of unit peak; ``widths_nm`` are standard deviations.

    >>> parametric_camera("demo", (600, 540, 460), (30, 30, 30)).sensitivities.shape
    (471, 3)
    """
    peaks_nm = np.asarray(peaks_nm, dtype=float)
    widths_nm = np.asarray(widths_nm, dtype=float)
    if peaks_nm.shape != (3,) or widths_nm.shape != (3,) or np.any(widths_nm <= 0):
        raise SyntheticInputError("A parametric camera needs three peaks and three positive widths (nm).")
    grid = wavelength_grid_nm()
    values = np.exp(-0.5 * ((grid[:, None] - peaks_nm) / widths_nm) ** 2)
    return CameraModel(name, grid, values)


@lru_cache(maxsize=1)
def ideal_camera() -> CameraModel:
    """A colorimetric camera: sensitivities are the CIE 1931 CMFs, colour matrix the identity.

    Used with white-balance gains (1, 1, 1) it records exactly the XYZ of the scene, so its
    photos reproduce :func:`glowtemp.physics.locus.clipped_linear_rgb`.
    """
    grid, cmfs = colour_matching_functions()
    return CameraModel("Ideal CIE 1931 observer", grid, cmfs, colour_matrix=np.eye(3))


CAMERAS = {
    camera.name: camera
    for camera in (
        measured_camera("Nikon 5100 (NPL)"),
        measured_camera("Sigma SDMerill (NPL)"),
        # Invented sensors, chosen to differ: well-separated narrow bands vs wide overlapping ones.
        parametric_camera("Parametric narrow-band", (600, 535, 455), (28, 22, 20)),
        parametric_camera("Parametric broad-overlap", (595, 530, 465), (45, 40, 35)),
    )
}


def camera_by_name(name: str) -> CameraModel:
    """Look a camera up in :data:`CAMERAS` with a clear error for unknown names."""
    try:
        return CAMERAS[name]
    except KeyError:
        raise SyntheticInputError(f"Unknown camera {name!r}; known: {', '.join(CAMERAS)}.") from None


@lru_cache(maxsize=None)
def sensitivities_on_grid(camera: CameraModel) -> np.ndarray:
    """The camera's sensitivities resampled (linearly) onto :func:`wavelength_grid_nm`, (471, 3)."""
    return np.stack(
        [_on_grid(camera.wavelengths_nm, camera.sensitivities[:, i]) for i in range(3)], axis=1
    )


def raw_response(camera: CameraModel, radiance_on_grid) -> np.ndarray:
    """Raw camera signal of spectra sampled on the 1 nm grid: ``sum L(lambda) s(lambda) d(lambda)``."""
    return np.asarray(radiance_on_grid, dtype=float) @ sensitivities_on_grid(camera) * 1e-9


def blackbody_radiance_on_grid(temperature_k) -> np.ndarray:
    """Planck spectral radiance (W sr^-1 m^-3) on the 1 nm grid, shape ``T.shape + (471,)``."""
    temperature_k = np.asarray(temperature_k, dtype=float)
    return spectral_radiance(wavelength_grid_nm() * 1e-9, temperature_k[..., None])


@lru_cache(maxsize=None)
def blackbody_raw_table(camera: CameraModel):
    """Raw response to a blackbody on a 1 K grid from 500 K to 4000 K: (temperatures, (n, 3))."""
    temperature_k = np.arange(RAW_TABLE_MIN_K, RAW_TABLE_MAX_K + 0.5, 1.0)
    raw = raw_response(camera, blackbody_radiance_on_grid(temperature_k))
    raw.setflags(write=False)
    return temperature_k, raw


@lru_cache(maxsize=None)
def illuminant_on_grid(name: str) -> np.ndarray:
    """Relative spectral power of a CIE illuminant from colour-science on the 1 nm grid."""
    if name not in colour.SDS_ILLUMINANTS:
        raise SyntheticInputError(f"Unknown CIE illuminant {name!r}.")
    sd = colour.SDS_ILLUMINANTS[name]
    return _on_grid(sd.wavelengths, sd.values)


def neutralising_gains(raw_white) -> np.ndarray:
    """White-balance gains that make ``raw_white`` neutral, normalised to green gain 1."""
    raw_white = np.asarray(raw_white, dtype=float)
    return raw_white[1] / raw_white


@lru_cache(maxsize=None)
def preset_gains(camera: CameraModel, preset: str) -> np.ndarray:
    """Gains of a white-balance preset: "daylight" (CIE D55 neutral) or "tungsten" (CIE A neutral)."""
    illuminants = {"daylight": DAYLIGHT_ILLUMINANT, "tungsten": TUNGSTEN_ILLUMINANT}
    if preset not in illuminants:
        raise SyntheticInputError(f"Unknown white-balance preset {preset!r}; use daylight or tungsten.")
    return neutralising_gains(raw_response(camera, illuminant_on_grid(illuminants[preset])))


@lru_cache(maxsize=None)
def _auto_gain_limits(camera: CameraModel):
    daylight = preset_gains(camera, "daylight")
    warmest = neutralising_gains(raw_response(camera, blackbody_radiance_on_grid(AUTO_WARMEST_K)))
    return np.minimum(daylight, warmest), np.maximum(daylight, warmest)


def grey_world_gains(camera: CameraModel, mean_raw) -> np.ndarray:
    """Auto white balance: grey-world gains (Buchsbaum 1980) from the frame's mean raw signal.

    Each gain is held between the daylight preset's and those that neutralise a 2800 K
    Planckian light (phones keep candle and fire light warm rather than neutralise it), so a
    frame full of glow is pulled towards neutral but not all the way.
    """
    mean_raw = np.maximum(np.asarray(mean_raw, dtype=float), 1e-300)
    low, high = _auto_gain_limits(camera)
    return np.clip(neutralising_gains(mean_raw), low, high)


def white_point_preserving_fit(camera_rgb, target_xyz, white_rgb, white_xyz) -> np.ndarray:
    """3 x 3 matrix M minimising ``sum |M rgb_i - xyz_i|^2`` subject to ``M white_rgb = white_xyz``.

    Closed form by a Lagrange multiplier (Finlayson and Drew 1997, white-point preserving least
    squares): ``M = M0 + (w_xyz - M0 w_rgb) (P^-1 w_rgb)^T / (w_rgb^T P^-1 w_rgb)`` with
    ``P = sum rgb_i rgb_i^T`` and ``M0`` the unconstrained least-squares solution.

    >>> rgb = np.array([[1.0, 0, 0], [0, 1, 0], [0, 0, 1], [1, 1, 0]])
    >>> M = white_point_preserving_fit(rgb, rgb * 2, np.ones(3), 2 * np.ones(3))
    >>> np.round(M, 6).tolist()
    [[2.0, 0.0, 0.0], [0.0, 2.0, 0.0], [0.0, 0.0, 2.0]]
    """
    camera_rgb = np.asarray(camera_rgb, dtype=float)
    target_xyz = np.asarray(target_xyz, dtype=float)
    white_rgb = np.asarray(white_rgb, dtype=float)
    p_inv = np.linalg.inv(camera_rgb.T @ camera_rgb)
    unconstrained = (p_inv @ camera_rgb.T @ target_xyz).T
    direction = p_inv @ white_rgb
    correction = (np.asarray(white_xyz, dtype=float) - unconstrained @ white_rgb) / (white_rgb @ direction)
    return unconstrained + np.outer(correction, direction)


@lru_cache(maxsize=None)
def chart_reflectances(chart: str = TRAINING_CHART) -> np.ndarray:
    """ColorChecker reflectances from colour-science (24 patches) on the 1 nm grid, (24, 471).

    "BabelColor Average" (Pascale 2006) is measured from 380 to 730 nm, "ColorChecker N Ohta"
    (Ohta, as shipped by colour-science) from 380 to 780 nm; end values are held beyond.
    """
    if chart not in colour.SDS_COLOURCHECKERS:
        raise SyntheticInputError(f"Unknown colour chart {chart!r}.")
    patches = colour.SDS_COLOURCHECKERS[chart]
    return np.stack([_on_grid(sd.wavelengths, sd.values, sd.values[0], sd.values[-1]) for sd in patches.values()])


def chart_training_data(camera: CameraModel, chart: str = TRAINING_CHART,
                        illuminant: str = DAYLIGHT_ILLUMINANT):
    """Illuminant-balanced raw and D65-referred XYZ of a colour chart lit by ``illuminant``.

    XYZ is summed on the same absolute scale as :func:`raw_response` and adapted to D65 with
    the Bradford transform, as a camera renders a daylight scene for a D65-white display.
    Returns (rgb (24, 3), xyz (24, 3), white_rgb (3,), white_xyz (3,)) for the chart and for
    a perfect white reflector.
    """
    light = illuminant_on_grid(illuminant)
    cmfs = colour_matching_functions()[1]
    gains = neutralising_gains(raw_response(camera, light))
    white_xyz = light @ cmfs * 1e-9
    to_d65 = bradford_adaptation(white_xyz[:2] / white_xyz.sum(), D65_XY)
    radiance = chart_reflectances(chart) * light
    xyz = radiance @ cmfs @ to_d65.T * 1e-9
    rgb = raw_response(camera, radiance) * gains
    white_rgb = raw_response(camera, light) * gains
    return rgb, xyz, white_rgb, to_d65 @ white_xyz


def least_squares_fit(camera_rgb, target_xyz, white_rgb=None, white_xyz=None) -> np.ndarray:
    """Unconstrained linear least squares, 3 x 3 (Cheung et al. 2004, via colour-science's
    ``matrix_colour_correction`` with the "Cheung 2004" method and 3 terms). The white is not
    held: its error is whatever the patches leave."""
    return np.asarray(colour.matrix_colour_correction(camera_rgb, target_xyz, method="Cheung 2004", terms=3))


def delta_e_fit(camera_rgb, target_xyz, white_rgb, white_xyz, iterations: int = 12) -> np.ndarray:
    """3 x 3 matrix minimising the CIE 1976 colour difference of the patches in CIELAB, with the
    white held by a heavily weighted extra residual (ISO 17321-1:2012, section 5: characterisation
    of a digital still camera by minimising colour differences). Gauss-Newton from the
    white-point preserving fit, numerical Jacobian; Lab relative to the white."""
    white_xy = np.asarray(white_xyz[:2]) / np.sum(white_xyz)
    scale = 100.0 / white_xyz[1]

    def residuals(flat):
        matrix = flat.reshape(3, 3)
        lab = colour.XYZ_to_Lab(camera_rgb @ matrix.T * scale / 100, white_xy)
        goal = colour.XYZ_to_Lab(target_xyz * scale / 100, white_xy)
        white_error = (matrix @ white_rgb - white_xyz) * scale * 10.0
        return np.concatenate([(lab - goal).ravel(), white_error])

    flat = white_point_preserving_fit(camera_rgb, target_xyz, white_rgb, white_xyz).ravel()
    for _ in range(iterations):
        base = residuals(flat)
        step = 1e-6 * max(1.0, float(np.abs(flat).max()))
        jacobian = np.stack([(residuals(flat + step * np.eye(9)[i]) - base) / step for i in range(9)], axis=1)
        delta = np.linalg.lstsq(jacobian, -base, rcond=None)[0]
        flat = flat + delta
        if np.abs(delta).max() < 1e-9:
            break
    return flat.reshape(3, 3)


MATRIX_FITS = {
    "white-preserving": white_point_preserving_fit,
    "least-squares": least_squares_fit,
    "delta-e": delta_e_fit,
}


@lru_cache(maxsize=None)
def colour_matrix(camera: CameraModel, method: str = "white-preserving", chart: str = TRAINING_CHART,
                  illuminant: str = DAYLIGHT_ILLUMINANT) -> np.ndarray:
    """The camera's matrix from illuminant-balanced raw to D65-referred XYZ.

    By default fitted by white-point preserving least squares on the 24 ColorChecker patches
    under CIE D55, so a D55 white maps exactly to the D65 white of the output space; ``method``
    picks another fit from :data:`MATRIX_FITS`, ``chart`` and ``illuminant`` other training data.
    """
    if camera.colour_matrix is not None:
        return np.asarray(camera.colour_matrix, dtype=float)
    if method not in MATRIX_FITS:
        raise SyntheticInputError(f"Unknown matrix fit {method!r}; use one of {', '.join(MATRIX_FITS)}.")
    return MATRIX_FITS[method](*chart_training_data(camera, chart, illuminant))
