"""Per site x analyte x fraction summaries that treat non-detects properly, and exceedance rates.

:func:`summarise` gives one row per series from the accepted results; :func:`exceedance_rates`
one row per series and applicable limit from the screening output, with a binomial confidence
interval on the proportion of results above the limit.

Field duplicates and blanks are quality-control samples: they are left out. A duplicate pair is
therefore represented by its parent sample's result (the duplicate is checked by the QC module,
not averaged in), so that each sampling event counts once.

References
----------
[Helsel2012]_, [HelselEtAl2020]_, [ClopperPearson1934]_ (docs/references.md)
"""

from __future__ import annotations

import numpy as np
import pandas as pd
from scipy import special  # the distributions' functions (scipy.stats, a slow import, calls these)

from tracescreen._internal.text import join_notes
from tracescreen.statistics import bootstrap, censored
from tracescreen.statistics.series import KEYS, censored_series, site_samples

SUMMARY_COLUMNS = KEYS + [
    "n", "n_detected", "percent_nondetect", "min_detected", "max_detected",
    "max_detection_limit", "mean", "sd", "median", "p90", "p95", "ucl95_mean", "ucl_method",
    "method", "note",
]

#: Above this share of non-detects (percent) means and percentiles are not reported (Helsel 2012).
ONLY_COUNTS_ABOVE = 80.0
#: Above this share, percentiles below the highest detection limit are not reported.
CAREFUL_ABOVE = 50.0
#: Fewer detected values than this: no mean (Helsel 2012; common practice).
MIN_DETECTS_FOR_MEAN = 3


def _fmt(x) -> pd.Series:
    return pd.Series(np.asarray(x, float)).map(lambda v: f"{v:g}")


def summarise(results: pd.DataFrame, *, method: str = "kaplan_meier", n_boot: int = 1000,
              seed: int = 20240601, ucl: str = "km_t") -> pd.DataFrame:
    """Summary statistics per site x analyte x fraction from accepted results.

    Parameters
    ----------
    results : DataFrame
        Accepted results (DEVELOPERS.md data model); QC samples are left out here.
    method : str
        Estimation method for series with non-detects: ``kaplan_meier`` (default), ``ros``,
        ``mle_lognormal``, or, only on request, ``substitution_zero``, ``substitution_half_dl``,
        ``substitution_dl`` (see :mod:`tracescreen.censored`). Series without non-detects get
        the plain sample statistics (``method`` = ``sample_statistics``).
    ucl : str
        How ``ucl95_mean`` is computed (:data:`tracescreen.statistics.options.UCL_METHODS`): ``km_t``
        (default) Student's t on the Kaplan-Meier mean and its standard error,
        :func:`ucl_km_t`; ``bootstrap`` a seeded percentile bootstrap of the KM mean.
    n_boot, seed : int
        Bootstrap resamples and random seed for ``ucl95_mean`` (``ucl="bootstrap"``).

    Returns
    -------
    DataFrame
        :data:`SUMMARY_COLUMNS`. Concentrations in µg/L; ``percent_nondetect`` in percent;
        ``max_detection_limit`` is the highest detection limit among the non-detects;
        ``ucl95_mean`` is the one-sided 95 % upper confidence limit on the mean: t on the
        Kaplan-Meier mean and its standard error, or a seeded percentile bootstrap of the
        Kaplan-Meier mean (of the substituted mean for substitution methods); ``ucl_method`` says which.

    Notes
    -----
    Rules of thumb (Helsel 2012): with more than 50 % non-detects, percentiles below the highest
    detection limit are not reported and the mean depends on assumptions; above 80 % only the
    counts, the maximum and the proportions above each limit (:func:`exceedance_rates`) are
    reported; with fewer than 3 detected values there is no mean. ``note`` says why.
    """
    if method not in censored.METHODS:
        raise ValueError(f"unknown method {method!r}; choose one of {', '.join(censored.METHODS)}")
    data = censored_series(site_samples(results))
    if data.empty:  # nothing accepted (or only QC samples): an empty table, not an error
        return pd.DataFrame({c: pd.Series(dtype=object) for c in SUMMARY_COLUMNS})
    unusable = data["value"].isna().to_numpy()
    codes, first = _groups(data, KEYS)
    table = data[KEYS].iloc[first].reset_index(drop=True)
    g = len(table)
    lost = np.bincount(codes[unusable], minlength=g)
    data, codes = data[~unusable], codes[~unusable]
    x, nd = data["value"].to_numpy(float), data["nondetect"].to_numpy(bool)
    n = np.bincount(codes, minlength=g)
    n_det = np.bincount(codes, weights=~nd, minlength=g).astype(int)
    pct_nd = np.where(n > 0, 100.0 * (n - n_det) / np.maximum(n, 1), np.nan)
    ext = {k: np.full(g, np.nan) for k in ("min_detected", "max_detected", "max_detection_limit", "min_dl")}
    for k, f, rows in (("min_detected", np.fmin, ~nd), ("max_detected", np.fmax, ~nd),
                       ("max_detection_limit", np.fmax, nd), ("min_dl", np.fmin, nd)):
        f.at(ext[k], codes[rows], x[rows])  # NaN is skipped, as pandas' min and max skip it
    # one Kaplan-Meier pass serves the statistics and the t-based UCL (each group's row is its own)
    km = censored.kaplan_meier_grouped(x, nd, codes, g) if method == "kaplan_meier" and ucl == "km_t" else None
    st = censored.censored_statistics_grouped(x, nd, codes, g, method=method, km=km)
    ucl_value, ucl_method = _ucl(x, nd, codes, table, n, method, ucl, n_boot, seed, km)
    out = table.copy()
    out["n"], out["n_detected"], out["percent_nondetect"] = n, n_det, pct_nd
    for col in ("min_detected", "max_detected", "max_detection_limit"):
        out[col] = ext[col]
    out["mean"], out["sd"] = st["mean"].to_numpy(), st["sd"].to_numpy()
    out["median"], out["p90"], out["p95"] = st["q50"].to_numpy(), st["q90"].to_numpy(), st["q95"].to_numpy()
    out["ucl95_mean"] = ucl_value
    out["ucl_method"] = ucl_method
    out["method"] = st["method"].to_numpy()
    return _rules_of_thumb(out, x, nd, codes, n, n_det, pct_nd, ext["min_dl"], lost)[SUMMARY_COLUMNS] \
        .reset_index(drop=True)


