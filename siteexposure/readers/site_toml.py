"""Read a site file (TOML, SPEC 3.1) into a validated :class:`~siteexposure.containers.Site`.

The file is checked in three passes, and the first problem found stops the read with
one :class:`~siteexposure.errors.InputError` naming the file, the key path, the value
and what was expected, e.g.::

    office_roof.toml: antenna "B2" > activity = 1.5: expected a number <= 1 (and 2 more problems)

1. Text and syntax: unreadable, binary or non-UTF-8 files, TOML syntax errors (with line
   and column), and ``nan``/``inf`` literals anywhere (TOML allows them; we do not).
2. Shape and types, by the pydantic models of :mod:`~siteexposure.readers.site_model`
   (strict: no silent conversion of ``"40"`` to 40): required keys, unknown or misspelt
   keys (with the allowed keys listed), ranges, fixed words.
3. Meaning: exactly one of a pair of alternative keys, unique antenna ids and area and
   point names, known limit-set ids, outlines that are simple polygons with an area,
   pattern files that exist, frequencies inside every chosen limit table, and no
   radiation centre inside a floor.

Keys beyond the fixed ones of SPEC 3.1 (all optional):

* ``site.address``, ``site.preparer``: text for the report;
* ``site.zone_levels``: extra exposure-ratio contour levels besides 1, e.g. [0.05, 0.5, 10];
* ``site.reflection_factor``: F of S = P G F / (4 pi r^2) for every antenna (default 1);
* ``antenna.reflection_factor``: the same for one antenna, overriding the site's;
* ``antenna.gain_dbi`` / ``antenna.gain_dbd``: for a pattern *file*, rescale the file's
  pattern to this peak gain (an inline pattern takes its gain inside its own table);
* ``point.access``: defaults to ``public``.

Positions are local east/north metres from the site origin (see :mod:`siteexposure.geo`),
heights above site ground; azimuths clockwise from true north.
"""

from __future__ import annotations

import difflib
import hashlib
import json
import math
import re
import tomllib
import typing
import warnings
from collections.abc import Mapping
from pathlib import Path
from typing import Any

import numpy as np
from pydantic import BaseModel, ValidationError

from siteexposure.containers import Antenna, Area, Averaging, Receptor, Site
from siteexposure.errors import InputError, LimitsError, PatternError, SiteExposureWarning
from siteexposure.readers.site_model import (
    MAX_REACH_M,
    AntennaTable,
    ApertureTable,
    AreaTable,
    SiteFile,
    site_json_schema,
)

__all__ = ["read_site", "site_json_schema"]

FLOOR_TOLERANCE_M = 0.05  #: a radiation centre this close to a floor, inside it, is an error
MAX_LONLAT_REACH_M = MAX_REACH_M  #: outline_lonlat vertices further than this from the origin
MIN_OUTLINE_AREA_M2 = 1.0e-4  #: outlines smaller than this (1 cm^2) are degenerate

# --------------------------------------------------------------------------------------
# error messages
# --------------------------------------------------------------------------------------

_COMPONENTS = {
    "position": ("east", "north", "height"),
    "at": ("east", "north", "height"),
    "outline": ("east", "north"),
    "outline_lonlat": ("lon", "lat"),
}


def _show(value: Any) -> str:
    """A value as it would be written in TOML, shortened."""
    if isinstance(value, bool):
        text = "true" if value else "false"
    elif isinstance(value, str):
        text = json.dumps(value, ensure_ascii=False)
    elif isinstance(value, float) and not math.isfinite(value):
        text = "nan" if math.isnan(value) else ("inf" if value > 0 else "-inf")
    elif isinstance(value, float):
        text = repr(value)
    elif isinstance(value, (int, list, dict)):
        try:
            text = json.dumps(value, default=str, ensure_ascii=False).replace('": ', '" = ')
        except ValueError:
            text = repr(value)
    elif hasattr(value, "isoformat"):  # TOML dates and times
        text = value.isoformat()
    else:
        text = repr(value)
    return text if len(text) <= 70 else text[:67] + "..."


