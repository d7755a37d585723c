"""GeoJSON (RFC 7946) of a site's keep-out zones, areas, antennas and receptors.

Rules followed (RFC 7946, August 2016):

* §4: coordinates are WGS84 longitude, latitude in decimal degrees, in that order
  (converted from the local frame by :class:`siteexposure.geo.LocalFrame`); no ``crs``
  member (removed by RFC 7946).
* §3.1.1 / §4: a third position element would be height above the WGS84 ellipsoid. Our
  heights are above the site's ground, so they are NOT put in the coordinates; they go
  into the properties (``floor_m``, ``height_m``).
* §3.1.6: every linear ring is closed (first position = last) and has at least four
  positions; exterior rings counter-clockwise, holes clockwise (the right-hand rule),
  checked again after rounding.
* §11.2: positions are rounded to 7 decimal places (about 1 cm), which is more than the
  screening grid can resolve.
* §3.3: one FeatureCollection; §6.1: the foreign member ``siteexposure`` carries the
  site name, the tool version and the cautions.

Geometries crossing the antimeridian are not split (RFC 7946 §3.1.9); a site within a
few hundred metres of +/-180 deg longitude would need it.
"""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any

import numpy as np

from siteexposure.engine.result import SiteResult

__all__ = ["DECIMALS", "feature_collection", "write_geojson"]

DECIMALS = 7  #: decimal places of degrees (1e-7 deg is about 1.1 cm of latitude)


def _num(v: float | None) -> float | None:
    """A JSON-safe float: NaN and infinities become null."""
    if v is None:
        return None
    v = float(v)
    return v if math.isfinite(v) else None


def _signed_area(ring: np.ndarray) -> float:
    x, y = ring[:, 0], ring[:, 1]
    return 0.5 * float(np.sum(x[:-1] * y[1:] - x[1:] * y[:-1]))


def _ring(frame, coords_en, ccw: bool) -> list[list[float]] | None:
    """Local ring -> rounded, closed lon/lat ring with the asked winding (None if degenerate)."""
    en = np.asarray(coords_en, dtype=float)[:, :2]
    lon, lat = frame.to_lonlat(en[:, 0], en[:, 1])
    ll = np.round(np.column_stack([np.atleast_1d(lon), np.atleast_1d(lat)]), DECIMALS)
    keep = np.ones(len(ll), dtype=bool)
    keep[1:] = np.any(ll[1:] != ll[:-1], axis=1)  # drop repeats that rounding created
    ll = ll[keep]
    if len(ll) and np.any(ll[0] != ll[-1]):
        ll = np.vstack([ll, ll[:1]])
    if len(ll) < 4:
        return None
    area = _signed_area(ll)
    if area == 0.0:
        return None
    if (area > 0) != ccw:
        ll = ll[::-1]
    return [[float(a), float(b)] for a, b in ll]


def _polygon_coords(frame, poly) -> list | None:
    from shapely.geometry.polygon import orient

    poly = orient(poly, 1.0)
    shell = _ring(frame, poly.exterior.coords, ccw=True)
    if shell is None:
        return None
    holes = [h for h in (_ring(frame, i.coords, ccw=False) for i in poly.interiors) if h]
    return [shell, *holes]


def geometry_dict(frame, geom) -> dict[str, Any] | None:
    """A shapely Polygon/MultiPolygon in local metres as an RFC 7946 geometry object."""
    import shapely

    if geom is None or geom.is_empty:
        return None
    polys = [p for p in shapely.get_parts(geom) if p.geom_type == "Polygon"]
    rings = [c for c in (_polygon_coords(frame, p) for p in polys) if c]
    if not rings:
        return None
    if len(rings) == 1:
        return {"type": "Polygon", "coordinates": rings[0]}
    return {"type": "MultiPolygon", "coordinates": rings}


def _point(frame, east: float, north: float) -> dict[str, Any]:
    lon, lat = frame.to_lonlat(float(east), float(north))
    return {"type": "Point", "coordinates": [round(float(lon), DECIMALS), round(float(lat), DECIMALS)]}


def _feature(geometry, properties: dict[str, Any], fid: str) -> dict[str, Any]:
    return {"type": "Feature", "id": fid, "geometry": geometry, "properties": properties}


