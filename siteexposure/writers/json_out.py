"""The documented JSON form of results (``screen --json``, ``point --json``).

Keys carry their unit (``_m``, ``_w_m2``, ``_mhz``, ``_db``, ``_deg``). Values that the
models cannot assess are ``null`` with a reason beside them, never a number. The object
holds no run date, so the same input always gives the same JSON.

Top-level keys of ``screen --json``:

``tool``, ``site``, ``status``, ``cautions``, ``exceeded_where_reachable``,
``areas`` (each: ``name``, ``access``, ``population``, ``floor_m``,
``max_exposure_ratio`` — the largest over the site's limit sets, ``verdict``, and
``by_limits``: per set the ratio, % of limit, worst point, ``points`` judged (inside
cell centres and outline samples) and ``points_not_assessable``, ``note`` (how an area
narrower than the grid, or without surface, was judged; else null), shares, responsible
operators and mitigation), ``antennas`` (each: ``id``, ``operator``, ``frequency_mhz``,
powers, ``model``, ``keep_out_m`` — per population the distances ``front``, ``behind``,
``left``, ``right``, ``above``, ``below`` (largest over the limit sets) — and
``keep_out_by_limits``), ``points`` (each: ``name``, ``at_m``, ``access``,
``assessable``, ``reason``, ``antennas`` [``id``, ``power_density_w_m2``] and
``exposure`` [``limits``, ``population``, ``exposure_ratio``, ``percent_of_limit``]),
``limit_sources``.
"""

from __future__ import annotations

import json
import math

from siteexposure import __version__
from siteexposure.engine.result import AreaResult, PointResult, SiteResult
from siteexposure.writers.cautions import CAUTIONS, STATUS_LINE


def _num(x, digits: int = 6):
    """A finite float rounded to ``digits`` significant figures, else None."""
    if x is None:
        return None
    x = float(x)
    if not math.isfinite(x):
        return None
    if x == 0:
        return 0.0
    return float(f"{x:.{digits}g}")


def point_dict(p: PointResult) -> dict:
    return {
        "name": p.name,
        "at_m": [_num(v) for v in p.at_m],
        "access": p.access,
        "assessable": p.assessable,
        "reason": p.reason or None,
        "antennas": [{"id": k, "power_density_w_m2": _num(v), "e_v_m": _num(p.e_v_m.get(k)),
                      "h_a_m": _num(p.h_a_m.get(k))} for k, v in p.density_w_m2.items()],
        "exposure": [
            {
                "limits": e.set_id,
                "population": e.population,
                "exposure_ratio": _num(e.exposure_ratio),
                "percent_of_limit": _num(None if e.exposure_ratio is None else 100 * e.exposure_ratio),
                "governing_region": e.governing_region,
                "governing_field": e.governing_field,
            }
            for e in p.exposure
        ],
    }


def _area_dict(ar: AreaResult) -> dict:
    by = []
    for s in ar.summaries:
        mit = None
        if s.mitigation is not None:
            m = s.mitigation
            mit = {
                "uniform_reduction_db": _num(m.uniform_reduction_db, 4),
                "responsible_operators_reduction_db": _num(m.responsible_reduction_db, 4),
                "operator_alone_reduction_db": {k: _num(v, 4) for k, v in m.operator_alone_reduction_db.items()},
                "raised_antennas": list(m.raised_antennas),
                "extra_height_m": _num(m.extra_height_m, 4),
                "height_search_limit_m": m.height_search_limit_m,
            }
        by.append(
            {
                "limits": s.set_id,
                "population": s.population,
                "max_exposure_ratio": _num(s.max_exposure_ratio),
                "percent_of_limit": _num(100 * s.max_exposure_ratio),
                "at_m": None if s.at_m is None else [_num(v) for v in s.at_m],
                "verdict": s.verdict,
                "governing_region": s.governing_region,
                "points": s.n_points,
                "points_not_assessable": s.n_not_assessable,
                "note": s.note or None,
                "antenna_share": {k: _num(v) for k, v in s.antenna_share.items()},
                "operator_share": {k: _num(v) for k, v in s.operator_share.items()},
                "responsible_operators": list(s.responsible_operators),
                "mitigation": mit,
            }
        )
    ratios = [s.max_exposure_ratio for s in ar.summaries if math.isfinite(s.max_exposure_ratio)]
    verdicts = [s.verdict for s in ar.summaries]
    if not ar.evaluated:
        verdict = "not evaluated"
    elif "exceeds" in verdicts:
        verdict = "exceeds"
    elif "not assessable" in verdicts:
        verdict = "not assessable"
    else:
        verdict = "complies"
    return {
        "name": ar.area.name,
        "access": ar.area.access,
        "population": ar.area.population,
        "floor_m": _num(ar.area.floor_m),
        "max_exposure_ratio": _num(max(ratios)) if ratios else None,
        "verdict": verdict,
        "by_limits": by,
    }


