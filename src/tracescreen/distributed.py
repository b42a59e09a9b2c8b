"""The run on a Dask cluster: each site group of a results dataset screened on a worker, outputs as partitioned Parquet.

Past one machine the same per-part computation (:func:`tracescreen.streaming.dataset_part_tables`)
runs on the workers of a ``dask.distributed`` cluster [Dask]_: one task per site group of the
dataset (:mod:`tracescreen.io.dataset`; a site's results never split across workers), each task
reading its group's Parquet files, computing every per-result and per-series table and writing
each as one file of a partitioned Parquet output (``OUT/screening/part-00003.parquet``: the part's
site group). The client only sends the run's context (limit tables, sites, options, the dataset's
blanks) once to every worker and gathers small summaries (rows per table, status counts, each
worker's peak memory). ``--engine dask`` starts a :class:`distributed.LocalCluster` on this
machine (``--workers N`` processes of one thread); ``--scheduler ADDRESS`` uses a running cluster.
tracescreen brings no scheduler of its own.

Every worker needs tracescreen (the same version) and its dependencies installed, and must see
the dataset and the output folder at the same path (a shared file system); see README "Running on
a cluster".

References
----------
[Dask]_ (docs/references.md)
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import pandas as pd

from tracescreen.streaming import PART_TABLES, PartContext


def screen_site_group(part: str, group: int, ctx: PartContext, out: str, sites_name: str) -> dict:
    """One task: every table of one site group, each written as ``out/<table>/part-<group>.parquet``.

    Returns rows per table, status and retest-reason counts, accepted results and the worker's peak
    memory [MB].
    """
    from tracescreen._internal.memory import peak_memory_mb
    from tracescreen.report.streams import write_table
    from tracescreen.streaming import dataset_part_tables

    tables = dataset_part_tables(part, group, ctx, sites_name)
    tables.pop("position")
    summary = {"group": group, "accepted": tables.pop("accepted"), "rows": {}}
    for name in PART_TABLES + ("rejected",):
        t = tables.get(name)
        if t is None:
            continue
        summary["rows"][name] = len(t)
        if len(t):  # an empty part adds no file (readers take the columns from the others)
            write_table(t, Path(out) / name / f"part-{group:05d}.parquet", "parquet", name=name,
                        days=ctx.days)
    summary["status"] = tables["screening"]["status"].value_counts().to_dict()
    summary["reasons"] = tables["retest"]["reason"].value_counts().to_dict() if "retest" in tables else {}
    summary["peak_mb"] = peak_memory_mb()
    try:
        from distributed import get_worker

        summary["worker"] = get_worker().address
    except (ImportError, ValueError):  # not on a worker (called directly)
        summary["worker"] = "local"
    return summary


@dataclass
class ClusterRun:
    """What a run on a cluster gives back: per-table rows, counts, and each task's summary."""

    rows: dict = field(default_factory=dict)
    accepted: int = 0
    status_counts: pd.Series = field(default_factory=lambda: pd.Series(dtype="int64"))
    reason_counts: pd.Series = field(default_factory=lambda: pd.Series(dtype="int64"))
    tasks: list = field(default_factory=list)
    workers: dict = field(default_factory=dict)  # worker address -> its highest peak memory [MB]


def run_on_cluster(dataset, ctx: PartContext, out, *, scheduler: str | None = None, workers: int = 2,
                   sites_name: str = "the sites file") -> ClusterRun:
    """Screen every site group of ``dataset`` on a Dask cluster; outputs under ``out`` as partitioned Parquet.

    Parameters
    ----------
    dataset : path
        Results dataset (``tracescreen export --parquet``), seen by every worker at this path.
    ctx : PartContext
        The run's context (:func:`tracescreen.streaming.dataset_context`).
    out : path
        Output folder, seen by every worker at this path.
    scheduler : str, optional
        Address of a running scheduler (``tcp://host:8786``); default: a LocalCluster on this machine.
    workers : int
        Worker processes of the LocalCluster (one thread each).
    """
    from distributed import Client, LocalCluster, as_completed

    from tracescreen.io.dataset import dataset_parts, group_of
    from tracescreen.progress import report

    parts = dataset_parts(dataset)
    cluster = None
    if scheduler:
        client = Client(scheduler)
    else:
        cluster = LocalCluster(n_workers=workers, threads_per_worker=1, processes=True, dashboard_address=None,
                               silence_logs=40)
        client = Client(cluster)
    result = ClusterRun()
    try:
        shared = client.scatter(ctx, broadcast=True)
        futures = client.map(screen_site_group, [str(p) for p in parts], [group_of(p) for p in parts],
                             ctx=shared, out=str(Path(out).resolve()), sites_name=sites_name, pure=False)
        for done, future in enumerate(as_completed(futures), 1):
            s = future.result()
            result.tasks.append(s)
            result.accepted += s["accepted"]
            for name, n in s["rows"].items():
                result.rows[name] = result.rows.get(name, 0) + n
            result.status_counts = result.status_counts.add(pd.Series(s["status"], dtype="int64"), fill_value=0)
            result.reason_counts = result.reason_counts.add(pd.Series(s["reasons"], dtype="int64"), fill_value=0)
            result.workers[s["worker"]] = max(result.workers.get(s["worker"], 0.0), s["peak_mb"])
            report("screen", done, len(futures), unit="site groups", detail=f"on {s['worker']}",
                   finished=done == len(futures))
    finally:
        client.close()
        if cluster is not None:
            cluster.close()
    return result
