"""The retest list as the request a reviewer sends: one line per sample, grouped by laboratory and batch.

:func:`request_lines` turns the retest list (one row per result and reason,
:data:`tracescreen.retest.rows.RETEST_COLUMNS`) into request lines: one per laboratory, batch and
sample, with its analytes, its reasons in plain words (the codes in a column of their own) and what
is asked for:

``reanalyse``
    the laboratory analyses the sample it holds again (detection limit too high, above the calibrated
    range, a laboratory QC failure, an implausible value);
``resample``
    a new field sample (to confirm a first exceedance or a near-limit result, after blank
    contamination, or when the sample is past its holding time);
``documents``
    the laboratory sends what is missing (a QC summary); no sample is analysed.

A sample past any of its analytes' holding times on the request date cannot be validly reanalysed, so
its line asks for a resample instead (holding times: :data:`tracescreen.retest.qc_checks.HOLDING_TIMES`,
40 CFR 136.3 Table II).
"""

from __future__ import annotations

import hashlib

import numpy as np
import pandas as pd

#: a reason in plain words (short, for a request line; the suggested action has the full text)
REASON_WORDS: dict[str, str] = {
    "first_exceedance": "first result above a limit at this site",
    "above_range": "above the calibrated range (a lower bound only)",
    "dl_too_high": "detection limit above the limit, so the result cannot decide",
    "near_limit": "close to the limit",
    "uncertainty_straddles_limit": "within its measurement uncertainty of the limit",
    "history_outlier": "far outside this site's earlier results",
    "duplicate_disagrees": "field duplicate pair disagrees",
    "blank_contamination": "a blank of the batch shows contamination",
    "dissolved_exceeds_total": "dissolved result above the total result",
    "holding_time_exceeded": "analysed after its holding time",
    "calibration_check_failed": "a calibration check of the run failed",
    "blank_affects_result": "a laboratory blank affects the result",
    "control_sample_out": "the laboratory control sample failed",
    "spike_recovery_low": "matrix spike recovery low",
    "spike_recovery_high": "matrix spike recovery high",
    "lab_duplicate_disagrees": "laboratory duplicates disagree",
    "interference_check_failed": "interference check failed",
    "serial_dilution_disagrees": "serial dilution disagrees",
    "internal_standard_out": "internal standard out of range",
    "qc_summary_missing": "the batch came without its QC summary",
    "above_calibration_range": "above the highest calibration standard",
    "below_calibration_range": "below the lowest calibration standard",
    "dl_not_supported": "detection limit not supported by the calibration",
}

#: what each reason asks for (common practice; the suggested actions of the retest list say why)
REASON_ACTION: dict[str, str] = {
    "first_exceedance": "resample", "near_limit": "resample", "blank_contamination": "resample",
    "holding_time_exceeded": "resample", "qc_summary_missing": "documents",
}
#: a reason not listed above asks for a laboratory reanalysis
DEFAULT_ACTION = "reanalyse"
ACTIONS = ("resample", "reanalyse", "documents")
ACTION_WORDS = {"resample": "Resample (field)", "reanalyse": "Reanalyse (laboratory)",
                "documents": "Send documents (laboratory)"}

REQUEST_COLUMNS = ["request_id", "lab", "batch", "site_id", "sample_id", "sampled_at", "analytes", "fractions",
                   "action", "action_words", "why_action", "reasons", "reason_codes", "holding_time_ends", "details"]
"""Columns of the request lines, in order."""


def holding_time_end(sampled_at: pd.Series, analytes: pd.Series, holding_times: dict | None = None) -> pd.Series:
    """The end of each result's holding time (sampling date plus the analyte's holding time)."""
    from tracescreen.retest.qc_checks import HOLDING_TIMES

    holds = dict(HOLDING_TIMES if holding_times is None else holding_times)
    default = holds.pop("*", None)
    out = pd.Series(pd.NaT, index=sampled_at.index, dtype="datetime64[ns]")
    names = analytes.astype(str)
    for analyte, hold in [*holds.items(), (None, default)]:
        if hold is None:
            continue
        mask = names.eq(analyte) if analyte is not None else ~names.isin(list(holds))
        if mask.any():
            out[mask] = (pd.to_datetime(sampled_at[mask]) + hold).astype("datetime64[ns]")
    return out