def _label(section: str, index: int, raw: Mapping[str, Any]) -> str:
    """`antenna "A1"` where the id is known, else `antenna #2` (counted from 1)."""
    key = "id" if section == "antenna" else "name"
    try:
        ident = raw[section][index].get(key)
    except (KeyError, IndexError, TypeError, AttributeError):
        ident = None
    if isinstance(ident, str) and ident:
        return f"{section} {json.dumps(ident, ensure_ascii=False)}"
    return f"{section} #{index + 1}"


def _key_path(loc: tuple[Any, ...], raw: Mapping[str, Any]) -> str:
    parts: list[str] = []
    i = 0
    if len(loc) >= 2 and loc[0] in ("antenna", "area", "point") and isinstance(loc[1], int):
        parts.append(_label(loc[0], loc[1], raw))
        i = 2
    last_key = ""
    while i < len(loc):
        item = loc[i]
        if isinstance(item, int):
            names = _COMPONENTS.get(last_key, ())
            is_component = i + 1 == len(loc) and (
                last_key in ("position", "at") or (i >= 2 and isinstance(loc[i - 1], int))
            )
            if is_component and item < len(names):
                parts.append(names[item])
            else:
                parts[-1] = f"{parts[-1]} #{item + 1}" if parts else f"#{item + 1}"
        else:
            parts.append(str(item))
            last_key = str(item)
        i += 1
    return " > ".join(parts) if parts else "(top level)"


def _model_at(loc: tuple[Any, ...]) -> type[BaseModel] | None:
    """The pydantic model of the table at ``loc`` (ints skipped), or None."""
    model: type[BaseModel] | None = SiteFile
    for item in loc:
        if isinstance(item, int):
            continue
        if model is None or item not in model.model_fields:
            return None
        model = _inner_model(model.model_fields[item].annotation)
    return model


def _inner_model(annotation: Any) -> type[BaseModel] | None:
    if isinstance(annotation, type) and issubclass(annotation, BaseModel):
        return annotation
    for arg in typing.get_args(annotation):
        found = _inner_model(arg)
        if found is not None:
            return found
    return None


def _number(value: Any) -> str:
    return f"{value:g}" if isinstance(value, float) else str(value)


def _expected(err: Mapping[str, Any]) -> str:
    kind, ctx = err["type"], err.get("ctx") or {}
    simple = {
        "float_type": "a number",
        "int_type": "a whole number",
        "int_from_float": "a whole number",
        "string_type": "a text string in quotes",
        "bool_type": "true or false",
        "list_type": "a list [ ... ]",
        "model_type": "a table { ... }",
        "model_attributes_type": "a table { ... }",
        "dict_type": "a table { ... }",
        "finite_number": "a finite number (nan and inf are not allowed)",
    }
    if kind in simple:
        return simple[kind]
    if kind == "greater_than":
        return f"a number greater than {_number(ctx['gt'])}"
    if kind == "greater_than_equal":
        return f"a number >= {_number(ctx['ge'])}"
    if kind == "less_than":
        return f"a number less than {_number(ctx['lt'])}"
    if kind == "less_than_equal":
        return f"a number <= {_number(ctx['le'])}"
    if kind == "literal_error":
        return f"one of {ctx['expected']}".replace("'", '"')
    if kind in ("too_short", "string_too_short"):
        n = int(ctx["min_length"])
        what = "character" if kind == "string_too_short" else "item"
        return "a non-empty text" if kind == "string_too_short" and n == 1 else (
            f"at least {n} {what}{'s' if n > 1 else ''}")
    if kind == "too_long":
        n = int(ctx["max_length"])
        return f"at most {n} item{'s' if n > 1 else ''}"
    if kind == "string_too_long":
        return f"a text of at most {int(ctx['max_length'])} characters"
    return str(err["msg"]).removeprefix("Input should be ").removeprefix("Value error, ")


