"""Every map and GIS file of one evaluated site, written into one folder.

Used by ``siteexposure map`` and by the report command (``--with-maps``). Each file is
written atomically (temporary file + rename); the list returned is in a fixed order:
plans, elevation cuts, then the GeoJSON, KML and grid CSV.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from pathlib import Path

from siteexposure.engine.result import SiteResult

__all__ = ["GEOJSON_NAME", "GRID_CSV_NAME", "KML_NAME", "output_names", "write_all_outputs"]

GEOJSON_NAME = "site.geojson"
KML_NAME = "site.kml"
GRID_CSV_NAME = "grid_values.csv"


def output_names(site, formats: Sequence[str] = ("png", "svg")) -> list[str]:
    """The file names :func:`write_all_outputs` writes for ``site`` (before evaluating it)."""
    from siteexposure.writers.maps import map_file_stem

    names = []
    if site.antennas:
        for i, area in enumerate(site.areas):
            if area.population is not None:
                names += [f"{map_file_stem('plan', i + 1, area.name, s)}.{f}"
                          for s in site.limits for f in formats]
        for k, ant in enumerate(site.antennas):
            names += [f"{map_file_stem('elevation', k + 1, ant.id, s)}.{f}"
                      for s in site.limits for f in formats]
    return names + [GEOJSON_NAME, KML_NAME, GRID_CSV_NAME]


def write_all_outputs(
    result: SiteResult,
    zones: list,
    out_dir: Path | str,
    *,
    formats: Sequence[str] = ("png", "svg"),
    progress: Callable[[int, int, str], None] | None = None,
) -> list[Path]:
    """Write the maps (PNG and SVG), the GeoJSON, the KML and the grid CSV into ``out_dir``.

    Parameters
    ----------
    result : SiteResult
        From :func:`siteexposure.engine.orchestrator.evaluate_site`.
    zones : list of Zone
        From :func:`siteexposure.engine.zones.compute_zones`.
    out_dir : path
        Folder to write into; created if needed.
    formats : sequence of {"png", "svg"}
        Map formats.
    progress : callable, optional
        ``progress(done, total, label)`` after each map.

    Returns
    -------
    list of Path
        The files written.

    Raises
    ------
    OutputError
        The folder cannot be created or written, or an output would replace an input of
        the run (checked before anything is written).
    """
    from siteexposure.atomic import check_writable_dir
    from siteexposure.errors import OutputError
    from siteexposure.output_guard import protected_inputs, refuse_input_overwrite
    from siteexposure.writers.geojson import write_geojson
    from siteexposure.writers.grid_csv import write_grid_csv
    from siteexposure.writers.kml import write_kml
    from siteexposure.writers.maps import render_maps

    names = output_names(result.site, formats)
    refuse_input_overwrite([Path(out_dir) / n for n in names], protected_inputs(result.site))
    out = check_writable_dir(Path(out_dir))
    for name in names:
        if (out / name).is_dir():  # refuse before anything is written
            raise OutputError(f"output file '{out / name}': a folder is in the way; "
                              "expected a file path that can be replaced (remove or rename the folder)")
    written = list(render_maps(result, zones, out, formats=formats, progress=progress))
    written.append(write_geojson(result, zones, out / GEOJSON_NAME))
    written.append(write_kml(result, zones, out / KML_NAME))
    written.append(write_grid_csv(result, out / GRID_CSV_NAME))
    return written
