"""Re-screening many independent sites: local processes, or a Dask cluster.

Each site is independent, so a batch is a plain map of :func:`screen_one` over paths.
Locally it runs in a :class:`concurrent.futures.ProcessPoolExecutor`; on a cluster it is
handed to an existing Dask scheduler (``dask.distributed.Client``) — no home-made
scheduler. A site that fails to read or evaluate yields a row with its error message
instead of stopping the batch.
"""

from __future__ import annotations

import math
import os
from collections.abc import Sequence
from concurrent.futures import ProcessPoolExecutor
from concurrent.futures.process import BrokenProcessPool
from pathlib import Path

DASK_CONNECT_S = 10.0  #: how long a Dask scheduler address may take to answer [s]


def screen_one(path: str, confine_patterns: bool = False) -> dict:
    """Screen one site file; a JSON-ready summary row (never raises for bad input)."""
    from siteexposure.engine.orchestrator import evaluate_site
    from siteexposure.errors import SiteExposureError
    from siteexposure.readers.site_toml import read_site

    row: dict = {"path": str(path), "site": None, "exceeded_where_reachable": None, "areas": [], "error": None}
    try:
        site = read_site(path, confine_patterns=confine_patterns)
        res = evaluate_site(site, progress=False)
    except SiteExposureError as exc:
        row["error"] = str(exc)
        return row
    except RecursionError:
        row["error"] = f"{path}: nested too deeply to read; expected a flat site file"
        return row
    except OSError as exc:
        row["error"] = f"{path}: could not read: {exc.strerror or exc}"
        return row
    except Exception as exc:  # noqa: BLE001 - one site's crash is that site's row, not the batch's
        row["error"] = f"{path}: internal error ({type(exc).__name__}: {exc}); nothing was judged"
        return row
    row["site"] = site.name
    row["exceeded_where_reachable"] = res.exceeded_where_reachable
    for ar in res.areas:
        for s in ar.summaries:
            r = s.max_exposure_ratio
            row["areas"].append(
                {
                    "name": ar.area.name,
                    "access": ar.area.access,
                    "limits": s.set_id,
                    "max_exposure_ratio": r if math.isfinite(r) else None,
                    "verdict": s.verdict,
                }
            )
    return row


def screen_many(paths: Sequence[str | Path], *, workers: int | None = None,
                dask_address: str | None = None, confine_patterns: bool = False) -> list[dict]:
    """Screen every site in ``paths``; rows in the order of ``paths``.

    Parameters
    ----------
    paths : sequence of path-like
    workers : int, optional
        Local worker processes (default: the CPU count, at most the number of sites).
        ``1`` runs in this process.
    dask_address : str, optional
        Address of a running Dask scheduler (e.g. ``tcp://10.0.0.5:8786``) or
        ``"local"`` for a ``LocalCluster`` on this machine; needs ``dask[distributed]``
        (extra ``cluster``).
    confine_patterns : bool
        Refuse pattern paths outside each site file's folder.
    """
    from siteexposure.errors import InputError

    items = [str(p) for p in paths]
    if workers is not None and workers < 0:
        raise InputError(f"option '--workers': {workers}; expected 0 (one per CPU) or more")
    if dask_address is not None:
        return _on_dask(items, workers, dask_address, confine_patterns)
    n = min(workers or os.cpu_count() or 1, max_workers(), len(items))
    if n <= 1 or len(items) <= 1:
        return [screen_one(p, confine_patterns) for p in items]
    rows: list[dict] = []
    with ProcessPoolExecutor(max_workers=n) as pool:
        futures = [pool.submit(screen_one, p, confine_patterns) for p in items]
        for p, fut in zip(items, futures, strict=True):
            try:
                rows.append(fut.result())
            except BrokenProcessPool:
                rows.append({"path": p, "site": None, "exceeded_where_reachable": None,
                             "areas": [], "error": f"{p}: the worker process screening it "
                             "died (out of memory?); nothing was judged"})
    return rows


def max_workers() -> int:
    """The most local worker processes a batch starts: the CPU count (more only compete). [1]"""
    return max(1, os.cpu_count() or 1)


def _on_dask(items: list[str], workers: int | None, address: str, confine: bool
             ) -> list[dict]:
    """The batch on a Dask scheduler; an address that is malformed or does not answer within
    :data:`DASK_CONNECT_S` is one input error."""
    from siteexposure.errors import InputError

    try:
        from dask.distributed import Client, LocalCluster
    except ImportError as exc:
        raise InputError("option '--dask': needs dask[distributed] (install the extra "
                         "'cluster')") from exc
    if address == "local":
        n = min(workers or 1, max_workers())
        with LocalCluster(n_workers=n, threads_per_worker=1, processes=True) as cluster, \
                Client(cluster) as client:
            return client.gather(client.map(screen_one, items, [confine] * len(items), pure=False))
    try:
        client = Client(address, timeout=DASK_CONNECT_S)
    except (OSError, ValueError, TypeError, TimeoutError) as exc:
        raise InputError(f"option '--dask': {address!r}; could not reach a Dask scheduler "
                         f"there ({type(exc).__name__}: {exc}); expected an address such as "
                         "tcp://host:8786, or 'local'") from exc
    with client:
        return client.gather(client.map(screen_one, items, [confine] * len(items), pure=False))
