"""Containers of a site evaluation: what the orchestrator returns and every writer reads.

Exposure-ratio grids are keyed by ``(set_id, population)``; the value of a grid cell is
the governing ratio of that limit set (for a set with whole-body and local reference
levels, the larger of the spatially averaged whole-body ratio and the peak local ratio).
NaN marks cells outside the area and cells the models cannot assess.

An area is judged on its *points*: the centres of the grid cells inside its outline and
its outline samples (points on the outline and one point in each cell it covers only in
part, see :mod:`siteexposure.engine.grid`), which carry the same ratios, keyed alike.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from siteexposure.containers import Antenna, Area, Site

POPULATIONS = ("general", "occupational")
Key = tuple[str, str]  #: (limit-set id, population)


@dataclass(frozen=True)
class ModelRecord:
    """Which field model ran for an antenna, and why."""

    word: str  #: far-field | cylindrical | array | aperture
    model_id: str  #: e.g. oet65-cylindrical
    reason: str


@dataclass
class AntennaResult:
    """Per-antenna facts: power chain, model used, keep-out distances."""

    antenna: Antenna
    model: ModelRecord
    standoff_m: float  #: nothing is assessed closer than this to the body (lambda/2pi) [m]
    #: keep-out distances per (set, population), from the envelope:
    #: {"front": m, "behind": m, "left", "right", "above", "below", "along_beam"}
    keep_out_m: dict[Key, dict[str, float]] = field(default_factory=dict)
    #: simple shapes per (set, population): {"box": {...}, "cylinder": {...}} [m]
    keep_out_shape: dict[Key, dict[str, dict[str, float]]] = field(default_factory=dict)
    limit_w_m2: dict[Key, float] = field(default_factory=dict)


@dataclass
class Mitigation:
    """What would bring a failing area into compliance (for one set and population)."""

    uniform_reduction_db: float  #: every antenna reduced by this much
    responsible_reduction_db: float | None  #: only the >= 5 % operators reduce, all by the same dB
    operator_alone_reduction_db: dict[str, float | None]  #: each operator alone (None: cannot alone)
    raised_antennas: tuple[str, ...]  #: antennas raised for the height remedy
    extra_height_m: float | None  #: smallest extra mount height that complies (None: not found)
    height_search_limit_m: float


@dataclass
class AreaSummary:
    """The verdict of one area under one limit set, for the area's own population."""

    set_id: str
    population: str
    max_exposure_ratio: float  #: NaN if nothing assessable
    at_m: tuple[float, float, float] | None  #: east, north, floor height of the worst point
    verdict: str  #: complies | exceeds | not assessable
    governing_region: str  #: whole-body | local
    n_points: int
    n_not_assessable: int
    antenna_share: dict[str, float]  #: exposure ratio contributed by each antenna at the worst point
    operator_share: dict[str, float]
    responsible_operators: tuple[str, ...]  #: operators >= 5 % of the limit where it is exceeded
    mitigation: Mitigation | None = None
    #: one line on how the area was judged where the grid alone could not judge it
    #: (narrower than a cell; no surface), "" otherwise
    note: str = ""


