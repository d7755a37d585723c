"""Limit combinations of a site: every (limit set, population, region) and its weights.

A weight row holds ``1 / S_limit(f_i)`` for each source ``i``, so that the exposure
ratio of the combination is ``sum_i S_i / S_limit(f_i)`` (the multi-frequency sum of
47 CFR 1.1310 and the ICNIRP and IEEE guidelines for simultaneous exposure).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from siteexposure.containers import Antenna

POPULATIONS = ("general", "occupational")


@dataclass(frozen=True)
class Combo:
    set_id: str
    population: str
    region: str  #: whole-body (spatially averaged) | local (peak)


@dataclass(frozen=True)
class ComboTable:
    """All combinations of a site with their weight rows and limits."""

    combos: tuple[Combo, ...]
    weights: np.ndarray  #: (n_combo, n_source) [m^2/W]
    limits_w_m2: np.ndarray  #: (n_combo, n_source) [W/m^2]

    def index(self, set_id: str, population: str, region: str) -> int:
        return self.combos.index(Combo(set_id, population, region))

    def rows_for(self, set_id: str, population: str) -> list[int]:
        return [i for i, c in enumerate(self.combos) if c.set_id == set_id and c.population == population]

    def reducers(self, averaging_method: str) -> list[str]:
        """Whole-body rows follow the site's averaging; local rows always take the peak."""
        whole = "max" if averaging_method == "peak" else "mean"
        return [whole if c.region == "whole-body" else "max" for c in self.combos]


def build_combos(limit_sets: dict, antennas: Sequence[Antenna]) -> ComboTable:
    """Weight rows for every set in ``limit_sets`` (id -> LimitSet), both populations."""
    combos: list[Combo] = []
    limits: list[np.ndarray] = []
    freqs = np.array([a.frequency_mhz for a in antennas], dtype=float)
    for set_id, lset in limit_sets.items():
        for pop in POPULATIONS:
            for region in lset.regions():
                lim = np.asarray(lset.power_density_limit_w_m2(freqs, pop, region), dtype=float)
                combos.append(Combo(set_id, pop, region))
                limits.append(lim)
    lim_arr = np.array(limits).reshape(len(combos), len(antennas))
    with np.errstate(divide="ignore"):
        w = np.where(np.isfinite(lim_arr) & (lim_arr > 0), 1.0 / lim_arr, np.nan)
    return ComboTable(tuple(combos), w, lim_arr)


def governing(values: np.ndarray, rows: list[int]) -> tuple[np.ndarray, np.ndarray]:
    """Largest ratio over the region rows of one (set, population), and which row won.

    NaN in any row makes the result NaN (never a pass).
    """
    sub = values[rows]
    bad = np.isnan(sub).any(axis=0)
    filled = np.where(np.isnan(sub), -np.inf, sub)
    which = filled.argmax(axis=0)
    best = np.take_along_axis(filled, which[None], axis=0)[0]
    best = np.where(bad, np.nan, best)
    return best, np.asarray(rows)[which]
