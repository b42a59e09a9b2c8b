"""``tracescreen labqc``: review the laboratory's QC rows of a batch and its calibration data.

Reads the lab files (their QC rows are set aside by the loader with every original column) and
any separate QC summary files, judges each QC element against the lab's own limits or the US EPA
National Functional Guidelines defaults, qualifies the affected results, and writes the verdicts,
the qualified results, a per-batch data review narrative and the retest reasons. With
``--calibration``, also fits the calibration curves, computes LOD/LOQ and the MDL of an MDL study,
and checks the results against their calibration.
"""

from __future__ import annotations

import argparse
from pathlib import Path

from . import UserError
from .common import add_reading_options, print_caution, results_from_args, warn


def register(sub) -> None:
    p = sub.add_parser(
        "labqc", help="review the laboratory's QC rows and calibration data; qualify the affected results",
        description="Judge every laboratory QC element of each batch (calibration checks, blanks, control "
                    "samples, matrix spikes, duplicates, interference checks, serial dilutions, internal "
                    "standards) against the laboratory's own limits or the US EPA National Functional "
                    "Guidelines defaults, and qualify the results of the batch (U, J, J+, J-, UJ, R).",
        formatter_class=argparse.ArgumentDefaultsHelpFormatter)
    p.add_argument("results", nargs="*", metavar="RESULTS", help="lab result files (CSV or XLSX); or --workspace")
    p.add_argument("--workspace", metavar="DIR", help="use the current results of this workspace instead of lab files")
    p.add_argument("--qc", metavar="FILE", action="append", default=[],
                   help="a separate QC summary file of the lab (CSV or XLSX); repeat for several")
    p.add_argument("--calibration", metavar="FILE", action="append", default=[],
                   help="calibration file (standards' concentrations and responses, calibration blanks, MDL "
                        "study results); repeat for several")
    p.add_argument("--weighting", choices=("none", "1/x", "1/x2", "auto"), default="auto",
                   help="calibration fit weighting; auto = 1/x2 where replicate spread grows with concentration")
    p.add_argument("--windows", metavar="FILE",
                   help="QC windows file of the project's own plan (the form of the shipped lab_qc_windows.yaml)")
    p.add_argument("--out", required=True, metavar="DIR", help="folder for the output tables")
    add_reading_options(p)
    p.set_defaults(func=run, results_required=False)


def run(args) -> int:
    import pandas as pd

    from tracescreen.report import writers as outputs
    from tracescreen.retest.labqc.elements import ELEMENTS
    from tracescreen.retest.labqc.review import qc_rows_read, review_lab_qc
    from tracescreen.retest.labqc.windows import load_windows

    out = Path(args.out)
    if not (args.results or args.workspace or args.calibration):
        raise UserError("nothing to review: give lab result files, --workspace DIR or --calibration FILE")
    try:
        windows = load_windows(args.windows) if args.windows else load_windows()
    except (OSError, ValueError, KeyError, TypeError) as exc:
        raise UserError(f"{args.windows}: not a usable QC windows file ({exc.__class__.__name__}: {exc})") from None
    loaded = results_from_args(args, None) if (args.results or args.workspace) else None
    accepted = loaded.accepted if loaded is not None else pd.DataFrame()
    column_map = None
    if args.columns:
        from tracescreen.io.columns import load_column_map
        column_map = load_column_map(args.columns)
    try:
        qc, unrecognised = qc_rows_read(loaded.set_aside if loaded is not None else None,
                                        accepted if len(accepted) else None, args.qc, column_map, args.date_order,
                                        args.encoding)
    except ValueError as exc:
        raise UserError(str(exc)) from None
    written = {}
    if len(unrecognised):
        written["unrecognised"] = outputs.write_csv(unrecognised, out / "qc_unrecognised.csv")
        warn(f"{len(unrecognised)} QC rows are not a QC element the review knows (listed in qc_unrecognised.csv)")
    if len(qc) and len(accepted) and (qc["batch"] == "").any() and (accepted["batch"].astype(str) != "").any():
        warn(f"{int((qc['batch'] == '').sum())} QC rows give no batch: they cannot be linked to the batch's results")
    retest_parts = []
    if loaded is not None:
        _print_rows(loaded)
        review = review_lab_qc(accepted, qc, windows)
        written.update(write_review(review, out))
        retest_parts.append(review.retest)
        if qc.empty:
            warn("no laboratory QC rows found in the files: ask the laboratory for the QC summary of each batch")
        counts = qc["element"].value_counts()
        print("QC rows by element: " + (", ".join(f"{e} {counts[e]}" for e in ELEMENTS if e in counts.index) or "none"))
        c = review.counts()
        print(f"Verdicts: {c['verdicts']}  within {c['verdict_within']}  below {c['verdict_below']}  above "
              f"{c['verdict_above']}  not judged {c['verdict_not_judged']}")
        print("Results qualified: " + ", ".join(f"{k} {c['qualified_' + k]}" for k in ("R", "UJ", "U", "J-", "J+", "J")))
        for text in review.batches["narrative"]:
            print(f"\n{text}")
    if args.calibration:
        cal_written, cal_retest, _ = calibration_review(args, accepted, out)
        written.update(cal_written)
        retest_parts.append(cal_retest)
    retest = pd.concat([p for p in retest_parts if len(p)], ignore_index=True) if any(len(p) for p in retest_parts) \
        else (retest_parts[0] if retest_parts else pd.DataFrame())
    if retest_parts:
        written["retest"] = outputs.write_csv(retest, out / "qc_retest.csv")
        print(f"\nRetest reasons: {len(retest)} rows" + "".join(
            f"\n  {r:<28} {n}" for r, n in retest["reason"].value_counts(sort=False).items()))
    print("\nOutputs:")
    for name, path in written.items():
        print(f"  {name:<12} {path}")
    print_caution()
    return 0


