"""The executive summary: plain sentences generated from the results.

How many sites, samples and results; which sites exceed which limits (with the limit and its table),
since when; what changed in the latest campaign (a campaign is a calendar quarter of sampling);
which trends are rising toward a limit; how many results were undecided because a detection limit
was too high; how many rows were rejected and why; how many results are flagged for a retest; and
the caution. Long lists are cut to :data:`MAX_LISTED` items with a count of the rest.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen._internal.text import format_date, format_significant
from tracescreen.report.findings import RESULT_KEY, limit_precision
from tracescreen.statistics.series import site_samples

#: Sites, series or reasons named in one sentence before "and N more".
MAX_LISTED = 8


def _and(items: list[str], more: int = 0, noun: str = "more") -> str:
    items = list(items)
    if more > 0:
        items.append(f"{more} {noun}")
    if len(items) <= 1:
        return "".join(items)
    return ", ".join(items[:-1]) + " and " + items[-1]


def _plural(n: int, word: str, plural: str | None = None) -> str:
    return f"{n:,} {word if n == 1 else (plural or word + 's')}"


def _day(value) -> str:
    return format_date(pd.Series([value]))[0]


def overview(site: pd.DataFrame, n_tables: int) -> str:
    """How many results, samples, sites and metals, over which period, against how many tables."""
    if site.empty:
        return "The files hold no site-sample results to screen."
    key = [c for c in RESULT_KEY if c in site.columns]
    n_results = len(site.drop_duplicates(key))
    dates = site["sampled_at"]
    quarters = dates.dt.to_period("Q").nunique()
    return (f"This report screens {_plural(n_results, 'result')} of {_plural(site['sample_id'].nunique(), 'sample')} "
            f"from {_plural(site['site_id'].nunique(), 'site')} ({_plural(site['analyte'].nunique(), 'metal')}), "
            f"sampled from {_day(dates.min())} to {_day(dates.max())} in {_plural(quarters, 'campaign')} "
            f"(calendar quarters), against {_plural(n_tables, 'limit table')}.")


def _limit_words(g: pd.DataFrame, entries: pd.DataFrame, refs: dict) -> str:
    """``"10 µg/L [1, 6]"``: the limits of one series that were exceeded, each value (a range where it
    depends on the sample, e.g. its hardness) with the references of the tables that set it."""
    by_value: dict[str, list[int]] = {}
    for table, t in g.groupby("limit_table", observed=True, sort=True):
        lo, hi = t["limit_ug_L"].min(), t["limit_ug_L"].max()
        sf = int(t["_sf"].iloc[0]) if "_sf" in t.columns else limit_precision(t.iloc[[0]], entries)[0]
        text = format_significant([lo, hi], [sf, sf]).tolist()
        value = text[0] if lo == hi else f"{text[0]}–{text[1]}"
        by_value.setdefault(value, []).append(refs.get(str(table), (0, ""))[0])
    return _and([f"{v} µg/L [{', '.join(map(str, sorted(r)))}]" for v, r in by_value.items()])


def exceeding_sites(site: pd.DataFrame, entries: pd.DataFrame, refs: dict, names: dict) -> list[str]:
    """One sentence per site with exceedances (most exceeding results first): each metal, its limit
    and table, how many results of how many, since when and the latest."""
    key = [c for c in RESULT_KEY if c in site.columns]
    exc = site[site["status"].eq("exceeds")]
    if exc.empty:
        return ["No result exceeds a limit."]
    exc = exc.assign(_sf=limit_precision(exc, entries))
    n_series = site.drop_duplicates(key).groupby(["site_id", "analyte", "fraction"], observed=True).size()
    per_site = exc.drop_duplicates(key).groupby("site_id", observed=True).size().sort_values(ascending=False, kind="stable")
    out = [f"{_plural(len(exc.drop_duplicates(key)), 'result')} at {_plural(len(per_site), 'site')} exceed at least one "
           "limit:"]
    for sid in per_site.index[:MAX_LISTED]:
        s = exc[exc["site_id"] == sid]
        metals = []
        for (analyte, fraction), g in s.groupby(["analyte", "fraction"], observed=True, sort=True):
            k = len(g.drop_duplicates(key))
            n = int(n_series.get((sid, analyte, fraction), k))
            metals.append(f"{analyte} ({fraction}) above {_limit_words(g, entries, refs)} in {k} of {n} results "
                          f"since {_day(g['sampled_at'].min())} (latest {_day(g['sampled_at'].max())})")
        name = names.get(str(sid), "")
        out.append(f"{sid}{' ' + name if name else ''}: " + "; ".join(metals) + ".")
    if len(per_site) > MAX_LISTED:
        out.append(f"{_plural(len(per_site) - MAX_LISTED, 'further site')} exceed limits: see the exceedances section.")
    return out


def latest_campaign(site: pd.DataFrame) -> str:
    """What changed in the latest campaign (calendar quarter) against the one before it."""
    if site.empty:
        return ""
    q = site["sampled_at"].dt.to_period("Q")
    quarters = sorted(q.dropna().unique())
    last = quarters[-1]
    now = site[q == last]
    series = ["site_id", "analyte", "fraction"]

    def exceeding(frame):
        return set(map(tuple, frame.loc[frame["status"].eq("exceeds"), series].astype(str).drop_duplicates().to_numpy()))

    text = (f"In the latest campaign ({last.year} Q{last.quarter}), {_plural(now['site_id'].nunique(), 'site')} "
            f"were sampled and {_plural(len(exceeding(now)), 'site–metal series', 'site–metal series')} exceeded a limit")
    if len(quarters) < 2:
        return text + "; there is no earlier campaign to compare with."
    before = site[q == quarters[-2]]
    sampled_both = set(map(tuple, now[series].astype(str).drop_duplicates().to_numpy())) & set(
        map(tuple, before[series].astype(str).drop_duplicates().to_numpy()))
    new = sorted((exceeding(now) - exceeding(before)) & sampled_both)
    gone = sorted((exceeding(before) - exceeding(now)) & sampled_both)

    def words(items):
        return _and([f"{s} {a} ({f})" for s, a, f in items[:MAX_LISTED]], len(items) - MAX_LISTED)

    prev = quarters[-2]
    text += f" (previous campaign, {prev.year} Q{prev.quarter}: {len(exceeding(before))})."
    text += (f" Newly exceeding: {words(new)}." if new else " No series newly exceeds a limit.")
    if gone:
        text += f" No longer exceeding: {words(gone)}."
    return text


def rising_trends(trends: pd.DataFrame | None) -> str:
    """Rising trends whose line reaches the lowest applicable limit, soonest first."""
    if trends is None or trends.empty or "crosses_limit_on" not in trends.columns:
        return ""
    up = trends[trends["direction"].astype(str).eq("increasing")]
    toward = up[up["crosses_limit_on"].notna()].sort_values("crosses_limit_on")
    if toward.empty:
        return (f"{_plural(len(up), 'series', 'series')} show a rising trend; none is projected to reach a limit."
                if len(up) else "No series shows a rising trend.")
    items = [f"{r.site_id} {r.analyte} ({r.fraction}), {format_significant([r.slope_per_year], 2)[0]} µg/L per year, "
             f"reaching {format_significant([r.lowest_limit_ug_L], 3)[0]} µg/L around {_day(r.crosses_limit_on)[:7]}"
             for r in toward.head(MAX_LISTED).itertuples()]
    return (f"{_plural(len(toward), 'rising trend')} point toward a limit: " + _and(items, len(toward) - MAX_LISTED)
            + " (a straight-line extrapolation: an indication, not a forecast).")


def undecided_sentence(site: pd.DataFrame) -> str:
    """How many results decided nothing because the detection limit was above the limit."""
    key = [c for c in RESULT_KEY if c in site.columns]
    u = site[site["status"].eq("nondetect_inconclusive")].drop_duplicates(key)
    r = site[site["status"].eq("above_range_inconclusive")].drop_duplicates(key)
    if u.empty and r.empty:
        return "No result was left undecided by a detection limit above a limit."
    text = ""
    if len(u):
        series = _and(sorted({f"{a} ({f})" for a, f in u[["analyte", "fraction"]].astype(str).to_numpy()})[:MAX_LISTED])
        text = (f"{_plural(len(u), 'non-detect')} at {_plural(u['site_id'].nunique(), 'site')} decided nothing because "
                f"the detection limit was above the limit ({series}): ask the laboratory for a lower detection limit.")
    if len(r):
        text += (" " if text else "") + (f"{_plural(len(r), 'result')} reported above the calibrated range decided "
                                         "nothing: dilute and reanalyse.")
    return text


def rejected_sentence(rejected: pd.DataFrame) -> str:
    """How many rows were rejected, by reason (quoted values left out so that like reasons count together)."""
    if rejected is None or rejected.empty:
        return "No row of the files was rejected."
    reason = rejected["reason"].astype(str).str.split(r" \(").str[0].str.replace(r"[.;]+$", "", regex=True)
    kinds = reason.str.replace(r"'[^']*'", "…", regex=True)
    counts = kinds.value_counts()
    example = reason.groupby(kinds).first()
    items = [f"{n} × {'e.g. ' if n > 1 else ''}{example[k]}" for k, n in counts.head(MAX_LISTED).items()]
    return (f"{_plural(len(rejected), 'row')} of the files were rejected and are listed with the reason: "
            + _and(items, len(counts) - MAX_LISTED, "other reasons") + ".")


def retest_sentence(retest: pd.DataFrame | None) -> str:
    """How many results are flagged for a confirmatory retest, by reason; batches that came without their
    QC summary are a request for documents, said apart (one sentence, not thousands of flagged results)."""
    if retest is None or retest.empty:
        return "No result is flagged for a confirmatory retest."
    docs = documents_only(retest)
    key = ["site_id", "sample_id", "analyte", "fraction"]
    flagged = retest[~docs]
    text = "No result is flagged for a confirmatory retest."
    if len(flagged):
        n = len(flagged[key].astype(str).drop_duplicates())
        reasons = flagged["reason"].astype(str).value_counts()
        items = [f"{k.replace('_', ' ')} {v}" for k, v in reasons.head(MAX_LISTED).items()]
        text = (f"{_plural(n, 'result')} {'is' if n == 1 else 'are'} flagged for a confirmatory retest or review ("
                + _and(items) + ").")
    if docs.any():
        d = retest[docs]
        n_batches = len(d[["lab", "batch"]].astype(str).drop_duplicates())
        n = len(d[key].astype(str).drop_duplicates())
        text += (f" {_plural(n_batches, 'batch', 'batches')} ({_plural(n, 'result')}) came without the laboratory's "
                 "QC summary: ask the laboratory for it (listed by batch with the retest list).")
    return text


def documents_only(retest: pd.DataFrame) -> np.ndarray:
    """Rows whose reason asks the laboratory for documents, not for a sample to be analysed
    (:data:`tracescreen.retest.request.REASON_ACTION`)."""
    from tracescreen.retest.request import REASON_ACTION

    return retest["reason"].astype(str).map(REASON_ACTION).eq("documents").to_numpy()


def executive_summary(screening: pd.DataFrame, entries: pd.DataFrame, refs: pd.DataFrame, sites=None, trends=None,
                      rejected=None, retest=None, extra: list[str] | None = None) -> list:
    """The executive summary in reading order: paragraphs, and the sites with exceedances as a list
    (the caution is shown beside it).

    Parameters
    ----------
    screening : pandas.DataFrame
        The screening table (text columns as text).
    entries, refs : pandas.DataFrame
        Limit entries and :func:`tracescreen.report.findings.limit_references`.
    sites, trends, rejected, retest : pandas.DataFrame, optional
    extra : list of str, optional
        Sentences of other sections (laboratory QC, wells) to add before the rejected rows.

    Returns
    -------
    list of :class:`tracescreen.report.document.Paragraph` and :class:`~tracescreen.report.document.Bullets`
    """
    from tracescreen.report.document import Bullets, Paragraph

    site = site_samples(screening)
    names = dict(zip(sites["site_id"].astype(str), sites["name"].fillna("").astype(str))) if sites is not None else {}
    ref = {t: (k, n) for k, t, n in refs[["ref", "table_id", "short_name"]].itertuples(index=False)}
    out = [Paragraph(overview(site, len(refs)), "lead")]
    if len(site):
        found = exceeding_sites(site, entries, ref, names)
        out.append(Paragraph(found[0], "lead"))
        if len(found) > 1:
            out.append(Bullets(found[1:]))
    sentences = [latest_campaign(site), rising_trends(trends), undecided_sentence(site), *(extra or []),
                 rejected_sentence(rejected), retest_sentence(retest)]
    out += [Paragraph(t, "lead") for t in sentences if t]
    if len(refs):
        out.append(Paragraph("Limit tables: " + "; ".join(f"[{k}] {n}" for k, n in ref.values())
                             + ". Full citations are in the appendix.", "note"))
    return out
