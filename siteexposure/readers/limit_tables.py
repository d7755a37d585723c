"""Read the published limit tables in ``limits_tables/`` (one TOML file per publication).

The file layout is described in ``limits_tables/README.md``. Every file is checked on load:
known keys only, numbers where numbers belong, coefficient/exponent pairs complete, and for
each population and region bands that cover one frequency range without gap or overlap.
Problems raise :class:`~siteexposure.errors.LimitsError` naming the file, the band and the key.
Nothing in a file is evaluated as code.
"""

from __future__ import annotations

import functools
import hashlib
import math
import tomllib
from pathlib import Path
from typing import Any

from siteexposure.errors import LimitsError
from siteexposure.physics.limits import INCLUSIVE, PAIRS, POPULATIONS, REGIONS, Bands, LimitSet
from siteexposure.resources import limits_tables_dir

TOP_KEYS = (
    "id",
    "title",
    "publication",
    "edition",
    "tables",
    "frequency_unit",
    "populations",
    "notes",
    "band",
)
BAND_REQUIRED = (
    "population",
    "region",
    "f_min_mhz",
    "f_max_mhz",
    "inclusive",
    "f_ref_mhz",
    "averaging_min_a",
    "averaging_min_b",
    "source",
    "verified",
)
BAND_OPTIONAL = tuple(k for name, pair in PAIRS.items() if name != "averaging_min" for k in pair)


def available_sets() -> list[str]:
    """Ids of the limit sets present in the limit-table folder, sorted."""
    folder = limits_tables_dir()
    return sorted(p.stem for p in folder.glob("*.toml"))


@functools.cache
def load_limit_set(set_id: str) -> LimitSet:
    """Load a limit set by id (cached).

    Raises
    ------
    LimitsError
        Unknown id (the message lists the valid ids) or a malformed file.
    """
    valid = available_sets()
    if set_id not in valid:
        raise LimitsError(
            f"limit set '{set_id}' is not known; expected one of {', '.join(valid) or '(none)'}"
            f" (files in {limits_tables_dir()})"
        )
    return read_limit_file(limits_tables_dir() / f"{set_id}.toml")


def _is_number(x: Any) -> bool:
    return isinstance(x, int | float) and not isinstance(x, bool)


def _text(where: str, table: dict[str, Any], key: str) -> str:
    value = table.get(key)
    if not isinstance(value, str) or not value.strip():
        raise LimitsError(f"{where}: key '{key}' must be a non-empty string, got {value!r}")
    return value


def _number(where: str, band: dict[str, Any], key: str, *, positive: bool = False) -> float:
    value = band[key]
    if not _is_number(value) or not math.isfinite(value):
        raise LimitsError(f"{where}: key '{key}' must be a finite number, got {value!r}")
    if positive and value <= 0:
        raise LimitsError(f"{where}: key '{key}' must be positive, got {value!r}")
    return float(value)


def _check_band(name: str, i: int, band: Any, populations: dict[str, str]) -> dict[str, Any]:
    where = f"{name}: band {i + 1}"
    if not isinstance(band, dict):
        raise LimitsError(f"{where}: expected a [[band]] table, got {band!r}")
    if isinstance(band.get("source"), str):
        where = f"{where} ({band['source']})"
    unknown = sorted(set(band) - set(BAND_REQUIRED) - set(BAND_OPTIONAL))
    if unknown:
        raise LimitsError(
            f"{where}: unknown key '{unknown[0]}'; expected keys "
            f"{', '.join(BAND_REQUIRED + BAND_OPTIONAL)}"
        )
    missing = [k for k in BAND_REQUIRED if k not in band]
    if missing:
        raise LimitsError(f"{where}: key '{missing[0]}' is missing")
    if band["population"] not in populations:
        raise LimitsError(
            f"{where}: key 'population' is {band['population']!r}; expected one of "
            f"{', '.join(populations)} (the file's populations)"
        )
    if band["region"] not in REGIONS:
        raise LimitsError(
            f"{where}: key 'region' is {band['region']!r}; expected one of {', '.join(REGIONS)}"
        )
    if band["inclusive"] not in INCLUSIVE:
        raise LimitsError(
            f"{where}: key 'inclusive' is {band['inclusive']!r}; expected one of "
            f"{', '.join(INCLUSIVE)}"
        )
    _text(where, band, "source")
    _text(where, band, "verified")
    f_min = _number(where, band, "f_min_mhz", positive=True)
    f_max = _number(where, band, "f_max_mhz", positive=True)
    _number(where, band, "f_ref_mhz", positive=True)
    if f_max < f_min or (f_max == f_min and band["inclusive"] != "both"):
        raise LimitsError(
            f"{where}: keys 'f_min_mhz'/'f_max_mhz' are {f_min:g}/{f_max:g}; expected "
            f"f_min < f_max (or equal, for a single frequency, with inclusive = 'both')"
        )
    for a_key, b_key in PAIRS.values():
        if (a_key in band) != (b_key in band):
            given, absent = (a_key, b_key) if a_key in band else (b_key, a_key)
            raise LimitsError(f"{where}: key '{given}' is given without '{absent}'")
        if a_key in band:
            _number(where, band, a_key, positive=True)
            _number(where, band, b_key)
    if not any(PAIRS[q][0] in band for q in ("e", "h", "s", "sh")):
        raise LimitsError(f"{where}: the band gives none of E (e_a), H (h_a) or S (s_a)")
    return band


