"""One run in partitions of whole sites: every per-result and per-series output table, part by part.

Everything screening and the series statistics compute stays within one site: the limits that
apply follow the site's uses, hardness is per sample, a cross-fraction pair is one sample, running
means and percentiles are per site and metal, a series is a site, metal and fraction, the retest
flags look at one result or one series. So the run takes the accepted results a group of whole
sites at a time (:func:`tracescreen.screening.parts.site_partitions`, about
:data:`~tracescreen.screening.parts.PART_ROWS` results each), computes every table of that group
(:func:`part_tables`) and hands the tables to a *sink*, then frees the group's memory:

* :class:`~tracescreen.sinks.MemorySink` joins the parts into whole tables (the pipeline's
  :class:`~tracescreen.pipeline.Results`, used by the report and the dashboard; the screening rows in input order);
* :class:`~tracescreen.sinks.FileSink` streams each table to its file (:class:`tracescreen.report.streams.TableStream`)
  on a background thread while the next part is computed: peak memory is set by the part size, not by the
  number of results.

Two checks look across sites and are given whole-run inputs: a contaminated blank speaks for every
sample of its batch, whichever site (the run's blank rows, :func:`blank_rows`, go to every part), and
the laboratory QC review judges whole batches (its retest rows are computed once and each part
lists those of its sites, :func:`lab_qc_rows_of`). The result is the same rows as one pass over all
results; only the order of the screening rows differs between sinks (parts one after the other, each
in input order, for files; input order in memory).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import pandas as pd

#: Output tables computed per part, in the order they are written.
PART_TABLES = ("screening", "screening_wide", "periods", "summary", "exceedances", "trends", "retest")


@dataclass
class PartContext:
    """What every part of a run needs besides its own results.

    Attributes
    ----------
    limits, sites
        The run's limit set and sites table (:class:`tracescreen.pipeline.Loaded`).
    options : tracescreen.pipeline.Options
    keys : DataFrame or None
        :func:`tracescreen.screening.wide.limit_keys` of the limit set; None: no result-wide table.
    blanks : DataFrame or None
        The run's blank rows (:func:`blank_rows`), for the blank check of every part.
    lab_qc : DataFrame or None
        Retest rows of the laboratory QC review and the calibration checks (whole run).
    calibration : CalibrationReview or None
        The calibration checks: they annotate the retest rows (:meth:`~tracescreen.retest.calibration.review.CalibrationReview.annotate`).
    run_sites : array of str or None
        Every site of the run (laboratory QC rows of other sites are listed with the first part).
    days : set of str
        Date columns of the outputs written as days (:func:`output_days`).
    """

    limits: Any
    sites: Any
    options: Any
    keys: Any = None
    blanks: Any = None
    lab_qc: Any = None
    calibration: Any = None
    run_sites: Any = None
    days: set = field(default_factory=set)
    first_part: bool = field(default=True)


def blank_rows(accepted: pd.DataFrame) -> pd.DataFrame | None:
    """The field and laboratory blanks of a run (few rows): the blank check judges every part's samples by them."""
    from tracescreen.retest.qc_checks import BLANK_TYPES

    blanks = accepted[accepted["sample_type"].isin(BLANK_TYPES)]
    return blanks if len(blanks) else None


def lab_qc_rows_of(rows: pd.DataFrame | None, part_sites: pd.Series, ctx: "PartContext") -> pd.DataFrame | None:
    """The laboratory QC retest rows of a part's sites (the first part also lists those of no site of the run)."""
    if rows is None or not len(rows):
        return None
    site = rows["site_id"].astype(str)
    mine = site.isin(pd.unique(part_sites.astype(str)))
    if ctx.first_part and ctx.run_sites is not None:
        mine |= ~site.isin(ctx.run_sites)
    return rows[mine.to_numpy()]


def part_tables(accepted: pd.DataFrame, ctx: PartContext, period_base: int = 0) -> dict[str, pd.DataFrame]:
    """Every per-result and per-series table of one part of whole sites.

    Parameters
    ----------
    accepted : DataFrame
        Accepted results of whole sites (DEVELOPERS.md contract), any order.
    ctx : PartContext
    period_base : int
        Added to the part's period ids (numbered 1, 2, ... within the part).

    Returns
    -------
    dict
        The :data:`PART_TABLES` the options ask for (DataFrames); ``screening`` in the part's input
        order, with the column ``row`` as given, and ``position``: each screening row's result (0-based
        position in ``accepted``).
    """
    from tracescreen import pipeline

    o = ctx.options
    screened, periods, position = pipeline.screen(accepted, ctx.limits, ctx.sites, o, period_base, one_part=True)
    out = {"screening": screened, "position": position}
    if ctx.keys is not None:
        from tracescreen.screening.wide import result_wide

        out["screening_wide"] = result_wide(screened, ctx.keys, result_id=position)
    if periods is not None:
        out["periods"] = periods
    if o.statistics is not None:
        out.update(pipeline.statistics(accepted, screened, o.statistics))
    if o.retest is not None:
        lab = lab_qc_rows_of(ctx.lab_qc, accepted["site_id"], ctx)
        out["retest"] = pipeline.retest(screened, o.retest, lab_qc=lab, blanks=ctx.blanks)
        if ctx.calibration is not None:
            out["retest"] = ctx.calibration.annotate(out["retest"])
    return out


