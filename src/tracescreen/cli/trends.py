"""``tracescreen trends``: trend tests per site x analyte x fraction; and the statistics options that
``tracescreen screen`` and ``report`` share (``summary.csv``, ``exceedances.csv``, ``trends.csv``)."""

from __future__ import annotations

import argparse
from pathlib import Path

from tracescreen.statistics.options import METHODS, MIN_VALUES, StatisticsOptions

from .common import add_data_options, announce, pipeline_inputs, print_caution
from .parser import group

EXAMPLES = [
    "tracescreen trends scenario_data/lab_results_fernleigh_2017-2020.csv scenario_data/lab_results_fernleigh_2021-2025.csv "
    "--sites scenario_data/sites.csv --limits scenario_data/limits --out out/demo-trends",
]


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
    g = group(p, "statistics")
    g.add_argument("--stats-method", choices=METHODS, default="kaplan_meier",
                   help="estimator for series with non-detects; substitution_* only on request, "
                        "labelled in the output")
    g.add_argument("--bootstrap", type=int, default=1000, metavar="B",
                   help="bootstrap resamples for ucl95_mean")
    g.add_argument("--seed", type=int, default=20240601, help="random seed of the bootstrap")
    add_trend_options(g)


def statistics_options(args, tables=None) -> StatisticsOptions:
    """The run's :class:`~tracescreen.statistics.options.StatisticsOptions` from the arguments."""
    base = StatisticsOptions()
    return StatisticsOptions(method=getattr(args, "stats_method", base.method),
                             n_boot=getattr(args, "bootstrap", base.n_boot), seed=getattr(args, "seed", base.seed),
                             alpha=args.alpha, seasonal=args.seasonal, min_trend_values=args.min_trend_values,
                             tables=tables or base.tables)


def register(sub) -> None:
    p = sub.add_parser(
        "trends", help="trend tests and slopes per site, analyte and fraction; write trends.csv",
        description="Mann-Kendall or seasonal Kendall test (censored where there are non-detects) "
                    "and Sen / Akritas-Theil-Sen slope per site x analyte x fraction, with the date "
                    "an increasing trend line would reach the lowest applicable limit.")
    add_data_options(p)
    add_trend_options(group(p, "statistics"))
    group(p, "output").add_argument("--out", required=True, metavar="DIR", help="folder for trends.csv and rejected.csv")
    p.set_defaults(func=run)


def run(args) -> int:
    from tracescreen import pipeline
    from tracescreen.report import writers as outputs

    options = pipeline.Options(cross_fraction=args.cross_fraction, periods=False, retest=None, lab_qc=None,
                               statistics=statistics_options(args, tables=("trends",)), record_run=args.command)
    res = pipeline.run(pipeline_inputs(args), options, on_loaded=announce)
    table = res.trends
    out = Path(args.out)
    paths = {"trends": outputs.write_csv(table, out / "trends.csv"),
             "rejected": outputs.write_csv(res.loaded.rejected, out / "rejected.csv")}
    print(f"Results accepted: {len(res.loaded.accepted)}  rejected: {len(res.loaded.rejected)}")
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