def _shape_dicts(a) -> dict:
    """Per population, the box and cylinder holding every set's zone (largest faces)."""
    merged: dict[str, dict[str, dict[str, float]]] = {}
    for (_, pop), shapes in a.keep_out_shape.items():
        slot = merged.setdefault(pop, {})
        for kind, faces in shapes.items():
            dst = slot.setdefault(kind, {})
            for k, v in faces.items():
                dst[k] = max(dst.get(k, -math.inf), v)
    return {p: {kind: {k: _num(v, 4) for k, v in f.items()} for kind, f in d.items()}
            for p, d in merged.items()}


def _keep_out_dicts(a) -> tuple[dict, list]:
    merged: dict[str, dict[str, float]] = {}
    rows = []
    for (set_id, pop), dist in a.keep_out_m.items():
        slot = merged.setdefault(pop, {})
        for k, v in dist.items():
            slot[k] = max(slot.get(k, 0.0), v)
        rows.append(
            {
                "limits": set_id,
                "population": pop,
                "limit_w_m2": _num(a.limit_w_m2.get((set_id, pop))),
                "distance_m": {k: _num(v, 4) for k, v in dist.items()},
            }
        )
    return {p: {k: _num(v, 4) for k, v in d.items()} for p, d in merged.items()}, rows


def site_dict(res: SiteResult) -> dict:
    """The whole result as a JSON-ready dict (see the module docstring for the keys)."""
    site = res.site
    antennas = []
    for a in res.antennas:
        ant = a.antenna
        keep, rows = _keep_out_dicts(a)
        antennas.append(
            {
                "id": ant.id,
                "operator": ant.operator,
                "frequency_mhz": _num(ant.frequency_mhz),
                "position_m": [_num(v) for v in ant.position_m],
                "azimuth_deg": _num(ant.azimuth_deg),
                "mechanical_tilt_deg": _num(ant.mechanical_tilt_deg),
                "electrical_tilt_deg": _num(ant.electrical_tilt_deg),
                "net_power_w": _num(ant.net_power_w),
                "peak_gain_dbi": _num(ant.peak_gain_dbi, 4),
                "eirp_w": _num(ant.eirp_w),
                "erp_w": _num(ant.erp_w),
                "model": {"word": a.model.word, "id": a.model.model_id, "reason": a.model.reason},
                "standoff_m": _num(a.standoff_m, 4),
                "keep_out_m": keep,
                "keep_out_shape_m": _shape_dicts(a),
                "keep_out_by_limits": rows,
            }
        )
    return {
        "tool": {"name": "siteexposure", "version": __version__},
        "site": {
            "name": site.name,
            "origin": {"lat": site.origin_lat, "lon": site.origin_lon},
            "limits": list(site.limits),
            "averaging": res.settings.get("averaging"),
            "resolution_m": site.resolution_m,
        },
        "status": STATUS_LINE,
        "cautions": list(CAUTIONS),
        "exceeded_where_reachable": res.exceeded_where_reachable,
        "areas": [_area_dict(ar) for ar in res.areas],
        "antennas": antennas,
        "points": [point_dict(p) for p in res.points],
        "limit_sources": res.limit_sources,
    }


def dumps(obj: dict, ascii_only: bool | None = None) -> str:
    """Serialise with stable key order and 2-space indentation; non-ASCII characters as
    ``\\u`` escapes when ``ascii_only`` (by default: when standard output is not UTF-8, so
    that a name stays valid JSON on any terminal or pipe)."""
    if ascii_only is None:
        import sys

        enc = (getattr(sys.stdout, "encoding", None) or "utf-8").lower().replace("-", "")
        ascii_only = enc not in ("utf8", "utf8sig")
    return json.dumps(obj, indent=2, ensure_ascii=ascii_only, allow_nan=False) + "\n"