@dataclass
class AreaResult:
    """Grids and verdicts of one area."""

    area: Area
    east_m: np.ndarray  #: (nx,) grid column coordinates [m]
    north_m: np.ndarray  #: (ny,) grid row coordinates [m]
    inside: np.ndarray  #: (ny, nx) bool, cell centre inside the outline
    assessable: np.ndarray  #: (ny, nx) bool, every averaging point assessable
    ratio: dict[Key, np.ndarray]  #: (ny, nx) governing exposure ratio, NaN outside / not assessable
    summaries: list[AreaSummary] = field(default_factory=list)
    #: (m, 2) outline samples (siteexposure.engine.grid) [m]
    samples_en: np.ndarray = field(default_factory=lambda: np.zeros((0, 2)))
    #: (m,) governing exposure ratio at each outline sample, NaN where not assessable
    sample_ratio: dict[Key, np.ndarray] = field(default_factory=dict)

    @property
    def evaluated(self) -> bool:
        return self.area.access != "none"

    def judged(self, key: Key) -> tuple[np.ndarray, np.ndarray]:
        """Every point the area is judged on: inside cell centres, then outline samples.

        Returns
        -------
        en : ndarray, shape (n, 2)
            East and north of each point. [m]
        ratio : ndarray, shape (n,)
            Governing exposure ratio of ``key`` there (NaN: not assessable). [1]
        """
        jj, ii = np.nonzero(self.inside)
        en = np.column_stack([self.east_m[ii], self.north_m[jj]]).reshape(-1, 2)
        grid = self.ratio.get(key)
        cells = grid[jj, ii] if grid is not None else np.full(len(jj), np.nan)
        samples = self.sample_ratio.get(key, np.full(len(self.samples_en), np.nan))
        return (np.vstack([en, np.asarray(self.samples_en, float).reshape(-1, 2)]),
                np.concatenate([cells, samples]))

    def cell_max(self, key: Key) -> np.ndarray:
        """The ratio grid of ``key`` with each outline sample folded into the cells that
        hold it (the larger value wins; a sample on a cell border is in both cells): what a
        map colours, so that no cell looks lower than a point judged in it. NaN samples and
        not-assessable cells stay as they are."""
        grid = np.array(self.ratio[key], dtype=float)
        vals = self.sample_ratio.get(key)
        if vals is None or not len(vals):
            return grid
        res_e = float(self.east_m[1] - self.east_m[0]) if len(self.east_m) > 1 else 1.0
        res_n = float(self.north_m[1] - self.north_m[0]) if len(self.north_m) > 1 else 1.0
        en = np.asarray(self.samples_en, float).reshape(-1, 2)
        u = (en[:, 0] - self.east_m[0]) / res_e + 0.5  # cell i spans [i, i + 1) in u
        v = (en[:, 1] - self.north_m[0]) / res_n + 0.5
        finite = np.isfinite(vals)
        for du in (-1e-9, 1e-9):
            for dv in (-1e-9, 1e-9):
                i = np.clip(np.floor(u + du), 0, len(self.east_m) - 1).astype(int)
                j = np.clip(np.floor(v + dv), 0, len(self.north_m) - 1).astype(int)
                ok = finite & np.isfinite(self.ratio[key][j, i])  # not assessable stays so
                np.fmax.at(grid, (j[ok], i[ok]), vals[ok])
        return grid


@dataclass(frozen=True)
class PointExposure:
    """Exposure ratio at one point for one set and population."""

    set_id: str
    population: str
    exposure_ratio: float | None  #: None where not assessable
    governing_region: str
    antenna_share: dict[str, float]
    governing_field: str = "e"  #: e (electric field against the E limit) | h (magnetic)


@dataclass
class PointResult:
    """A receptor (or an ad-hoc point) evaluated exactly at its position, no averaging."""

    name: str
    at_m: np.ndarray
    access: str
    density_w_m2: dict[str, float | None]  #: per antenna id, max(S_E, S_H); None: not assessable
    assessable: bool
    reason: str  #: why not assessable ("" if assessable)
    exposure: list[PointExposure]
    e_v_m: dict[str, float | None] = field(default_factory=dict)  #: RMS E per antenna [V/m]
    h_a_m: dict[str, float | None] = field(default_factory=dict)  #: RMS H per antenna [A/m]


@dataclass
class SiteResult:
    """Everything one evaluation of a site produced."""

    site: Site
    antennas: list[AntennaResult]
    areas: list[AreaResult]
    points: list[PointResult]
    limit_sources: dict[str, dict[str, str]]  #: set id -> title, publication, file, sha256
    settings: dict[str, object]
    exceeded_where_reachable: bool = False

    def area(self, name: str) -> AreaResult:
        for a in self.areas:
            if a.area.name == name:
                return a
        raise KeyError(name)
