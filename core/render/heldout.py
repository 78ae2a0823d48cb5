"""Held-out validation: photos rendered by a pipeline that is not the camera prior's own.

The camera prior (:mod:`glowtemp.estimation.population`) is built from measured sensors with matrices
fitted on the "BabelColor Average" ColorChecker under daylight, and a set of tone curves. A
check of the estimator against it would be circular, so validation photos differ in what they
are made from and how:

- the sensors are one maker's, and that maker's members are left out of the prior
  (leave one maker out); invented sensors are drawn afresh from another seed;
- the colour matrix is fitted on another chart ("ColorChecker N Ohta", colour-science) under
  another illuminant (CIE D50) while the white balance is the D55 daylight preset, off by up to
  3 % per gain;
- the tone curve is one the renderer implements itself, and the prior's nearest curve is left
  out too (the renderer's "srgb-shoulder" has no counterpart in the prior at all);
- the photo is a rendered scene (a spy hole or a bar end) with photon and read noise, auto
  exposure from real shutter and ISO ladders (the phone held steady, as dull glow needs), a camera whose sensitivity departs from its ISO
  rating, 4:2:0 JPEG coding, decoded like any user photo.

This module is on the synthetic side (colour-science through the renderer); the measuring path
never imports it.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from ..images.photo import load_photo
from ..estimation.population import camera_population
from .synthetic import encode_jpeg, render_photo
from .synthetic_camera import colour_matrix, measured_camera, measured_sensors, parametric_family

HELD_OUT_CHART = "ColorChecker N Ohta"
HELD_OUT_ILLUMINANT = "D50"
# The renderer's tone curve -> the prior's curve left out with it (None: the prior has none like it).
RENDER_CURVES = {"srgb": "srgb", "power-2.2": "power-2.2", "phone": "s-curve-0.3", "srgb-shoulder": None}
MAKERS = ("Canon", "Nikon", "Sony", "Fujifilm", "ARRI", "Hasselblad", "Sigma", "invented")
INVENTED_SEED = 7  # not the prior's seed: these invented sensors are new to it
DEPARTURE_SIGMA = 0.3  # ln units: how far a rendered camera's sensitivity departs from its rating
# What is photographed: renderer scene, the scene kind the user picks, emissivity range drawn from.
SCENE_KINDS = {"kiln": ("spy_hole", (0.9, 1.0)), "steel": ("bar", (0.7, 0.95))}


@lru_cache(maxsize=None)
def maker_sensors(maker: str, most: int = 3) -> tuple:
    """Up to ``most`` sensors of one maker, spread over its list (measured), or fresh invented ones."""
    if maker == "invented":
        return tuple(parametric_family(most, INVENTED_SEED))
    sensors = [camera for camera in measured_sensors().values() if camera.maker == maker]
    sensors += [measured_camera(name) for name in ("Nikon 5100 (NPL)", "Sigma SDMerill (NPL)")
                if name.startswith(maker)]
    if not sensors:
        raise ValueError(f"No sensors of the maker {maker!r}.")
    picks = np.unique(np.linspace(0, len(sensors) - 1, min(most, len(sensors))).round().astype(int))
    return tuple(sensors[i] for i in picks)


def prior_without(maker: str, tone_curve: str):
    """The camera prior without the maker's sensors and the prior's counterpart of the tone curve."""
    return camera_population().without(maker=maker, tone_curve=RENDER_CURVES[tone_curve])


def held_out_camera(sensor, tone_curve: str, seed: int) -> dict:
    """One validation camera: a sensor with its maker's fixed choices (the render settings that
    stay the same from photo to photo)."""
    rng = np.random.default_rng(seed)
    return {
        "camera": sensor,
        "white_balance_error": tuple(float(v) for v in 1 + rng.uniform(-0.03, 0.03, size=3) * np.array([1, 0, 1])),
        "colour_matrix": colour_matrix(sensor, "white-preserving", HELD_OUT_CHART, HELD_OUT_ILLUMINANT),
        "tone_curve": tone_curve,
        "saturation": float(rng.uniform(1.0, 1.2)),
        "sensitivity_departure": float(np.exp(rng.normal(0.0, DEPARTURE_SIGMA))),
    }


def held_out_photo(camera: dict, temperature_c: float, scene_kind: str, seed: int, size=(320, 240),
                   white_balance="daylight", emissivity: float | None = None):
    """Render, encode and decode one validation photo; returns (photo, emissivity used)."""
    scene, (low, high) = SCENE_KINDS[scene_kind]
    if emissivity is None:
        emissivity = float(np.random.default_rng(seed).uniform(low, high))
    rendered = render_photo(temperature_c + 273.15, scene=scene, size=size, white_balance=white_balance,
                            emissivity=emissivity, seed=seed, tripod=True, **camera)
    return load_photo(encode_jpeg(rendered, quality=90)), emissivity
