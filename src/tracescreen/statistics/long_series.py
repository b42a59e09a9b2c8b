"""Mann-Kendall, seasonal Kendall and Sen / Akritas-Theil-Sen slope of long series in O(n log n) memory-light work.

:mod:`tracescreen.statistics.mann_kendall` computes every pair of a series at once: fast for the
ordinary series of tens to hundreds of values, but a series of n values needs n(n - 1)/2 pairs in
memory (10,000 values: 50 million pairs, several GB). Long series (loggers, fifty years of daily
samples) take this path instead; the numbers are the same.

* **Pair counts without pairs.** Every statistic here is built from counts of the form
  ``#{(i, j): same season, t_i < t_j, a_i < b_j}`` (:func:`count_pairs`), found level by level over the
  bits of the time rank (the pairs whose time ranks first differ at bit k are counted at level k, by
  one sort and one binary search: O(n log n) per level, O(n) memory). Pairs tied in time are never
  counted, as in the pairwise kernel.
* **Kendall's S with non-detects** (Helsel 2012, sec. 12.2): each value is an interval, a detect
  ``[y, y]``, a non-detect ``[-inf, DL)``; j is certainly above i when j's lower end is above i's
  upper end. On doubled ranks (a non-detect's upper end just below its DL) that is one integer
  comparison, so S = count(i below j, i earlier) - count(i above j, i earlier).
* **Var(S)** is Daniels' (1944) exact permutation variance, as in the pairwise kernel: it needs only
  each value's row sums ``A_i.``, ``B_i.`` and ``sum_j A_ij^2``, ``sum_j B_ij^2``, which are counts
  of values before/after (time) or above/below (value) each value in its season: binary searches.
* **Slopes.** The Sen slope and the Akritas-Theil-Sen slope and interval are order statistics of
  the pairwise slopes (detect/detect slopes twice for ATS, see ``mann_kendall._ats_ranks``). The
  number of pairwise slopes at or below beta is a pair count on ``y - beta t``, so each order
  statistic is found by bisection on beta, started from a bracket taken from a random sample of
  pairs and checked by exact counts (Dillencourt, Mount & Netanyahu 1992 use the same count). The
  bisection stops when the bracket is narrower than :data:`SLOPE_RTOL` of the slopes' scale, so
  slopes agree with the pairwise kernel to that relative tolerance; S, Var(S), z, p and tau are exact.

Units: times in decimal years, values in µg/L, slopes in µg/L per year.

References
----------
[Daniels1944]_, [Kendall1975]_, [Helsel2012]_, [Sen1968]_, [AkritasEtAl1995]_, [DillencourtEtAl1992]_ (docs/references.md)
"""

from __future__ import annotations

import numpy as np

from tracescreen._internal.sorting import group_sort

#: Series longer than this go through this module (n(n-1)/2 pairs would exceed about 4.5 million).
LONG_SERIES = 3000

#: Relative width at which the bisection for a slope stops (of the largest |slope| bound).
SLOPE_RTOL = 1e-8

#: Random pairs drawn to bracket each slope before the bisection.
SAMPLE_PAIRS = 200_000


def _dense(values: np.ndarray) -> np.ndarray:
    """Dense ranks (0, 1, ...) with equal values equal."""
    return np.unique(values, return_inverse=True)[1].astype(np.int64)


def ranks_within(group: np.ndarray, x: np.ndarray) -> np.ndarray:
    """Dense ranks (0, 1, ...; equal values equal) of ``x`` within each ``group``."""
    order = group_sort(group, x)
    gs, xs = group[order], x[order]
    first = np.ones(x.size, bool)
    first[1:] = gs[1:] != gs[:-1]
    new = first.copy()
    new[1:] |= xs[1:] != xs[:-1]
    c = np.cumsum(new) - 1
    out = np.empty(x.size, np.int64)
    out[order] = c - np.maximum.accumulate(np.where(first, c, 0))
    return out


