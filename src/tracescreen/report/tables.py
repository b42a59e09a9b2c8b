"""The tables of the site summary report: what it shows, built once for the HTML page and the workbook.

:func:`report_data` gathers a run's outputs into a :class:`ReportData`; :func:`report_tables` gives
every table of the report by name, in report order (the HTML page shows them, the workbook has one
sheet each).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from datetime import datetime, timezone

import numpy as np
import pandas as pd

from tracescreen import __version__, vocabulary
from tracescreen._internal.frames import plain_text
from tracescreen._internal.text import format_date
from tracescreen.caution import CAUTION
from tracescreen.statistics.series import site_samples

STATUS_ORDER = list(vocabulary.RANKED)
"""Statuses from worst to least concern (a result's status in the matrix is its worst)."""

EXCEEDANCE_COLUMNS = ["site_id", "sample_id", "sampled_at", "analyte", "fraction", "result_text", "unit",
                      "value_ug_L", "limit_ug_L", "ratio", "limit_table", "use", "duration", "source"]


@dataclass
class ReportData:
    """Everything a report shows.

    Attributes
    ----------
    screening : pandas.DataFrame
        Screening table (DEVELOPERS.md contract), QC rows included.
    rejected : pandas.DataFrame
        Rejected rows (``file, sheet, row, reason`` plus original cells).
    files : pandas.DataFrame
        One row per file read, with ``file`` and ``sha256``.
    limit_tables, limit_entries : pandas.DataFrame
        ``LimitSet.tables`` and ``LimitSet.entries``.
    retest : pandas.DataFrame
        Retest list (``tracescreen.retest.listing.retest_list``).
    summary, trends, exceedance_rates : pandas.DataFrame or None
        Outputs of the statistics modules (``summary.csv``, ``trends.csv``, ``exceedances.csv``:
        count and proportion of results above each limit with a binomial interval).
    sites : pandas.DataFrame or None
        Sites table, if one was given.
    settings : dict
        Settings shown in the scope section (e.g. non-detect method, trend test options).
    method_notes : list of str
        Extra method notes (e.g. from the statistics modules).
    lab_qc_batches, lab_qc_verdicts : pandas.DataFrame or None
        The laboratory QC review: one row per lab batch with its data review narrative
        (``qc_batches.csv``), and the QC values outside their windows or not judged; None when
        the run had no laboratory QC rows.
    calibration : pandas.DataFrame or None
        Calibration fits with LOD/LOQ (``calibration_fits.csv``), when calibration files were given.
    wells : dict of pandas.DataFrame or None
        The tables of monitoring wells against background and standards (``tracescreen wells``).
    """

    screening: pd.DataFrame
    rejected: pd.DataFrame
    files: pd.DataFrame
    limit_tables: pd.DataFrame
    limit_entries: pd.DataFrame
    retest: pd.DataFrame
    summary: pd.DataFrame | None = None
    trends: pd.DataFrame | None = None
    exceedance_rates: pd.DataFrame | None = None
    sites: pd.DataFrame | None = None
    settings: dict = field(default_factory=dict)
    method_notes: list = field(default_factory=list)
    lab_qc_batches: pd.DataFrame | None = None
    lab_qc_verdicts: pd.DataFrame | None = None
    calibration: pd.DataFrame | None = None
    wells: dict | None = None

    def __post_init__(self):
        # the engine's tables hold text as categoricals; the report builds text from them
        self.screening = plain_text(self.screening)


def only_sites(frame: pd.DataFrame | None, site_ids) -> pd.DataFrame | None:
    """Rows of ``frame`` for these sites (all rows when ``site_ids`` is None or it has no ``site_id``)."""
    if frame is None or site_ids is None or "site_id" not in frame.columns:
        return frame
    return frame[frame["site_id"].isin(list(site_ids))]


def result_status(screening: pd.DataFrame) -> pd.DataFrame:
    """One row per site-sample result with its worst status over all its limits.

    Parameters
    ----------
    screening : pandas.DataFrame

    Returns
    -------
    pandas.DataFrame
        ``site_id, analyte, fraction, sampled_at, status`` (+ provenance) for each result.
    """
    site = site_samples(screening)
    rank = pd.Categorical(site["status"], categories=STATUS_ORDER, ordered=True)
    key = [c for c in ("file", "sheet", "row") if c in site.columns]
    worst = site.assign(_rank=rank.codes).sort_values("_rank", kind="stable")
    return worst.drop_duplicates(key).drop(columns="_rank")


def status_matrix(screening: pd.DataFrame) -> pd.DataFrame:
    """Site × analyte (fraction) matrix of the worst status, with counts.

    Each cell reads ``<worst status> k/n``: ``n`` site-sample results of that site, analyte and
    fraction, ``k`` of them with that worst status (over all their applicable limits).

    Returns
    -------
    pandas.DataFrame
        Index ``site_id``; one column per ``analyte (fraction)``; empty string where no results.
    """
    res = result_status(screening)
    if res.empty:
        return pd.DataFrame()
    res = res.assign(series=res["analyte"].astype(str) + " (" + res["fraction"].astype(str) + ")",
                     site_id=res["site_id"].astype(str))  # the engine's categoricals as text
    n = res.groupby(["site_id", "series"]).size().rename("n")
    codes = pd.Categorical(res["status"], categories=STATUS_ORDER, ordered=True).codes
    worst = res.assign(_c=codes).groupby(["site_id", "series"])["_c"].min().rename("_c")
    k = (res.assign(_c=codes).merge(worst.reset_index(), on=["site_id", "series", "_c"])
         .groupby(["site_id", "series"]).size().rename("k"))
    cells = pd.concat([n, worst, k], axis=1).reset_index()
    cells["text"] = (np.asarray(STATUS_ORDER, dtype=object)[cells["_c"].to_numpy()] + " "
                     + cells["k"].astype(str) + "/" + cells["n"].astype(str))
    return cells.pivot(index="site_id", columns="series", values="text").fillna("")


def exceedances(screening: pd.DataFrame) -> pd.DataFrame:
    """Every (result, limit) pair with status ``exceeds``, worst ratio first within a site."""
    exc = site_samples(screening)
    exc = exc[exc["status"].eq("exceeds")]
    cols = [c for c in EXCEEDANCE_COLUMNS if c in exc.columns]
    return exc.sort_values(["site_id", "analyte", "sampled_at", "ratio"], ascending=[True, True, True, False])[cols]


def scope_table(data: ReportData, screening: pd.DataFrame, site_ids) -> pd.DataFrame:
    """Job and scope as ``item, value`` rows."""
    site = site_samples(screening)
    res = result_status(screening)
    key = [c for c in ("file", "sheet", "row") if c in screening.columns]
    all_results = screening.drop_duplicates(key) if key else screening
    dates = site["sampled_at"]
    quarters = dates.dt.to_period("Q").drop_duplicates().sort_values()
    sites = sorted(site["site_id"].unique())
    rows = [
        ("generated", datetime.now(timezone.utc).strftime("%Y-%m-%d %H:%M UTC") + f" by tracescreen {__version__}"),
        ("sites", f"{len(sites)}: " + ", ".join(sites) if site_ids is None
         else f"{len(sites)} selected: " + ", ".join(sites)),
        ("period", f"{format_date(pd.Series([dates.min()]))[0]} to {format_date(pd.Series([dates.max()]))[0]}"
         if len(dates) else "no results"),
        ("campaigns", f"{dates.dt.normalize().nunique()} sampling dates in {len(quarters)} calendar quarters"
         + (f" ({quarters.iloc[0]} to {quarters.iloc[-1]})" if len(quarters) else "")),
        ("analytes", ", ".join(sorted(site["analyte"].unique()))),
        ("site-sample results", str(len(res))),
        ("QC results (blanks, field duplicates; not screened against limits)",
         str(int((~all_results["sample_type"].eq("sample")).sum())) if "sample_type" in all_results else "0"),
        ("rejected rows (all files)", str(len(data.rejected))),
        ("limit tables", ", ".join(sorted(screening["limit_table"].dropna().astype(str).replace("", np.nan)
                                          .dropna().unique()))),
    ]
    rows += [(str(k), str(v)) for k, v in data.settings.items()]
    return pd.DataFrame(rows, columns=["item", "value"])


def files_table(files: pd.DataFrame) -> pd.DataFrame:
    """Files read with their SHA-256 checksums (path columns dropped: the report may travel)."""
    cols = [c for c in files.columns if c != "path"]
    return files[cols].reset_index(drop=True)


def limit_tables_used(data: ReportData, screening: pd.DataFrame) -> tuple[pd.DataFrame, pd.DataFrame]:
    """The limit tables that apply to the screened results, and their entries.

    Returns
    -------
    (tables, entries) : tuple of pandas.DataFrame
        ``entries`` has a ``limit`` column: the limit in words (:func:`tracescreen.limits.words.entry_words`:
        a value in µg/L, the hardness formula, or a computed form with its ranges and scope).
    """
    used = set(pd.unique(screening["limit_table"].dropna()).astype(str))
    tables = data.limit_tables[data.limit_tables["table_id"].isin(used)]
    tables = tables[[c for c in ("table_id", "name", "source", "url", "use", "unit", "notes")
                     if c in tables.columns]].reset_index(drop=True)
    ent = data.limit_entries[data.limit_entries["table_id"].isin(used)].copy()
    from tracescreen.limits.words import entry_words  # the same words as the limits command and dashboard

    units = data.limit_tables.set_index("table_id")["unit"] if "unit" in data.limit_tables else {}
    ent["limit"] = [entry_words(e, units.get(e.get("table_id")) if len(units) else None)
                    for e in ent.to_dict("records")]  # one per table entry, not per result
    cols = [c for c in ("table_id", "analyte", "fraction", "limit", "duration", "basis",
                        "effective_from", "effective_to", "note") if c in ent.columns]
    return tables, ent[cols].reset_index(drop=True)


def named_values(frame: pd.DataFrame | None, column: str) -> str:
    """The distinct values of a text column, comma-separated ("" if absent)."""
    if frame is None or column not in frame.columns:
        return ""
    return ", ".join(sorted(set(pd.unique(frame[column].dropna()).astype(str)) - {""}))


def method_notes(data: ReportData) -> pd.DataFrame:
    """Method notes as ``topic, note`` rows."""
    notes = [
        ("caution", CAUTION),
        ("units", "All concentrations are in µg/L, converted from the reported units with pint "
                  "(ppb taken as µg/L for water)."),
        ("statuses", "exceeds: detected and above the limit; meets: detected and at or below it; "
                     "nondetect_meets: not detected at a detection limit at or below the limit; "
                     "nondetect_inconclusive: not detected, but the detection limit is above the limit, so "
                     "nothing is decided; above_range_inconclusive: reported above the calibrated range "
                     "(>x) with x at or below the limit, so nothing is decided (a >x with x above the "
                     "limit exceeds); no_limit: no applicable limit (see the note column). A non-detect "
                     "is neither zero nor an exceedance."),
        ("status matrix", "Each cell gives the worst status of the site-sample results of that site, "
                          "analyte and fraction over all applicable limits, as k/n: k results of n with that "
                          "worst status."),
        ("QC samples", "Field blanks, lab blanks and field duplicates are QC samples (status qc_sample): "
                       "they are not screened against limits, not counted in the matrix, exceedances, "
                       "charts or summaries; they enter the retest list through the QC checks."),
        ("limits", "Each result is compared with every entry of the limit tables for the site's water "
                   "uses, same analyte and fraction, in force on the sampling date; hardness-dependent "
                   "entries use the sample's hardness (own value, else Standard Methods 2340 B from "
                   "calcium and magnesium, else the site default)."),
        ("charts", "Filled markers: detected results; open downward triangles: non-detects plotted at "
                   "their detection limit; lines: limits (dotted markers where the limit varies with "
                   "hardness)."),
    ]
    if named_values(data.summary, "method"):
        notes.append(("summaries", "Non-detect method(s) used in the summaries: " + named_values(data.summary, "method")
                      + ("; upper confidence limit on the mean: " + named_values(data.summary, "ucl_method")
                         if named_values(data.summary, "ucl_method") else "") + "."))
    if named_values(data.trends, "test"):
        notes.append(("trends", "Trend test(s) used: " + named_values(data.trends, "test") + ". A date where a trend "
                                "line crosses a limit is an extrapolation, shown as an indication only."))
    notes.append(("retest reasons", "first_exceedance, above_range (dilute and reanalyse), dl_too_high, near_limit, uncertainty_straddles_limit "
                                    "(Eurachem/CITAC guide on uncertainty in compliance assessment), "
                                    "history_outlier (modified z-score, Iglewicz & Hoaglin 1993), "
                                    "duplicate_disagrees, blank_contamination, dissolved_exceeds_total, "
                                    "holding_time_exceeded (40 CFR 136.3 Table II); see the detail column."))
    if data.lab_qc_batches is not None:
        notes.append(("laboratory QC", "The laboratory's QC rows (calibration checks, blanks, control samples, "
                                       "matrix spikes, duplicates, interference checks, serial dilutions, internal "
                                       "standards) were judged against the laboratory's own limits where the file "
                                       "gives them, otherwise the defaults of the US EPA National Functional "
                                       "Guidelines for Inorganic Superfund Methods Data Review (2020), each cited "
                                       "with whether it was checked in the source; results of a batch are qualified "
                                       "U, J, J+, J-, UJ or R, the most protective qualifier winning "
                                       "(qualified_results.csv)."))
    notes += [("note", str(n)) for n in data.method_notes]
    return pd.DataFrame(notes, columns=["topic", "note"])


def report_data(results, settings: dict | None = None) -> ReportData:
    """Assemble a :class:`ReportData` from a run's outputs.

    Parameters
    ----------
    results : tracescreen.pipeline.Results
        Every output table of one run (:func:`tracescreen.pipeline.run`).
    settings : dict, optional
        Extra settings for the scope table (the retest thresholds are always listed).

    Returns
    -------
    ReportData
    """
    from tracescreen.retest.options import RetestOptions
    from tracescreen.retest.rows import empty_retest

    loaded = results.loaded
    files = results.input_files
    counts = [c for c in ("rows_read", "accepted", "rejected") if c in loaded.files.columns]
    if counts and len(loaded.files):
        files = files.merge(loaded.files[["file", "sheet"] + counts], on=["file", "sheet"], how="left")
    retest_options = results.options.retest or RetestOptions()
    lab = lab_qc_report(results)
    return ReportData(
        screening=results.screened, rejected=loaded.rejected, files=files, limit_tables=results.limits.tables,
        limit_entries=results.limits.entries,
        retest=results.retest if results.retest is not None else empty_retest(),
        summary=results.summary, trends=results.trends, exceedance_rates=results.exceedances, sites=results.sites,
        settings={**(settings or {}), **retest_options.describe(), **lab["settings"]},
        method_notes=list(results.statistics_notes), lab_qc_batches=lab["batches"], lab_qc_verdicts=lab["verdicts"],
        calibration=lab["calibration"], wells=getattr(results, "wells", None))


LAB_QC_VERDICT_COLUMNS = ["lab", "batch", "element_name", "analyte", "fraction", "qc_sample_id", "value",
                          "reported_value", "window_low", "window_high", "window_from", "verdict",
                          "detect_qualifier", "nondetect_qualifier", "rule", "detail", "source", "checked"]
"""Columns of the report's table of QC values outside their windows or not judged."""


def lab_qc_report(results) -> dict:
    """The laboratory QC review's share of a report: batches, the QC values outside or not judged,
    calibration fits, and the settings in words (each None / empty when the run had none)."""
    review = getattr(results, "lab_qc", None)
    calibration = getattr(results, "calibration", None)
    options = getattr(results.options, "lab_qc", None)
    out = {"batches": None, "verdicts": None, "calibration": None, "settings": {}}
    if review is not None:
        v = review.verdicts
        out["batches"] = review.batches
        out["verdicts"] = v.loc[v["verdict"] != "within", LAB_QC_VERDICT_COLUMNS].reset_index(drop=True)
    if calibration is not None:
        out["calibration"] = calibration.fits
    if options is not None and (review is not None or calibration is not None):
        out["settings"] = options.describe()
    return out


def report_tables(data: ReportData, site_ids=None) -> dict[str, pd.DataFrame]:
    """Every table of the report, by name, in report order (one workbook sheet each).

    Parameters
    ----------
    data : ReportData
    site_ids : list of str, optional
        Restrict to these sites (rejected rows and files always cover the whole job).

    Returns
    -------
    dict of str to pandas.DataFrame
        ``caution, scope, files, limit_tables, limit_entries, status_matrix, exceedances, summary,
        exceedance_rates, trends, retest, rejected, method_notes, lab_qc_batches, lab_qc_verdicts,
        calibration`` (the last three empty when the run had no laboratory QC or calibration data).
    """
    scr = only_sites(data.screening, site_ids)
    tables, entries = limit_tables_used(data, scr)
    empty = pd.DataFrame()
    out = {
        "caution": pd.DataFrame({"caution": [CAUTION]}),
        "scope": scope_table(data, scr, site_ids),
        "files": files_table(data.files),
        "limit_tables": tables,
        "limit_entries": entries,
        "status_matrix": status_matrix(scr).reset_index(),
        "exceedances": exceedances(scr).reset_index(drop=True),
        "summary": (only_sites(data.summary, site_ids) if data.summary is not None else empty).reset_index(drop=True),
        "exceedance_rates": (only_sites(data.exceedance_rates, site_ids) if data.exceedance_rates is not None
                             else empty).reset_index(drop=True),
        "trends": (only_sites(data.trends, site_ids) if data.trends is not None else empty).reset_index(drop=True),
        "retest": only_sites(data.retest, site_ids).reset_index(drop=True),
        "rejected": data.rejected.reset_index(drop=True),
        "method_notes": method_notes(data),
        "lab_qc_batches": data.lab_qc_batches if data.lab_qc_batches is not None else empty,
        "lab_qc_verdicts": data.lab_qc_verdicts if data.lab_qc_verdicts is not None else empty,
        "calibration": data.calibration if data.calibration is not None else empty,
    }
    if data.wells is not None:
        from tracescreen.report.wells import wells_tables

        out.update(wells_tables(data.wells, site_ids))
    return out
