"""Command-line options of the retest flags and QC checks (shared by ``screen`` and ``report``)."""

from __future__ import annotations

import re

from tracescreen.retest.options import REASONS, RetestOptions

from .parser import group

_DURATION = re.compile(r"^\s*(\d+(?:\.\d+)?)\s*(h|d|m)\s*$", re.IGNORECASE)


def add_retest_options(p) -> None:
    """Add the thresholds of the retest flags (defaults: common practice or the cited source)."""
    g = group(p, "retest")
    g.add_argument("--lookback", default="all", metavar="N|DAYSd|all",
                   help="first exceedance: earlier results to look back over: a number of sampling dates "
                        "(e.g. 4), a duration in days (e.g. 730d) or all (default)")
    g.add_argument("--near-limit", type=float, default=0.8, metavar="SHARE",
                   help="flag detected results at or above this share of a limit (default 0.8, common practice)")
    g.add_argument("--outlier-z", type=float, default=3.5, metavar="Z",
                   help="modified z-score of ln(value) against the series' earlier detects "
                        "(default 3.5, Iglewicz & Hoaglin 1993)")
    g.add_argument("--outlier-min-prior", type=int, default=8, metavar="N",
                   help="earlier detects needed for the outlier check (default 8)")
    g.add_argument("--duplicate-rpd", type=float, default=30.0, metavar="PERCENT",
                   help="field duplicate RPD limit when both are >= 5 x DL (default 30, common practice)")
    g.add_argument("--blank-multiple", type=float, default=5.0, metavar="X",
                   help="flag batch results below X times a contaminated blank (default 5, common practice)")
    g.add_argument("--dissolved-total-percent", type=float, default=30.0, metavar="PERCENT",
                   help="dissolved above total by more than this when both > 5 x DL (default 30)")
    g.add_argument("--holding-time", action="append", default=[], metavar="ANALYTE=DURATION",
                   help="holding time for an analyte, e.g. chromium(vi)=28d (buffered), mercury=90d; "
                        "units h, d, m (months); '*' for all others (defaults: 40 CFR 136.3 Table II: "
                        "metals 6m, mercury 28d, chromium(vi) 24h)")
    g.add_argument("--reasons", default=",".join(REASONS), metavar="LIST",
                   help="comma-separated reason codes to compute (default all)")


def parse_duration(text: str):
    """``24h`` → Timedelta, ``28d`` → Timedelta, ``6m`` → DateOffset(months=6); ValueError otherwise."""
    m = _DURATION.match(text)
    if not m:
        raise ValueError(f"holding time '{text}' is not a number followed by h, d or m (e.g. 28d)")
    import pandas as pd

    n, unit = float(m.group(1)), m.group(2).lower()
    if unit == "m":
        if n != int(n):
            raise ValueError(f"holding time '{text}': months must be a whole number")
        return pd.DateOffset(months=int(n))
    return pd.Timedelta(hours=n) if unit == "h" else pd.Timedelta(days=n)


def retest_options(args, error=ValueError) -> RetestOptions:
    """RetestOptions from parsed arguments; a bad value raises ``error`` with a one-line message."""
    import pandas as pd

    from tracescreen.retest.qc_checks import HOLDING_TIMES

    lb = str(args.lookback).strip().lower()
    try:
        if lb == "all":
            lookback = None
        elif lb.isdigit():
            lookback = int(lb)
        elif lb.endswith("d") and lb[:-1].isdigit():
            lookback = pd.Timedelta(days=int(lb[:-1]))
        else:
            raise ValueError(f"--lookback '{args.lookback}' must be a number of sampling dates, "
                             "a number of days like 730d, or all")
        holds = dict(HOLDING_TIMES)
        for item in args.holding_time:
            if "=" not in item:
                raise ValueError(f"--holding-time '{item}' must be ANALYTE=DURATION, e.g. mercury=28d")
            analyte, dur = item.rsplit("=", 1)
            holds[analyte.strip().lower()] = parse_duration(dur)
        reasons = tuple(r.strip() for r in args.reasons.split(",") if r.strip())
        unknown = sorted(set(reasons) - set(REASONS))
        if unknown:
            raise ValueError(f"--reasons: unknown code(s) {', '.join(unknown)}; known: {', '.join(REASONS)}")
        if not 0 < args.near_limit <= 1:
            raise ValueError(f"--near-limit must be in (0, 1], got {args.near_limit}")
    except ValueError as exc:
        raise error(str(exc)) from None
    return RetestOptions(lookback=lookback, near_limit_fraction=args.near_limit, outlier_z=args.outlier_z,
                         outlier_min_prior=args.outlier_min_prior, duplicate_rpd_percent=args.duplicate_rpd,
                         blank_multiple=args.blank_multiple, dissolved_percent=args.dissolved_total_percent,
                         holding_times=holds, reasons=reasons)