def write_review(review, out: Path) -> dict:
    """Write a review's tables; returns {name: path}."""
    from tracescreen.report import writers as outputs

    return {"qc_rows": outputs.write_csv(review.qc, out / "qc_rows.csv"),
            "verdicts": outputs.write_csv(review.verdicts, out / "qc_verdicts.csv"),
            "qualified": outputs.write_csv(review.qualified, out / "qualified_results.csv"),
            "batches": outputs.write_csv(review.batches, out / "qc_batches.csv")}


def review_for_screen(args, loaded):
    """The laboratory QC review of ``screen``'s load (None when the files carry no QC rows)."""
    from tracescreen.io.columns import load_column_map
    from tracescreen.retest.labqc.review import review_load

    try:
        return review_load(loaded, getattr(args, "qc", None) or (),
                           load_column_map(args.columns) if args.columns else None, args.date_order, args.encoding)
    except ValueError as exc:
        raise UserError(str(exc)) from None


def _print_rows(loaded) -> None:
    f = loaded.files
    print(f"Rows read: {int(f['rows_read'].sum())}  accepted: {len(loaded.accepted)}  set aside (not screened): "
          f"{len(loaded.set_aside)}  rejected: {len(loaded.rejected)}")


def calibration_review(args, accepted, out: Path):
    """Fit the calibration files of ``args.calibration``, write their tables and check the results.

    Returns ({name: path}, retest rows, the per-analyte ranges and supported detection limits).
    """
    import pandas as pd

    from tracescreen.report import writers as outputs
    from tracescreen.retest.calibration.checks import analyte_ranges, check_results
    from tracescreen.retest.calibration.fit import fit_curves, recompute_samples
    from tracescreen.retest.calibration.limits import curve_limits, mdl
    from tracescreen.retest.calibration.reading import CalibrationFileError, read_calibration

    try:
        cals = [read_calibration(p, args.encoding) for p in args.calibration]
    except CalibrationFileError as exc:
        raise UserError(str(exc)) from None
    points = pd.concat([c.points for c in cals], ignore_index=True)
    rejected = pd.concat([c.rejected for c in cals], ignore_index=True)
    read = sum(c.rows_read for c in cals)
    print(f"\nCalibration rows read: {read}  used: {len(points)}  rejected: {len(rejected)}")
    fits, pts = fit_curves(points, args.weighting)
    limits = curve_limits(fits, points)
    spiked = points[points["kind"] == "mdl_spike"]
    blanks = points[points["kind"] == "mdl_blank"]
    mdls = mdl(spiked[["analyte", "result_ug_L"]], blanks[["analyte", "result_ug_L"]]) if len(spiked) else None
    written = {"cal_fits": outputs.write_csv(limits, out / "calibration_fits.csv"),
               "cal_points": outputs.write_csv(pts, out / "calibration_points.csv"),
               "cal_rejected": outputs.write_csv(rejected, out / "calibration_rejected.csv")}
    if mdls is not None:
        written["mdl"] = outputs.write_csv(mdls, out / "detection_limits.csv")
    samples = recompute_samples(points, fits)
    if len(samples):
        written["cal_samples"] = outputs.write_csv(samples, out / "calibration_samples.csv")
    for r in limits.itertuples():
        print(f"  {r.analyte} run {r.run or '-'}: {r.weighting} fit, slope {r.slope:.5g}, intercept {r.intercept:.4g}, "
              f"r {r.r:.5f}, LOD {r.lod_ug_L:.3g} ug/L, LOQ {r.loq_ug_L:.3g} ug/L"
              + (f", lack-of-fit p {r.lack_of_fit_p:.3g}" if pd.notna(r.lack_of_fit_p) else ""))
    ranges = analyte_ranges(limits, mdls)
    return written, check_results(accepted, ranges) if len(accepted) else check_results(None, ranges), ranges
