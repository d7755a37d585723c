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
from pathlib import Path


def screen_one(path: str) -> dict:
    """Screen one site file; a JSON-ready summary row (never raises for bad input)."""
    from siteexposure.engine.orchestrator import evaluate_site
    from siteexposure.errors import SiteExposureError
    from siteexposure.readers.site_toml import read_site

    row: dict = {"path": str(path), "site": None, "exceeded_where_reachable": None, "areas": [], "error": None}
    try:
        site = read_site(path)
        res = evaluate_site(site, progress=False)
    except SiteExposureError as exc:
        row["error"] = str(exc)
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


def screen_many(paths: Sequence[str | Path], *, workers: int | None = None, dask_address: str | None = None) -> list[dict]:
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
    """
    items = [str(p) for p in paths]
    if dask_address is not None:
        from dask.distributed import Client, LocalCluster

        if dask_address == "local":
            with LocalCluster(n_workers=workers or 1, threads_per_worker=1, processes=True) as cluster, Client(cluster) as client:
                return client.gather(client.map(screen_one, items, pure=False))
        with Client(dask_address) as client:
            return client.gather(client.map(screen_one, items, pure=False))
    n = workers or min(len(items), os.cpu_count() or 1)
    if n <= 1 or len(items) <= 1:
        return [screen_one(p) for p in items]
    with ProcessPoolExecutor(max_workers=n) as pool:
        return list(pool.map(screen_one, items))