def _format_validation_error(exc: ValidationError, file: str, raw: Mapping[str, Any]) -> str:
    errors = exc.errors(include_url=False)
    err = errors[0]
    loc = tuple(err["loc"])
    path = _key_path(loc, raw)
    kind = err["type"]
    if kind == "missing":
        model = _model_at(loc[:-1])
        info = model.model_fields.get(str(loc[-1])) if model else None
        hint = ""
        if info is not None and info.description:
            text = re.sub(r"\. (\[[^\]]*\])$", r" \1", info.description).rstrip(".")
            keep = len(text) > 1 and text[1].isupper()  # an acronym such as WGS84 stays
            hint = f"; expected {text if keep else text[0].lower() + text[1:]}"
        text = f"{file}: {path}: required key is missing{hint}"
    elif kind == "extra_forbidden":
        model = _model_at(loc[:-1])
        allowed = list(model.model_fields) if model else []
        close = difflib.get_close_matches(str(loc[-1]), allowed, n=1)
        maybe = f" (did you mean '{close[0]}'?)" if close else ""
        text = (
            f"{file}: {path}: unknown key{maybe}; allowed keys here: {', '.join(allowed)}"
        )
    elif kind == "list_type" and len(loc) == 1 and loc[0] in ("area", "point", "antenna"):
        text = f"{file}: {loc[0]}: expected [[{loc[0]}]] tables (double brackets), one per {loc[0]}"
    else:
        text = f"{file}: {path} = {_show(err.get('input'))}: expected {_expected(err)}"
    if len(errors) > 1:
        more = len(errors) - 1
        text += f" (and {more} more problem{'s' if more > 1 else ''})"
    return text


def _fail(file: str, path: str, value: Any, expected: str) -> InputError:
    return InputError(f"{file}: {path} = {_show(value)}: {expected}")


# --------------------------------------------------------------------------------------
# pass 1: text and syntax
# --------------------------------------------------------------------------------------

_TOML_POS = re.compile(r"^(?P<msg>.*?)\s*\(at line (?P<line>\d+), column (?P<col>\d+)\)$")


def _read_bytes(path: Path, what: str) -> bytes:
    from siteexposure.readers.files import MAX_PATTERN_BYTES, MAX_SITE_BYTES, read_input_bytes

    limit = MAX_SITE_BYTES if what == "site file" else MAX_PATTERN_BYTES
    return read_input_bytes(path, what, limit)


def _parse_toml(data: bytes, file: str) -> dict[str, Any]:
    if b"\x00" in data[:8192]:
        raise InputError(f"{file}: looks like a binary file; expected a UTF-8 TOML text file")
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = data[: exc.start].count(b"\n") + 1
        raise InputError(
            f"{file}: line {line}: byte 0x{data[exc.start]:02x} is not UTF-8; expected a "
            "UTF-8 TOML text file (save it as UTF-8)"
        ) from exc
    text = text.removeprefix("\ufeff")
    try:
        return tomllib.loads(text)
    except RecursionError:
        raise InputError(f"{file}: tables or arrays nested too deeply to read; expected a site "
                         "file of the documented layout (a few levels)") from None
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc)
        found = _TOML_POS.match(msg)
        if found:
            detail = found["msg"]
            if "overwrite" in detail or "declare" in detail:  # a key or table given twice
                lines = text.splitlines()
                n = int(found["line"])
                src = lines[n - 1].strip() if 0 < n <= len(lines) else ""
                key = src.strip("[] ").split("=")[0].strip()[:80]
                if key:
                    detail += f": '{key}' is given twice; expected each key once per table"
            raise InputError(
                f"{file}: line {found['line']}, column {found['col']}: invalid TOML: {detail}"
            ) from exc
        if msg.endswith("(at end of document)"):  # e.g. a file cut short
            last = len(text.splitlines()) or 1
            raise InputError(
                f"{file}: line {last} (end of file): invalid TOML: "
                f"{msg.removesuffix('(at end of document)').rstrip()}; is the file complete?"
            ) from exc
        raise InputError(f"{file}: invalid TOML: {msg}") from exc


def _find_non_finite(value: Any, loc: tuple[Any, ...]) -> tuple[tuple[Any, ...], float] | None:
    if isinstance(value, float) and not math.isfinite(value):
        return loc, value
    if isinstance(value, dict):
        items = value.items()
    elif isinstance(value, list):
        items = enumerate(value)
    else:
        return None
    for key, item in items:
        found = _find_non_finite(item, (*loc, key))
        if found:
            return found
    return None


# --------------------------------------------------------------------------------------
# pass 3: meaning, and building the containers
# --------------------------------------------------------------------------------------


