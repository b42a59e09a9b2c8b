"""``tracescreen wells``: statistics per monitoring well against background and fixed standards
(US EPA Unified Guidance, 2009): background checks, prediction limits with retesting and the
status over each retest sequence, control charts, tolerance limits and confidence limits compared
with the limit tables. One CSV per method, every input and decision recorded."""

from __future__ import annotations

import argparse
from pathlib import Path

from . import UserError
from .common import add_reading_options, announce, pipeline_inputs, print_caution, results_from_args, warn
from .parser import group

EXAMPLES = [
    "tracescreen wells scenario_data/lab_results_eastbank.xlsx --columns scenario_data/columns_eastbank.yaml "
    "--sites scenario_data/sites.csv --network scenario_data/network.csv --design scenario_data/design.yaml "
    "--limits limits --out out/demo-wells",
]

#: Output file of each table.
FILES = {"design": "design.csv", "design_statement": "design_statement.csv", "well_data": "well_data.csv",
         "background": "background_checks.csv",
         "prediction_limits": "prediction_limits.csv", "retest_sequence": "retest_sequence.csv",
         "well_status": "well_status.csv", "control_charts": "control_charts.csv",
         "tolerance_limits": "tolerance_limits.csv", "confidence_limits": "confidence_limits.csv"}

#: design key -> (option, type, help)
_DESIGN_OPTIONS = {
    "swfpr": ("--swfpr", float, "target annual site-wide false positive rate (default 0.10)"),
    "evaluations_per_year": ("--evaluations-per-year", int, "statistical evaluations per year (default 2)"),
    "plan": ("--plan", str, "retest plan of parametric limits: 1-of-2 (default), 1-of-3, 1-of-4, "
                            "modified-california, california-of-M, or any k-of-m"),
    "order": ("--order", int, "compare single results (1, default) or means/medians of 2 or 3"),
    "nonparametric_plans": ("--nonparametric-plans", str, "candidate plans for non-parametric limits, "
                            "comma-separated, tried in order (default 1-of-2,1-of-3,1-of-4,modified-california)"),
    "compliance_wells": ("--compliance-wells", int, "wells in the design (default: counted from the network)"),
    "constituents": ("--constituents", int, "constituents in the design (default: counted from the results)"),
    "comparison": ("--comparison", str, "interwell, intrawell or auto (default: by spatial variability)"),
    "background_from": ("--background-from", str, "start of the background window (YYYY-MM-DD)"),
    "background_to": ("--background-to", str, "end of the background window (YYYY-MM-DD); later results "
                      "of compliance wells are compliance data"),
    "min_background": ("--min-background", int, "background values needed (default 8)"),
    "alpha_checks": ("--alpha-checks", float, "significance level of the background checks (default 0.05)"),
    "control_chart_k": ("--chart-k", float, "CUSUM reference value k in SD (default 1)"),
    "control_chart_h": ("--chart-h", float, "CUSUM decision interval h in SD (default 5)"),
    "control_chart_scl": ("--chart-scl", float, "Shewhart control limit in SD (default 4.5)"),
    "tolerance_coverage": ("--tolerance-coverage", float, "coverage of tolerance limits (default 0.95)"),
    "tolerance_confidence": ("--tolerance-confidence", float, "confidence of tolerance limits (default 0.95)"),
    "ci_level": ("--ci-level", float, "one-sided confidence of limits compared with standards (default 0.95)"),
    "ci_parameter": ("--ci-parameter", str, "statistic compared with standards: mean (default), median, percentile"),
    "ci_percentile": ("--ci-percentile", float, "the percentile for --ci-parameter percentile (default 0.95)"),
    "ci_last_n": ("--ci-last-n", int, "most recent compliance values per well for confidence limits (default 8)"),
}


def add_wells_options(p: argparse.ArgumentParser, design_options: bool = True) -> None:
    """The network, design and background-standard options (``wells``, ``report``, ``dashboard``);
    with ``design_options`` also one option per design key."""
    g = group(p, "wells")
    g.add_argument("--network", metavar="FILE", help="network CSV: site_id, role (background/compliance), "
                   "well_group, comparison, stage, background_from, background_to, analyte")
    g.add_argument("--design", metavar="FILE", help="design YAML (SWFPR, evaluations a year, plan, windows, ...)"
                   + ("; the options below override it" if design_options else ""))
    g.add_argument("--background-standard", action="store_true",
                   help="where the well group's background upper tolerance limit is above the table value, "
                        "compare confidence limits with it instead (background-based standard)")
    if design_options:
        d = group(p, "design")
        for key, (opt, kind, text) in _DESIGN_OPTIONS.items():
            d.add_argument(opt, dest=f"design_{key}", metavar={int: "N", float: "X", str: "TEXT"}[kind], help=text)


