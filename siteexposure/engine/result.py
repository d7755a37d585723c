"""Containers of a site evaluation: what the orchestrator returns and every writer reads.

Exposure-ratio grids are keyed by ``(set_id, population)``; the value of a grid cell is
the governing ratio of that limit set (for a set with whole-body and local reference
levels, the larger of the spatially averaged whole-body ratio and the peak local ratio).
NaN marks cells outside the area and cells the models cannot assess.
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

    @property
    def evaluated(self) -> bool:
        return self.area.access != "none"


@dataclass(frozen=True)
class PointExposure:
    """Exposure ratio at one point for one set and population."""

    set_id: str
    population: str
    exposure_ratio: float | None  #: None where not assessable
    governing_region: str
    antenna_share: dict[str, float]


@dataclass
class PointResult:
    """A receptor (or an ad-hoc point) evaluated exactly at its position, no averaging."""

    name: str
    at_m: np.ndarray
    access: str
    density_w_m2: dict[str, float | None]  #: per antenna id; None where not assessable
    assessable: bool
    reason: str  #: why not assessable ("" if assessable)
    exposure: list[PointExposure]


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