def _ucl(x, nd, codes, table: pd.DataFrame, n, method: str, ucl: str, n_boot: int,
         seed: int, km: pd.DataFrame | None = None) -> tuple[np.ndarray, str]:
    """95 % upper confidence limit on each series' mean and its method in words: t on the Kaplan-Meier
    (or substituted) mean and its standard error (``km_t``), or a seeded percentile bootstrap.
    ``km``: the Kaplan-Meier statistics of ``x, nd`` by group when the caller has them."""
    g = len(table)
    sub = method in censored.SUBSTITUTION
    xu, ndu = (censored.substitute(x, nd, censored.SUBSTITUTION[method]), np.zeros(x.size, bool)) if sub else (x, nd)
    what = "the substituted mean" if sub else "the Kaplan-Meier mean"
    if ucl == "bootstrap":
        keys = bootstrap.series_seed_keys(table[KEYS])
        value = bootstrap.bootstrap_ucl_km_grouped(xu, ndu, codes, g, n_boot=n_boot, seed=seed, keys=keys)
        return value, f"percentile bootstrap of {what} (B={n_boot}, seed={seed})"
    if ucl == "km_t":
        km = censored.kaplan_meier_grouped(xu, ndu, codes, g, probs=()) if km is None or sub else km
        return ucl_km_t(km["mean"].to_numpy(), km["se"].to_numpy(), n), \
            f"Student's t on {what} and its standard error (Helsel 2012)"
    raise ValueError(f"unknown ucl {ucl!r}; choose km_t or bootstrap")


