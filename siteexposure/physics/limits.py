"""Published RF exposure limits: evaluation, plane-wave conversions, exposure-ratio sums.

A limit set (one publication, one edition) is a table of frequency bands. In every band each
published quantity has the form ``a * (f / f_ref) ** b`` with ``f`` in MHz, so a band is stored
as coefficient/exponent columns (:class:`Bands`) and evaluated here, vectorised over frequency.
The tables themselves are data files read by :mod:`siteexposure.readers.limit_tables`; this
module does no file reading.

Quantities a table may give in a band (NaN where the publication gives none):

* ``e_v_m``: RMS electric field strength [V/m]
* ``h_a_m``: RMS magnetic field strength [A/m]
* ``s_w_m2``: power density (incident, or plane-wave equivalent) [W/m²]
* ``s_h_w_m2``: a second, H-derived plane-wave-equivalent power density, where the
  publication prints both S_E and S_H (IEEE Std C95.1-2019 below 100 MHz) [W/m²]
* ``averaging_min``: averaging time for E², S (and H² unless given separately) [min]
* ``averaging_h_min``: averaging time for H² where the publication gives its own [min]

References
----------
.. [1] 47 CFR §1.1310, Table 1 (FCC maximum permissible exposure).
.. [2] ICNIRP, "Guidelines for limiting exposure to electromagnetic fields (100 kHz to
   300 GHz)", Health Phys. 118(5):483-524, 2020, Tables 5 and 6.
.. [3] ICNIRP, "Guidelines for limiting exposure to time-varying electric, magnetic, and
   electromagnetic fields (up to 300 GHz)", Health Phys. 74(4):494-522, 1998, Tables 6 and 7.
.. [4] IEEE Std C95.1-2019, whole-body exposure reference levels.
.. [5] Health Canada, Safety Code 6 (2015), reference levels 10 MHz-300 GHz.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from siteexposure.constants import ETA0
from siteexposure.errors import LimitsError

POPULATIONS: tuple[str, ...] = ("general", "occupational")  #: fixed population words
REGIONS: tuple[str, ...] = ("whole-body", "local")  #: exposure regions, whole body first
INCLUSIVE: dict[str, tuple[bool, bool]] = {  #: word -> (lower edge inside, upper edge inside)
    "upper": (False, True),
    "lower": (True, False),
    "both": (True, True),
    "neither": (False, False),
}
#: quantity name -> (coefficient column, exponent column) of :class:`Bands`
PAIRS: dict[str, tuple[str, str]] = {
    "e": ("e_a", "e_b"),
    "h": ("h_a", "h_b"),
    "s": ("s_a", "s_b"),
    "sh": ("sh_a", "sh_b"),
    "averaging_min": ("averaging_min_a", "averaging_min_b"),
    "averaging_h_min": ("averaging_h_min_a", "averaging_h_min_b"),
}

# How the power-density limit of a band was obtained (see LimitSet.power_density_limit_w_m2).
S_FROM_TABLE = "table S"
S_FROM_TABLE_EH = "table S_E/S_H, smaller"
S_FROM_E_AND_H = "plane wave from E and H, smaller"
S_FROM_E = "plane wave from E"
S_FROM_H = "plane wave from H"


# ------------------------------------------------------------------ plane-wave conversions
def s_from_e(e_v_m: Any) -> np.ndarray:
    """Plane-wave power density from the RMS electric field, ``S = E² / η0``.

    Parameters
    ----------
    e_v_m : array_like
        RMS electric field strength. [V/m]

    Returns
    -------
    numpy.ndarray
        Power density. [W/m²]

    Notes
    -----
    In a plane wave in free space E/H = η0 = μ0·c, so S = E·H = E²/η0 = η0·H².

    References
    ----------
    .. [1] Free-space plane-wave relation (common practice). The published tables follow it,
       e.g. 47 CFR §1.1310 Table 1 (A), 30-300 MHz: 61.4 V/m with 1.0 mW/cm² (10 W/m²).
    """
    e = np.asarray(e_v_m, dtype=float)
    return e * e / ETA0


def s_from_h(h_a_m: Any) -> np.ndarray:
    """Plane-wave power density from the RMS magnetic field, ``S = η0 · H²``. [W/m²]

    Parameters
    ----------
    h_a_m : array_like
        RMS magnetic field strength. [A/m]

    Returns
    -------
    numpy.ndarray
        Power density. [W/m²]
    """
    h = np.asarray(h_a_m, dtype=float)
    return ETA0 * h * h


def e_from_s(s_w_m2: Any) -> np.ndarray:
    """RMS electric field of a plane wave of power density S, ``E = sqrt(S · η0)``. [V/m]

    Parameters
    ----------
    s_w_m2 : array_like
        Power density. [W/m²]
    """
    return np.sqrt(np.asarray(s_w_m2, dtype=float) * ETA0)


def h_from_s(s_w_m2: Any) -> np.ndarray:
    """RMS magnetic field of a plane wave of power density S, ``H = sqrt(S / η0)``. [A/m]

    Parameters
    ----------
    s_w_m2 : array_like
        Power density. [W/m²]
    """
    return np.sqrt(np.asarray(s_w_m2, dtype=float) / ETA0)


# ------------------------------------------------------------------------- exposure ratio
def exposure_ratio_sum(s_w_m2: Any, limit_w_m2: Any) -> np.ndarray:
    """Total exposure ratio of several sources, ``Σ_i S_i / S_limit,i``.

    Parameters
    ----------
    s_w_m2 : array_like, shape (n_source, n_point) or (n_source,)
        Power density of each source at each point. [W/m²]
    limit_w_m2 : array_like, shape (n_source,)
        Power-density limit at each source's frequency. [W/m²]

    Returns
    -------
    numpy.ndarray, shape (n_point,) (or () for 1-D input)
        Sum over sources of S/limit; 1 means at the limit. NaN in any source's density at a
        point makes that point NaN (not assessable), never a silent pass. [1]

    Notes
    -----
    ``R = Σ_i S_i / S_limit(f_i)``; exposure complies where R <= 1. This is the
    multiple-frequency rule for thermal effects in the publications held here (ICNIRP 2020
    and 1998, "simultaneous exposure to multiple frequency fields"; FCC OET Bulletin 65,
    Edition 97-01, multiple-transmitter sites: the sum of the fractions of the MPE).

    References
    ----------
    .. [1] FCC OET Bulletin 65, Edition 97-01 (1997), section on multiple-transmitter
       sites (section number from memory).

    Examples
    --------
    >>> exposure_ratio_sum([[1.0, 2.0], [5.0, 0.0]], [10.0, 50.0])
    array([0.2, 0.2])
    """
    s = np.asarray(s_w_m2, dtype=float)
    limit = np.asarray(limit_w_m2, dtype=float)
    if s.ndim == 0:
        raise ValueError("s_w_m2 must have a source axis: shape (n_source, ...)")
    if limit.shape != (s.shape[0],):
        raise ValueError(
            f"limit_w_m2 has shape {limit.shape}; expected ({s.shape[0]},), one limit per source"
        )
    if np.any(~(limit > 0.0)):
        raise ValueError(f"limit_w_m2 must be positive and finite, got {limit.tolist()}")
    return np.sum(s / limit.reshape((-1,) + (1,) * (s.ndim - 1)), axis=0)


# ------------------------------------------------------------------------------- tables
def _frozen(values: Sequence[Any], dtype: Any) -> np.ndarray:
    arr = np.asarray(values, dtype=dtype)
    arr.setflags(write=False)
    return arr


@dataclass(frozen=True, eq=False)
class Bands:
    """The band rows of one limit set, as read-only column arrays of length ``n_band``.

    Missing coefficient/exponent pairs are NaN. ``lower_inclusive``/``upper_inclusive`` say
    whether ``f_min_mhz``/``f_max_mhz`` belong to the band.
    """

    population: np.ndarray
    region: np.ndarray
    f_min_mhz: np.ndarray
    f_max_mhz: np.ndarray
    lower_inclusive: np.ndarray
    upper_inclusive: np.ndarray
    f_ref_mhz: np.ndarray
    e_a: np.ndarray
    e_b: np.ndarray
    h_a: np.ndarray
    h_b: np.ndarray
    s_a: np.ndarray
    s_b: np.ndarray
    sh_a: np.ndarray
    sh_b: np.ndarray
    averaging_min_a: np.ndarray
    averaging_min_b: np.ndarray
    averaging_h_min_a: np.ndarray
    averaging_h_min_b: np.ndarray
    source: tuple[str, ...] = ()
    verified: tuple[str, ...] = ()

    @classmethod
    def from_rows(cls, rows: Sequence[Mapping[str, Any]]) -> Bands:
        """Build the columns from already-validated band mappings (keys as in the data files).

        ``inclusive`` is one of :data:`INCLUSIVE`; absent pairs become NaN.
        """
        cols: dict[str, Any] = {}
        cols["population"] = _frozen([r["population"] for r in rows], object)
        cols["region"] = _frozen([r["region"] for r in rows], object)
        for key in ("f_min_mhz", "f_max_mhz", "f_ref_mhz"):
            cols[key] = _frozen([float(r[key]) for r in rows], float)
        cols["lower_inclusive"] = _frozen([INCLUSIVE[r["inclusive"]][0] for r in rows], bool)
        cols["upper_inclusive"] = _frozen([INCLUSIVE[r["inclusive"]][1] for r in rows], bool)
        for a_key, b_key in PAIRS.values():
            cols[a_key] = _frozen([float(r.get(a_key, math.nan)) for r in rows], float)
            cols[b_key] = _frozen([float(r.get(b_key, math.nan)) for r in rows], float)
        cols["source"] = tuple(str(r.get("source", "")) for r in rows)
        cols["verified"] = tuple(str(r.get("verified", "")) for r in rows)
        return cls(**cols)

    def __len__(self) -> int:
        return int(self.f_min_mhz.shape[0])


@dataclass(frozen=True, eq=False)
class LimitSet:
    """One published limit table (publication and edition), evaluated at frequencies.

    Attributes
    ----------
    id : str
        Fixed set id, e.g. ``"fcc-1310"``.
    title, publication, edition, notes : str
        Short title, full citation, which edition/amendment the values come from, notes.
    tables : tuple of str
        Table numbers of the publication held in the set.
    populations : dict
        Population word (``general``/``occupational``) -> the publication's own class name.
    bands : Bands
        Band rows.
    source_file, sha256 : str
        Data file the set was read from and the SHA-256 of its bytes (traceability).
    """

    id: str
    title: str
    publication: str
    tables: tuple[str, ...]
    populations: dict[str, str]
    bands: Bands
    source_file: str = ""
    sha256: str = ""
    edition: str = ""
    notes: str = ""
    _groups: dict[tuple[str, str], np.ndarray] = field(
        default_factory=dict, init=False, repr=False
    )

    def __post_init__(self) -> None:
        groups: dict[tuple[str, str], np.ndarray] = {}
        pop, reg = self.bands.population, self.bands.region
        for key in sorted(set(zip(pop.tolist(), reg.tolist(), strict=True))):
            idx = np.flatnonzero((pop == key[0]) & (reg == key[1]))
            order = np.lexsort((self.bands.f_max_mhz[idx], self.bands.f_min_mhz[idx]))
            groups[key] = idx[order]
        self._groups.update(groups)

    # ---------------------------------------------------------------- selection helpers
    def regions(self) -> tuple[str, ...]:
        """Exposure regions the set defines, whole body first (e.g. ``("whole-body", "local")``)."""
        present = {r for _, r in self._groups}
        return tuple(r for r in REGIONS if r in present)

    def _rows(self, population: str, region: str) -> np.ndarray:
        if population not in self.populations:
            raise LimitsError(
                f"limit set '{self.id}': population '{population}' is not defined; expected one "
                f"of {', '.join(sorted(self.populations))}"
            )
        if (population, region) not in self._groups:
            raise LimitsError(
                f"limit set '{self.id}': region '{region}' is not defined; expected one of "
                f"{', '.join(self.regions())}"
            )
        return self._groups[(population, region)]

    def frequency_range_mhz(
        self, population: str = "general", region: str = "whole-body"
    ) -> tuple[float, float]:
        """Lowest and highest frequency the table covers for a population and region. [MHz]"""
        rows = self._rows(population, region)
        return float(self.bands.f_min_mhz[rows[0]]), float(self.bands.f_max_mhz[rows[-1]])

    def band_index(self, frequency_mhz: Any, population: str, region: str = "whole-body"):
        """Index into :attr:`bands` of the band holding each frequency (shape of the input).

        Parameters
        ----------
        frequency_mhz : array_like
            Frequencies. [MHz]
        population : {"general", "occupational"}
            Population class.
        region : {"whole-body", "local"}, optional
            Exposure region.

        Raises
        ------
        LimitsError
            For a frequency that is not a positive finite number or lies outside the table.
        """
        f = np.asarray(frequency_mhz, dtype=float)
        rows = self._rows(population, region)
        flat = f.reshape(-1)
        bad = ~np.isfinite(flat) | (flat <= 0.0)
        if np.any(bad):
            raise LimitsError(
                f"limit set '{self.id}': frequency {flat[bad][0]!r} MHz is not a positive "
                f"finite number"
            )
        b = self.bands
        lo, hi = b.f_min_mhz[rows], b.f_max_mhz[rows]
        col = flat[:, None]
        above = np.where(b.lower_inclusive[rows], col >= lo, col > lo)
        below = np.where(b.upper_inclusive[rows], col <= hi, col < hi)
        inside = above & below
        found = inside.any(axis=1)
        if not np.all(found):
            f_lo, f_hi = self.frequency_range_mhz(population, region)
            missing = flat[~found]
            more = f" (and {missing.size - 1} more)" if missing.size > 1 else ""
            raise LimitsError(
                f"limit set '{self.id}' ({population}, {region}): frequency {missing[0]:g} MHz"
                f"{more} is outside the table, which covers {f_lo:g} to {f_hi:g} MHz"
            )
        return rows[np.argmax(inside, axis=1)].reshape(f.shape)

    def _power_law(self, name: str, idx: np.ndarray, f: np.ndarray) -> np.ndarray:
        a_key, b_key = PAIRS[name]
        a = getattr(self.bands, a_key)[idx]
        b = getattr(self.bands, b_key)[idx]
        with np.errstate(invalid="ignore"):
            return a * (f / self.bands.f_ref_mhz[idx]) ** b

    # ------------------------------------------------------------------------ evaluation
    def evaluate(
        self, frequency_mhz: Any, population: str, region: str = "whole-body"
    ) -> dict[str, np.ndarray]:
        """The published limits at frequencies, vectorised; NaN where the table gives none.

        Parameters
        ----------
        frequency_mhz : array_like
            Frequencies. [MHz]
        population : {"general", "occupational"}
            Population class.
        region : {"whole-body", "local"}, optional
            Exposure region; only sets with local reference levels define ``"local"``.

        Returns
        -------
        dict of numpy.ndarray, each of the input's shape
            ``s_w_m2`` [W/m²], ``s_h_w_m2`` [W/m²] (H-derived S where printed), ``e_v_m``
            [V/m], ``h_a_m`` [A/m], ``averaging_min`` [min], ``averaging_h_min`` [min] (equal
            to ``averaging_min`` where the table gives one averaging time for all).

        Notes
        -----
        In each band every value is ``a * (f / f_ref) ** b`` with the band's coefficients.

        Raises
        ------
        LimitsError
            Unknown population or region, or a frequency outside the table.
        """
        f = np.asarray(frequency_mhz, dtype=float)
        idx = self.band_index(f, population, region)
        out = {
            "s_w_m2": self._power_law("s", idx, f),
            "s_h_w_m2": self._power_law("sh", idx, f),
            "e_v_m": self._power_law("e", idx, f),
            "h_a_m": self._power_law("h", idx, f),
            "averaging_min": self._power_law("averaging_min", idx, f),
        }
        avg_h = self._power_law("averaging_h_min", idx, f)
        out["averaging_h_min"] = np.where(np.isnan(avg_h), out["averaging_min"], avg_h)
        return {key: np.asarray(value, dtype=float) for key, value in out.items()}

    def power_density_limit_w_m2(
        self, frequency_mhz: Any, population: str, region: str = "whole-body"
    ) -> np.ndarray:
        """The power-density limit to compare a computed S against. [W/m²]

        Parameters
        ----------
        frequency_mhz : array_like
            Frequencies. [MHz]
        population : {"general", "occupational"}
            Population class.
        region : {"whole-body", "local"}, optional
            Exposure region.

        Returns
        -------
        numpy.ndarray
            Power-density limit at each frequency. [W/m²]

        Notes
        -----
        * Where the table gives S, that S. Where it gives both S_E and S_H (IEEE C95.1-2019
          below 100 MHz), the smaller of the two.
        * Where it gives no S (e.g. ICNIRP 2020 below 30 MHz, ICNIRP 1998 below 10 MHz), the
          plane-wave equivalent of the E and H limits, the smaller of E²/η0 and η0·H². A
          far-field plane wave meets both field limits only if it meets the smaller, so this
          choice is conservative; near a source E and H must be assessed separately, which
          this single number does not do (see :meth:`describe_s`).
        """
        v = self.evaluate(frequency_mhz, population, region)
        table_s = np.fmin(v["s_w_m2"], v["s_h_w_m2"])
        plane_wave = np.fmin(s_from_e(v["e_v_m"]), s_from_h(v["h_a_m"]))
        return np.where(np.isnan(table_s), plane_wave, table_s)

    def field_density_limits_w_m2(
        self, frequency_mhz: Any, population: str, region: str = "whole-body"
    ) -> tuple[np.ndarray, np.ndarray]:
        """The limits to judge ``S_E = |E|^2/eta0`` and ``S_H = eta0 |H|^2`` against. [W/m²]

        Each field against its own limit: ``S_E`` against ``E_L^2/eta0`` and ``S_H`` against
        ``eta0 H_L^2`` where the table prints E and H (near a source the two differ and each
        must be met: 47 CFR 1.1310 Table 1 note on near-field exposure, ICNIRP 2020 sec. 4
        below 30 MHz, ICNIRP 1998 sec. 4, IEEE C95.1-2019 Table 7; from memory), the printed
        S_E and S_H where the table gives those (IEEE C95.1-2019), and the table's S for a
        field the table gives no limit for (a plane-wave density above the frequencies where E
        and H are printed: there the two densities agree outside the stand-off).

        Returns
        -------
        (s_lim_e, s_lim_h) : tuple of numpy.ndarray
            [W/m²]
        """
        v = self.evaluate(frequency_mhz, population, region)
        s_table = np.where(np.isnan(v["s_w_m2"]), v["s_h_w_m2"], v["s_w_m2"])
        s_table_h = np.where(np.isnan(v["s_h_w_m2"]), s_table, v["s_h_w_m2"])
        lim_e = np.where(np.isnan(v["e_v_m"]), s_table, s_from_e(v["e_v_m"]))
        lim_h = np.where(np.isnan(v["h_a_m"]), s_table_h, s_from_h(v["h_a_m"]))
        if not np.all(np.isnan(v["s_h_w_m2"])):  # printed S_E and S_H govern where given
            lim_e = np.where(np.isnan(v["s_h_w_m2"]), lim_e, v["s_w_m2"])
            lim_h = np.where(np.isnan(v["s_h_w_m2"]), lim_h, v["s_h_w_m2"])
        # a field the table has no limit for at all: the other field's (plane wave)
        lim_e = np.where(np.isnan(lim_e), lim_h, lim_e)
        lim_h = np.where(np.isnan(lim_h), lim_e, lim_h)
        return lim_e, lim_h

    def describe_s(
        self, frequency_mhz: Any, population: str, region: str = "whole-body"
    ) -> np.ndarray:
        """How :meth:`power_density_limit_w_m2` obtained S at each frequency (array of str).

        One of ``"table S"``, ``"table S_E/S_H, smaller"``, ``"plane wave from E and H,
        smaller"``, ``"plane wave from E"``, ``"plane wave from H"``.
        """
        v = self.evaluate(frequency_mhz, population, region)
        has_s, has_sh = ~np.isnan(v["s_w_m2"]), ~np.isnan(v["s_h_w_m2"])
        has_e, has_h = ~np.isnan(v["e_v_m"]), ~np.isnan(v["h_a_m"])
        return np.select(
            [has_s & has_sh, has_s | has_sh, has_e & has_h, has_e, has_h],
            [S_FROM_TABLE_EH, S_FROM_TABLE, S_FROM_E_AND_H, S_FROM_E, S_FROM_H],
            default="none",
        )

    def default_frequencies_mhz(self, population: str, region: str = "whole-body") -> np.ndarray:
        """Every band edge of the table plus the geometric middle of each band, sorted. [MHz]

        Used where no frequency is asked for (``siteexposure limits --set ID``): an edge belongs
        to the band that includes it, and the middle shows the band's own value. Middles are
        rounded to four significant figures for readability.
        """
        rows = self._rows(population, region)
        lo, hi = self.bands.f_min_mhz[rows], self.bands.f_max_mhz[rows]
        mid = np.sqrt(lo * hi)
        mid = np.array([float(f"{m:.4g}") for m in mid])
        return np.unique(np.concatenate([lo, hi, mid]))


# ---------------------------------------------------------------------------- JSON rows
def _num(x: Any) -> float | None:
    x = float(x)
    return None if math.isnan(x) else x


def table_rows(
    limit_sets: Iterable[str | LimitSet],
    frequencies_mhz: Iterable[float] | None = None,
    *,
    skip_out_of_range: bool = False,
) -> list[dict[str, Any]]:
    """Rows of limits for ``siteexposure limits --json``: one per set, population, region, f.

    Parameters
    ----------
    limit_sets : iterable of str or LimitSet
        Set ids (resolved with :func:`siteexposure.readers.limit_tables.load_limit_set`) or
        already-loaded sets (then this function reads no file).
    frequencies_mhz : iterable of float, optional
        Frequencies. [MHz] Without them, each table's band edges and band middles
        (:meth:`LimitSet.default_frequencies_mhz`).
    skip_out_of_range : bool, optional
        Leave out frequencies a table does not cover instead of raising LimitsError.

    Returns
    -------
    list of dict
        Keys ``set``, ``population``, ``region``, ``frequency_mhz``, ``s_w_m2`` (the
        power density printed in the table, None where it prints none), ``e_v_m``, ``h_a_m``,
        ``averaging_min``, ``averaging_h_min``, ``limit_w_m2`` (the power-density limit used
        for exposure ratios), ``s_source`` (how that limit was obtained), ``band`` (the table
        row) and ``verified`` (how the row's values were checked). None stands for NaN.
    """
    sets = []
    for item in limit_sets:
        if isinstance(item, LimitSet):
            sets.append(item)
        else:
            from siteexposure.readers.limit_tables import load_limit_set

            sets.append(load_limit_set(item))
    asked = None if frequencies_mhz is None else np.asarray(list(frequencies_mhz), dtype=float)
    rows: list[dict[str, Any]] = []
    for ls in sets:
        for population in (p for p in POPULATIONS if p in ls.populations):
            for region in ls.regions():
                f = ls.default_frequencies_mhz(population, region) if asked is None else asked
                if asked is not None and skip_out_of_range:
                    f_lo, f_hi = ls.frequency_range_mhz(population, region)
                    f = f[(f >= f_lo) & (f <= f_hi)]
                if f.size == 0:
                    continue
                idx = ls.band_index(f, population, region)
                v = ls.evaluate(f, population, region)
                limit = ls.power_density_limit_w_m2(f, population, region)
                basis = ls.describe_s(f, population, region)
                table_s = np.fmin(v["s_w_m2"], v["s_h_w_m2"])
                for k in range(f.size):
                    rows.append(
                        {
                            "set": ls.id,
                            "population": population,
                            "region": region,
                            "frequency_mhz": float(f[k]),
                            "s_w_m2": _num(table_s[k]),
                            "e_v_m": _num(v["e_v_m"][k]),
                            "h_a_m": _num(v["h_a_m"][k]),
                            "averaging_min": _num(v["averaging_min"][k]),
                            "averaging_h_min": _num(v["averaging_h_min"][k]),
                            "limit_w_m2": _num(limit[k]),
                            "s_source": str(basis[k]),
                            "band": ls.bands.source[idx[k]],
                            "verified": ls.bands.verified[idx[k]],
                        }
                    )
    return rows
