"""``tracescreen labqc``: review the laboratory's QC rows of a batch and its calibration data.

Reads the lab files (their QC rows are set aside by the loader with every original column) and
any separate QC summary files, judges each QC element against the lab's own limits or the US EPA
National Functional Guidelines defaults, qualifies the affected results, and writes the verdicts,
the qualified results, a per-batch data review narrative and the retest reasons. With
``--calibration``, also fits the calibration curves, computes LOD/LOQ and the MDL of an MDL study,
and checks the results against their calibration.

The options of the review (:func:`add_lab_qc_options`) are shared with ``screen`` and ``report``,
which run the same review as a step of their pipeline.
"""

from __future__ import annotations

import argparse
from pathlib import Path

from . import UserError
from .common import add_reading_options, print_caution, results_from_args, warn
from .parser import group

EXAMPLES = [
    "tracescreen labqc scenario_data/lab_results_fernleigh_2021-2025.csv --out out/demo-labqc",
]


def add_lab_qc_options(p: argparse.ArgumentParser, qc_help: str = "") -> None:
    """Add the options of the laboratory QC review and the calibration checks."""
    g = group(p, "labqc")
    g.add_argument("--qc", metavar="FILE", action="append", default=[],
                   help=qc_help or "a separate laboratory QC summary file (CSV or XLSX); repeat for several. "
                                   "The QC rows of the lab files are reviewed without it")
    g.add_argument("--calibration", metavar="FILE", action="append", default=[],
                   help="the laboratory's calibration file (standards' concentrations and responses, calibration "
                        "blanks, MDL study, sample responses); repeat for several")
    g.add_argument("--weighting", choices=("none", "1/x", "1/x2", "auto"), default="auto",
                   help="calibration fit weighting; auto = 1/x2 where replicate spread grows with concentration")
    g.add_argument("--windows", metavar="FILE",
                   help="QC windows file of the project's own plan (the form of the shipped lab_qc_windows.yaml)")


def lab_qc_options(args):
    """The run's :class:`tracescreen.retest.labqc.options.LabQcOptions` from the options."""
    from tracescreen.retest.labqc.options import LabQcOptions

    return LabQcOptions(weighting=args.weighting, windows=args.windows)


def lab_qc_tables(review, calibration) -> dict:
    """The review's and the calibration's output tables: name -> (table, file name)."""
    out = {}
    if review is not None:
        out.update(review.tables())
    if calibration is not None:
        out.update(calibration.tables())
    return out


def print_review(review, calibration) -> None:
    """What the review found, in a few lines."""
    from tracescreen.retest.labqc.elements import ELEMENTS

    if review is not None:
        counts = review.qc["element"].value_counts()
        print("QC rows by element: " + (", ".join(f"{e} {counts[e]}" for e in ELEMENTS if e in counts.index)
                                        or "none"))
        c = review.counts()
        print(f"Verdicts: {c['verdicts']}  within {c['verdict_within']}  below {c['verdict_below']}  above "
              f"{c['verdict_above']}  not judged {c['verdict_not_judged']}")
        print("Results qualified: " + ", ".join(f"{k} {c['qualified_' + k]}" for k in ("R", "UJ", "U", "J-", "J+", "J")))
        if len(review.unrecognised):
            warn(f"{len(review.unrecognised)} QC rows are not a QC element the review knows "
                 "(listed in qc_unrecognised.csv)")
        for text in review.batches["narrative"]:
            print(f"\n{text}")
    if calibration is not None:
        print(f"\nCalibration rows read: {calibration.rows_read}  used: {len(calibration.points)}  "
              f"rejected: {len(calibration.rejected)}")
        for r in calibration.fits.itertuples():
            print(f"  {r.analyte} run {r.run or '-'}: {r.weighting} fit, slope {r.slope:.5g}, intercept "
                  f"{r.intercept:.4g}, r {r.r:.5f}, LOD {r.lod_ug_L:.3g} ug/L, LOQ {r.loq_ug_L:.3g} ug/L"
                  + (f", lack-of-fit p {r.lack_of_fit_p:.3g}" if r.lack_of_fit_p == r.lack_of_fit_p else ""))


def register(sub) -> None:
    p = sub.add_parser(
        "labqc", help="review the laboratory's QC rows and calibration data; qualify the affected results",
        description="Judge every laboratory QC element of each batch (calibration checks, blanks, control "
                    "samples, matrix spikes, duplicates, interference checks, serial dilutions, internal "
                    "standards) against the laboratory's own limits or the US EPA National Functional "
                    "Guidelines defaults, and qualify the results of the batch (U, J, J+, J-, UJ, R).")
    inputs = group(p, "inputs")
    inputs.add_argument("results", nargs="*", metavar="RESULTS", help="lab result files (CSV or XLSX); or --workspace")
    inputs.add_argument("--workspace", metavar="DIR", help="use the current results of this workspace instead of lab files")
    group(p, "output").add_argument("--out", required=True, metavar="DIR", help="folder for the output tables")
    add_lab_qc_options(p)
    add_reading_options(p)
    p.set_defaults(func=run, results_required=False)


def run(args) -> int:
    import pandas as pd

    from tracescreen.report import writers as outputs
    from tracescreen.retest.calibration.review import review_calibration
    from tracescreen.retest.labqc.review import review_files
    from tracescreen.retest.labqc.windows import load_windows

    if not (args.results or args.workspace or args.calibration):
        raise UserError("nothing to review: give lab result files, --workspace DIR or --calibration FILE")
    windows = load_windows(args.windows) if args.windows else None
    loaded = results_from_args(args, None) if (args.results or args.workspace) else None
    accepted = loaded.accepted if loaded is not None else pd.DataFrame()
    column_map = None
    if args.columns:
        from tracescreen.io.columns import load_column_map
        column_map = load_column_map(args.columns)
    review = None
    if loaded is not None:
        f = loaded.files
        print(f"Rows read: {int(f['rows_read'].sum())}  accepted: {len(accepted)}  set aside (not screened): "
              f"{len(loaded.set_aside)}  rejected: {len(loaded.rejected)}")
        review = review_files(loaded, args.qc, column_map, args.date_order, args.encoding, windows)
        if review.qc.empty:
            warn("no laboratory QC rows found in the files: ask the laboratory for the QC summary of each batch")
        if len(review.qc) and len(accepted) and (review.qc["batch"] == "").any() \
                and (accepted["batch"].astype(str) != "").any():
            warn(f"{int((review.qc['batch'] == '').sum())} QC rows give no batch: they cannot be linked to the "
                 "batch's results")
    calibration = review_calibration(args.calibration, accepted, args.weighting, args.encoding) \
        if args.calibration else None
    print_review(review, calibration)
    out = Path(args.out)
    written = {name: outputs.write_csv(table, out / fname)
               for name, (table, fname) in lab_qc_tables(review, calibration).items()}
    parts = [t for t in (getattr(review, "retest", None), getattr(calibration, "retest", None)) if t is not None]
    retest = pd.concat(parts, ignore_index=True) if parts else None
    if retest is not None:
        written["retest"] = outputs.write_csv(retest, out / "qc_retest.csv")
        print(f"\nRetest reasons: {len(retest)} rows" + "".join(
            f"\n  {r:<28} {n}" for r, n in retest["reason"].value_counts(sort=False).items()))
    print("\nOutputs:")
    for name, path in written.items():
        print(f"  {name:<12} {path}")
    print_caution()
    return 0
