"""``tracescreen trends``: trend tests per site x analyte x fraction; and the statistics outputs
(``summary.csv``, ``exceedances.csv``, ``trends.csv``) that ``tracescreen screen`` also writes."""

from __future__ import annotations

import argparse
from pathlib import Path

import pandas as pd

from tracescreen.report import writers as outputs
from tracescreen.statistics.censored import METHODS
from tracescreen.limits.load import load_limits
from tracescreen.screening.screen import screen
from tracescreen.statistics.summary import exceedance_rates, summarise
from tracescreen.statistics.trends import MIN_VALUES, TABLE_COLUMNS as TREND_TABLE_COLUMNS, lowest_limits, trend_table
from .common import add_data_options, print_caution, results_from_args, warn
from tracescreen.io.sites import load_sites


def _probability(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"not a number: {text!r}") from None
    if not 0 < value < 1:
        raise argparse.ArgumentTypeError(f"must be between 0 and 1, not {text}")
    return value


def add_trend_options(p) -> None:
    """Options of the trend tests."""
    p.add_argument("--alpha", type=_probability, default=0.05,
                   help="significance level of the two-sided trend test (slope interval: 1 - alpha)")
    p.add_argument("--seasonal", choices=("auto", "always", "never"), default="auto",
                   help="seasonal Kendall test: auto = for monthly or quarterly sampling over 3+ years")
    p.add_argument("--min-trend-values", type=int, default=MIN_VALUES, metavar="N",
                   help="fewer values than this: direction 'too_few'")


def add_statistics_options(p: argparse.ArgumentParser) -> None:
    """Options of the summary statistics and the trend tests (``screen`` and ``report``)."""
    g = p.add_argument_group("statistics (summary.csv, exceedances.csv, trends.csv)")
    g.add_argument("--stats-method", choices=METHODS, default="kaplan_meier",
                   help="estimator for series with non-detects; substitution_* only on request, "
                        "labelled in the output")
    g.add_argument("--bootstrap", type=int, default=1000, metavar="B",
                   help="bootstrap resamples for ucl95_mean")
    g.add_argument("--seed", type=int, default=20240601, help="random seed of the bootstrap")
    add_trend_options(g)


def _trends(args, accepted, screened) -> pd.DataFrame:
    if not (accepted["sample_type"].astype(str) == "sample").any():  # nothing to test: empty table
        return pd.DataFrame({c: pd.Series(dtype=object) for c in TREND_TABLE_COLUMNS})
    return trend_table(accepted, alpha=args.alpha, seasonal=args.seasonal,
                       min_n=args.min_trend_values, limits=lowest_limits(screened))


def statistics_tables(args, accepted: pd.DataFrame, screened: pd.DataFrame) -> dict:
    """The statistics tables as the options say: ``summary``, ``exceedances`` (rates per limit),
    ``trends``, and ``notes`` (method notes as text)."""
    return {
        "summary": summarise(accepted, method=args.stats_method, n_boot=args.bootstrap, seed=args.seed),
        "exceedances": exceedance_rates(screened),
        "trends": _trends(args, accepted, screened),
        "notes": [
            f"Summaries: non-detects by {args.stats_method} (Helsel 2012); series without non-detects use "
            "plain sample statistics; ucl95_mean by a seeded percentile bootstrap "
            f"(B={args.bootstrap}, seed={args.seed}).",
            f"Trends: Mann-Kendall or seasonal Kendall (seasonal: {args.seasonal}) at alpha = {args.alpha}; "
            "non-detects count as ties where the order is unknown; Sen or Akritas-Theil-Sen slope per "
            "year from the sampling dates.",
        ],
    }


def write_statistics(args, accepted: pd.DataFrame, screened: pd.DataFrame, out: Path) -> dict:
    """Write summary.csv, exceedances.csv and trends.csv; return {name: path}."""
    tables = statistics_tables(args, accepted, screened)
    return {
        "summary": outputs.write_csv(tables["summary"], out / "summary.csv"),
        "exceedance": outputs.write_csv(tables["exceedances"], out / "exceedances.csv"),
        "trends": outputs.write_csv(tables["trends"], out / "trends.csv"),
    }


def register(sub) -> None:
    p = sub.add_parser(
        "trends", help="trend tests and slopes per site, analyte and fraction; write trends.csv",
        description="Mann-Kendall or seasonal Kendall test (censored where there are non-detects) "
                    "and Sen / Akritas-Theil-Sen slope per site x analyte x fraction, with the date "
                    "an increasing trend line would reach the lowest applicable limit.",
        formatter_class=argparse.ArgumentDefaultsHelpFormatter)
    add_data_options(p)
    add_trend_options(p)
    p.add_argument("--out", required=True, metavar="DIR", help="folder for trends.csv and rejected.csv")
    p.set_defaults(func=run)


def run(args) -> int:
    limits = load_limits(args.limits)
    sites = load_sites(args.sites) if args.sites else None
    if sites is None:
        warn("no --sites file: every limit table applies to every site")
    loaded = results_from_args(args, sites)
    table = _trends(args, loaded.accepted, screen(loaded.accepted, limits, sites, cross_fraction=args.cross_fraction))
    out = Path(args.out)
    paths = {"trends": outputs.write_csv(table, out / "trends.csv"),
             "rejected": outputs.write_csv(loaded.rejected, out / "rejected.csv")}
    print(f"Results accepted: {len(loaded.accepted)}  rejected: {len(loaded.rejected)}")
    print(f"Series: {len(table)}")
    for d, n in table["direction"].value_counts().items():
        print(f"  {d:<12} {n}")
    rising = table[table["crosses_limit_on"].notna()].sort_values("crosses_limit_on")
    if len(rising):
        print("Increasing trends reaching the lowest limit (extrapolated; an indication only):")
        for r in rising.head(10).itertuples():
            print(f"  {r.site_id} {r.analyte} ({r.fraction}): {r.slope_per_year:+.3g} µg/L per year, "
                  f"reaches {r.lowest_limit_ug_L:.3g} µg/L about {r.crosses_limit_on:%Y-%m-%d}")
    print("\nOutputs:")
    for name, path in paths.items():
        print(f"  {name:<10} {path}")
    print_caution()
    return 0
