"""What every section builder of the PDF report reads: the result, its JSON form, zones.

The JSON form (:func:`siteexposure.writers.json_out.site_dict`) is computed once and the
report prints its numbers, so that the PDF and ``screen --json`` always agree.
Zones come from :func:`siteexposure.engine.zones.compute_zones`; this module reads
their fields in one place (:func:`zone_rows`).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path

from siteexposure.engine.result import SiteResult

ACCESS_WORDS = {
    "public": "open to the public",
    "worker": "restricted to trained workers",
    "none": "not accessible",
}
POPULATION_WORDS = {"general": "general-public", "occupational": "occupational"}


@dataclass
class ReportContext:
    """Inputs of the section builders and the frame they lay out in."""

    result: SiteResult
    data: dict  #: site_dict(result)
    zones: Sequence
    map_files: Sequence[Path]
    width: float  #: frame width [pt]
    height: float  #: frame height [pt]
    #: barrier_length_m(): {set_id: {"total_m": m, "by_area_m": {area name: m}}}
    barriers: dict = field(default_factory=dict)

    @property
    def site(self):
        return self.result.site

    def set_title(self, set_id: str) -> str:
        src = self.data["limit_sources"].get(set_id, {})
        return src.get("title") or set_id

    def evaluated_areas(self) -> list[dict]:
        return [a for a in self.data["areas"] if a["access"] != "none"]

    def failing(self) -> list[tuple[dict, dict]]:
        """(area, by-limits entry) pairs whose verdict is ``exceeds``."""
        return [(a, b) for a in self.data["areas"] for b in a["by_limits"] if b["verdict"] == "exceeds"]


#: a zone whose area outside the not-assessable part is below this counts as made of it only
ONLY_UNKNOWN_M2 = 1e-6


def zone_rows(zones: Sequence) -> list[dict]:
    """The fields of each zone (:class:`siteexposure.engine.zones.Zone`) the report prints.

    Keys: ``area``, ``set_id``, ``population``, ``level``, ``kind``, ``label``,
    ``area_m2``, ``category`` (0 not assessable, 1-4), ``category_name``, ``sign_word``,
    and ``only_unknown``: True for an exceedance zone that lies entirely inside the
    not-assessable part of its area (zones include that part, so such a zone exists only
    because the models cannot give a number there, and its category is not a computed one).
    """
    unknown = {(z.area, z.set_id): z.geometry for z in zones if z.kind == "not-assessable"}
    rows = []
    for z in zones:
        na = unknown.get((z.area, z.set_id))
        only = (z.kind != "not-assessable" and na is not None
                and float(z.geometry.difference(na).area) < ONLY_UNKNOWN_M2)
        rows.append({
            "area": z.area,
            "set_id": z.set_id,
            "population": z.population,
            "level": float(z.level),
            "kind": z.kind,
            "label": z.label,
            "area_m2": float(z.area_m2),
            "category": int(z.category),
            "category_name": z.category_name,
            "sign_word": z.sign_word,
            "only_unknown": bool(only),
        })
    return rows
