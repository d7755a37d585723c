"""KML 2.2 of a site's keep-out zones, areas, antennas and receptors (xml.etree only).

OGC KML 2.2 (OGC 07-147r2): ``<coordinates>`` are ``lon,lat[,alt]`` tuples separated by
white space, WGS84 decimal degrees; polygons have one ``outerBoundaryIs`` and any number
of ``innerBoundaryIs`` linear rings, closed, outer ring counter-clockwise. Floors and
antennas carry their height as the altitude with ``altitudeMode`` ``relativeToGround``
(our heights are above the site's ground). Every placemark has its properties as
``ExtendedData``. Styles are one neutral outline style per feature type; zones are told
apart by their names and data, not by colour.
"""

from __future__ import annotations

import math
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np

from siteexposure.engine.result import SiteResult

__all__ = ["KML_NS", "kml_document", "write_kml"]

KML_NS = "http://www.opengis.net/kml/2.2"
DECIMALS = 7


def xml_text(text: str) -> str:
    """``text`` with the characters XML 1.0 cannot hold (controls other than tab, newline and
    carriage return; U+FFFE, U+FFFF; lone surrogates) written as ``\\uXXXX``."""
    def ok(c: str) -> bool:
        o = ord(c)
        return (o in (0x9, 0xA, 0xD) or 0x20 <= o <= 0xD7FF or 0xE000 <= o <= 0xFFFD
                or 0x10000 <= o <= 0x10FFFF)
    return "".join(c if ok(c) else f"\\u{ord(c):04x}" for c in str(text))


def _sub(parent, tag: str, text: str | None = None, **attrib):
    el = ET.SubElement(parent, tag, {k: xml_text(v) for k, v in attrib.items()})
    if text is not None:
        el.text = xml_text(text)
    return el


def _fmt(v) -> str:
    if isinstance(v, float):
        return "" if not math.isfinite(v) else f"{v:.6g}"
    return str(v)


def _data(placemark, props: dict) -> None:
    ext = _sub(placemark, "ExtendedData")
    for k, v in props.items():
        d = _sub(ext, "Data", name=str(k))
        _sub(d, "value", _fmt(v))


def _coords(frame, en, alt: float, ccw: bool | None = None) -> str:
    en = np.asarray(en, dtype=float)[:, :2]
    lon, lat = frame.to_lonlat(en[:, 0], en[:, 1])
    ll = np.round(np.column_stack([np.atleast_1d(lon), np.atleast_1d(lat)]), DECIMALS)
    if ccw is not None and len(ll) >= 3:
        x, y = ll[:, 0], ll[:, 1]
        area = float(np.sum(x[:-1] * y[1:] - x[1:] * y[:-1]) + x[-1] * y[0] - x[0] * y[-1])
        if (area > 0) != ccw:
            ll = ll[::-1]
    if ccw is not None and len(ll) and np.any(ll[0] != ll[-1]):
        ll = np.vstack([ll, ll[:1]])
    return " ".join(f"{a:.{DECIMALS}f},{b:.{DECIMALS}f},{alt:.3f}" for a, b in ll)


def _polygon(parent, frame, poly, alt: float) -> None:
    from shapely.geometry.polygon import orient

    poly = orient(poly, 1.0)
    pg = _sub(parent, "Polygon")
    _sub(pg, "altitudeMode", "relativeToGround")
    outer = _sub(_sub(pg, "outerBoundaryIs"), "LinearRing")
    _sub(outer, "coordinates", _coords(frame, poly.exterior.coords, alt, ccw=True))
    for hole in poly.interiors:
        inner = _sub(_sub(pg, "innerBoundaryIs"), "LinearRing")
        _sub(inner, "coordinates", _coords(frame, hole.coords, alt, ccw=False))


def _geometry(parent, frame, geom, alt: float) -> None:
    import shapely

    polys = [p for p in shapely.get_parts(geom) if p.geom_type == "Polygon" and not p.is_empty]
    if len(polys) == 1:
        _polygon(parent, frame, polys[0], alt)
    else:
        multi = _sub(parent, "MultiGeometry")
        for p in polys:
            _polygon(multi, frame, p, alt)


def _point(parent, frame, at, alt: float) -> None:
    pt = _sub(parent, "Point")
    _sub(pt, "altitudeMode", "relativeToGround")
    _sub(pt, "coordinates", _coords(frame, np.asarray(at, float)[None, :2], alt))


