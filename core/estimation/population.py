"""The camera prior: what a population of real and virtual cameras records from glow.

The table ``data/camera_population.npz`` is written by :mod:`glowtemp.render.population_build` (from
the 38 measured cameras of the Academy Software Foundation's rawtoaces data, Apache-2.0, see
``data/NOTICE.md``; colour-science's NPL cameras; and a parametric family). For each member,
output space, temperature (10 K steps) and recorded red level it holds the green/red and
blue/red the estimator will observe and the brightness response. Loading it needs numpy only,
and a space's tables are read from the file only when a photo in that space asks for them.

The estimator marginalises over the members: its likelihood is the members' mixture
(:func:`glowtemp.estimation.estimate.estimate_temperature`), so the band is wide where cameras disagree
and narrow where they agree. Every sensor weighs the same, shared by its draws.

References
----------
- G. J. McLachlan and D. Peel, Finite Mixture Models, Wiley (2000), ch. 1 (mixture likelihood).
- D. S. Sivia and J. Skilling, Data Analysis: A Bayesian Tutorial, 2nd ed. (2006), ch. 3
  (marginalising a nuisance parameter, here the camera).
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

import numpy as np

TABLE_PATH = Path(__file__).parent.parent / "data" / "camera_population.npz"


class TablesOnDemand(Mapping):
    """Space name -> one kind of table of the shipped file, each read (and decompressed) the
    first time it is asked for: a photo needs one space, and reading all of them would cost a
    cold start more than the estimate itself."""

    def __init__(self, path: Path, members: dict):
        self._path, self._members, self._read = path, members, {}

    def __getitem__(self, space_name: str) -> np.ndarray:
        if space_name not in self._read:
            with np.load(self._path) as table:
                self._read[space_name] = table[self._members[space_name]]
        return self._read[space_name]

    def __contains__(self, space_name) -> bool:
        return space_name in self._members  # without reading the table

    @property
    def loaded(self) -> tuple:
        """The spaces whose table has been read so far."""
        return tuple(self._read)

    def __iter__(self):
        return iter(self._members)

    def __len__(self) -> int:
        return len(self._members)


@dataclass(frozen=True)
class Population:
    """Members of the camera prior: labels and, per space, their tables on the 10 K grid."""

    temperature_k: np.ndarray  # (t,)
    red_levels: np.ndarray  # (levels,) recorded red, share of full code
    maker: np.ndarray  # (members,)
    sensor: np.ndarray
    tone_curve: np.ndarray
    ratios: Mapping  # space name -> (members, levels, t, 2)
    log_response: Mapping  # space name -> (members, levels, t)
    auto_ratios: Mapping  # space name -> (members, levels, t, 2) with automatic white balance
    keep: np.ndarray  # (members,) bool: the members in use

    @property
    def weights(self) -> np.ndarray:
        """One weight per sensor, shared by its draws; members left out weigh nothing."""
        weights = np.zeros(self.maker.size)
        sensors, index, counts = np.unique(self.sensor[self.keep], return_inverse=True, return_counts=True)
        weights[self.keep] = 1.0 / counts[index]
        return weights / weights.sum()

    def without(self, maker: str | None = None, tone_curve: str | None = None) -> "Population":
        """The prior built without one maker's sensors and/or one tone curve (for validation)."""
        keep = self.keep.copy()
        if maker is not None:
            keep &= self.maker != maker
        if tone_curve is not None:
            keep &= self.tone_curve != tone_curve
        if not keep.any():
            raise ValueError("Leaving those out would leave no camera in the prior.")
        return Population(self.temperature_k, self.red_levels, self.maker, self.sensor,
                          self.tone_curve, self.ratios, self.log_response, self.auto_ratios, keep)

    def knows(self, space_name: str, auto_white_balance: bool = False) -> bool:
        return space_name in (self.auto_ratios if auto_white_balance else self.ratios)

    def tables(self, space_name: str, auto_white_balance: bool = False):
        """The space's (ratios, log_response) tables at every level, all members (with
        ``auto_white_balance`` the ratios of the cameras' automatic balance)."""
        return (self.auto_ratios if auto_white_balance else self.ratios)[space_name], self.log_response[space_name]

    def at_level(self, space_name: str, red_level: float, auto_white_balance: bool = False):
        """Members' (ratios (m, t, 2), log_response (m, t)) at a recorded red level, linearly
        interpolated between the table's levels (held at the ends); members in use only. With
        ``auto_white_balance`` the ratios are those of the camera's automatic balance."""
        ratios, response = self.tables(space_name, auto_white_balance)
        if ratios.shape[1] == 1:
            return ratios[self.keep, 0].astype(float), response[self.keep, 0].astype(float)
        level = float(np.clip(red_level, self.red_levels[0], self.red_levels[-1]))
        upper = int(np.clip(np.searchsorted(self.red_levels, level), 1, self.red_levels.size - 1))
        share = (level - self.red_levels[upper - 1]) / (self.red_levels[upper] - self.red_levels[upper - 1])
        pick = lambda table: ((1 - share) * table[self.keep, upper - 1].astype(float)  # noqa: E731
                              + share * table[self.keep, upper].astype(float))
        return pick(ratios), pick(response)


@lru_cache(maxsize=1)
def camera_population() -> Population:
    """The shipped camera prior (loaded once per process; each space's tables when first used)."""
    with np.load(TABLE_PATH) as table:
        spaces = [str(table[key]) for key in sorted(table.files) if key.startswith("space_")]
        indices = [key.split("_")[1] for key in sorted(table.files) if key.startswith("space_")]
        on_demand = lambda kind: TablesOnDemand(TABLE_PATH, {  # noqa: E731
            name: f"{kind}_{i}" for name, i in zip(spaces, indices) if f"{kind}_{i}" in table.files})
        maker = table["maker"].astype(str)
        return Population(
            temperature_k=table["temperature_k"].astype(float),
            red_levels=table["red_levels"].astype(float),
            maker=maker,
            sensor=table["sensor"].astype(str),
            tone_curve=table["tone_curve"].astype(str),
            ratios=on_demand("ratios"),
            log_response=on_demand("log_response"),
            auto_ratios=on_demand("auto_ratios"),
            keep=np.ones(maker.size, dtype=bool),
        )