class _Builder:
    """Pass 3 over a validated :class:`SiteFile`."""

    def __init__(self, path: Path, raw: Mapping[str, Any], doc: SiteFile,
                 confine_patterns: bool = False) -> None:
        self.path = path
        self.confine_patterns = confine_patterns
        self.file = str(path)
        self.folder = path.parent
        self.raw = raw
        self.doc = doc
        self.pattern_files: dict[Path, tuple[Any, str, str]] = {}
        self.built_areas: tuple[Area, ...] = ()
        self.limit_sets: dict[str, Any] = {}

    def where(self, section: str, index: int) -> str:
        return _label(section, index, self.raw)

    # -- site ------------------------------------------------------------------------
    def limits(self) -> tuple[str, ...]:
        from siteexposure.readers.limit_tables import available_sets

        known = tuple(available_sets())
        ids = tuple(dict.fromkeys(self.doc.site.limits))
        for k, set_id in enumerate(self.doc.site.limits):
            if set_id not in known:
                close = difflib.get_close_matches(set_id, known, n=1)
                maybe = f" (did you mean \"{close[0]}\"?)" if close else ""
                raise _fail(
                    self.file, f"site > limits #{k + 1}", set_id,
                    f"unknown limit-set id{maybe}; expected one of {', '.join(known)}",
                )
        return ids

    def averaging(self) -> Averaging:
        av = self.doc.site.averaging
        if av.points == 1 and av.method != "peak":
            raise _fail(self.file, "site > averaging > points", 1,
                        "expected at least 2 points for method \"vertical-line\"")
        if av.points >= 2 and not av.top_m > av.bottom_m:
            raise _fail(self.file, "site > averaging > top_m", av.top_m,
                        f"expected a height above bottom_m = {av.bottom_m:g}")
        if av.points == 1 and av.top_m < av.bottom_m:
            raise _fail(self.file, "site > averaging > top_m", av.top_m,
                        f"expected a height not below bottom_m = {av.bottom_m:g}")
        return Averaging(method=av.method, bottom_m=float(av.bottom_m), top_m=float(av.top_m),
                         points=int(av.points))

    # -- areas and points ------------------------------------------------------------
    def areas(self) -> tuple[Area, ...]:
        out: list[Area] = []
        seen: dict[str, int] = {}
        for k, table in enumerate(self.doc.area):
            where = self.where("area", k)
            if table.name in seen:
                raise _fail(self.file, f"area #{k + 1} > name", table.name,
                            f"expected a name not used by area #{seen[table.name] + 1}")
            seen[table.name] = k
            out.append(Area(name=table.name, access=table.access, floor_m=float(table.floor_m),
                            outline_en=self.outline(table, where)))
        return tuple(out)

    def outline(self, table: AreaTable, where: str) -> np.ndarray:
        if (table.outline is None) == (table.outline_lonlat is None):
            given = "both" if table.outline is not None else "neither"
            raise InputError(f"{self.file}: {where}: {given} of outline and outline_lonlat "
                             "given; expected exactly one of them")
        if table.outline is not None:
            key, vertices = "outline", np.asarray(table.outline, dtype=float)
        else:
            key, vertices = "outline_lonlat", self.lonlat_outline(table, where)
        if len(vertices) >= 3 and np.array_equal(vertices[0], vertices[-1]):
            vertices = vertices[:-1]  # a closed ring (GeoJSON habit) is accepted
        if len(vertices) < 3:
            raise _fail(self.file, f"{where} > {key}", getattr(table, key),
                        "expected at least 3 distinct vertices")
        self.check_polygon(vertices, where, key, getattr(table, key))
        return vertices

    def lonlat_outline(self, table: AreaTable, where: str) -> np.ndarray:
        from siteexposure.geo import LocalFrame

        lonlat = np.asarray(table.outline_lonlat, dtype=float)
        for v, (lon, lat) in enumerate(lonlat):
            if not -180.0 <= lon <= 180.0:
                raise _fail(self.file, f"{where} > outline_lonlat #{v + 1} > lon", float(lon),
                            "expected a longitude from -180 to 180 degrees ([lon, lat] order)")
            if not -90.0 <= lat <= 90.0:
                raise _fail(self.file, f"{where} > outline_lonlat #{v + 1} > lat", float(lat),
                            "expected a latitude from -90 to 90 degrees ([lon, lat] order)")
        origin = self.doc.site.origin
        east, north = LocalFrame(origin.lat, origin.lon).from_lonlat(lonlat[:, 0], lonlat[:, 1])
        reach = np.hypot(east, north)
        far = int(np.argmax(reach > MAX_LONLAT_REACH_M))
        if reach[far] > MAX_LONLAT_REACH_M:
            raise _fail(self.file, f"{where} > outline_lonlat #{far + 1}", lonlat[far].tolist(),
                        f"this vertex is {reach[far] / 1000:.1f} km from the site origin; "
                        f"expected [lon, lat] pairs within {MAX_LONLAT_REACH_M / 1000:g} km "
                        "(check the order: longitude first, as in GeoJSON)")
        return np.column_stack([east, north])

    def check_polygon(self, vertices: np.ndarray, where: str, key: str, value: Any) -> None:
        import shapely
        from shapely.geometry import Polygon

        poly = Polygon(vertices)
        if not poly.convex_hull.area > MIN_OUTLINE_AREA_M2 or (
            poly.is_valid and not poly.area > MIN_OUTLINE_AREA_M2
        ):
            raise _fail(self.file, f"{where} > {key}", value,
                        f"the polygon has no area ({poly.area:.3g} m^2); expected vertices "
                        "that enclose a surface, not a line or a point")
        if not poly.is_valid:
            reason = shapely.is_valid_reason(poly)
            raise _fail(self.file, f"{where} > {key}", value,
                        f"the polygon crosses itself ({reason}); expected the vertices in "
                        "order around the boundary, edges not crossing")
        if poly.area < self.doc.site.resolution_m ** 2:
            warnings.warn(f"{self.file}: {where}: the outline ({poly.area:.3g} m^2) is smaller "
                          f"than one grid cell of resolution_m = {self.doc.site.resolution_m:g}; "
                          "it is judged on points along its outline, but its map and zones are "
                          "coarse: use a finer resolution_m, or a [[point]]", SiteExposureWarning,
                          stacklevel=5)

    def points(self) -> tuple[Receptor, ...]:
        out: list[Receptor] = []
        seen: dict[str, int] = {}
        for k, table in enumerate(self.doc.point):
            if table.name in seen:
                raise _fail(self.file, f"point #{k + 1} > name", table.name,
                            f"expected a name not used by point #{seen[table.name] + 1}")
            seen[table.name] = k
            out.append(Receptor(name=table.name, at_m=np.asarray(table.at, dtype=float),
                                access=table.access))
        return tuple(out)

    # -- antennas --------------------------------------------------------------------
    def antennas(self) -> tuple[Antenna, ...]:
        out: list[Antenna] = []
        seen: dict[str, int] = {}
        for k, table in enumerate(self.doc.antenna):
            if table.id in seen:
                raise _fail(self.file, f"antenna #{k + 1} > id", table.id,
                            f"expected an id not used by antenna #{seen[table.id] + 1}")
            seen[table.id] = k
            out.append(self.antenna(table, self.where("antenna", k)))
        return tuple(out)

    def antenna(self, t: AntennaTable, where: str) -> Antenna:
        if (t.tx_power_w is None) == (t.tx_power_dbm is None):
            given = "both" if t.tx_power_w is not None else "neither"
            raise InputError(f"{self.file}: {where}: {given} of tx_power_w and tx_power_dbm "
                             "given; expected exactly one of them")
        power_w = t.tx_power_w if t.tx_power_w is not None else 10.0 ** ((t.tx_power_dbm - 30) / 10)
        if t.gain_dbi is not None and t.gain_dbd is not None:
            raise InputError(f"{self.file}: {where}: both gain_dbi and gain_dbd given; "
                             "expected at most one of them")
        self.check_frequency(t, where)
        aperture = t.aperture
        if aperture is not None:
            self.check_aperture(aperture, where)
        self.check_model(t, where)
        self.check_ground_plane(t, where)
        pattern, tilt, source = self.pattern(t, where)
        self.check_inside_floor(t, where)
        return Antenna(
            id=t.id,
            operator=t.operator,
            position_m=np.asarray(t.position, dtype=float),
            azimuth_deg=float(t.azimuth_deg),
            mechanical_tilt_deg=float(t.mechanical_tilt_deg),
            electrical_tilt_deg=float(tilt),
            frequency_mhz=float(t.frequency_mhz),
            tx_power_w=float(power_w),
            pattern=pattern,
            carriers=int(t.carriers),
            line_loss_db=float(t.line_loss_db),
            activity=float(t.activity),
            pattern_source=source,
            aperture_height_m=aperture.height_m if aperture else None,
            aperture_width_m=aperture.width_m if aperture else None,
            diameter_m=aperture.diameter_m if aperture else None,
            aperture_depth_m=aperture.depth_m if aperture else None,
            body_offset_m=tuple(float(v) for v in (aperture.offset_m or (0.0, 0.0, 0.0)))
            if aperture else (0.0, 0.0, 0.0),
            polarization=t.polarization,
            ground_plane=bool(t.ground_plane),
            model=t.model,
            reflection_factor=float(
                t.reflection_factor if t.reflection_factor is not None
                else self.doc.site.reflection_factor
            ),
        )

    def check_aperture(self, ap: ApertureTable, where: str) -> None:
        if ap.diameter_m is not None and (ap.height_m is not None or ap.width_m is not None):
            raise InputError(f"{self.file}: {where} > aperture: diameter_m given with "
                             "height_m/width_m; expected { height_m, width_m, depth_m } (a "
                             "box) or { diameter_m, depth_m } (a dish)")
        if all(v is None for v in (ap.diameter_m, ap.height_m, ap.width_m, ap.depth_m)):
            raise InputError(f"{self.file}: {where} > aperture: no size given; expected "
                             "{ height_m, width_m, depth_m } (a box) or { diameter_m } (a dish)")

    def check_ground_plane(self, t: AntennaTable, where: str) -> None:
        if not t.ground_plane:
            return
        ap = t.aperture
        if ap is None or ap.height_m is None or ap.diameter_m is not None:
            raise _fail(self.file, f"{where} > ground_plane", True,
                        "a monopole on a ground plane needs the height of its body; expected "
                        "aperture = { height_m = ... } on this antenna")
        if t.mechanical_tilt_deg != 0.0:
            raise _fail(self.file, f"{where} > mechanical_tilt_deg", t.mechanical_tilt_deg,
                        "a monopole on a ground plane stands upright; expected 0 with "
                        "ground_plane = true")
        if t.polarization != "vertical":
            raise _fail(self.file, f"{where} > polarization", t.polarization,
                        "a monopole on a ground plane radiates vertically polarised fields; "
                        "expected \"vertical\" with ground_plane = true")

    def check_model(self, t: AntennaTable, where: str) -> None:
        ap = t.aperture
        if t.model == "cylindrical" and (ap is None or ap.height_m is None):
            raise _fail(self.file, f"{where} > model", t.model,
                        "this model needs the aperture length; expected aperture = "
                        "{ height_m = ..., width_m = ... } on this antenna")
        if t.model == "array" and (ap is None or ap.diameter_m is not None or all(
                v is None for v in (ap.height_m, ap.width_m, ap.depth_m))):
            raise _fail(self.file, f"{where} > model", t.model,
                        "this model needs the antenna's body; expected aperture = "
                        "{ height_m = ..., width_m = ..., depth_m = ... } on this antenna")
        if t.model == "aperture" and (
            ap is None or (ap.diameter_m is None and (ap.height_m is None or ap.width_m is None))
        ):
            raise _fail(self.file, f"{where} > model", t.model,
                        "this model needs the aperture size; expected aperture = "
                        "{ diameter_m = ... } or { height_m = ..., width_m = ... }")

    def pattern(self, t: AntennaTable, where: str) -> tuple[Any, float, str]:
        """The pattern, the electrical tilt the Antenna gets, and a description of the source."""
        spec = t.pattern
        tilt = 0.0 if t.electrical_tilt_deg is None else float(t.electrical_tilt_deg)
        if isinstance(spec, dict):
            model = spec.get("model")
            if "model" in spec and not isinstance(model, str):
                raise _fail(self.file, f"{where} > pattern > model", model,
                            "expected the name of a parametric model in quotes, e.g. "
                            "\"3gpp-panel\"")
            if t.gain_dbi is not None or t.gain_dbd is not None:
                key = "gain_dbi" if t.gain_dbi is not None else "gain_dbd"
                raise _fail(self.file, f"{where} > {key}", getattr(t, key),
                            f"expected the gain inside the inline pattern table "
                            f"(pattern = {{ model = ..., {key} = ... }})")
            from siteexposure.physics.patterns import parametric_pattern

            pattern = parametric_pattern(spec, electrical_tilt_deg=tilt,
                                         frequency_mhz=float(t.frequency_mhz),
                                         where=f"{self.file}: {where} > pattern")
            body = ", ".join(f"{k} = {_show(v)}" for k, v in spec.items() if k != "model")
            return pattern, tilt, f"parametric {spec.get('model')} ({body})"
        if not isinstance(spec, str) or not spec.strip():
            raise _fail(self.file, f"{where} > pattern", spec, "expected a pattern file path "
                        "in quotes or an inline table { model = ..., ... }")
        path = self.folder / spec
        if self.confine_patterns:
            try:
                inside = path.resolve().is_relative_to(self.folder.resolve())
            except (OSError, RuntimeError):  # a symlink loop
                inside = False
            if not inside:
                raise _fail(self.file, f"{where} > pattern", spec,
                            "is outside the site file's folder, and pattern paths are confined "
                            "to it (--confine-patterns); expected a path inside that folder")
        try:
            found = ("a folder" if path.is_dir() else "a file" if path.is_file()
                     else "not a regular file (a device or pipe)" if path.exists() else "")
        except OSError as exc:  # e.g. a name too long for the file system
            raise _fail(self.file, f"{where} > pattern", spec,
                        f"cannot be used as a file name ({exc.strerror or exc}); expected the "
                        "path of a pattern CSV v1 file") from None
        if found != "a file":
            what = (f"{path} is {found}" if found
                    else f"pattern file not found at {path}")
            raise _fail(self.file, f"{where} > pattern", spec,
                        f"{what}; expected a pattern CSV v1 file "
                        "(relative paths start at the site file's folder)")
        pattern = self.read_pattern(path, where)
        file_tilt = float(pattern.electrical_tilt_deg)
        if t.electrical_tilt_deg and not math.isclose(t.electrical_tilt_deg, file_tilt,
                                                      abs_tol=1e-9):
            warnings.warn(f"{self.file}: {where} > electrical_tilt_deg = "
                          f"{t.electrical_tilt_deg:g} differs from the {file_tilt:g} deg already "
                          f"in the data of {path}; the file's tilt is used (remove the key, or "
                          "use a pattern file measured at the tilt you need)",
                          SiteExposureWarning, stacklevel=5)
        self.check_pattern_frequency(pattern, t, where, path)
        if t.gain_dbi is not None or t.gain_dbd is not None:
            from siteexposure.constants import DBD_TO_DBI

            peak = t.gain_dbi if t.gain_dbi is not None else t.gain_dbd + DBD_TO_DBI
            pattern = pattern.shifted(
                peak - float(pattern.peak_gain_dbi),
                source=f"{path} rescaled to a peak of {peak:g} dBi by the site file",
            )
        return pattern, file_tilt, str(path)

    def read_pattern(self, path: Path, where: str) -> Any:
        key = path.resolve()
        if key not in self.pattern_files:
            from siteexposure.readers.pattern_csv import read_pattern_csv

            digest = hashlib.sha256(_read_bytes(path, "pattern file")).hexdigest()
            try:
                pattern = read_pattern_csv(path)
            except PatternError as exc:
                raise PatternError(f"{self.file}: {where} > pattern: {exc}") from exc
            self.pattern_files[key] = (pattern, digest, str(path))
        return self.pattern_files[key][0]

    def check_pattern_frequency(self, pattern: Any, t: AntennaTable, where: str,
                                path: Path) -> None:
        f_pat = getattr(pattern, "frequency_mhz", None)
        if f_pat and not 0.8 <= t.frequency_mhz / float(f_pat) <= 1.25:
            warnings.warn(f"{self.file}: {where}: frequency_mhz = {t.frequency_mhz:g} is far "
                          f"from the {float(f_pat):g} MHz of pattern file {path}; use a pattern "
                          "for this band", SiteExposureWarning, stacklevel=6)

    def check_inside_floor(self, t: AntennaTable, where: str) -> None:
        from shapely.geometry import Point, Polygon

        east, north, height = (float(v) for v in t.position)
        for area in self.built_areas:
            if abs(height - area.floor_m) <= FLOOR_TOLERANCE_M and Polygon(
                area.outline_en
            ).buffer(1e-9).covers(Point(east, north)):
                raise _fail(self.file, f"{where} > position", list(t.position),
                            f"the radiation centre lies in the floor of area "
                            f"\"{area.name}\" (floor_m = {area.floor_m:g}); expected it more "
                            f"than {FLOOR_TOLERANCE_M:g} m above or below that floor")

    def check_frequency(self, t: AntennaTable, where: str) -> None:
        for set_id, table in self.limit_sets.items():
            for population in ("general", "occupational"):
                f_lo, f_hi = _frequency_range(table, population)
                if not f_lo <= t.frequency_mhz <= f_hi:
                    raise _fail(
                        self.file, f"{where} > frequency_mhz", t.frequency_mhz,
                        f"outside limit set \"{set_id}\" ({population}), which covers "
                        f"{f_lo:g} to {f_hi:g} MHz; expected a frequency in that range "
                        "or a limit set that covers it",
                    )

    def build(self, data: bytes) -> Site:
        from siteexposure.readers.limit_tables import load_limit_set

        limits = self.limits()
        self.limit_sets = {set_id: load_limit_set(set_id) for set_id in limits}
        averaging = self.averaging()
        self.built_areas = self.areas()
        points = self.points()
        antennas = self.antennas()
        levels = sorted({float(v) for v in self.doc.site.zone_levels} - {1.0})
        inputs = [(self.file, hashlib.sha256(data).hexdigest())]
        inputs += [(shown, digest) for _, digest, shown in self.pattern_files.values()]
        return Site(
            name=self.doc.site.name,
            origin_lat=float(self.doc.site.origin.lat),
            origin_lon=float(self.doc.site.origin.lon),
            limits=limits,
            antennas=antennas,
            areas=self.built_areas,
            points=points,
            averaging=averaging,
            resolution_m=float(self.doc.site.resolution_m),
            zone_levels=tuple(levels),
            address=self.doc.site.address,
            preparer=self.doc.site.preparer,
            source_path=self.path,
            input_files=tuple(inputs),
        )


