"""One run of tracescreen, from input files to every output table: ``run(inputs, options) -> Results``.

The steps, each run once, in order (the data contract between them: DEVELOPERS.md, "The data model"):

1. :func:`load` -- limit tables (:mod:`tracescreen.limits.load`), the sites file
   (:mod:`tracescreen.io.sites`) and the lab files or a workspace's current results
   (:mod:`tracescreen.io.loading`, :mod:`tracescreen.store.workspace`): accepted, set-aside and
   rejected rows, and every input file with its SHA-256.
2. :func:`lab_qc` -- the laboratory QC review of the QC rows the lab files carry (and of separate
   QC files), and the calibration checks of calibration files (:mod:`tracescreen.retest.labqc`,
   :mod:`tracescreen.retest.calibration`); whole batches, before the parts; skipped when there is neither.
3. :func:`screen` -- every accepted result against every limit that applies (:mod:`tracescreen.screening`);
   the period rules evaluated once (statuses and the periods table); optionally the uncertainty guard band.
4. :func:`statistics` -- summaries, exceedance rates and trend tests per series (:mod:`tracescreen.statistics`).
5. :func:`retest` -- the retest list from result flags and QC checks (:mod:`tracescreen.retest`),
   with the laboratory QC review's and the calibration's reasons.
   Steps 3 to 5 run in partitions of whole sites (:mod:`tracescreen.streaming`): memory bounded by a part.
6. :func:`wells` (when ``Options.wells`` is set) -- monitoring wells against background and fixed
   standards (:mod:`tracescreen.statistics.background`, US EPA Unified Guidance 2009).

``tracescreen screen``, ``trends`` and ``report`` and the dashboard call these functions; none
wires the stages itself. The module is light to import: each step imports its stage when it runs.
Each step reports its progress (:mod:`tracescreen.progress`) to ``run(..., progress=callback)``.

Examples
--------
>>> from tracescreen.pipeline import Inputs, Options, run
>>> results = run(Inputs(results=("lab.csv",), limits=("limits/",), sites="sites.csv"),
...               Options(guard_band=1.0))  # doctest: +SKIP
>>> results.screened["status"].value_counts()  # doctest: +SKIP
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Callable

from tracescreen.progress import Callback, report, reporting, stage
from tracescreen.retest.labqc.options import LabQcOptions
from tracescreen.retest.options import RetestOptions
from tracescreen.statistics.options import StatisticsOptions


@dataclass(frozen=True)
class Inputs:
    """What a run reads.

    Attributes
    ----------
    results : tuple of str
        Lab files (CSV, XLSX); empty when ``workspace`` is given.
    limits : tuple of str
        Limit-table YAML files or folders of them.
    sites : str or None
        Sites CSV; without it every limit table applies to every site.
    workspace : str or None
        A workspace folder: its current results instead of ``results``.
    reading : tracescreen.io.loading.LoadOptions or None
        How to read the lab files (column map, date order, ...); None for the defaults.
    qc_files : tuple of str
        Separate laboratory QC summary files (the QC rows of the lab files are reviewed without them).
    calibration_files : tuple of str
        The laboratory's calibration files (standards, calibration blanks, MDL study, sample responses).
    dataset : str or None
        A results dataset (Parquet, partitioned by site group: ``tracescreen export --parquet``), read one
        site group at a time (:mod:`tracescreen.io.dataset`) instead of ``results``.
    """

    results: tuple = ()
    limits: tuple = ()
    sites: str | None = None
    workspace: str | None = None
    reading: Any = None
    qc_files: tuple = ()
    calibration_files: tuple = ()
    dataset: str | None = None


@dataclass(frozen=True)
class Options:
    """What a run computes, and how.

    Attributes
    ----------
    cross_fraction : bool
        Decide across fractions where certain (total >= dissolved; :mod:`tracescreen.screening.fractions`).
    guard_band : float or None
        Guard band factor f of the uncertainty decision (g = f x U); None: no uncertainty columns.
    periods : bool
        Build the periods table (``periods.csv``) with the results behind each period value.
    statistics : StatisticsOptions or None
        Summaries and trend tests to compute; None: none.
    retest : RetestOptions or None
        Retest checks to run; None: no retest list.
    part_rows : int or None
        Results screened at once (parts of whole sites); None: :data:`tracescreen.screening.parts.PART_ROWS`.
    record_run : str or None
        With a workspace, record this run in it under this command name (with the SHA-256 of the
        limit tables and the sites file).
    lab_qc : LabQcOptions or None
        Laboratory QC review and calibration checks; None: neither.
    wells : WellsOptions or None
        Statistics of monitoring wells against background and standards (network, design); None: none.
    """

    cross_fraction: bool = True
    guard_band: float | None = None
    periods: bool = True
    statistics: StatisticsOptions | None = field(default_factory=StatisticsOptions)
    retest: RetestOptions | None = field(default_factory=RetestOptions)
    part_rows: int | None = None
    record_run: str | None = None
    lab_qc: LabQcOptions | None = field(default_factory=LabQcOptions)
    wells: Any = None


@dataclass
class Loaded:
    """The inputs as read (step 1)."""

    loaded: Any  # tracescreen.io.loading.LoadResult: accepted, rejected, set_aside, files, warnings
    limits: Any  # tracescreen.limits.load.LimitSet
    sites: Any  # DataFrame of sites, or None
    input_files: Any  # DataFrame: kind, file, path, sheet, sha256 of every input file


@dataclass
class Results(Loaded):
    """Every output table of a run (see DEVELOPERS.md for each table's columns).

    Attributes
    ----------
    screened : DataFrame
        ``screening.csv``: one row per (result, applicable limit).
    periods : DataFrame or None
        ``periods.csv``: one row per period value.
    summary, exceedances, trends : DataFrame or None
        ``summary.csv``, ``exceedances.csv``, ``trends.csv``.
    retest : DataFrame or None
        ``retest.csv``.
    lab_qc : tracescreen.retest.labqc.review.LabQcReview or None
        The laboratory QC review (``qc_verdicts.csv``, ``qualified_results.csv``, ``qc_batches.csv``);
        None when the run has no laboratory QC rows.
    calibration : tracescreen.retest.calibration.review.CalibrationReview or None
        The calibration checks; None without calibration files.
    wells : dict of DataFrame or None
        The tables of ``tracescreen wells`` (:data:`tracescreen.statistics.background.run.TABLES`).
    options : Options
        The options of the run.
    """

    screened: Any = None
    periods: Any = None
    summary: Any = None
    exceedances: Any = None
    trends: Any = None
    retest: Any = None
    lab_qc: Any = None
    calibration: Any = None
    wells: Any = None
    options: Options = field(default_factory=Options)

    @property
    def statistics_notes(self) -> list[str]:
        """The statistics methods in words (empty when no statistics were computed)."""
        return self.options.statistics.notes() if self.options.statistics is not None else []


def load(inputs: Inputs, record_run: str | None = None) -> Loaded:
    """Step 1: read limit tables, sites and results (user errors raise the stage's own error).

    Parameters
    ----------
    inputs : Inputs
    record_run : str, optional
        With a workspace, record the run in it under this command name.
    """
    from tracescreen._internal.hashing import file_sha256
    from tracescreen.io.sites import load_sites, use_warnings
    from tracescreen.limits.load import load_limits

    limits = load_limits(list(inputs.limits))
    sites = load_sites(inputs.sites) if inputs.sites else None
    loaded = read_results(inputs, sites)
    loaded.warnings.extend(use_warnings(sites, limits.uses))
    rows = [{"kind": "results", "file": r.file, "path": r.path, "sheet": r.sheet, "sha256": r.sha256}
            for r in loaded.files.itertuples()] if len(loaded.files) else []
    rows += [{"kind": "limits", "file": Path(p).name, "path": p, "sheet": "", "sha256": file_sha256(p)}
             for p in limits.tables["path"]]
    if inputs.sites:
        rows.append({"kind": "sites", "file": Path(inputs.sites).name, "path": inputs.sites, "sheet": "",
                     "sha256": file_sha256(inputs.sites)})
    if inputs.workspace and record_run:
        from tracescreen.store.workspace import open_workspace

        with open_workspace(inputs.workspace) as ws:
            ws.record_screening_run(record_run, len(loaded.accepted), limits.tables["path"], inputs.sites,
                                    {"accepted": len(loaded.accepted), "rejected": len(loaded.rejected)})
    import pandas as pd

    return Loaded(loaded, limits, sites, pd.DataFrame(rows))


def read_results(inputs: Inputs, sites=None):
    """The lab results of a run: the lab files of ``inputs``, or its workspace's current results
    (:class:`tracescreen.io.loading.LoadResult`; results of sites not in ``sites`` are rejected)."""
    if inputs.dataset:  # read part by part during the run (streaming.run_dataset_parts)
        from tracescreen.io.dataset import dataset_files

        return dataset_files(inputs.dataset)
    from tracescreen.io.sites import sites_name

    if inputs.workspace:
        from tracescreen.store.workspace import open_workspace

        with stage("read", detail=Path(inputs.workspace).name), open_workspace(inputs.workspace) as ws:
            return ws.load_result(sites, sites_name(inputs.sites))
    from tracescreen.io.loading import load_results

    return load_results(inputs.results, inputs.reading, sites, sites_name=sites_name(inputs.sites))


def screen(accepted, limits, sites, options: Options, period_base: int = 0, one_part: bool = False) -> tuple:
    """Step 3: the screening rows and (when ``options.periods``) the periods table, from one pass.

    Parameters
    ----------
    accepted : DataFrame
        Accepted results (DEVELOPERS.md contract).
    limits : LimitSet
    sites : DataFrame or None
    options : Options
        ``cross_fraction``, ``guard_band``, ``periods`` and ``part_rows`` apply.
    period_base, one_part : int, bool
        ``accepted`` is one part of whole sites (:mod:`tracescreen.streaming`), screened in one go; its
        period ids follow ``period_base``; each screening row's result (position in ``accepted``) is returned too.

    Returns
    -------
    (screened, periods), or (screened, periods, position) with ``one_part``
    """
    from tracescreen._internal.memory import release_unused
    from tracescreen.screening.parts import PART_ROWS, screen_in_parts, screen_part

    report("screen", 0, len(accepted))
    if one_part:
        screened, periods, position = screen_part(accepted, limits, sites, options.cross_fraction, options.periods,
                                                  period_base)
    else:
        screened, periods = screen_in_parts(accepted, limits, sites, cross_fraction=options.cross_fraction,
                                            with_periods=options.periods, part_rows=options.part_rows or PART_ROWS)
    if options.guard_band is not None:
        from tracescreen.screening.uncertainty import uncertainty_decision

        screened = uncertainty_decision(screened, options.guard_band)
    release_unused()
    report("screen", len(accepted), len(accepted), finished=True)
    return (screened, periods, position) if one_part else (screened, periods)


def statistics(accepted, screened, options: StatisticsOptions) -> dict:
    """Step 4: the statistics tables ``options.tables`` asks for: ``summary``, ``exceedances``, ``trends``."""
    from tracescreen._internal.memory import release_unused
    from tracescreen.statistics.summary import exceedance_rates, summarise

    steps = {"summary": lambda: summarise(accepted, method=options.method, n_boot=options.n_boot, seed=options.seed,
                                              ucl=options.ucl),
             "exceedances": lambda: exceedance_rates(screened), "trends": lambda: trends(accepted, screened, options)}
    names, out = [t for t in steps if t in options.tables], {}
    for k, name in enumerate(names):
        report("statistics", k, len(names), unit="tables", detail=name)
        out[name] = steps[name]()
        release_unused()
    report("statistics", len(names), len(names), unit="tables", finished=True)
    return out


def trends(accepted, screened, options: StatisticsOptions):
    """The trend table (``trends.csv``) of the site samples, with the lowest limit each series must meet."""
    import pandas as pd

    from tracescreen.statistics.trends import TABLE_COLUMNS, lowest_limits, trend_table

    if not (accepted["sample_type"].astype(str) == "sample").any():  # nothing to test: empty table
        return pd.DataFrame({c: pd.Series(dtype=object) for c in TABLE_COLUMNS})
    return trend_table(accepted, alpha=options.alpha, seasonal=options.seasonal,
                       min_n=options.min_trend_values, limits=lowest_limits(screened))


def lab_qc(data: Loaded, inputs: Inputs, options: LabQcOptions) -> tuple[Any, Any]:
    """Step 2: the laboratory QC review and the calibration checks.

    Returns
    -------
    (review, calibration)
        :class:`tracescreen.retest.labqc.review.LabQcReview` (None when neither the lab files nor
        ``inputs.qc_files`` carry laboratory QC rows) and
        :class:`tracescreen.retest.calibration.review.CalibrationReview` (None without calibration files).
    """
    with stage("lab_qc"):
        return _lab_qc(data, inputs, options)


def _lab_qc(data: Loaded, inputs: Inputs, options: LabQcOptions) -> tuple[Any, Any]:
    from tracescreen.retest.labqc.review import review_load
    from tracescreen.retest.labqc.windows import load_windows

    reading = inputs.reading
    column_map = getattr(reading, "column_map", None)
    date_order = getattr(reading, "date_order", "iso")
    encoding = getattr(reading, "encoding", "utf-8")
    windows = load_windows(options.windows) if options.windows else None
    review = review_load(data.loaded, inputs.qc_files, column_map, date_order, encoding, windows)
    calibration = None
    if inputs.calibration_files:
        from tracescreen.retest.calibration.review import review_calibration

        calibration = review_calibration(inputs.calibration_files, data.loaded.accepted, options.weighting, encoding)
    return review, calibration


def retest(screened, options: RetestOptions, lab_qc=None, blanks=None):
    """Step 5: the retest list (``retest.csv``); ``lab_qc``: rows of the laboratory QC review, listed with the
    others; ``blanks``: the run's blanks when ``screened`` holds some of its sites (a run in parts)."""
    from tracescreen._internal.memory import release_unused
    from tracescreen.retest.listing import retest_list

    with stage("retest"):
        out = retest_list(screened, options, lab_qc=lab_qc, blanks=blanks)
        release_unused()
    return out


def run(inputs: Inputs, options: Options | None = None,
        on_loaded: Callable[[Loaded], None] | None = None, progress: Callback | None = None) -> Results:
    """Load, screen, compute statistics, review the laboratory QC and build the retest list: every
    output table of one run.

    Parameters
    ----------
    inputs : Inputs
        Files (or a workspace), limit tables and sites.
    options : Options, optional
        What to compute; the defaults compute everything.
    on_loaded : callable, optional
        Called with the :class:`Loaded` inputs before screening (e.g. to show the loader's warnings).
    progress : callable, optional
        Receives a :class:`tracescreen.progress.Step` as each step gets on (stage, units done, total);
        None keeps the callback of an enclosing ``progress.reporting`` block, if any.

    Returns
    -------
    Results
    """
    with reporting(progress):
        return _run(inputs, options or Options(), on_loaded)


def _run(inputs: Inputs, options: Options, on_loaded) -> Results:
    data = load(inputs, options.record_run)
    if on_loaded is not None:
        on_loaded(data)
    from tracescreen.sinks import RESULTS, MemorySink

    out = run_loaded(data, inputs, options, sink := MemorySink())
    for name, table in RESULTS.items():
        setattr(out, name, sink.table(table))
    if options.wells is not None:
        out.wells = wells(data.loaded.accepted, out.screened, options.wells)
    return out


def run_loaded(data: Loaded, inputs: Inputs, options: Options, sink, wide: bool = False) -> Results:
    """Steps 2-5 in partitions of whole sites, each table to ``sink`` part by part (``wide``: also
    ``screening_wide``): :func:`tracescreen.streaming.run_steps`."""
    from tracescreen.streaming import run_steps

    return run_steps(data, inputs, options, sink, wide)


@dataclass(frozen=True)
class WellsOptions:
    """What the wells step needs: the network (:func:`tracescreen.io.network.read_network`), the
    design (:class:`tracescreen.statistics.background.design.Design`) and whether a background upper
    tolerance limit above a table value replaces it as the standard."""

    network: Any
    design: Any
    background_standard: bool = False


def wells(accepted, screened, options: WellsOptions) -> dict:
    """Step 6: monitoring wells against background and fixed standards: background checks,
    prediction limits with retesting and each well's status over its retest sequence, control charts,
    tolerance limits and confidence limits against the screened limits (one table per method)."""
    from tracescreen.statistics.background.run import well_statistics

    with stage("wells"):
        return well_statistics(accepted, options.network, options.design, screened, options.background_standard)