def pair_counts(trank: np.ndarray, group: np.ndarray, a: np.ndarray, b: np.ndarray, n_groups: int) -> np.ndarray:
    """``#{(i, j): group_i == group_j == k, trank_i < trank_j, a_i < b_j}`` for each group k (int64, n_groups).

    ``trank`` non-negative integer time ranks (compared within a group only); ``group`` 0 .. n_groups - 1;
    ``a``, ``b`` numbers compared exactly. All groups at once: O(n log n) per bit of the largest time rank
    of a group; memory O(n).
    """
    out = np.zeros(n_groups, np.int64)
    n = trank.size
    if n < 2:
        return out
    ab = _dense(np.concatenate([a, b]))
    ra, rb = ab[:n], ab[n:]
    k_width = int(ab.max()) + 2
    top = np.maximum(ranks_top(trank, group, n_groups), 0)
    for level in range(int(top.max()).bit_length()):
        # blocks of equal high bits, numbered group after group (keys stay small for many groups)
        width = (top >> (level + 1)) + 1
        block = (np.cumsum(width) - width)[group] + (trank >> (level + 1))
        left = ((trank >> level) & 1) == 0
        if left.all() or not left.any():
            continue
        # one sort of keys and queries together: a query sorts before keys equal to it, so the keys
        # before it are those of lower blocks and those of its block below it (ranks < k_width - 1)
        key = block * (2 * k_width) + 2 * np.where(left, ra, rb) + left
        order = np.argsort(key)
        is_key = left[order]
        query = order[~is_key]
        lower_blocks = np.concatenate(([0], np.cumsum(np.bincount(block[left], minlength=int(width.sum())))))
        found = np.cumsum(is_key)[~is_key] - lower_blocks[block[query]]
        out += np.bincount(group[query], weights=found, minlength=n_groups).astype(np.int64)
    return out


def count_pairs(trank: np.ndarray, group: np.ndarray, a: np.ndarray, b: np.ndarray) -> int:
    """``#{(i, j): group_i == group_j, trank_i < trank_j, a_i < b_j}`` (:func:`pair_counts` summed).

    ``trank`` non-negative integer time ranks; ``group`` non-negative integers; ``a``, ``b`` numbers
    compared exactly. O(n log n) per bit of the largest time rank; memory O(n).
    """
    if trank.size < 2:
        return 0
    return int(pair_counts(trank, group, a, b, int(group.max()) + 1).sum())