def _rules_of_thumb(out: pd.DataFrame, x, nd, codes, n, n_det, pct_nd, min_dl, lost) -> pd.DataFrame:
    """Withhold what the share of non-detects does not support [Helsel2012]_ and say why in ``note``."""
    g = len(out)
    few = n_det < MIN_DETECTS_FOR_MEAN
    only_counts = pct_nd > ONLY_COUNTS_ABOVE
    careful = (pct_nd > CAREFUL_ABOVE) & ~only_counts
    maxdl = out["max_detection_limit"].to_numpy(float)
    pcols = ["median", "p90", "p95"]
    pct = np.column_stack([out[c].to_numpy(dtype=float) for c in pcols])
    below_dl = careful[:, None] & (pct < maxdl[:, None])
    censored_pct = (np.isnan(pct) & (n_det > 0)[:, None] & ~only_counts[:, None]
                    & (pct_nd > 0)[:, None] & ~below_dl)
    withheld = {}  # the columns with the values not supported set to NaN (numpy, not a .loc per rule)
    for c in ("mean", "sd", "ucl95_mean"):
        withheld[c] = np.where(few | only_counts, np.nan, out[c].to_numpy(dtype=float))
    pct[only_counts] = np.nan
    pct[below_dl] = np.nan
    withheld.update({c: pct[:, j] for j, c in enumerate(pcols)})
    out = out.assign(**withheld)
    km = out["method"].to_numpy() == "kaplan_meier"
    maxdet = out["max_detected"].to_numpy(float)
    with np.errstate(invalid="ignore"):
        high_dl = np.bincount(codes[nd & (x > maxdet[codes])], minlength=g)
    out["note"] = join_notes([
        (only_counts, "more than 80 % non-detects: only counts, maximum and proportions above "
                      "limits are reported (Helsel 2012)"),
        (few & ~only_counts, "fewer than 3 detected values: no mean (Helsel 2012)"),
        (careful, "50-80 % non-detects: the mean depends on the method's assumptions (Helsel 2012)"),
        (below_dl.any(axis=1), "percentiles below the highest detection limit (" + _fmt(maxdl)
         + " µg/L) not reported"),
        (censored_pct.any(axis=1), "some percentiles lie below the smallest detected value (<"
         + _fmt(out["min_detected"]) + " µg/L)"),
        (km & (min_dl <= out["min_detected"].to_numpy()) & ~only_counts & ~few,
         "Kaplan-Meier: the share below the smallest detect is placed at the lowest detection limit "
         "(Efron), so the mean is biased high"),
        ((high_dl > 0) & ~only_counts, _fmt(high_dl) + " non-detect(s) with a detection limit "
         "above the largest detected value: they bound nothing the detects do not"),
        (np.char.startswith(out["method"].to_numpy().astype(str), "substitution"),
         "substitution on request: invented values, use with care (Helsel 2006)"),
        ((out["method"].to_numpy() == "mle_lognormal") & (n < 50),
         "lognormal MLE is advised for about 50 values or more"),
        (lost > 0, _fmt(lost) + " result(s) without value or detection limit left out"),
        (n == 0, "no usable results"),
    ], g)
    return out


def ucl_km_t(mean, se, n, level: float = 0.95) -> np.ndarray:
    """One-sided upper confidence limit of a mean from its standard error: mean + t(level; n - 1) se.

    On the Kaplan-Meier mean of censored data with the Greenwood-type standard error
    (:func:`tracescreen.statistics.censored.kaplan_meier_grouped`) this is the t-interval on the KM
    mean ([Helsel2012]_, the chapter on confidence intervals; [SinghEtAl2006]_, the "KM (t)" limit);
    without non-detects it is the Student's t limit of the mean. It costs a few operations per
    series, where the bootstrap resamples each series a thousand times.

    >>> round(float(ucl_km_t(10.0, 1.0, 16)[0]), 4)   # t(0.95; 15) = 1.7531 (any t table)
    11.7531
    """
    n = np.atleast_1d(np.asarray(n, dtype=float))
    with np.errstate(invalid="ignore"):
        t = special.stdtrit(np.where(n >= 2, n - 1, np.nan), level)  # Student's t quantile
    return np.atleast_1d(np.asarray(mean, float)) + t * np.atleast_1d(np.asarray(se, float))


def clopper_pearson(k, n, confidence: float = 0.95) -> tuple[np.ndarray, np.ndarray]:
    """Exact (Clopper-Pearson) two-sided confidence interval for a binomial proportion k/n.

    Vectorised over ``k`` and ``n``; NaN where n == 0.

    References
    ----------
    [ClopperPearson1934]_ (docs/references.md)
    """
    k, n = np.asarray(k, float), np.asarray(n, float)
    a = (1 - confidence) / 2
    with np.errstate(invalid="ignore", divide="ignore"):
        low = np.where(k > 0, special.betaincinv(k, n - k + 1, a), 0.0)
        high = np.where(k < n, special.betaincinv(k + 1, n - k, 1 - a), 1.0)
    bad = n <= 0
    return np.where(bad, np.nan, low), np.where(bad, np.nan, high)


EXCEEDANCE_COLUMNS = KEYS + [
    "limit_table", "use", "duration", "basis", "limit_min_ug_L", "limit_max_ug_L", "n",
    "n_above", "n_undecided", "proportion_above", "ci95_low", "ci95_high", "note",
]


