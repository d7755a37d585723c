"""Maps of a site (matplotlib, Agg): a plan of each evaluated area and an elevation cut
through each antenna's boresight, for every limit set of the site, in PNG and SVG.

Our own look:

* the exposure ratio on a continuous decibel scale, ``10 log10(ratio)``, from
  :data:`DB_RANGE`, with the perceptually uniform ``cividis`` colormap (readable with
  the common colour-vision deficiencies, and in grey-scale print); 0 dB is the limit;
* boundaries as black lines with a white halo, told apart by line style and an inline
  label: solid = occupational limit, dashed = general-public limit, dash-dot = ten
  times the occupational limit, dotted = the site's extra levels;
* cells the models cannot assess hatched (never coloured as a pass);
* antennas as white discs with their id and an arrow along the boresight azimuth;
  receptors as squares; area outlines with their access word;
* scale bar, north arrow (the local frame's +north is TRUE north at the site origin,
  see :mod:`siteexposure.geo`), legend, colour bar in dB and a title block with the
  site, the area or antenna, the limit set and the one-line caution.

Output is deterministic: the same result gives byte-identical files (no dates, no
software-version metadata, fixed SVG hash salt, text kept as text in SVG).
"""

from __future__ import annotations

import math
import re
from collections.abc import Callable, Sequence
from pathlib import Path

import numpy as np

from siteexposure.engine.result import SiteResult

__all__ = ["DB_RANGE", "azimuth_unit", "map_file_stem", "render_maps"]

DB_RANGE = (-30.0, 20.0)  #: colour scale of every map, 10 log10(exposure ratio) [dB]
CMAP = "cividis"
STYLES = {  # kind -> (linestyle, linewidth, legend text)
    "occupational-limit": ("-", 1.7, "occupational limit (ratio 1)"),
    "general-limit": ((0, (6, 3)), 1.7, "general-public limit (ratio 1)"),
    "occupational-10x": ((0, (8, 2, 1.5, 2)), 1.5, "10 x occupational limit"),
    "extra": ((0, (1, 1.6)), 1.3, "extra level (see label)"),
}
SHORT = {"general-limit": "general limit", "occupational-limit": "occupational limit",
         "occupational-10x": "10x occupational"}
_DPI = 150


def azimuth_unit(azimuth_deg: float) -> tuple[float, float]:
    """(east, north) unit vector of an azimuth clockwise from north: (sin a, cos a)."""
    a = math.radians(float(azimuth_deg))
    return math.sin(a), math.cos(a)


#: longest name part of a map file name (file systems allow 255 bytes a name) [characters]
MAX_SLUG = 60


def _slug(text: str) -> str:
    """Lower-case letters, digits and '-' of ``text``; a long one cut to :data:`MAX_SLUG`
    characters with a short hash of the whole, so that two long names stay apart."""
    s = re.sub(r"[^a-z0-9]+", "-", str(text).lower()).strip("-") or "x"
    if len(s) > MAX_SLUG:
        import hashlib

        tag = hashlib.sha256(str(text).encode("utf-8", "surrogatepass")).hexdigest()[:8]
        s = f"{s[: MAX_SLUG - 9].rstrip('-')}-{tag}"
    return s


def map_file_stem(kind: str, index: int, name: str, set_id: str) -> str:
    """File name stem of one map, e.g. ``plan_01_roof-garden-terrace_fcc-1310``."""
    return f"{kind}_{index:02d}_{_slug(name)}_{_slug(set_id)}"


def _nice_length(span: float) -> float:
    """A 1-2-5 length near a fifth of ``span``. [m]"""
    target = max(span / 5.0, 1e-3)
    exp = math.floor(math.log10(target))
    for m in (5, 2, 1):
        if m * 10**exp <= target:
            return m * 10**exp
    return 10**exp


