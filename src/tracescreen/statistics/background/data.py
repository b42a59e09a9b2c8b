"""Which results are background and which are compliance data.

Rows are the regular site samples of the accepted results (QC samples are left out), as
censored series (``value`` = detected value or detection limit, ``nondetect``). Each row of a
well in the network gets a ``period``:

* background wells: ``background`` inside the well's background window (the constituent's own
  window at the well, else the well's ``background_from``/``background_to``, else the design's;
  no window: every row);
* compliance wells: ``baseline`` (the well's own background, for intrawell limits and control
  charts) inside the window, ``compliance`` after it. With no window at all, a compliance well's
  first ``min_background`` results of each constituent are its baseline and the rest compliance.

A *constituent* is an analyte in one fraction. ``quantified`` marks results that count for the
Double Quantification Rule: detected and not qualified as estimated (J values between the
detection and the quantitation limit do not count; USEPA 2009, §6.2.2 [usepa2009]_).

References
----------
.. [usepa2009] USEPA (2009). Unified Guidance, EPA 530-R-09-007, §6.2.2.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.io.qualifiers import ESTIMATED_MEANINGS
from tracescreen.statistics.series import censored_series, site_samples

from .design import Design

CONSTITUENT = ["analyte", "fraction"]
SERIES = ["site_id", "analyte", "fraction"]


def monitoring_rows(results: pd.DataFrame, network: pd.DataFrame, design: Design) -> pd.DataFrame:
    """Regular samples of network wells with their role, group, comparison, stage and period.

    Returns
    -------
    DataFrame
        ``site_id, analyte, fraction, sampled_at, value, nondetect, quantified, role, well_group,
        comparison, stage, period, windowed`` (text as plain str), sorted by series and time;
        ``windowed`` is True where a background window (the well's or the design's) applies.
    """
    rows = censored_series(site_samples(results))
    meaning = rows["qualifier_meaning"].astype(str) if "qualifier_meaning" in rows else pd.Series("", index=rows.index)
    frame = pd.DataFrame({
        "site_id": rows["site_id"].astype(str).to_numpy(),
        "analyte": rows["analyte"].astype(str).to_numpy(),
        "fraction": rows["fraction"].astype(str).to_numpy(),
        "sampled_at": pd.to_datetime(rows["sampled_at"]).to_numpy(),
        "value": rows["value"].to_numpy(float),
        "nondetect": rows["nondetect"].to_numpy(bool),
        "quantified": (~rows["nondetect"].to_numpy(bool)) & ~meaning.isin(ESTIMATED_MEANINGS).to_numpy(),
    })
    frame = frame[np.isfinite(frame["value"]) & frame["sampled_at"].notna()]
    net = network.copy()
    if "analyte" not in net:
        net["analyte"] = ""
    per_constituent = net[net["analyte"] != ""][["site_id", "analyte", "background_from", "background_to"]]
    net = net[net["analyte"] == ""].drop(columns="analyte")
    net["comparison"] = np.where(net["comparison"] == "auto", design.comparison, net["comparison"])
    frame = frame.merge(net, on="site_id", how="inner")
    if len(per_constituent):  # a constituent's own window at a well replaces the well's
        frame = frame.merge(per_constituent, on=["site_id", "analyte"], how="left", suffixes=("", "_own"))
        own = frame["background_from_own"].notna() | frame["background_to_own"].notna()
        for c in ("background_from", "background_to"):
            frame[c] = frame[c].where(~own, frame[f"{c}_own"])
        frame = frame.drop(columns=["background_from_own", "background_to_own"])
    frame = frame.sort_values(SERIES + ["sampled_at"], kind="stable").reset_index(drop=True)
    start = frame["background_from"].fillna(design.background_from if design.background_from is not None else pd.NaT)
    end = frame["background_to"].fillna(design.background_to if design.background_to is not None else pd.NaT)
    has_window = start.notna() | end.notna()
    inside = (start.isna() | (frame["sampled_at"] >= start)) & (end.isna() | (frame["sampled_at"] <= end))
    before = start.notna() & (frame["sampled_at"] < start)
    position = frame.groupby(SERIES, sort=False).cumcount().to_numpy()
    background = frame["role"].to_numpy() == "background"
    period = np.where(background, np.where(inside, "background", ""),
                      np.where(has_window, np.where(inside, "baseline", np.where(before, "", "compliance")),
                               np.where(position < design.min_background, "baseline", "compliance")))
    frame["period"] = period
    frame["windowed"] = has_window.to_numpy()
    frame = frame.drop(columns=["background_from", "background_to"])
    return frame[frame["period"] != ""].reset_index(drop=True)


def compliance_rows_for(rows: pd.DataFrame, limits: pd.DataFrame) -> pd.DataFrame:
    """The rows with each compliance series' data for its comparison: a well compared with other
    wells' background (interwell) and without a background window of its own has no baseline, so
    every one of its results is compliance data."""
    inter = limits.loc[limits["comparison"] == "interwell", SERIES].assign(_inter=True)
    r = rows.merge(inter, on=SERIES, how="left")
    move = r["_inter"].fillna(False).astype(bool) & ~r["windowed"] & (r["period"] == "baseline")
    r.loc[move, "period"] = "compliance"
    return r.drop(columns="_inter")


def series_table(rows: pd.DataFrame) -> pd.DataFrame:
    """One row per compliance series (well x constituent) that has compliance or baseline data."""
    comp = rows[rows["role"] == "compliance"]
    keys = SERIES + ["well_group", "comparison", "stage"]
    return comp[keys].drop_duplicates(SERIES).sort_values(SERIES).reset_index(drop=True)