def _styles(doc) -> None:
    # neutral, our own: dark outlines, faint fill; widths tell feature types apart
    for sid, width, fill in (("zone", "2", "1f3c3c3c"), ("area", "1", "00ffffff"),
                             ("point", "1", "00ffffff")):
        st = _sub(doc, "Style", id=sid)
        ls = _sub(st, "LineStyle")
        _sub(ls, "color", "ff202020")
        _sub(ls, "width", width)
        ps = _sub(st, "PolyStyle")
        _sub(ps, "color", fill)


def kml_document(result: SiteResult, zones: list) -> ET.Element:
    """The KML element tree: folders Zones, Areas, Antennas, Receptors."""
    from shapely.geometry import Polygon

    from siteexposure.geo import LocalFrame
    from siteexposure.writers.cautions import STATUS_LINE

    site = result.site
    frame = LocalFrame(site.origin_lat, site.origin_lon)
    root = ET.Element("kml", xmlns=KML_NS)
    doc = _sub(root, "Document")
    _sub(doc, "name", site.name)
    _sub(doc, "description", STATUS_LINE)
    _styles(doc)

    folder = _sub(doc, "Folder")
    _sub(folder, "name", "Keep-out zones")
    for z in zones:
        if z.geometry.is_empty:
            continue
        pm = _sub(folder, "Placemark")
        _sub(pm, "name", f"{z.area}: {z.label} ({z.set_id})")
        _sub(pm, "styleUrl", "#zone")
        _data(pm, {"feature": "zone", "limits": z.set_id, "population": z.population,
                   "level": z.level, "kind": z.kind, "category": z.category_name,
                   "sign_word": z.sign_word, "area": z.area, "access": z.access,
                   "floor_m": z.floor_m, "area_m2": round(float(z.area_m2), 3)})
        _geometry(pm, frame, z.geometry, z.floor_m)

    folder = _sub(doc, "Folder")
    _sub(folder, "name", "Areas")
    for area in site.areas:
        pm = _sub(folder, "Placemark")
        _sub(pm, "name", f"{area.name} ({area.access})")
        _sub(pm, "styleUrl", "#area")
        _data(pm, {"feature": "area", "name": area.name, "access": area.access, "floor_m": float(area.floor_m)})
        _geometry(pm, frame, Polygon(np.asarray(area.outline_en, float)), float(area.floor_m))

    folder = _sub(doc, "Folder")
    _sub(folder, "name", "Antennas")
    for rec in result.antennas:
        a = rec.antenna
        pm = _sub(folder, "Placemark")
        _sub(pm, "name", a.id)
        _sub(pm, "styleUrl", "#point")
        _data(pm, {"feature": "antenna", "id": a.id, "operator": a.operator,
                   "frequency_mhz": float(a.frequency_mhz), "azimuth_deg": float(a.azimuth_deg),
                   "eirp_w": float(a.eirp_w), "height_m": float(a.position_m[2]),
                   "model": rec.model.model_id})
        _point(pm, frame, a.position_m, float(a.position_m[2]))

    folder = _sub(doc, "Folder")
    _sub(folder, "name", "Receptors")
    for p in result.points:
        pm = _sub(folder, "Placemark")
        _sub(pm, "name", p.name)
        _sub(pm, "styleUrl", "#point")
        props = {"feature": "receptor", "name": p.name, "access": p.access,
                 "height_m": float(p.at_m[2]), "assessable": p.assessable}
        for e in p.exposure:
            props[f"ratio_{e.set_id}_{e.population}"] = (
                float("nan") if e.exposure_ratio is None else float(e.exposure_ratio))
        _data(pm, props)
        _point(pm, frame, p.at_m, float(p.at_m[2]))
    return root


def write_kml(result: SiteResult, zones: list, path: Path | str) -> Path:
    """Write :func:`kml_document` to ``path`` atomically (UTF-8 XML) and return it."""
    from siteexposure.atomic import write_bytes
    from siteexposure.output_guard import protected_inputs, refuse_input_overwrite

    refuse_input_overwrite([path], protected_inputs(result.site))
    root = kml_document(result, zones)
    ET.indent(root)
    data = ET.tostring(root, encoding="utf-8", xml_declaration=True)
    return write_bytes(path, data + b"\n")
