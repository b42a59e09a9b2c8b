"""Bootstrap upper confidence limits on the Kaplan-Meier mean of many censored series.

Each series is resampled with replacement ``n_boot`` times; the KM mean (Efron correction) of
every resample comes from how often each value was taken, over the series sorted once
(:func:`km_means_of_resamples`), so no resample is sorted. Each series' resamples come from its
own generator seeded with the run's seed and the series' identity, so the limits are reproducible
and a series' limit does not change when other series are in the same run.

References
----------
[EfronTibshirani1993]_, [Helsel2012]_ (docs/references.md)
"""

from __future__ import annotations

import numpy as np

from tracescreen._internal.parallel import ordered_map, workers
from tracescreen.statistics.series import as_series, chunks

#: Resample cells (resamples x values) drawn at once for one long series.
RESAMPLE_CELLS = 2_000_000


def series_seed_keys(table) -> np.ndarray:
    """A stable 64-bit key per series from its identifying columns (e.g. ``site_id, analyte,
    fraction``), so that a series' resamples depend on the seed and the series only."""
    import pandas as pd

    return pd.util.hash_pandas_object(table.astype(str), index=False).to_numpy(np.uint64)


def bootstrap_ucl_km_grouped(
    values, nondetect, codes, n_groups, *, level=0.95, n_boot=1000, seed=20240601, keys=None
) -> np.ndarray:
    """Upper confidence limit on the Kaplan-Meier mean by a seeded percentile bootstrap.

    Each series is resampled with replacement ``n_boot`` times; the KM mean (Efron correction)
    of every resample is computed in one vectorised pass, and the ``level`` quantile of those
    means is the one-sided upper confidence limit [µg/L] (Efron & Tibshirani 1993, ch. 13;
    Helsel 2012, sec. 7.4, bootstrap confidence intervals for the KM mean).

    Parameters
    ----------
    keys : array of uint64, shape (n_groups,), optional
        A stable identity per series (:func:`series_seed_keys`). Each series' resamples come from
        its own generator seeded with ``(seed, key)``, so its limit does not change when other
        series are added to or removed from the run. Default: the group codes.

    Returns
    -------
    ndarray, shape (n_groups,)
        NaN for groups without values.

    References
    ----------
    [EfronTibshirani1993]_, [Helsel2012]_ (docs/references.md)
    """
    x, nd = as_series(values, nondetect)
    keys = np.arange(n_groups, dtype=np.uint64) if keys is None else np.asarray(keys, dtype=np.uint64)
    ucl = np.full(n_groups, np.nan)

    def one(chunk, pick, last):
        return chunk, km_means_of_resamples(chunk.take(x, np.inf), chunk.take(nd, False), chunk.valid, pick), last

    def drawn():  # each series from its own generator: the same numbers whatever else is in the run
        for chunk in chunks(np.asarray(codes), n_groups, cells=lambda m: m * n_boot):
            n = chunk.valid.sum(axis=1)
            m = chunk.valid.shape[1]
            # a long series alone in its chunk draws its resamples in blocks (the generator gives the same
            # numbers in rows of any block size): memory of the order of RESAMPLE_CELLS, not n_boot x m
            block = n_boot if len(n) > 1 else max(1, min(n_boot, RESAMPLE_CELLS // max(m, 1)))
            rngs = []
            for grp in chunk.groups:  # one generator per series
                k = int(keys[grp])
                rngs.append(np.random.default_rng([seed, k & 0xFFFFFFFF, k >> 32]))
            for first in range(0, n_boot, block):
                b = min(block, n_boot - first)
                pick = np.zeros((len(n), b, m), np.int64)
                for i, size in enumerate(n):
                    pick[i, :, :size] = (rngs[i].random((b, size)) * size).astype(np.int64)
                yield chunk, pick, first + b == n_boot

    parts = []
    for chunk, means, last in ordered_map(one, drawn(), workers(2)):  # blocks on worker threads, two at a time
        parts.append(means)
        if last:
            ucl[chunk.groups] = np.quantile(np.concatenate(parts, axis=1), level, axis=1)
            parts = []
    return ucl


def km_means_of_resamples(x, nd, valid, pick) -> np.ndarray:
    """Kaplan-Meier mean (Efron correction) of bootstrap resamples, from counts, without sorting them.

    Parameters
    ----------
    x, nd, valid : ndarray, shape (g, m)
        Padded series (a series' values fill its first ``n`` cells).
    pick : ndarray of int, shape (g, B, m)
        Resample ``b`` of series ``i`` takes cells ``pick[i, b, :n_i]`` (cells beyond ``n_i`` are
        ignored).

    Returns
    -------
    ndarray, shape (g, B)
        The KM mean of each resample: exactly :func:`tracescreen.statistics.censored.kaplan_meier` of ``x[i, pick[i, b, :n_i]]``.

    Notes
    -----
    A resample is a multiset of the series' values, so it is described by how often each value is
    taken. Each series is sorted once; a resample's counts per sorted position then give the
    flipped Kaplan-Meier quantities of ``censored._km_rows`` directly: at the end of each run of equal
    values, ``d`` = detects taken in the run and ``b`` = values taken at or below it, with the
    factor ``1 - d / b`` (Helsel 2012, eq. 6-1). These are the same factors, in the same order, as
    sorting each resample would give, without the B sorts; only the final sum is accumulated in
    another order (equal to about 1e-15 relative).
    """
    g, m = x.shape
    n_boot = pick.shape[1]
    xs = np.where(valid, x, np.inf)
    order = np.argsort(xs, axis=1, kind="stable")
    rank = np.empty_like(order)
    np.put_along_axis(rank, order, np.broadcast_to(np.arange(m), (g, m)), axis=1)
    sx = np.take_along_axis(xs, order, axis=1)
    sdet = np.take_along_axis(valid & ~nd, order, axis=1)
    # counts[i, b, j]: how often resample b of series i took the value at sorted position j
    pos = np.take_along_axis(rank, pick.reshape(g, n_boot * m), axis=1).reshape(g, n_boot, m)
    taken = np.broadcast_to(valid[:, None, :], pos.shape)
    cell = (np.arange(g * n_boot, dtype=np.int64).reshape(g, n_boot, 1) * m + pos)[taken]
    counts = np.bincount(cell, minlength=g * n_boot * m).reshape(g, n_boot, m).astype(float)
    last = np.ones((g, m), bool)  # last position of each run of equal values
    last[:, :-1] = sx[:, 1:] != sx[:, :-1]
    cdet = np.cumsum(counts * sdet[:, None, :], axis=2)
    below_run = np.cumsum(counts, axis=2)  # values taken at or below each position
    xfin = np.where(np.isfinite(sx), sx, 0.0)
    xmin = np.take_along_axis(xfin, np.argmax(counts > 0, axis=2), axis=1)  # smallest value taken
    del counts
    # d: detects taken in the run ending at each run end = cdet there minus cdet before the run
    d = np.empty_like(cdet)
    d[:, :, 0] = cdet[:, :, 0]
    np.subtract(cdet[:, :, 1:], cdet[:, :, :-1], out=d[:, :, 1:])  # right for runs of one value
    first = np.ones((g, m), bool)
    first[:, 1:] = last[:, :-1]
    run_start = np.maximum.accumulate(np.where(first, np.arange(m), 0), axis=1)
    gi, ji = np.nonzero(last & ~first)  # ends of runs of tied values: few
    if gi.size:
        s0 = run_start[gi, ji]
        before = np.where((s0 > 0)[:, None], cdet[gi, :, np.maximum(s0 - 1, 0)], 0.0)
        d[gi, :, ji] = cdet[gi, :, ji] - before
    del cdet
    jump = last[:, None, :] & (d > 0)
    # factor 1 - d/b at run ends (exactly 1 where no detect was taken: d = 0); computed in place
    np.maximum(below_run, 1.0, out=below_run)
    np.divide(d, below_run, out=d)
    np.subtract(1.0, d, out=d)
    np.copyto(d, 1.0, where=~last[:, None, :])
    # F(x_j-) = product of the factors at and above x_j: a running product from the top, kept in
    # descending order (contiguous) for the steps after it
    below_desc = np.cumprod(d[:, :, ::-1], axis=2)
    del d, below_run
    efron = below_desc[:, :, -1].copy()
    w_desc = np.empty_like(below_desc)
    w_desc[:, :, 0] = 1.0
    w_desc[:, :, 1:] = below_desc[:, :, :-1]
    np.subtract(w_desc, below_desc, out=w_desc)  # F(x_j) - F(x_j-): the mass at x_j
    np.copyto(w_desc, 0.0, where=~jump[:, :, ::-1])
    # mean = sum of mass x value over the detects + the Efron mass at the smallest value taken
    return np.matmul(w_desc, xfin[:, ::-1, None])[:, :, 0] + efron * xmin