def run_steps(data, inputs, options, sink, wide: bool = False):
    """Steps 2-5 of a run (:mod:`tracescreen.pipeline`) in partitions of whole sites: the lab files' (or a
    workspace's) accepted results in parts (:func:`run_in_parts`), or a results dataset one site group at a
    time (:func:`run_dataset_parts`); each table to ``sink``. Returns the :class:`~tracescreen.pipeline.Results`
    holding the whole-run tables (laboratory QC review, calibration); the part tables are the sink's."""
    from tracescreen import pipeline
    from tracescreen.io.sites import sites_name

    out = pipeline.Results(data.loaded, data.limits, data.sites, data.input_files, options=options)
    if inputs.dataset:
        run_dataset_parts(inputs.dataset, dataset_context(inputs.dataset, data, options, wide,
                                                          days=getattr(sink, "days", None)), sink,
                          sites_name(inputs.sites), options.part_rows)
        return out
    if options.lab_qc is not None:
        out.lab_qc, out.calibration = pipeline.lab_qc(data, inputs, options.lab_qc)
    run_in_parts(data.loaded.accepted, files_context(data, options, wide, out.lab_qc, out.calibration), sink,
                 options.part_rows)
    return out


def run_in_parts(accepted: pd.DataFrame, ctx: PartContext, sink, part_rows: int | None = None) -> None:
    """Compute every part's tables (:func:`part_tables`) and hand them to ``sink``.

    ``sink.add(name, frame, position)``: ``position`` (screening only, else None) gives each row's
    result as its position in ``accepted``.
    """
    from tracescreen._internal.memory import release_unused
    from tracescreen._internal.parallel import BackgroundWork
    from tracescreen.progress import report

    done, total = 0, len(accepted)
    report("screen", 0, total, detail="screening, statistics and retest list, part by part")
    with BackgroundWork(getattr(sink, "background", False)) as writes:
        for k, (positions, tables) in enumerate(_parts(accepted, ctx, part_rows, 0, True)):
            done += len(positions)
            report("screen", done, total, detail=f"part {k + 1} (whole sites): screened, statistics, retest list")
            position = positions[tables.pop("position")]
            writes.submit(_adder(sink, [(name, tables[name], position if name == "screening" else None)
                                        for name in PART_TABLES if name in tables]))
            del tables
            release_unused()
    report("screen", total, total, finished=True)


def _parts(accepted: pd.DataFrame, ctx: PartContext, part_rows: int | None, base: int, first: bool):
    """Each part of whole sites of ``accepted`` (positions in it) with its tables (:func:`part_tables`);
    period ids numbered on from ``base``; ``first``: the run's first part is among them."""
    from tracescreen.progress import reporting
    from tracescreen.screening.parts import PART_ROWS, last_period_id, site_partitions

    for k, (positions, part) in enumerate(site_partitions(accepted, part_rows or PART_ROWS)):
        ctx.first_part = first and k == 0
        with reporting(_silent):  # the run reports parts, not each part's own steps
            tables = part_tables(part, ctx, base)
        del part
        base = last_period_id(tables["screening"], base)
        if "periods" in tables and len(tables["periods"]):
            base = max(base, int(tables["periods"]["period_id"].max()))
        yield positions, tables


def _adder(sink, tables: list):
    """A job handing one part's ``(name, frame, position)`` tables to ``sink``, in order."""
    def add() -> None:
        for name, frame, position in tables:
            sink.add(name, frame, position)
    return add


def _silent(step) -> None:
    """A progress callback that shows nothing (the steps inside one part)."""


#: Period ids of a site group of a dataset start at group x this (a group numbers its periods without
#: waiting for the others; ids stay below 10^15, exact in a spreadsheet).
GROUP_STRIDE = 1_000_000_000


def dataset_part_tables(part, group: int, ctx: PartContext, sites_name: str = "the sites file") -> dict:
    """Every per-result and per-series table of one site group of a results dataset
    (:mod:`tracescreen.io.dataset`), and its ``rejected`` rows (sites not in the sites file)."""
    from tracescreen.io.dataset import read_part

    accepted, rejected = read_part(part, ctx.sites, sites_name)
    tables = part_tables(accepted, ctx, period_base=group * GROUP_STRIDE)
    tables["rejected"] = rejected
    tables["accepted"] = len(accepted)
    return tables


