"""Trend per series: which way each site x analyte x fraction is heading, and when it would reach its limit.

:func:`trend_table` runs the Mann-Kendall or seasonal Kendall test with the Sen / Akritas-Theil-Sen
slope (:mod:`tracescreen.statistics.mann_kendall`) on every series of site samples, chooses seasons
from the sampling pattern (:func:`sampling_seasons`), and extrapolates an increasing trend line to
the lowest applicable limit (:func:`lowest_limits`): an indication, not a forecast.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen._internal.text import join_notes
from tracescreen.statistics.mann_kendall import TREND_COLUMNS, mann_kendall_grouped
from tracescreen.statistics.options import MIN_VALUES
from tracescreen.statistics.series import (
    censored_series,
    date_from_decimal_year,
    decimal_years,
    group_codes,
    site_samples,
)

TABLE_COLUMNS = ["site_id", "analyte", "fraction", "n", "n_nondetect", "first_sampled",
                 "last_sampled", "test", "s", "var_s", "z", "p_value", "tau", "slope_per_year",
                 "slope_low", "slope_high", "slope_method", "intercept", "direction",
                 "lowest_limit_ug_L", "lowest_limit_table", "crosses_limit_on", "note"]

#: Crossing dates further than this beyond the last sample are not given (years).
HORIZON_YEARS = 50.0


def sampling_seasons(dates, codes, n_groups, mode: str = "auto") -> tuple[np.ndarray, np.ndarray]:
    """Season of each value and number of seasons per series for the seasonal Kendall test.

    ``mode="auto"``: a series is seasonal when it spans at least 3 calendar years, its median
    number of samples per sampled year is >= 10 (months, 12 seasons) or 3-9 (quarters,
    4 seasons), and every season holds samples from at least 3 different years (Hirsch, Slack &
    Smith 1982 use monthly or quarterly seasons). ``"always"``: months when there are >= 10
    samples per year, else quarters. ``"never"``: one season.

    Returns
    -------
    seasons : ndarray of int
        Season index per value (0 for non-seasonal series).
    n_seasons : ndarray of int, shape (n_groups,)
        1, 4 or 12 per series.
    """
    if mode not in ("auto", "always", "never"):
        raise ValueError(f"seasonal must be auto, always or never, not {mode!r}")
    d = pd.to_datetime(pd.Series(dates)).reset_index(drop=True)
    codes = np.asarray(codes, np.int64)
    n_seasons = np.ones(n_groups, np.int64)
    if mode == "never" or d.empty:
        return np.zeros(len(d), np.int64), n_seasons
    month = (d.dt.month - 1).to_numpy()
    # counted on integer keys (series, year) and (series, season, year) of the dated values
    dated = d.notna().to_numpy()
    g, year, m = codes[dated], d.dt.year.to_numpy()[dated].astype(np.int64), month[dated].astype(np.int64)
    year -= year.min() if year.size else 0
    n_years = int(year.max()) + 1 if year.size else 1
    cells, per_year = np.unique(g * n_years + year, return_counts=True)  # samples per series and year
    of = cells // n_years
    years = np.bincount(of, minlength=n_groups)
    median = pd.Series(per_year).groupby(of).median().reindex(range(n_groups)).to_numpy()
    monthly = median >= 10
    quarterly = (median >= 3) & ~monthly
    enough_years = years >= 3
    choice = np.where(monthly, 12, np.where(quarterly | (mode == "always"), 4, 1))
    if mode == "auto":
        for p in (12, 4):
            s = m if p == 12 else m // 3
            # distinct years of each (series, season), and the seasons with at least 3 of them
            season_of, n_in = np.unique(np.unique((g * p + s) * n_years + year) // n_years, return_counts=True)
            seasons_ok = np.bincount(season_of // p, weights=n_in >= 3, minlength=n_groups)
            bad = (choice == p) & ~((seasons_ok == p) & enough_years)
            choice = np.where(bad, 1, choice)
    n_seasons = choice.astype(np.int64)
    per_value = n_seasons[codes]
    season = np.where(per_value == 12, month, np.where(per_value == 4, month // 3, 0))
    return season.astype(np.int64), n_seasons


def lowest_limits(screened: pd.DataFrame) -> pd.DataFrame:
    """Lowest applicable single-sample limit of each series, from the screening output.

    Only site samples with a limit and a ``single_sample`` basis (or none stated) count; within a
    series the limits of its latest sampling date are used, so that a limit no longer in force,
    or computed from an old hardness, does not decide the crossing date.

    Returns
    -------
    DataFrame
        ``site_id, analyte, fraction, limit_ug_L, limit_table`` (one row per series with a limit).
    """
    keys = ["site_id", "analyte", "fraction"]
    cols = keys + ["limit_ug_L", "limit_table"]
    if screened is None or screened.empty or "limit_ug_L" not in screened:
        return pd.DataFrame(columns=cols)
    # only the columns needed: a part's screening rows are a few hundred thousand rows of some 40 columns
    d = site_samples(screened[[c for c in (*cols, "sampled_at", "basis", "sample_type") if c in screened]])
    basis = d["basis"].fillna("") if "basis" in d else pd.Series("", index=d.index)
    d = d[d["limit_ug_L"].notna() & basis.isin(["", "single_sample"])]
    if d.empty:
        return pd.DataFrame(columns=cols)
    d = d[_on_latest_date(d, keys)].sort_values(keys + ["limit_ug_L", "limit_table"])
    return d.drop_duplicates(keys)[cols].reset_index(drop=True)


def _on_latest_date(d: pd.DataFrame, keys: list[str]) -> np.ndarray:
    """Whether each row was sampled on its series' latest sampling date (False without a key or date):
    ``d["sampled_at"] == d.groupby(keys, observed=True)["sampled_at"].transform("max")``, worked out on
    the keys' category codes when the keys are categorical (a part's screening rows: no text hashed)."""
    t = d["sampled_at"]
    if not (pd.api.types.is_datetime64_dtype(t.dtype) and all(isinstance(d[k].dtype, pd.CategoricalDtype) for k in keys)):
        return (t == d.groupby(keys, observed=True)["sampled_at"].transform("max")).to_numpy()
    tv = t.to_numpy()
    ok = ~np.isnat(tv)
    key, n_keys = np.zeros(len(d), np.int64), 1
    for k in keys:
        codes = d[k].cat.codes.to_numpy().astype(np.int64)
        ok &= codes >= 0
        key = key * len(d[k].cat.categories) + codes
        n_keys *= len(d[k].cat.categories)
    tv = tv.view(np.int64)
    # one cell per possible key when there are few (a part keeps only its own categories), else per key used
    few = n_keys <= 4 * len(d) + 1024
    at = key[ok] if few else np.unique(key[ok], return_inverse=True)[1]
    latest = np.full(n_keys if few else int(at.max(initial=-1)) + 1, np.iinfo(np.int64).min)
    np.maximum.at(latest, at, tv[ok])
    out = np.zeros(len(d), bool)
    out[ok] = tv[ok] == latest[at]
    return out


def trend_table(results: pd.DataFrame, *, alpha: float = 0.05, seasonal: str = "auto",
                min_n: int = MIN_VALUES, limits: pd.DataFrame | None = None,
                horizon_years: float = HORIZON_YEARS) -> pd.DataFrame:
    """Trend test and slope per site x analyte x fraction from accepted results.

    Parameters
    ----------
    results : DataFrame
        Accepted results (DEVELOPERS.md data model); QC samples are left out (a field duplicate
        is represented by its parent sample).
    alpha : float
        Significance level of the two-sided test for ``direction``; the slope interval has
        confidence 1 - alpha.
    seasonal : {"auto", "always", "never"}
        When to use the seasonal Kendall test (:func:`sampling_seasons`).
    min_n : int
        Fewer values than this give ``direction = "too_few"`` (common practice: 8).
    limits : DataFrame, optional
        ``site_id, analyte, fraction, limit_ug_L, limit_table``: the lowest applicable
        single-sample limit of each series (see :func:`lowest_limits`), for ``crosses_limit_on``.
    horizon_years : float
        No crossing date is given further than this beyond the last sample (the note says so).

    Returns
    -------
    DataFrame
        :data:`TABLE_COLUMNS`. ``slope_per_year`` and its interval in µg/L per year;
        ``intercept`` is the trend line's value on ``first_sampled`` [µg/L];
        ``crosses_limit_on`` is the date on which an increasing trend line, still below the
        lowest limit on the last sampling date, reaches it (an indication only: extrapolation
        is uncertain).
    """
    data = censored_series(site_samples(results))
    codes, table = group_codes(data, ["site_id", "analyte", "fraction"])
    g = len(table)
    usable = (data["value"].notna() & data["sampled_at"].notna()).to_numpy()
    lost = np.bincount(codes[~usable], minlength=g)
    data, codes = data[usable], codes[usable]
    t = decimal_years(data["sampled_at"]) if len(data) else np.zeros(0)
    seasons, n_seasons = sampling_seasons(data["sampled_at"], codes, g, seasonal)
    res = mann_kendall_grouped(t, data["value"].to_numpy(float), data["nondetect"].to_numpy(bool),
                               codes, g, seasons=seasons, alpha=alpha)
    out = table.reset_index(drop=True).copy()
    for col in TREND_COLUMNS:
        if col != "t0":
            out[col] = res[col].to_numpy()
    out["n"] = out["n"].astype(int)
    out["n_nondetect"] = out["n_nondetect"].astype(int)
    t_last = pd.Series(t).groupby(codes).max().reindex(range(g)).to_numpy() if g else np.zeros(0)
    span = data["sampled_at"].groupby(codes).agg(["min", "max"]).reindex(range(g))
    out["first_sampled"], out["last_sampled"] = span["min"].to_numpy(), span["max"].to_numpy()
    out["test"] = np.where(n_seasons > 1, "seasonal_kendall_" + n_seasons.astype(str) + "_seasons",
                           "mann_kendall")
    few = out["n"].to_numpy() < min_n
    p = out["p_value"].to_numpy(float)
    s = out["s"].to_numpy(float)
    sig = np.nan_to_num(p, nan=1.0) < alpha
    out["direction"] = np.where(few, "too_few", np.where(sig & (s > 0), "increasing",
                                np.where(sig & (s < 0), "decreasing", "no_trend")))
    crossing = _limit_crossing(out, limits, res["t0"].to_numpy(float), t_last, horizon_years)
    out["note"] = _trend_notes(out, data, codes, min_n, few, n_seasons, lost, horizon_years, *crossing)
    return out[TABLE_COLUMNS]


def _limit_crossing(out: pd.DataFrame, limits: pd.DataFrame | None, t0, t_last, horizon_years: float):
    """Add the lowest limit of each series and the date its increasing trend line reaches it (``out`` in place).

    Returns ``(limit, line_last, rising, cross, far)`` per series for the notes: the limit [µg/L],
    the line's value on the last sampling date [µg/L], whether the trend rises, the crossing time
    [decimal years] and whether it lies beyond the horizon.
    """
    if limits is not None and len(limits):
        lim = out[["site_id", "analyte", "fraction"]].merge(
            limits[["site_id", "analyte", "fraction", "limit_ug_L", "limit_table"]],
            how="left", on=["site_id", "analyte", "fraction"])
        out["lowest_limit_ug_L"] = lim["limit_ug_L"].to_numpy(float)
        out["lowest_limit_table"] = lim["limit_table"].to_numpy(object)
    else:
        out["lowest_limit_ug_L"] = np.nan
        out["lowest_limit_table"] = None
    limit = out["lowest_limit_ug_L"].to_numpy(float)
    slope = out["slope_per_year"].to_numpy(float)
    line_last = out["intercept"].to_numpy(float) + slope * (t_last - t0)
    rising = (out["direction"].to_numpy() == "increasing") & (slope > 0)
    with np.errstate(invalid="ignore", divide="ignore"):
        cross = np.where(rising & (line_last < limit), t0 + (limit - out["intercept"]) / slope, np.nan)
    far = cross > t_last + horizon_years
    cross = np.where(far, np.nan, cross)
    out["crosses_limit_on"] = date_from_decimal_year(cross).to_numpy()
    return limit, line_last, rising, cross, far


def _trend_notes(out, data, codes, min_n, few, n_seasons, lost, horizon_years, limit, line_last, rising, cross, far):
    """The note of each series: why no direction, non-detects, ties, the crossing date's caveats."""
    g = len(out)
    nd_share = out["n_nondetect"] / out["n"].clip(lower=1)
    n_dl = data[data["nondetect"]].groupby(codes[data["nondetect"].to_numpy()])["value"].nunique()
    n_dl = n_dl.reindex(range(g), fill_value=0).to_numpy()
    fmt = pd.Series(limit).map(lambda v: f"{v:g}")
    return join_notes([
        (few, f"fewer than {min_n} values: no direction given (common practice)"),
        (nd_share.to_numpy() > 0.8, "more than 80 % non-detects: the test mostly sees detection "
                                    "limits (Helsel 2012)"),
        (out["n_nondetect"].to_numpy() > 0, "non-detects: pairs of unknown order counted as ties "
                                            "(censored Kendall, Helsel 2012)"),
        (n_dl > 1, "several detection limits in the record"),
        ((out["var_s"].to_numpy(float) == 0) & (out["n"].to_numpy() >= 2),
         "all values tied (e.g. every result below the same detection limit): S = 0, z = 0, p = 1"),
        (rising & (line_last >= limit), "trend line already at or above the lowest limit ("
         + fmt + " µg/L)"),
        (far, f"at this slope the line would reach the lowest limit more than {horizon_years:g} "
              "years after the last sample: no date given"),
        (np.isfinite(cross), "crossing date is an extrapolation of the trend line: an indication "
                             "only, uncertain"),
        (n_seasons > 1, "seasonal Kendall: values compared within the same season"),
        (lost > 0, pd.Series(lost).astype(str) + " result(s) without value, detection limit or "
                                                 "date left out"),
    ], g)
