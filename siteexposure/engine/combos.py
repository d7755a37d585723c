"""Limit combinations of a site: every (limit set, population, region, field) and its weights.

A weight row holds ``1 / S_limit(f_i)`` for each source ``i``, so that the exposure
ratio of the combination is ``sum_i S_i / S_limit(f_i)`` (the multi-frequency sum of
47 CFR 1.1310 and the ICNIRP and IEEE guidelines for simultaneous exposure).

Each (set, population, region) has two rows, one per field: the ``e`` row sums the
electric-field densities ``S_E = |E|^2/eta0`` against the E limit, the ``h`` row the
magnetic ``S_H = eta0 |H|^2`` against the H limit
(:meth:`siteexposure.physics.limits.LimitSet.field_density_limits_w_m2`); the governing
ratio of a set and population is the largest of its rows, so E and H are each judged against
their own limit. Where a source's two densities are equal (far-field models) and the two
limits are the plane-wave equivalents of each other, both rows give the same number.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from siteexposure.containers import Antenna

POPULATIONS = ("general", "occupational")


FIELDS = ("e", "h")


@dataclass(frozen=True)
class Combo:
    set_id: str
    population: str
    region: str  #: whole-body (spatially averaged) | local (peak)
    field: str = "e"  #: e (electric-field density S_E) | h (magnetic, S_H)


@dataclass(frozen=True)
class ComboTable:
    """All combinations of a site with their weight rows and limits."""

    combos: tuple[Combo, ...]
    weights: np.ndarray  #: (n_combo, n_source) [m^2/W]
    limits_w_m2: np.ndarray  #: (n_combo, n_source) [W/m^2]

    def row_sums(self, s_e: np.ndarray, s_h: np.ndarray, rows=None) -> np.ndarray:
        """Exposure ratios of the given rows (all when None) from the E- and H-field densities
        ``(n_source, n_point)`` of the sources, each row from its own field. [1]"""
        from siteexposure.physics.exposure import weighted_sums

        rows = np.arange(len(self.combos)) if rows is None else np.asarray(rows, dtype=int)
        h = self.h_rows[rows]
        out = np.empty((len(rows), s_e.shape[1]))
        if (~h).any():
            out[~h] = weighted_sums(s_e, self.weights[rows[~h]])
        if h.any():
            out[h] = weighted_sums(s_h, self.weights[rows[h]])
        return out

    def index(self, set_id: str, population: str, region: str, field: str = "e") -> int:
        return self.combos.index(Combo(set_id, population, region, field))

    @property
    def h_rows(self) -> np.ndarray:
        """True for the rows that take the magnetic-field densities ``S_H``."""
        return np.array([c.field == "h" for c in self.combos], dtype=bool)

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
                lim_e, lim_h = lset.field_density_limits_w_m2(freqs, pop, region)
                for field, lim in zip(FIELDS, (lim_e, lim_h), strict=True):
                    combos.append(Combo(set_id, pop, region, field))
                    limits.append(np.asarray(lim, dtype=float))
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