def exceedance_rates(screened: pd.DataFrame, confidence: float = 0.95) -> pd.DataFrame:
    """Count and proportion of results above each applicable limit, with an exact binomial CI.

    Parameters
    ----------
    screened : DataFrame
        Screening output (one row per result x applicable limit, with ``status``).

    Returns
    -------
    DataFrame
        :data:`EXCEEDANCE_COLUMNS`: ``n`` screened results, ``n_above`` with status
        ``exceeds``, ``n_undecided`` non-detects whose detection limit is above the limit (they
        decide nothing; counted as not above), ``proportion_above`` = n_above / n and its
        Clopper-Pearson interval (``ci95_low``, ``ci95_high``). A hardness- or date-dependent
        limit can differ between samples: ``limit_min_ug_L``/``limit_max_ug_L`` give the range.
    """
    keys = KEYS + ["limit_table", "use", "duration", "basis"]
    screened = screened[[c for c in dict.fromkeys(keys + ["status", "limit_ug_L", "sample_type"]) if c in screened]]
    data = site_samples(screened)
    data = data[~data["status"].isin(["qc_sample", "no_limit"]).to_numpy()]  # only the columns read are taken
    if data.empty:
        return pd.DataFrame(columns=EXCEEDANCE_COLUMNS)
    for k in keys:  # missing keys (e.g. basis) must not drop rows from the groups
        data[k] = (data[k].fillna("") if data[k].hasnans else data[k]) if k in data else ""
    codes, first = _groups(data, keys, dropna=True)
    keep = codes >= 0
    if not keep.all():  # a key still missing: no group, as pandas drops it
        first = np.cumsum(keep)[first] - 1
        data, codes = data[keep], codes[keep]
    g = len(first)
    status = data["status"]
    limit = data["limit_ug_L"].to_numpy(dtype=float)
    lo, hi = np.full(g, np.nan), np.full(g, np.nan)
    np.fmin.at(lo, codes, limit)  # NaN limits are skipped, as pandas' min and max skip them
    np.fmax.at(hi, codes, limit)
    out = pd.DataFrame({k: data[k].iloc[first].reset_index(drop=True) for k in keys})
    out["limit_min_ug_L"], out["limit_max_ug_L"] = lo, hi
    out["n"] = np.bincount(codes, minlength=g).astype(np.int64)
    out["n_above"] = np.bincount(codes, weights=status.eq("exceeds").to_numpy(), minlength=g).astype(np.int64)
    out["n_undecided"] = np.bincount(codes, weights=status.eq("nondetect_inconclusive").to_numpy(),
                                     minlength=g).astype(np.int64)
    out["proportion_above"] = out["n_above"] / out["n"]
    out["ci95_low"], out["ci95_high"] = clopper_pearson(out["n_above"], out["n"], confidence)
    out["note"] = join_notes([
        (out["n_undecided"].to_numpy() > 0, _fmt(out["n_undecided"]) + " non-detect(s) with the "
         "detection limit above the limit: undecided, counted as not above"),
    ], len(out))
    return out[EXCEEDANCE_COLUMNS]


def _groups(frame: pd.DataFrame, keys: list[str], dropna: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """Group number of each row of ``frame`` by ``keys``, numbered as ``frame.groupby(keys, sort=True,
    observed=True, dropna=dropna)`` numbers them, and the first row of each group.

    Worked out on integer codes (a categorical's codes, sorted codes of other columns): keys sort in
    category order, a missing key after every value; with ``dropna`` a row with a missing key gets
    no group (code -1). No hash of the rows' keys.
    """
    n = len(frame)
    joint, width, missing = np.zeros(n, dtype=np.int64), 1, np.zeros(n, dtype=bool)
    for k in keys:
        col = frame[k]
        if isinstance(col.dtype, pd.CategoricalDtype):
            c, m = col.cat.codes.to_numpy(), len(col.cat.categories)
        else:
            c, uniq = pd.factorize(col, sort=True)
            m = len(uniq)
        if n and c.min() < 0:
            missing |= c < 0
            c = np.where(c < 0, m, c)  # a missing key sorts last
        if width * (m + 1) >= 2**62:  # keep the mixed-radix number inside int64
            width, joint = _dense(joint, width)
        joint = joint * (m + 1) + c if width > 1 else c.astype(np.int64)
        width *= m + 1
    drop = dropna & missing
    if drop.any():
        codes = np.full(n, -1, dtype=np.int64)
        width, codes[~drop] = _dense(joint[~drop], width)
    else:
        width, codes = _dense(joint, width)
    first = np.full(width, n, dtype=np.int64)
    np.minimum.at(first, codes[~drop], np.flatnonzero(~drop))
    return codes, first


def _dense(keys: np.ndarray, width: int) -> tuple[int, np.ndarray]:
    """Distinct count and dense ranks (0, 1, ... in sorted order) of integer keys below ``width``."""
    if width <= 4 * len(keys) + 1024:  # a table of every possible key, not a sort
        present = np.bincount(keys, minlength=width) > 0
        rank = np.cumsum(present) - 1
        return int(present.sum()), rank[keys]
    uniq, inv = np.unique(keys, return_inverse=True)
    return len(uniq), inv.ravel()