def _db(ratio: np.ndarray) -> np.ndarray:
    r = np.asarray(ratio, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(np.isfinite(r), 10.0 * np.log10(np.maximum(r, 1e-30)), np.nan)


def _edges(c: np.ndarray) -> np.ndarray:
    c = np.asarray(c, dtype=float)
    if len(c) == 1:
        return np.array([c[0] - 0.5, c[0] + 0.5])
    mid = 0.5 * (c[1:] + c[:-1])
    return np.concatenate([[c[0] - (mid[0] - c[0])], mid, [c[-1] + (c[-1] - mid[-1])]])


def _halo(width: float = 3.2):
    from matplotlib import patheffects

    return [patheffects.withStroke(linewidth=width, foreground="white")]


# ---------------------------------------------------------------------------------------
# boundary lines
# ---------------------------------------------------------------------------------------


def _lines(x, y, z, level: float) -> list[np.ndarray]:
    """Contour lines of ``z`` at ``level`` (contourpy)."""
    import contourpy

    zz = np.ma.masked_invalid(np.asarray(z, dtype=float))
    if zz.count() == 0:
        return []
    gen = contourpy.contour_generator(x, y, zz, line_type=contourpy.LineType.Separate)
    return [p for p in gen.lines(level) if len(p) >= 2]


class _Segment:
    """A drawn line segment in screen pixels: an obstacle for labels."""

    def __init__(self, a, b, pad: float):
        self.a, self.b, self.pad = tuple(a), tuple(b), pad

    def overlaps(self, bb) -> bool:
        from shapely.geometry import LineString, box

        return LineString([self.a, self.b]).buffer(self.pad).intersects(box(bb.x0, bb.y0, bb.x1, bb.y1))


def _arrow_box(ax, start, end, pad: float = 3.0) -> _Segment:
    """The screen segment of an arrow (an obstacle for label placement)."""
    return _Segment(ax.transData.transform(start), ax.transData.transform(end), pad)


def _hits(bb, placed) -> int:
    """How many placed boxes or segments the screen box ``bb`` overlaps."""
    return sum(bool(p.overlaps(bb)) if isinstance(p, _Segment) else bool(bb.overlaps(p)) for p in placed)


def _place(ax, attempts, placed: list, *, best_effort: bool = False):
    """Draw the texts that ``attempts`` (callables) make, one after the other, and keep the
    first inside the axes that overlaps nothing placed; with ``best_effort`` keep the one
    with the fewest overlaps when none is free. Returns the text kept, or None."""
    renderer = ax.figure.canvas.get_renderer()
    frame = ax.get_window_extent(renderer)
    best = None
    for make in attempts:
        t = make()
        bb = t.get_window_extent(renderer).expanded(1.06, 1.12)
        inside = frame.x0 <= bb.x0 and bb.x1 <= frame.x1 and frame.y0 <= bb.y0 and bb.y1 <= frame.y1
        score = _hits(bb, placed) + (0 if inside else 1000)
        if best is None or score < best[0]:
            if best is not None:
                best[1].remove()
            best = (score, t, bb)
        else:
            t.remove()
        if score == 0:
            break
    if best is None or (best[0] > 0 and not best_effort):
        if best is not None:
            best[1].remove()
        return None
    placed.append(best[2])
    return best[1]


def _on_line(ax, piece: np.ndarray, text: str, frac: float, fontsize: float):
    """A text maker: ``text`` on ``piece`` at ``frac`` of its length, along it, upright."""
    def make():
        seg = np.hypot(*np.diff(piece, axis=0).T)
        cum = np.concatenate([[0.0], np.cumsum(seg)])
        s = frac * cum[-1]
        k = int(np.clip(np.searchsorted(cum, s) - 1, 0, len(seg) - 1))
        t = (s - cum[k]) / seg[k] if seg[k] > 0 else 0.0
        xy = piece[k] + t * (piece[k + 1] - piece[k])
        a, b = ax.transData.transform(piece[k]), ax.transData.transform(piece[k + 1])
        ang = (math.degrees(math.atan2(b[1] - a[1], b[0] - a[0])) + 90.0) % 180.0 - 90.0
        return ax.text(xy[0], xy[1], text, fontsize=fontsize, rotation=ang, rotation_mode="anchor",
                       ha="center", va="center", zorder=8, color="black", clip_on=True,
                       bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": "none", "alpha": 0.85})
    return make


def _label_along(ax, pieces: list[np.ndarray], text: str, fontsize: float, placed: list) -> bool:
    """One inline label on the longest pieces, where it overlaps no other label."""
    def screen_length(p):
        d = np.diff(ax.transData.transform(p), axis=0)
        return float(np.sum(np.hypot(d[:, 0], d[:, 1])))

    ranked = sorted(pieces, key=screen_length, reverse=True)[:4]
    for p in ranked:
        if screen_length(p) < 3.0 * fontsize * len(text) * 0.6:
            break  # too short to carry its label legibly
        fracs = (0.5, 0.3, 0.7, 0.2, 0.8, 0.4, 0.6, 0.1, 0.9)
        if _place(ax, [_on_line(ax, p, text, f, fontsize) for f in fracs], placed) is not None:
            return True
    return False


def _zone_lines(geom, outline) -> list[np.ndarray]:
    """The boundary of a zone polygon inside the area: the pieces along the area's own
    outline (drawn as the outline) left out."""
    import shapely

    scale = max(math.sqrt(max(outline.area, 1e-12)), 1.0)
    inner = geom.boundary.difference(outline.boundary.buffer(1e-7 * scale))
    out = []
    for part in shapely.get_parts(shapely.line_merge(inner) if not inner.is_empty else inner):
        if part.geom_type == "LineString" and part.length > 0:
            out.append(np.asarray(part.coords))
    return out


def _zone_specs(zones: list, area_name: str, set_id: str, outline):
    """(kind, pieces, label) of each zone of one area and set, as the plan draws them."""
    specs = []
    for z in zones:
        if z.area != area_name or z.set_id != set_id or z.kind not in STYLES:
            continue
        label = SHORT.get(z.kind) or f"{z.level:g}x {z.population}"
        specs.append((z.kind, _zone_lines(z.geometry, outline), label))
    return specs


def _grid_specs(x, y, specs) -> list:
    """(kind, pieces, label) of each (kind, grid, level, label) contour of a grid."""
    return [(kind, _lines(x, y, grid, level), label) for kind, grid, level, label in specs]


def _draw_boundaries(ax, specs, fontsize: float, placed: list) -> list[tuple[str, str]]:
    """Draw every (kind, pieces, label) boundary; returns the (kind, label) drawn."""
    drawn, lines = [], []
    for kind, pieces, label in specs:
        if not pieces:
            continue
        ls, lw, _ = STYLES[kind]
        for p in pieces:
            ax.plot(p[:, 0], p[:, 1], color="black", linestyle=ls, linewidth=lw,
                    path_effects=_halo(lw + 2.0), zorder=6, solid_capstyle="round")
        lines.append((pieces, label))
        drawn.append((kind, label))

    ax.apply_aspect()
    for pieces, label in lines:
        _label_along(ax, pieces, label, fontsize, placed)
    return drawn


def _boundary_specs(ratio: dict, set_id: str, own_population: str, extra: Sequence[float]):
    rg, ro = ratio.get((set_id, "general")), ratio.get((set_id, "occupational"))
    specs = []
    if rg is not None:
        specs.append(("general-limit", rg, 1.0, SHORT["general-limit"]))
    if ro is not None:
        specs.append(("occupational-limit", ro, 1.0, SHORT["occupational-limit"]))
        specs.append(("occupational-10x", ro, 10.0, SHORT["occupational-10x"]))
    own = ratio.get((set_id, own_population))
    done = {("general", 1.0), ("occupational", 1.0), ("occupational", 10.0)}
    for lv in sorted({float(v) for v in extra}):
        if own is not None and (own_population, lv) not in done:
            specs.append(("extra", own, lv, f"{lv:g}x {own_population}"))
    return specs


# ---------------------------------------------------------------------------------------
# furniture: antennas, north arrow, scale bar, title block, legend
# ---------------------------------------------------------------------------------------


def _clusters(antennas, radius: float, same_az_deg: float = 10.0) -> list[list[int]]:
    """Groups of antennas that share one label: closer than ``radius`` to a member of the
    group and pointing the same way (within ``same_az_deg``); single linkage."""
    def near(i, j):
        a, b = antennas[i], antennas[j]
        d_az = abs((float(a.azimuth_deg) - float(b.azimuth_deg) + 180.0) % 360.0 - 180.0)
        dist = math.hypot(*(np.asarray(a.position_m[:2], float) - np.asarray(b.position_m[:2], float)))
        return dist < radius and d_az <= same_az_deg

    groups: list[list[int]] = []
    for i in range(len(antennas)):
        joined = [g for g in groups if any(near(i, j) for j in g)]
        groups = [g for g in groups if g not in joined] + [sorted([i, *(j for g in joined for j in g)])]
    return sorted(groups)


def _label_spots(ue: float, un: float, arrow_pt: float, dist_pt: float = 11.0):
    """Offsets (points) round an antenna to try for its label, nearest first: behind, the
    sides, ahead beyond the arrow head; then the same twice as far out."""
    base = math.degrees(math.atan2(un, ue))
    for ring in (1.0, 2.0):
        for turn in (180, 135, 225, 90, 270, 0, 45, 315):
            a = math.radians(base + turn)
            d = arrow_pt + 4.0 * ring if turn == 0 else dist_pt * ring
            dx, dy = math.cos(a), math.sin(a)
            yield (d * dx, d * dy,
                   "center" if abs(dx) < 0.4 else ("left" if dx > 0 else "right"),
                   "center" if abs(dy) < 0.4 else ("bottom" if dy > 0 else "top"))


def _draw_antennas_plan(ax, antennas, span: float, fontsize: float, placed: list) -> None:
    """Discs, boresight arrows and id labels, placed where they overlap nothing drawn yet
    (antennas side by side with the same azimuth share one label)."""
    arrow = 0.07 * span
    for a in antennas:
        e, n = float(a.position_m[0]), float(a.position_m[1])
        ue, un = azimuth_unit(a.azimuth_deg)
        placed.append(_arrow_box(ax, (e, n), (e + arrow * ue, n + arrow * un)))
        ax.annotate("", xy=(e + arrow * ue, n + arrow * un), xytext=(e, n), zorder=9,
                    arrowprops={"arrowstyle": "-|>", "color": "black", "lw": 1.1,
                                "shrinkA": 0, "shrinkB": 0, "mutation_scale": 9})
        ax.plot([e], [n], marker="o", ms=5.5, mfc="white", mec="black", mew=1.0, zorder=10, ls="none")
    a0, a1 = ax.transData.transform([(0.0, 0.0), (arrow, 0.0)])
    arrow_pt = float(abs(a1[0] - a0[0])) * 72.0 / ax.figure.dpi
    for g in _clusters(antennas, max(0.06 * span, 1.0)):
        cx = float(np.mean([antennas[j].position_m[0] for j in g]))
        cy = float(np.mean([antennas[j].position_m[1] for j in g]))
        ue, un = azimuth_unit(float(antennas[g[0]].azimuth_deg))
        ids = "\n".join(antennas[j].id for j in g)

        def maker(dx, dy, ha, va, ids=ids, cx=cx, cy=cy):
            return lambda: ax.annotate(
                ids, xy=(cx, cy), xytext=(dx, dy), textcoords="offset points", ha=ha, va=va,
                fontsize=fontsize, zorder=11, linespacing=1.0, annotation_clip=True,
                bbox={"boxstyle": "round,pad=0.12", "fc": "white", "ec": "0.3", "lw": 0.4, "alpha": 0.9})

        _place(ax, [maker(*spot) for spot in _label_spots(ue, un, arrow_pt)], placed, best_effort=True)


def _north_arrow(fig) -> None:
    """North arrow in the top-right margin, outside the map (the map's +y is north)."""
    h = fig.get_figheight()
    fig.text(0.94, 1 - 1.2 / h, "N", ha="center", va="bottom", fontsize=11, fontweight="bold")
    from matplotlib.patches import FancyArrowPatch

    fig.patches.append(FancyArrowPatch((0.94, 1 - 0.95 / h), (0.94, 1 - 0.2 / h), transform=fig.transFigure,
                                       figure=fig, arrowstyle="-|>", mutation_scale=16, lw=1.6, color="black"))


def _scale_bar(ax, span: float, loc: str = "lower left") -> None:
    from mpl_toolkits.axes_grid1.anchored_artists import AnchoredSizeBar

    length = _nice_length(span)
    label = f"{length:g} m"
    bar = AnchoredSizeBar(ax.transData, length, label, loc, pad=0.4, borderpad=0.5, sep=3,
                          frameon=True, size_vertical=span * 0.006, color="black",
                          fontproperties={"size": 8})
    bar.patch.set_alpha(0.7)
    bar.set_zorder(12)
    ax.add_artist(bar)


def _title_block(fig, lines: list[str]) -> None:
    """Site name, then up to four lines of what the map shows; the caution at the foot."""
    from siteexposure import __version__
    from siteexposure.writers.cautions import ONE_LINE

    h = fig.get_figheight()
    fig.text(0.02, 1 - 0.12 / h, lines[0], ha="left", va="top", fontsize=12.5, fontweight="bold")
    for k, text in enumerate(lines[1:5]):
        fig.text(0.02, 1 - (0.42 + 0.205 * k) / h, text, ha="left", va="top", fontsize=8.8)
    fig.text(0.02, 0.1 / h, f"{ONE_LINE}  (siteexposure {__version__})", ha="left", va="bottom",
             fontsize=8, style="italic", color="0.15")


def _legend(fig, ax, drawn: list[tuple[str, str]], extra_handles: list) -> None:
    from matplotlib.lines import Line2D

    handles = []
    kinds = [k for k, _ in drawn]
    extra = [lab for k, lab in drawn if k == "extra"]
    for kind in ("occupational-limit", "general-limit", "occupational-10x", "extra"):
        if kind in kinds:
            ls, lw, text = STYLES[kind]
            if kind == "extra":
                text = "extra levels: " + ", ".join(extra)
            handles.append(Line2D([], [], color="black", linestyle=ls, linewidth=lw,
                                  path_effects=_halo(lw + 2.0), label=text))
    if not kinds:
        handles.append(Line2D([], [], color="none", label="no boundary level is reached in view"))
    handles += extra_handles
    box = ax.get_position()  # after apply_aspect: just below the x-axis label
    y = box.y0 - 0.45 / fig.get_figheight()
    fig.legend(handles=handles, loc="upper center", bbox_to_anchor=(0.46, y), ncol=3,
               fontsize=8, frameon=False, handlelength=3.2, columnspacing=1.6)


def _hatch_patch(label: str = "not assessable by these models"):
    from matplotlib.patches import Patch

    return Patch(facecolor="none", edgecolor="0.25", hatch="////", label=label)


def _colorbar(fig, ax, mesh, cax, what: str) -> None:
    box, cbox = ax.get_position(), cax.get_position()
    h = max(box.height, 2.7 / fig.get_figheight())
    cax.set_position((cbox.x0, box.y1 - h, cbox.width, h))
    cb = fig.colorbar(mesh, cax=cax, extend="both")
    cb.set_label(f"exposure ratio to the {what} [dB]   (0 dB = at the limit)", fontsize=8.5)
    cb.ax.tick_params(labelsize=8)
    cb.set_ticks(np.arange(DB_RANGE[0], DB_RANGE[1] + 1, 10))
    cb.ax.axhline(0.0, color="white", lw=2.5)
    cb.ax.axhline(0.0, color="black", lw=1.0)


def _new_figure(aspect: float):
    """A figure sized for an equal-aspect map of ``aspect`` = height / width of the data.

    Inches: 1.55 title block on top, the map 7.6 wide (1.6 to 6.4 high; the colour bar
    at least 2.7), 1.35 below for the axis label, the legend and the caution.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    width, map_w, top, bottom = 10.0, 7.6, 1.55, 1.35
    map_h = float(np.clip(map_w * aspect, 1.6, 6.4))
    height = top + max(map_h, 2.7) + bottom
    fig = Figure(figsize=(width, height), dpi=_DPI)
    FigureCanvasAgg(fig)
    ax = fig.add_axes((0.8 / width, (height - top - map_h) / height, map_w / width, map_h / height))
    ax.set_anchor("N")  # an equal-aspect map hangs just below the title block
    cax = fig.add_axes((8.75 / width, (height - top - max(map_h, 2.7)) / height, 0.22 / width,
                        max(map_h, 2.7) / height))
    return fig, ax, cax


def _map_axes(lo, hi, xlabel: str, ylabel: str):
    """Figure, map axes (equal aspect, ``lo``..``hi`` in data metres) and colour-bar axes."""
    fig, ax, cax = _new_figure(float((hi[1] - lo[1]) / (hi[0] - lo[0])))
    ax.set_aspect("equal", adjustable="box")
    ax.set_xlim(lo[0], hi[0])
    ax.set_ylim(lo[1], hi[1])
    ax.set_facecolor("0.93")
    ax.set_xlabel(xlabel, fontsize=9)
    ax.set_ylabel(ylabel, fontsize=9)
    ax.tick_params(labelsize=8)
    ax.grid(True, color="white", lw=0.6, zorder=0)
    ax.apply_aspect()
    return fig, ax, cax


def _mesh(ax, x, y, ratio):
    """The exposure ratio in dB as cells centred on the grid points."""
    return ax.pcolormesh(_edges(x), _edges(y), _db(ratio), cmap=CMAP, vmin=DB_RANGE[0],
                         vmax=DB_RANGE[1], shading="flat", zorder=2, rasterized=True)


def _limit_title(result: SiteResult, set_id: str) -> str:
    src = result.limit_sources.get(set_id, {})
    title = src.get("title") or src.get("publication") or ""
    return f"Limits: {set_id}" + (f" ({title})" if title else "")


# ---------------------------------------------------------------------------------------
# plan of one area
# ---------------------------------------------------------------------------------------


def _view_of_area(site, area) -> tuple[np.ndarray, np.ndarray, list, list]:
    """View box of an area's plan with the antennas and receptors near it."""
    from shapely.geometry import Point, Polygon

    outline = np.asarray(area.outline_en, dtype=float)
    lo, hi = outline.min(axis=0), outline.max(axis=0)
    reach = max(15.0, 0.75 * float(np.hypot(*(hi - lo))))
    box = Polygon.from_bounds(lo[0] - reach, lo[1] - reach, hi[0] + reach, hi[1] + reach)
    ants = [a for a in site.antennas if box.contains(Point(a.position_m[:2]))]
    recs = [p for p in site.points if box.contains(Point(p.at_m[:2]))]
    allp = np.vstack([outline] + [np.asarray(a.position_m[:2], float)[None] for a in ants]
                     + [np.asarray(p.at_m[:2], float)[None] for p in recs])
    vlo, vhi = allp.min(axis=0), allp.max(axis=0)
    pad = 0.12 * float(max(vhi - vlo)) + 1.5  # room for the boresight arrows and their labels
    return vlo - pad, vhi + pad, ants, recs


def _averaging_text(avg) -> str:
    how = "mean" if avg.method == "vertical-line" else "peak"
    return f"{how} of {avg.points} points {avg.bottom_m:g}-{avg.top_m:g} m above the floor"


def _plan_figure(result: SiteResult, zones: list, ar, set_id: str):
    from matplotlib.lines import Line2D
    from matplotlib.patches import PathPatch
    from matplotlib.path import Path as MPath
    from shapely.geometry import Polygon

    site, area = result.site, ar.area
    pop = area.population
    outline = np.asarray(area.outline_en, dtype=float)
    ring = np.vstack([outline, outline[:1]])
    vlo, vhi, ants, recs = _view_of_area(site, area)
    span = float(max(vhi - vlo))
    fs = 7.5

    fig, ax, cax = _map_axes(vlo, vhi, "east of the site origin [m]", "north of the site origin [m]")
    placed: list = []

    for other in site.areas:  # the other areas, for context (labelled later)
        if other.name != area.name:
            o = np.asarray(other.outline_en, dtype=float)
            oring = np.vstack([o, o[:1]])
            ax.plot(oring[:, 0], oring[:, 1], color="0.45", lw=0.9, zorder=3)

    patch = PathPatch(MPath(ring, closed=True), fc="none", ec="none")
    ax.add_patch(patch)
    # each cell coloured with the highest value judged in it (outline samples included)
    mesh = _mesh(ax, ar.east_m, ar.north_m, ar.cell_max((set_id, pop)))
    mesh.set_clip_path(patch)
    handles = []
    na = [z for z in zones if z.area == area.name and z.set_id == set_id and z.kind == "not-assessable"]
    for z in na:
        _hatch_geometry(ax, z.geometry)
    if na:
        handles.append(_hatch_patch())
    ax.plot(ring[:, 0], ring[:, 1], color="black", lw=2.2, zorder=7)

    _draw_antennas_plan(ax, ants, span, fs, placed)
    mid = 0.5 * (vlo[0] + vhi[0])
    for p in recs:
        ax.plot([p.at_m[0]], [p.at_m[1]], marker="s", ms=5, mfc="0.85", mec="black", zorder=10, ls="none")
        right = p.at_m[0] <= mid
        t = ax.annotate(p.name, xy=(p.at_m[0], p.at_m[1]), xytext=(6 if right else -6, 0),
                        textcoords="offset points", ha="left" if right else "right",
                        fontsize=fs - 0.5, va="center", zorder=11, annotation_clip=True)
        placed.append(t.get_window_extent(fig.canvas.get_renderer()))
    for other in site.areas:
        if other.name != area.name:
            _area_label(ax, other, f"{other.name}\n({other.access}, floor {other.floor_m:g} m)",
                        fs - 0.5, placed)
    # the boundaries are those of the zones (engine.zones), which hold every judged point
    # above their level: the map shows what the verdict found
    drawn = _draw_boundaries(ax, _zone_specs(zones, area.name, set_id, Polygon(outline)),
                             fs, placed)
    _north_arrow(fig)
    _scale_bar(ax, span)

    handles += [Line2D([], [], color="black", lw=2.2, label=f"this area ({area.access} access)"),
                Line2D([], [], marker="o", mfc="white", mec="black", ls="none",
                       label="antenna, arrow = boresight azimuth")]
    if recs:
        handles.append(Line2D([], [], marker="s", mfc="0.85", mec="black", ls="none", label="receptor point"))
    _legend(fig, ax, drawn, handles)
    what = "general-public limit" if pop == "general" else "occupational limit"
    _colorbar(fig, ax, mesh, cax, what)
    summ = next((s for s in ar.summaries if s.set_id == set_id), None)
    verdict = ""
    if summ is not None:
        mx = summ.max_exposure_ratio
        verdict = (f"Highest exposure ratio in the area {mx:.3g} ({10 * math.log10(mx):+.1f} dB): {summ.verdict}"
                   if np.isfinite(mx) and mx > 0 else f"Verdict: {summ.verdict}")
        if summ.n_not_assessable:
            verdict += f"; {summ.n_not_assessable} of {summ.n_points} points judged not assessable"
    _title_block(fig, [
        site.name,
        f"Plan of {area.name}: {area.access} access, judged against the {what}; floor {area.floor_m:g} m above site ground",
        f"{_limit_title(result, set_id)}; colour: {_averaging_text(site.averaging)}",
        verdict,
        "North is up (true north at the site origin); axes in metres from the site origin",
    ])
    return fig


def _area_label(ax, area, text: str, fontsize: float, placed: list) -> None:
    """Label an area inside its outline where it overlaps no other label (or not at all)."""
    from shapely.geometry import Point, Polygon

    poly = Polygon(np.asarray(area.outline_en, dtype=float))
    x0, y0, x1, y1 = poly.bounds
    rp = poly.representative_point()
    spots = [(rp.x, rp.y)] + [(x0 + fx * (x1 - x0), y0 + fy * (y1 - y0))
                              for fy in (0.5, 0.25, 0.75, 0.1, 0.9) for fx in (0.5, 0.3, 0.7, 0.15, 0.85)]
    _place(ax, [lambda x=x, y=y: ax.text(x, y, text, fontsize=fontsize, color="0.3", ha="center",
                                         va="center", zorder=4, style="italic", clip_on=True)
                for x, y in spots if poly.contains(Point(x, y))], placed)


def _hatch_geometry(ax, geom) -> None:
    import shapely
    from matplotlib.patches import PathPatch
    from matplotlib.path import Path as MPath

    for poly in shapely.get_parts(geom):
        if poly.geom_type != "Polygon" or poly.is_empty:
            continue
        verts, codes = [], []
        for ring in [poly.exterior, *poly.interiors]:
            c = np.asarray(ring.coords)[:, :2]
            verts.append(c)
            codes += [MPath.MOVETO] + [MPath.LINETO] * (len(c) - 2) + [MPath.CLOSEPOLY]
        ax.add_patch(PathPatch(MPath(np.vstack(verts), codes), fc="none", ec="0.25", lw=0.0,
                               hatch="////", zorder=5))


# ---------------------------------------------------------------------------------------
# elevation cut through one antenna
# ---------------------------------------------------------------------------------------


def _free_text(ax, spots, text: str, fontsize: float, placed: list) -> bool:
    """Write ``text`` at the first (x, y, va) spot where it overlaps nothing placed."""
    box = {"boxstyle": "round,pad=0.12", "fc": "white", "ec": "none", "alpha": 0.8}
    return _place(ax, [lambda x=x, y=y, va=va: ax.text(x, y, text, fontsize=fontsize, ha="center",
                                                       va=va, zorder=8, clip_on=True, bbox=box)
                       for x, y, va in spots], placed) is not None


def _floors_on_cut(ax, site, ant, dist, z, fs, placed) -> bool:
    """Floors the cut plane crosses, with the averaging band above them."""
    import shapely
    from shapely.geometry import LineString, Polygon

    ue, un = azimuth_unit(ant.azimuth_deg)
    e0, n0 = float(ant.position_m[0]), float(ant.position_m[1])
    line = LineString([(e0 + dist[0] * ue, n0 + dist[0] * un), (e0 + dist[-1] * ue, n0 + dist[-1] * un)])
    avg = site.averaging
    any_floor = False
    for area in site.areas:
        inter = line.intersection(Polygon(np.asarray(area.outline_en, float)))
        for seg in shapely.get_parts(inter):
            if seg.geom_type != "LineString" or seg.length <= 0:
                continue
            c = np.asarray(seg.coords)
            d = np.sort((c[:, 0] - e0) * ue + (c[:, 1] - n0) * un)
            any_floor = True
            ax.plot(d, [area.floor_m] * len(d), color="0.1", lw=3.0, solid_capstyle="butt", zorder=7)
            if area.access != "none":
                ax.fill_between(d, area.floor_m + avg.bottom_m, area.floor_m + avg.top_m, fc="none",
                                ec="white", lw=0.8, ls=(0, (2, 2)), zorder=4)
            _free_text(ax, [(float(np.mean(d)), area.floor_m - 0.012 * (z[-1] - z[0]), "top"),
                            (float(np.mean(d)), area.floor_m + 0.012 * (z[-1] - z[0]), "bottom")],
                       f"{area.name} ({area.access})", fs - 0.5, placed)
    return any_floor


def _antennas_on_cut(ax, site, ant, span, fs, placed) -> None:
    """The cut antenna with its tilted boresight, and antennas within 1 m of the plane."""
    ue, un = azimuth_unit(ant.azimuth_deg)
    e0, n0 = float(ant.position_m[0]), float(ant.position_m[1])
    for other in site.antennas:
        off = np.asarray(other.position_m[:2], float) - (e0, n0)
        d_along = float(off[0] * ue + off[1] * un)
        d_perp = float(-off[0] * un + off[1] * ue)
        main = other.id == ant.id
        if not main and abs(d_perp) > 1.0:
            continue
        zc = float(other.position_m[2])
        if main:
            tilt = math.radians(float(ant.mechanical_tilt_deg) + float(ant.electrical_tilt_deg))
            L = 0.08 * span
            tip = (d_along + L * math.cos(tilt), zc - L * math.sin(tilt))
            placed.append(_arrow_box(ax, (d_along, zc), tip))
            ax.annotate("", xy=tip, xytext=(d_along, zc), zorder=9,
                        arrowprops={"arrowstyle": "-|>", "color": "black", "lw": 1.3, "shrinkA": 0,
                                    "shrinkB": 0, "mutation_scale": 10})
        ax.plot([d_along], [zc], marker="o", ms=6 if main else 4.5, mfc="white", mec="black",
                mew=1.0, zorder=10, ls="none")
        if main:
            t = ax.annotate(other.id, xy=(d_along, zc), xytext=(-8, 8), textcoords="offset points",
                            ha="right", va="bottom", fontsize=fs + 0.5, fontweight="bold", zorder=11,
                            bbox={"boxstyle": "round,pad=0.12", "fc": "white", "ec": "0.3", "lw": 0.4})
            placed.append(t.get_window_extent(ax.figure.canvas.get_renderer()))


def _elevation_figure(result: SiteResult, antenna_id: str, set_id: str, cut):
    from matplotlib.lines import Line2D

    site = result.site
    ant = site.antenna(antenna_id)
    dist, z, ratio = cut
    rg = ratio[(set_id, "general")]
    fs = 7.5
    ex, ez = _edges(dist), _edges(z)
    fig, ax, cax = _map_axes((ex[0], ez[0]), (ex[-1], ez[-1]),
                             f"distance along azimuth {ant.azimuth_deg:g} deg from below {ant.id} [m]"
                             "   (negative = behind, positive = in front)", "height above site ground [m]")
    mesh = _mesh(ax, dist, z, rg)
    placed: list = []
    handles = []
    bad = ~np.isfinite(rg)
    if bad.any():
        ax.contourf(dist, z, bad.astype(float), levels=[0.5, 1.5], colors="none", hatches=["////"], zorder=5)
        handles.append(_hatch_patch())
    span = float(max(dist[-1] - dist[0], z[-1] - z[0]))
    floors = _floors_on_cut(ax, site, ant, dist, z, fs, placed)
    _antennas_on_cut(ax, site, ant, span, fs, placed)
    drawn = _draw_boundaries(ax, _grid_specs(dist, z, _boundary_specs(ratio, set_id, "general",
                                                                       site.zone_levels)),
                             fs, placed)
    _scale_bar(ax, float(dist[-1] - dist[0]), loc="upper left")
    handles.append(Line2D([], [], marker="o", mfc="white", mec="black", ls="none",
                          label="antenna, arrow = boresight with downtilt"))
    if floors:
        handles += [Line2D([], [], color="0.1", lw=3.0, label="floor crossed by the cut"),
                    Line2D([], [], color="0.6", lw=0.8, ls=(0, (2, 2)),
                           label=f"averaging heights {site.averaging.bottom_m:g}-{site.averaging.top_m:g} m")]
    _legend(fig, ax, drawn, handles)
    _colorbar(fig, ax, mesh, cax, "general-public limit")
    tilt = float(ant.mechanical_tilt_deg) + float(ant.electrical_tilt_deg)
    _title_block(fig, [
        site.name,
        f"Elevation cut through {ant.id} ({ant.operator}, {ant.frequency_mhz:g} MHz): vertical plane of its "
        f"boresight azimuth {ant.azimuth_deg:g} deg, downtilt {tilt:g} deg",
        f"{_limit_title(result, set_id)}",
        "Colour: point values, all antennas summed, no spatial averaging; boresight to the right",
        "Lines on the occupational grid (solid, dash-dot) and the general-public grid (dashed, dotted)",
    ])
    return fig


# ---------------------------------------------------------------------------------------
# saving
# ---------------------------------------------------------------------------------------


def _save(fig, path: Path, fmt: str) -> Path:
    import matplotlib

    from siteexposure.atomic import atomic_path

    rc = {"svg.hashsalt": "siteexposure-maps", "svg.fonttype": "none", "svg.image_inline": True}
    meta = {"svg": {"Date": None, "Creator": "siteexposure"}, "png": {"Software": None}}.get(fmt, {})
    with matplotlib.rc_context(rc), atomic_path(path) as tmp:
        fig.savefig(tmp, format=fmt, dpi=_DPI, metadata=meta)
    return path


def render_maps(result: SiteResult, zones: list, out_dir: Path | str,
                formats: Sequence[str] = ("png", "svg"), *,
                progress: Callable[[int, int, str], None] | None = None) -> list[Path]:
    """Write the plan of every evaluated area and the elevation cut of every antenna (see
    :func:`_render_maps`); names from the site file are drawn as given, never as maths text
    (a ``$`` in a name is a dollar sign)."""
    import matplotlib

    with matplotlib.rc_context({"text.parse_math": False}):
        return _render_maps(result, zones, out_dir, formats, progress=progress)


def _render_maps(
    result: SiteResult,
    zones: list,
    out_dir: Path | str,
    formats: Sequence[str] = ("png", "svg"),
    *,
    progress: Callable[[int, int, str], None] | None = None,
) -> list[Path]:
    """Write the plan of every evaluated area and the elevation cut of every antenna.

    Parameters
    ----------
    result : SiteResult
    zones : list of Zone
        From :func:`siteexposure.engine.zones.compute_zones` (not-assessable parts).
    out_dir : path
        Folder to write into (created if needed).
    formats : sequence of {"png", "svg"}
    progress : callable, optional
        Called as ``progress(done, total, label)`` after each map.

    Returns
    -------
    list of Path
        The files written, plans first, in a fixed order.
    """
    from siteexposure.atomic import check_writable_dir
    from siteexposure.engine.combos import build_combos
    from siteexposure.engine.orchestrator import build_sources, load_limit_sets
    from siteexposure.engine.sections import adaptive_cut
    from siteexposure.errors import OutputError
    from siteexposure.output_guard import protected_inputs, refuse_input_overwrite
    from siteexposure.writers.bundle import GEOJSON_NAME, GRID_CSV_NAME, KML_NAME, output_names

    formats = tuple(formats)
    for f in formats:
        if f not in ("png", "svg"):
            raise OutputError(f"map format {f!r}: expected png or svg")
    site = result.site
    names = [n for n in output_names(site, formats) if n not in (GEOJSON_NAME, KML_NAME, GRID_CSV_NAME)]
    refuse_input_overwrite([Path(out_dir) / n for n in names], protected_inputs(site))
    out = check_writable_dir(Path(out_dir))
    plans = [(i, ar) for i, ar in enumerate(result.areas) if ar.evaluated and ar.ratio and ar.area.population]
    total = len(plans) * len(site.limits) + len(site.antennas) * len(site.limits)
    done, written = 0, []
    for i, ar in plans:
        for set_id in site.limits:
            fig = _plan_figure(result, zones, ar, set_id)
            stem = map_file_stem("plan", i + 1, ar.area.name, set_id)
            written += [_save(fig, out / f"{stem}.{f}", f) for f in formats]
            done += 1
            if progress:
                progress(done, total, stem)
    if site.antennas:
        sources, _ = build_sources(site)
        table = build_combos(load_limit_sets(site), site.antennas)
        for k, ant in enumerate(site.antennas):
            cut = adaptive_cut(result, sources, ant.id, table=table)
            for set_id in site.limits:
                fig = _elevation_figure(result, ant.id, set_id, cut)
                stem = map_file_stem("elevation", k + 1, ant.id, set_id)
                written += [_save(fig, out / f"{stem}.{f}", f) for f in formats]
                done += 1
                if progress:
                    progress(done, total, stem)
    return written
