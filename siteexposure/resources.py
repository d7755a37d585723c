"""Where the bundled data folders live, in a wheel install and in a source checkout."""

from __future__ import annotations

from pathlib import Path

_PKG = Path(__file__).resolve().parent


def limits_tables_dir() -> Path:
    """The folder of published limit tables (inside the package when installed from a wheel)."""
    inside = _PKG / "limits_tables"
    if inside.is_dir():
        return inside
    return _PKG.parent / "limits_tables"


def sample_sites_dir() -> Path:
    """The folder of invented demo sites (inside the package when installed from a wheel)."""
    inside = _PKG / "sample_sites"
    if inside.is_dir():
        return inside
    return _PKG.parent / "sample_sites"