def feature_collection(result: SiteResult, zones: list) -> dict[str, Any]:
    """The RFC 7946 FeatureCollection of a site result and its zones, as a dict.

    Features, each with a ``feature`` property saying what it is:

    * ``zone``: Polygon/MultiPolygon; ``limits``, ``population``, ``level``,
      ``kind``, ``label``, ``category``, ``sign_word``, ``area``, ``access``,
      ``floor_m``, ``area_m2``;
    * ``area``: Polygon; ``name``, ``access``, ``floor_m``;
    * ``antenna``: Point; ``id``, ``operator``, ``frequency_mhz``, ``azimuth_deg``,
      ``mechanical_tilt_deg``, ``eirp_w``, ``height_m``, ``model``, ``keep_out_m``;
    * ``receptor``: Point; ``name``, ``access``, ``height_m``, ``assessable``,
      ``exposure`` (per set and population; null where not assessable).
    """
    from shapely.geometry import Polygon

    from siteexposure import __version__
    from siteexposure.geo import LocalFrame
    from siteexposure.writers.cautions import CAUTIONS, STATUS_LINE

    site = result.site
    frame = LocalFrame(site.origin_lat, site.origin_lon)
    feats: list[dict[str, Any]] = []
    for n, z in enumerate(zones):
        g = geometry_dict(frame, z.geometry)
        if g is None:
            continue
        feats.append(_feature(g, {
            "feature": "zone", "limits": z.set_id, "population": z.population,
            "level": _num(z.level), "kind": z.kind, "label": z.label,
            "category": z.category_name, "sign_word": z.sign_word, "area": z.area,
            "access": z.access, "floor_m": z.floor_m, "area_m2": round(float(z.area_m2), 3),
        }, f"zone-{n + 1}"))
    for n, area in enumerate(site.areas):
        g = geometry_dict(frame, Polygon(np.asarray(area.outline_en, float)))
        if g is not None:
            feats.append(_feature(g, {"feature": "area", "name": area.name, "access": area.access,
                                      "floor_m": float(area.floor_m)}, f"area-{n + 1}"))
    for rec in result.antennas:
        a = rec.antenna
        keep = {f"{k[0]}/{k[1]}": {d: _num(v) for d, v in dist.items()} for k, dist in rec.keep_out_m.items()}
        feats.append(_feature(_point(frame, a.position_m[0], a.position_m[1]), {
            "feature": "antenna", "id": a.id, "operator": a.operator,
            "frequency_mhz": float(a.frequency_mhz), "azimuth_deg": float(a.azimuth_deg),
            "mechanical_tilt_deg": float(a.mechanical_tilt_deg), "eirp_w": _num(a.eirp_w),
            "height_m": float(a.position_m[2]), "model": rec.model.model_id, "keep_out_m": keep,
        }, f"antenna-{a.id}"))
    for n, p in enumerate(result.points):
        feats.append(_feature(_point(frame, p.at_m[0], p.at_m[1]), {
            "feature": "receptor", "name": p.name, "access": p.access,
            "height_m": float(p.at_m[2]), "assessable": bool(p.assessable),
            "exposure": [{"limits": e.set_id, "population": e.population,
                          "exposure_ratio": _num(e.exposure_ratio)} for e in p.exposure],
        }, f"receptor-{n + 1}"))
    return {
        "type": "FeatureCollection",
        "siteexposure": {
            "site": site.name, "tool_version": __version__, "status": STATUS_LINE,
            "cautions": list(CAUTIONS),
            "heights": "floor_m and height_m are above the site's ground, not the ellipsoid",
        },
        "features": feats,
    }


def write_geojson(result: SiteResult, zones: list, path: Path | str) -> Path:
    """Write :func:`feature_collection` to ``path`` atomically (UTF-8 JSON) and return it."""
    from siteexposure.atomic import write_text
    from siteexposure.output_guard import protected_inputs, refuse_input_overwrite

    refuse_input_overwrite([path], protected_inputs(result.site))
    fc = feature_collection(result, zones)

    def dump(obj) -> str:
        return json.dumps(obj, ensure_ascii=False, allow_nan=False, separators=(",", ":"))

    # one feature a line: compact, and a change to one feature is one changed line
    head = {k: v for k, v in fc.items() if k != "features"}
    text = dump(head)[:-1] + ',"features":[\n' + ",\n".join(dump(f) for f in fc["features"]) + "\n]}\n"
    return write_text(path, text)