def _joined(r: pd.DataFrame, col: str, sep: str) -> pd.Series:
    """Per group ``g``, the distinct non-empty values of ``col`` in their first order, joined (one
    pass: duplicates dropped first, so each group joins only its own distinct values)."""
    d = r.loc[r[col] != "", ["g", col]].drop_duplicates()
    return d.groupby("g", sort=True)[col].agg(sep.join)


def request_id(lab: str, batch: str, site: str, sample: str, sampled_at) -> str:
    """A stable identifier of a request line (the same sample gives the same id in the next campaign)."""
    when = "" if pd.isna(sampled_at) else pd.Timestamp(sampled_at).isoformat()
    key = "\x1f".join([str(lab), str(batch), str(site), str(sample), when])
    return hashlib.sha256(key.encode()).hexdigest()[:16]


def request_lines(retest: pd.DataFrame, as_of=None, holding_times: dict | None = None) -> pd.DataFrame:
    """One request line per laboratory, batch and sample from the retest list.

    Parameters
    ----------
    retest : DataFrame
        The retest list (``retest.csv`` columns).
    as_of : date-like, optional
        The request date (default today): a sample past a holding time on that date is to be resampled.
    holding_times : dict, optional
        Analyte -> holding time (``"*"`` for the others); default
        :data:`tracescreen.retest.qc_checks.HOLDING_TIMES`.

    Returns
    -------
    DataFrame
        :data:`REQUEST_COLUMNS`, sorted by laboratory, batch, site, sampling date and sample.
    """
    if retest is None or not len(retest):
        return pd.DataFrame({c: pd.Series(dtype=object) for c in REQUEST_COLUMNS})
    as_of = pd.Timestamp(as_of if as_of is not None else pd.Timestamp.now().normalize())
    r = retest.copy()
    for c in ("lab", "batch", "site_id", "sample_id", "analyte", "fraction", "reason", "detail"):
        r[c] = r[c].astype(object).where(r[c].notna(), "").astype(str) if c in r.columns else ""
    r["sampled_at"] = pd.to_datetime(r["sampled_at"])
    r["ends"] = holding_time_end(r["sampled_at"], r["analyte"], holding_times)
    r["action"] = r["reason"].map(REASON_ACTION).fillna(DEFAULT_ACTION)
    keys = ["lab", "batch", "site_id", "sample_id", "sampled_at"]
    r["g"] = r.groupby(keys, sort=True, dropna=False).ngroup()
    out = r.drop_duplicates("g").set_index("g").sort_index()[keys]
    for col, name, sep in (("analyte", "analytes", "; "), ("fraction", "fractions", "; "), ("reason", "reason_codes", ";"),
                           ("detail", "details", " | ")):
        out[name] = _joined(r, col, sep).reindex(out.index).fillna("")
    out["holding_time_ends"] = r.groupby("g")["ends"].min()
    for a in ("resample", "reanalyse"):
        out[f"n_{a}"] = r["action"].eq(a).groupby(r["g"]).sum()
    out = out.reset_index(drop=True)
    codes = out["reason_codes"].str.split(";")
    out["reasons"] = codes.map(lambda cs: "; ".join(REASON_WORDS.get(c, c.replace("_", " ")) for c in cs))
    past = out["holding_time_ends"].notna() & (out["holding_time_ends"] < as_of)
    action = np.where(out["n_resample"] > 0, "resample", np.where(out["n_reanalyse"] > 0, "reanalyse", "documents"))
    why = np.where(out["n_resample"] > 0, "a reason needs a new sample", "")
    turned = (action == "reanalyse") & past.to_numpy()
    action = np.where(turned, "resample", action)
    ends = out["holding_time_ends"].dt.strftime("%Y-%m-%d").fillna("")
    why = np.where(turned, "past its holding time (ended " + ends + ") on " + as_of.strftime("%Y-%m-%d")
                   + ": a reanalysis would not be valid", why)
    why = np.where((action == "reanalyse"), "the laboratory can analyse the held sample again (holding time ends "
                   + ends + ")", why)
    why = np.where(action == "documents", "the laboratory is asked for documents, not an analysis", why)
    out["action"] = action
    out["action_words"] = pd.Series(action).map(ACTION_WORDS).to_numpy()
    out["why_action"] = why
    out["request_id"] = [request_id(*k) for k in out[keys].itertuples(index=False, name=None)]
    return out[REQUEST_COLUMNS].reset_index(drop=True)