def _check_coverage(name: str, bands: list[dict[str, Any]]) -> None:
    """Each (population, region): one range, no gap, no overlap, edges in exactly one band."""
    groups: dict[tuple[str, str], list[dict[str, Any]]] = {}
    for band in bands:
        groups.setdefault((band["population"], band["region"]), []).append(band)
    for (population, region), rows in groups.items():
        rows = sorted(rows, key=lambda r: (r["f_min_mhz"], r["f_max_mhz"]))
        where = f"{name}: {population}, {region}"
        if not INCLUSIVE[rows[0]["inclusive"]][0]:
            raise LimitsError(
                f"{where}: first band ({rows[0]['source']}) must include its lower edge "
                f"{rows[0]['f_min_mhz']:g} MHz (inclusive = 'both' or 'lower')"
            )
        if not INCLUSIVE[rows[-1]["inclusive"]][1]:
            raise LimitsError(
                f"{where}: last band ({rows[-1]['source']}) must include its upper edge "
                f"{rows[-1]['f_max_mhz']:g} MHz (inclusive = 'both' or 'upper')"
            )
        for prev, cur in zip(rows, rows[1:], strict=False):
            if cur["f_min_mhz"] != prev["f_max_mhz"]:
                kind = "gap" if cur["f_min_mhz"] > prev["f_max_mhz"] else "overlap"
                raise LimitsError(
                    f"{where}: {kind} between {prev['f_max_mhz']:g} and {cur['f_min_mhz']:g} MHz "
                    f"({prev['source']} / {cur['source']}); expected consecutive bands to share "
                    f"an edge"
                )
            owners = int(INCLUSIVE[prev["inclusive"]][1]) + int(INCLUSIVE[cur["inclusive"]][0])
            if owners != 1:
                raise LimitsError(
                    f"{where}: edge {cur['f_min_mhz']:g} MHz belongs to {owners} bands "
                    f"({prev['source']} / {cur['source']}); expected exactly one (check "
                    f"'inclusive')"
                )


def read_limit_file(path: Path | str) -> LimitSet:
    """Read and check one limit-table file (uncached); see ``limits_tables/README.md``.

    Raises
    ------
    LimitsError
        Unreadable file, bad TOML, or content that does not follow the layout.
    """
    path = Path(path)
    name = path.name
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise LimitsError(f"{path}: cannot be read ({exc.strerror})") from exc
    try:
        doc = tomllib.loads(raw.decode("utf-8"))
    except (UnicodeDecodeError, tomllib.TOMLDecodeError) as exc:
        raise LimitsError(f"{name}: not valid UTF-8 TOML ({exc})") from exc
    unknown = sorted(set(doc) - set(TOP_KEYS))
    if unknown:
        raise LimitsError(
            f"{name}: unknown top-level key '{unknown[0]}'; expected {', '.join(TOP_KEYS)}"
        )
    for key in ("id", "title", "publication", "edition", "notes"):
        _text(name, doc, key)
    if doc["id"] != path.stem:
        raise LimitsError(f"{name}: key 'id' is {doc['id']!r}; expected {path.stem!r} (file name)")
    if doc.get("frequency_unit") != "MHz":
        raise LimitsError(
            f"{name}: key 'frequency_unit' is {doc.get('frequency_unit')!r}; expected 'MHz'"
        )
    tables = doc.get("tables")
    if not isinstance(tables, list) or not tables or not all(isinstance(t, str) for t in tables):
        raise LimitsError(f"{name}: key 'tables' must be a list of strings, got {tables!r}")
    populations = doc.get("populations")
    if (
        not isinstance(populations, dict)
        or not populations
        or not set(populations) <= set(POPULATIONS)
        or not all(isinstance(v, str) and v for v in populations.values())
    ):
        raise LimitsError(
            f"{name}: key 'populations' must map {' and/or '.join(POPULATIONS)} to the "
            f"publication's class names, got {populations!r}"
        )
    bands = doc.get("band")
    if not isinstance(bands, list) or not bands:
        raise LimitsError(f"{name}: key 'band' is missing; expected [[band]] tables")
    bands = [_check_band(name, i, b, populations) for i, b in enumerate(bands)]
    for population in populations:
        if not any(b["population"] == population and b["region"] == "whole-body" for b in bands):
            raise LimitsError(
                f"{name}: population '{population}' has no whole-body band; expected at least one"
            )
    _check_coverage(name, bands)
    return LimitSet(
        id=doc["id"],
        title=doc["title"],
        publication=doc["publication"],
        tables=tuple(tables),
        populations=dict(populations),
        bands=Bands.from_rows(bands),
        source_file=str(path),
        sha256=hashlib.sha256(raw).hexdigest(),
        edition=doc["edition"],
        notes=doc["notes"],
    )