def _keys(limits, wide: bool):
    """The result-wide table's limit keys (None: no result-wide table)."""
    if not wide:
        return None
    from tracescreen.screening.wide import limit_keys

    return limit_keys(limits.entries)


def files_context(data, options, wide: bool = False, review=None, calibration=None) -> PartContext:
    """The :class:`PartContext` of a run over loaded lab files (:class:`tracescreen.pipeline.Loaded`): the
    run's blanks, the retest rows of the laboratory QC review and the calibration checks, every site of the run."""
    from tracescreen.retest.listing import lab_qc_retest

    accepted = data.loaded.accepted
    retest = options.retest is not None
    lab = lab_qc_retest(review, calibration) if retest else None
    return PartContext(data.limits, data.sites, options, keys=_keys(data.limits, wide),
                       blanks=blank_rows(accepted) if retest else None, lab_qc=lab,
                       calibration=calibration, run_sites=accepted["site_id"].astype(str).unique(),
                       days=output_days(accepted))


def dataset_context(path, data, options, wide: bool = False, days: set[str] | None = None) -> PartContext:
    """The :class:`PartContext` of a run over a results dataset: the dataset's blanks (read with a
    filter, few rows) for the blank check; no laboratory QC rows (a dataset holds accepted results only).
    ``days``: the date columns written as days, when the caller has them (else :func:`dataset_days`)."""
    from tracescreen.io.dataset import read_rows
    from tracescreen.retest.qc_checks import BLANK_TYPES

    keys = _keys(data.limits, wide)
    blanks = None
    if options.retest is not None:
        blanks = read_rows(path, "sample_type", BLANK_TYPES)
        blanks = blanks if len(blanks) else None
    return PartContext(data.limits, data.sites, options, keys=keys, blanks=blanks,
                       days=dataset_days(path) if days is None else days)


def dataset_days(path) -> set[str]:
    """:func:`output_days` of a results dataset, from its sampling and analysis dates alone (two columns read)."""
    import pyarrow.compute as pc

    from tracescreen.io.dataset import scan

    whole = {"sampled_at", "analysed_at"}
    for table in scan(path, columns=["sampled_at", "analysed_at"]):  # file by file (memory: one file)
        if not whole:
            break
        for c in list(whole):
            col = table.column(c).cast(pa_timestamp())
            if pc.all(pc.equal(pc.floor_temporal(col, unit="day"), col)).as_py() is False:
                whole.discard(c)
    days = set(DAY_COLUMNS)
    if "sampled_at" in whole:
        days |= {"sampled_at", "first_sampled", "last_sampled"}
    return days | (whole & {"analysed_at"})


def pa_timestamp():
    """Arrow's millisecond timestamp type."""
    import pyarrow as pa

    return pa.timestamp("ms")


def run_dataset_parts(path, ctx: PartContext, sink, sites_name: str = "the sites file",
                      part_rows: int | None = None) -> int:
    """:func:`run_in_parts` over the site groups of a results dataset, read one at a time, each in parts of
    whole sites of about ``part_rows`` results (a group written with many results stays within the
    memory of one part); returns the number of results accepted. ``sink`` also receives each group's
    ``rejected`` rows."""
    from tracescreen._internal.memory import release_unused
    from tracescreen._internal.parallel import BackgroundWork
    from tracescreen.io.dataset import dataset_parts, group_of, read_part
    from tracescreen.progress import report

    accepted, parts = 0, dataset_parts(path)
    report("screen", 0, len(parts), unit="site groups")
    with BackgroundWork(getattr(sink, "background", False)) as writes:
        for k, part in enumerate(parts):
            rows, rejected = read_part(part, ctx.sites, sites_name)
            accepted += len(rows)
            if len(rejected):
                writes.submit(_adder(sink, [("rejected", rejected, None)]))
            for _, tables in _parts(rows, ctx, part_rows, group_of(part) * GROUP_STRIDE, k == 0):
                tables.pop("position")
                writes.submit(_adder(sink, [(name, tables[name], None) for name in PART_TABLES if name in tables]))
                del tables
                release_unused()
            del rows
            report("screen", k + 1, len(parts), unit="site groups", detail=part.name, finished=k + 1 == len(parts))
    return accepted


#: Date columns of the output tables that are days by construction (periods, trend-line crossings).
DAY_COLUMNS = {"period_start", "period_end", "crosses_limit_on"}


def output_days(accepted: pd.DataFrame) -> set[str]:
    """Date columns of a run's output tables written as days: :data:`DAY_COLUMNS`, and the sampling
    (analysis) dates and the columns taken from them when no result of the run has a time of day."""
    from tracescreen.report.streams import days_of

    days = set(DAY_COLUMNS)
    whole = days_of(accepted[[c for c in ("sampled_at", "analysed_at") if c in accepted.columns]])
    if "sampled_at" in whole:
        days |= {"sampled_at", "first_sampled", "last_sampled"}
    return days | (whole & {"analysed_at"})