def _interval_keys(y: np.ndarray, nd: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Upper and lower ends of each value's interval on doubled ranks (see the module docstring)."""
    r = _dense(y)
    hi = 2 * r + 1 - nd.astype(np.int64)  # a non-detect's upper end lies just below its DL
    lo = np.where(nd, 0, 2 * r + 1)
    return hi, lo


def _below_counts(group: np.ndarray, key: np.ndarray, query: np.ndarray, n_groups: int, inclusive: bool) -> np.ndarray:
    """For each element, how many elements of its group have ``key`` < its ``query`` (<= when ``inclusive``).

    ``key`` and ``query`` are small non-negative integers within each group (e.g. dense ranks within the
    group): one histogram of the keys of every group and its running sum, O(n + sum of the groups'
    largest keys); no sort.
    """
    top = ranks_top(np.maximum(key, query), group, n_groups)
    offset = np.concatenate(([0], np.cumsum(top + 2)))  # each group's cells: keys 0 .. top, then one more
    at = offset[group]
    running = np.concatenate(([0], np.cumsum(np.bincount(at + key, minlength=int(offset[-1])))))
    return running[at + query + int(inclusive)] - running[at]


def kendall_s_var(t: np.ndarray, y: np.ndarray, nd: np.ndarray, season: np.ndarray) -> tuple[float, float, float]:
    """Censored Kendall S, Var(S) and the number of same-season pairs of one series (:func:`kendall_grouped`).

    ``t`` decimal years, ``y`` value or DL [µg/L], ``nd`` non-detect flags, ``season`` 0 .. P - 1.
    """
    s, var, pairs = kendall_grouped(t, y, nd, season, np.zeros(t.size, np.int64), 1)
    return float(s[0]), float(var[0]), float(pairs[0])


def kendall_grouped(t, y, nd, season, codes, n_codes, s_of=None) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Censored Kendall S, Var(S) and same-season pairs of many series at once, without their pairs.

    ``t`` decimal years, ``y`` value or DL [µg/L], ``nd`` non-detect flags, ``season`` 0 .. P - 1 and
    ``codes`` 0 .. n_codes - 1 (the series), one per value. ``s_of`` (bool per code, optional): count S
    only for these series (the others get NaN; their caller sums S over their pairs, which it forms
    anyway for the slopes). Var(S) is Daniels' (1944) permutation variance
    for a series with a non-detect or two values of one season at one time; otherwise Kendall's (1975)
    tie-corrected [n(n-1)(2n+5) - sum t(t-1)(2t+5)]/18 (Gilbert 1987, eq. 16.4), the same number in closed
    form. Seasonal Kendall: each season's S and Var(S) summed (Hirsch, Slack & Smith 1982). A code
    without values gets NaN.
    """
    if t.size == 0:
        return np.full(n_codes, np.nan), np.full(n_codes, np.nan), np.zeros(n_codes)
    n_seasons = int(season.max()) + 1
    keys, grp = np.unique(codes * n_seasons + season, return_inverse=True)
    n_grp, code_of = keys.size, keys // n_seasons
    tr = ranks_within(grp, t)
    counted = slice(None) if s_of is None else np.asarray(s_of, bool)[codes]
    hi, lo = _interval_keys(y[counted], nd[counted])
    tc, gc = tr[counted], grp[counted]
    s = pair_counts(tc, gc, hi, lo, n_grp) - pair_counts(tc, gc, -lo, -hi, n_grp)
    size = np.bincount(grp, minlength=n_grp)
    n_in = size[grp]
    # A (time): later minus earlier values of the same season; B (value): above minus below, on the
    # interval ends re-ranked within the season (the same order within it: the same counts)
    yr = ranks_within(grp, y)
    hi_in, lo_in = 2 * yr + 1 - nd.astype(np.int64), np.where(nd, 0, 2 * yr + 1)
    earlier = _below_counts(grp, tr, tr, n_grp, False)
    not_later = _below_counts(grp, tr, tr, n_grp, True)
    above = n_in - _below_counts(grp, lo_in, hi_in, n_grp, True)  # values whose lower end is above my upper end
    below = _below_counts(grp, hi_in, lo_in, n_grp, False)  # values whose upper end is below my lower end

    def by_group(w):
        return np.bincount(grp, weights=w.astype(float), minlength=n_grp)
    later = n_in - not_later
    sa2, sb2 = by_group(later + earlier), by_group(above + below)
    ra, rb = by_group((later - earlier).astype(float) ** 2), by_group((above - below).astype(float) ** 2)
    n = size.astype(float)
    with np.errstate(invalid="ignore", divide="ignore"):
        one = np.where(n > 1, 2.0 / (n * (n - 1)) * sa2 * sb2, 0.0)
        two = np.where(n > 2, 4.0 / (n * (n - 1) * (n - 2)) * (ra - sa2) * (rb - sb2), 0.0)
    # Kendall's ties: values equal within a season (one dense rank within the season)
    width = int(yr.max()) + 1
    run, length = np.unique(grp * width + yr, return_counts=True)
    length = length.astype(float)
    ties = np.bincount(run // width, weights=length * (length - 1) * (2 * length + 5), minlength=n_grp)

    def per_code(w):
        return np.bincount(code_of, weights=w, minlength=n_codes)
    time_tie = np.bincount(code_of, weights=ranks_top(tr, grp, n_grp) + 1 < size, minlength=n_codes) > 0
    daniels = time_tie | (np.bincount(codes, weights=nd, minlength=n_codes) > 0)
    kendall = (per_code(n * (n - 1) * (2 * n + 5)) - per_code(ties)) / 18.0
    var = np.where(daniels, per_code((one + two) / 4.0), kendall)
    empty = np.bincount(codes, minlength=n_codes) == 0
    no_s = empty if s_of is None else empty | ~np.asarray(s_of, bool)
    return (np.where(no_s, np.nan, per_code(s.astype(float))), np.where(empty, np.nan, var),
            per_code(n * (n - 1) / 2))


def ranks_top(rank: np.ndarray, group: np.ndarray, n_groups: int) -> np.ndarray:
    """The largest ``rank`` in each group (-1 for an empty group)."""
    top = np.full(n_groups, -1, np.int64)
    np.maximum.at(top, group, rank)
    return top


class SlopeCounts:
    """Counts of pairwise slopes at or below beta: all usable pairs, non-detect pairs, detect pairs."""

    def __init__(self, t, y, nd, season):
        self.t, self.y, self.season = t, y, season
        self.tr = _dense(t)
        self.nd = nd
        self.det = ~nd

    def _usable(self, t, g) -> int:
        """Pairs of the same season not tied in time."""
        tie = _dense(t)
        size = np.bincount(g * (int(tie.max()) + 1) + tie)
        same = np.bincount(g)
        return int((same * (same - 1) // 2).sum() - (size * (size - 1) // 2).sum())

    def _le(self, beta: float, pick: np.ndarray | None) -> int:
        """Pairs (earlier i, later j, same season, among ``pick``) with slope <= beta."""
        t, y, tr, g = self.t, self.y, self.tr, self.season
        if pick is not None:
            t, y, tr, g = t[pick], y[pick], tr[pick], g[pick]
        if t.size < 2:
            return 0
        z = y - beta * t
        return self._usable(t, g) - count_pairs(tr, g, z, z)  # minus the pairs with z_j > z_i (slope > beta)

    def usable(self) -> tuple[int, int, int]:
        """Usable pairs (not both non-detects), detect/detect pairs, non-detect-then-detect pairs."""
        def n(pick):
            return self._usable(self.t[pick], self.season[pick]) if pick.sum() > 1 else 0
        n_all = self._usable(self.t, self.season)
        n_dd = n(self.det)
        nd_d = count_pairs(self.tr, self.season, self.det.astype(np.int64), self.det.astype(np.int64))
        return n_all - n(self.nd), n_dd, nd_d

    def multiset_le(self, beta: float, censored: bool) -> int:
        """Slopes <= beta among usable pairs (detect/detect ones twice when ``censored``)."""
        le = self._le(beta, None)
        if not censored:
            return le
        return le - self._le(beta, self.nd) + self._le(beta, self.det)


def _sample_slopes(t, y, nd, season, censored: bool, rng) -> np.ndarray:
    """Slopes of random usable pairs (detect/detect pairs twice when ``censored``)."""
    n = t.size
    i = rng.integers(0, n, SAMPLE_PAIRS)
    j = rng.integers(0, n, SAMPLE_PAIRS)
    i, j = np.minimum(i, j), np.maximum(i, j)
    ok = (season[i] == season[j]) & (t[j] > t[i]) & ~(nd[i] & nd[j])
    i, j = i[ok], j[ok]
    s = (y[j] - y[i]) / (t[j] - t[i])
    if censored:
        s = np.concatenate([s, s[~nd[i] & ~nd[j]]])
    return np.sort(s)


def slope_order_statistics(counts: SlopeCounts, ranks, size: int, censored: bool, seed: int = 0) -> np.ndarray:
    """The ``ranks``-th smallest (0-based, clipped to 0 .. size - 1) pairwise slopes of one series [µg/L per year].

    Among usable pairs (later minus earlier in a season, not both non-detects), detect/detect pairs
    counted twice when ``censored`` (the Akritas-Theil-Sen multiset of ``size`` slopes). NaN where
    there is no pair.
    """
    t, y, nd, season = counts.t, counts.y, counts.nd, counts.season
    ranks = np.asarray(ranks, dtype=float)
    out = np.full(ranks.shape, np.nan)
    if size == 0:
        return out
    dt_min = np.diff(np.unique(t)).min() if np.unique(t).size > 1 else 1.0
    bound = (y.max() - y.min()) / dt_min + 1.0
    sample = _sample_slopes(t, y, nd, season, censored, np.random.default_rng(seed))
    found: dict[int, float] = {}
    last, last_count = None, -1
    for r in np.unique(np.clip(ranks, 0, size - 1).astype(np.int64)):
        if last is not None and last_count >= r + 1:  # the next rank has the same value
            found[int(r)] = last
            continue
        last, last_count = _order_statistic(counts, int(r), size, censored, sample, bound)
        found[int(r)] = last
    clipped = np.clip(ranks, 0, size - 1).astype(np.int64)
    return np.array([found[int(k)] for k in clipped.ravel()]).reshape(ranks.shape)


def _order_statistic(counts: SlopeCounts, r: int, size: int, censored: bool, sample: np.ndarray,
                     bound: float) -> tuple[float, int]:
    """The r-th smallest slope: the least beta with at least r + 1 slopes <= beta (to :data:`SLOPE_RTOL`).

    The bracket (lo, hi] with count(lo) < r + 1 <= count(hi) starts from the random sample's
    quantiles (checked by exact counts; the whole range of slopes otherwise) and shrinks by steps
    interpolated on the counts (the count of slopes rises almost linearly over a narrow bracket),
    with a halving step whenever an interpolated step did not halve the bracket.
    """
    lo, hi, c_lo, c_hi = -bound, bound, 0, size
    if sample.size:
        q = (r + 0.5) / size
        spread = 6.0 * np.sqrt(q * (1 - q) / sample.size) + 2.0 / sample.size
        a = np.nextafter(sample[int(np.clip(np.floor((q - spread) * sample.size), 0, sample.size - 1))], -np.inf)
        b = sample[int(np.clip(np.ceil((q + spread) * sample.size), 0, sample.size - 1))]
        ca = counts.multiset_le(a, censored)
        if ca < r + 1:
            lo, c_lo = a, ca
        cb = counts.multiset_le(b, censored) if b > lo else -1
        if cb >= r + 1:
            hi, c_hi = b, cb
    interpolate = True
    while hi - lo > SLOPE_RTOL * max(abs(lo), abs(hi), 1e-300):
        width = hi - lo
        if interpolate and c_hi > c_lo:
            mid = lo + width * min(max((r + 0.5 - c_lo) / (c_hi - c_lo), 0.05), 0.95)
        else:
            mid = lo + width / 2.0
        if mid <= lo or mid >= hi:
            break
        c = counts.multiset_le(mid, censored)
        if c >= r + 1:
            hi, c_hi = mid, c
        else:
            lo, c_lo = mid, c
        interpolate = (hi - lo) <= width / 2.0
    return hi, c_hi