def _frequency_range(table: Any, population: str) -> tuple[float, float]:
    try:
        lo, hi = table.frequency_range_mhz(population, "whole-body")
    except LimitsError:
        return (-math.inf, math.inf)  # the set has no such population: nothing to check
    return float(lo), float(hi)


# --------------------------------------------------------------------------------------
# public API
# --------------------------------------------------------------------------------------


def read_site(path: Path | str, *, confine_patterns: bool = False) -> Site:
    """Read and validate a site file.

    Parameters
    ----------
    path : path-like
        The TOML site file (SPEC 3.1). Pattern file paths inside it are relative to
        its folder.
    confine_patterns : bool
        Refuse pattern paths that lead outside the site file's folder (for batch runs of
        files from elsewhere).

    Returns
    -------
    Site
        The validated site, with ``source_path`` and ``input_files`` (path and SHA-256 of
        the site file and of every pattern file it uses).

    Raises
    ------
    InputError
        For any problem, with a one-line message naming the file, the key path, the
        value and what was expected (PatternError, a subclass, for pattern problems).

    Warns
    -----
    SiteExposureWarning
        A pattern file used with a different ``electrical_tilt_deg`` or far from its
        frequency; an area smaller than one grid cell.
    """
    path = Path(path)
    file = str(path)
    data = _read_bytes(path, "site file")
    raw = _parse_toml(data, file)
    bad = _find_non_finite(raw, ())
    if bad:
        loc, value = bad
        raise _fail(file, _key_path(loc, raw), value,
                    "expected a finite number (nan and inf are not allowed)")
    try:
        doc = SiteFile.model_validate(raw)
    except ValidationError as exc:
        raise InputError(_format_validation_error(exc, file, raw)) from None
    return _Builder(path, raw, doc, confine_patterns).build(data)

