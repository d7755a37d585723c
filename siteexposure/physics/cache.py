"""Work that field models share between antennas: one explicit object, owned by the engine.

A taper fit, a sphere integral or a table of pattern maxima depends on the pattern, the
frequency and the body, not on where the antenna stands or how much power it gets. Antennas
that share them (the sectors of one operator's band, the same antenna type on every site of
a batch) compute them once. The engine makes one :class:`ModelCache` per run (a batch
worker one per process) and hands it to every model it prepares; nothing is kept in module
globals, so a second run in a process costs what the first did, and memory is released with
the cache.
"""

from __future__ import annotations

import hashlib
from collections.abc import Callable, Hashable
from typing import Any

import numpy as np


class ModelCache:
    """A bounded memo of prepared model parts, keyed by what they were computed from.

    Parameters
    ----------
    size : int
        Largest number of entries per kind; the oldest entry goes first.
    """

    def __init__(self, size: int = 64) -> None:
        self.size = int(size)
        self._memo: dict[str, dict[Hashable, tuple[tuple, Any]]] = {}
        self.hits = 0
        self.misses = 0

    def get(self, kind: str, key: Hashable, build: Callable[[], Any], *, hold: tuple = ()
            ) -> Any:
        """The entry ``(kind, key)``, built by ``build()`` the first time.

        ``hold`` keeps objects alive with the entry (patterns keyed by ``id()``), so that an
        id in a key cannot be reused by another object while the entry lives.
        """
        memo = self._memo.setdefault(kind, {})
        hit = memo.get(key)
        if hit is not None and all(a is b for a, b in zip(hit[0], hold, strict=False)):
            self.hits += 1
            return hit[1]
        self.misses += 1
        value = build()
        if len(memo) >= self.size:
            memo.pop(next(iter(memo)))
        memo[key] = (tuple(hold), value)
        return value

    def clear(self) -> None:
        self._memo.clear()


def content_key(arrays, *scalars) -> tuple:
    """A key for exact values: SHA-256 of the arrays' shapes and bytes, then the scalars."""
    digest = hashlib.sha256()
    for a in arrays:
        a = np.ascontiguousarray(a, dtype=float)
        digest.update(str(a.shape).encode())
        digest.update(a.tobytes())
    return (digest.hexdigest(), *scalars)