def wells_options(args, required: bool = False):
    """:class:`tracescreen.pipeline.WellsOptions` from the options; None without --network (unless
    ``required``). User errors end with one line naming the file and row."""
    from tracescreen.io.network import NetworkError, read_network
    from tracescreen.pipeline import WellsOptions

    if not getattr(args, "network", None):
        if required:
            raise UserError("give --network FILE (site_id, role, well_group, ...)")
        if getattr(args, "design", None):
            raise UserError("--design needs --network FILE")
        return None
    try:
        network = read_network(args.network)
    except NetworkError as exc:
        raise UserError(str(exc)) from None
    if network.empty:
        raise UserError(f"{args.network}: no well has a role (background or compliance)")
    return WellsOptions(network, design_from_args(args), bool(getattr(args, "background_standard", False)))


def register(sub) -> None:
    p = sub.add_parser(
        "wells", help="per-well statistics against background and standards (US EPA Unified Guidance 2009)",
        description="Background checks (size, non-detects, outliers, trend, spatial variability, normality); "
                    "prediction limits with retesting designed for a site-wide false positive rate, and the "
                    "status of every compliance well over its retest sequence; Shewhart-CUSUM control charts; "
                    "upper tolerance limits; confidence limits of each well's mean, median or percentile "
                    "compared with the limit tables. One CSV per method in --out.")
    inputs = group(p, "inputs")
    inputs.add_argument("results", nargs="*", metavar="RESULTS", help="lab result files (CSV or XLSX); or --workspace")
    inputs.add_argument("--workspace", metavar="DIR", help="use the current results of this workspace")
    inputs.add_argument("--sites", metavar="FILE", help="sites CSV (which limit tables apply where)")
    group(p, "limits").add_argument("--limits", metavar="PATH", action="append",
                   help="limit table(s) whose values are the fixed standards of the confidence limits")
    add_wells_options(p)
    add_reading_options(p)
    group(p, "output").add_argument("--out", required=True, metavar="DIR", help="folder for the CSV tables")
    p.set_defaults(func=run, results_required=True)


def design_from_args(args):
    """The design: the --design file's values, then the options."""
    from tracescreen.io.network import NetworkError, read_design
    from tracescreen.statistics.background.design import Design, DesignError

    try:
        values = read_design(args.design) if getattr(args, "design", None) else {}
    except NetworkError as exc:
        raise UserError(str(exc)) from None
    source = getattr(args, "design", None) or "options"
    for key, (opt, kind, _) in _DESIGN_OPTIONS.items():
        raw = getattr(args, f"design_{key}", None)
        if raw is None:
            continue
        try:
            values[key] = kind(raw)
        except ValueError:
            raise UserError(f"{opt} {raw!r}: not a {kind.__name__}") from None
        source = "options"
    try:
        return Design.from_mapping(values, source)
    except DesignError as exc:
        raise UserError(str(exc)) from None


def run(args) -> int:
    from tracescreen import pipeline
    from tracescreen.report import writers as outputs

    wopts = wells_options(args, required=True)
    if args.limits:
        data = pipeline.load(pipeline_inputs(args))
        announce(data)
        loaded = data.loaded
        screened, _ = pipeline.screen(loaded.accepted, data.limits, data.sites,
                                      pipeline.Options(cross_fraction=False, periods=False))
    else:
        warn("no --limits: confidence limits are not compared with standards")
        loaded, screened = results_from_args(args), None
    have = set(loaded.accepted["site_id"].astype(str))
    unknown = sorted(set(wopts.network["site_id"]) - have)
    if len(unknown) == wopts.network["site_id"].nunique():
        raise UserError(f"{args.network}: none of its wells has accepted results")
    if unknown:
        warn(f"{len(unknown)} network well(s) without accepted results: {', '.join(unknown[:5])}")
    tables = pipeline.wells(loaded.accepted, screened, wopts)
    out = Path(args.out)
    paths = {name: outputs.write_csv(tables[name], out / FILES[name]) for name in FILES}
    paths["rejected"] = outputs.write_csv(loaded.rejected, out / "rejected.csv")
    _print_summary(tables, loaded)
    print("\nOutputs:")
    for name, path in paths.items():
        print(f"  {name:<18} {path}")
    print_caution()
    return 0


def _print_summary(tables, loaded) -> None:
    d = dict(zip(tables["design"]["setting"], tables["design"]["value"]))
    print(f"Results accepted: {len(loaded.accepted)}  rejected: {len(loaded.rejected)}")
    print(f"Design: SWFPR {d['swfpr']}, {d['wells_in_design']} compliance wells x {d['constituents_in_design']} "
          f"constituents, {d['evaluations_per_year']} evaluations a year, plan {d['plan']}; "
          f"per-test confidence {float(d['per_test_confidence']):.6f}")
    status = tables["well_status"]
    print(f"Compliance series: {len(status)}")
    for s, n in status["latest_status"].value_counts().items():
        print(f"  {s:<22} {n}")
    confirmed = status[status["n_confirmed_exceedances"] > 0]
    if len(confirmed):
        print("Confirmed exceedances of background (statistically significant increases):")
        for r in confirmed.head(20).itertuples():
            print(f"  {r.site_id} {r.analyte} ({r.fraction}): {r.n_confirmed_exceedances} "
                  f"[{r.method}, {r.plan}]")
    ci = tables["confidence_limits"]
    if len(ci):
        over = ci[ci["decision"] == "exceeds"]
        print(f"Confidence limits compared with standards: {len(ci)}; lower limit above the standard: {len(over)}")
