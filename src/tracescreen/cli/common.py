"""Options shared by the commands that read lab files, limit tables and sites, and their run.

Nothing heavy is imported here at module level: ``tracescreen --help`` builds every parser without
loading pandas. The commands turn their arguments into :class:`tracescreen.pipeline.Inputs` and
:class:`tracescreen.pipeline.Options` and call the pipeline.
"""

from __future__ import annotations

import argparse
import sys

from tracescreen.caution import CAUTION
from tracescreen.vocabulary import DATE_ORDERS

from . import UserError
from .parser import group


def add_data_options(p: argparse.ArgumentParser, results_required: bool = True, dataset: bool = True) -> None:
    """Add the options that say which results, limit tables and sites to read (``--dataset`` only where
    the command reads a Parquet results dataset: ``dataset``)."""
    inputs, limits = group(p, "inputs"), group(p, "limits")
    inputs.add_argument("results", nargs="*", metavar="RESULTS",
                        help="lab result files (CSV or XLSX); or use --workspace" + (" or --dataset" if dataset else ""))
    inputs.add_argument("--workspace", metavar="DIR",
                        help="use the current results of this workspace (see 'tracescreen import') instead of "
                             "lab files; the run is recorded in it with the SHA-256 of the limit tables and sites")
    if dataset:
        inputs.add_argument("--dataset", metavar="DIR",
                            help="use a results dataset (Parquet partitioned by site group, written by 'tracescreen "
                                 "export --parquet') instead of lab files, read one site group at a time")
    inputs.add_argument("--sites", metavar="FILE", help="sites CSV (site_id, name, latitude, longitude, uses, "
                        "hardness_mg_L); without it every table applies to every site")
    limits.add_argument("--limits", required=True, metavar="PATH", action="append",
                        help="limit table (YAML) or folder of tables; repeat for several")
    limits.add_argument("--same-fraction-only", dest="cross_fraction", action="store_false",
                   help="compare results only with limits of their own fraction; by default a dissolved result "
                        "above a total limit exceeds it and a total result within a dissolved criterion meets it "
                        "(total >= dissolved), when the sample has no result of the limit's fraction")
    add_reading_options(p)
    p.set_defaults(results_required=results_required)


def add_reading_options(p: argparse.ArgumentParser) -> None:
    """Add the options that say how to read lab files."""
    g = group(p, "reading")
    g.add_argument("--columns", metavar="FILE", help="YAML mapping of the lab's headers to canonical columns")
    g.add_argument("--date-order", choices=DATE_ORDERS, default="iso",
                   help="how to read dates that are not ISO 8601: dmy (04/03/2021 = 4 March) or mdy; "
                        "default iso accepts ISO 8601 only")
    g.add_argument("--decimal-comma", action="store_true", help="read 0,5 as 0.5 (otherwise rejected)")
    g.add_argument("--encoding", default="utf-8", help="text encoding of CSV files (default utf-8)")
    g.add_argument("--default-fraction", choices=("total", "dissolved"),
                   help="fraction for rows that give none (otherwise such rows are rejected)")
    g.add_argument("--sheet", help="read only this sheet of XLSX files (default: every sheet with recognisable columns)")
    add_cap_options(p)


def add_cap_options(p: argparse.ArgumentParser) -> None:
    """Add the caps on what one lab file may hold (README "Caps"), and the earliest plausible date."""
    from tracescreen.io.caps import EARLIEST_DATE, ReadCaps

    caps = ReadCaps()
    g = group(p, "reading")  # files past a cap are refused; raise a cap for a larger file you trust
    g.add_argument("--max-columns", type=int, default=caps.max_columns, metavar="N",
                   help="most columns a CSV file may have")
    g.add_argument("--max-workbook-mb", type=float, default=caps.workbook_mb, metavar="MB",
                   help="most uncompressed size of an .xlsx workbook (its XML)")
    g.add_argument("--max-workbook-rows", type=int, default=caps.workbook_rows, metavar="N",
                   help="most rows of one workbook sheet")
    g.add_argument("--max-workbook-cells", type=int, default=caps.workbook_cells, metavar="N",
                   help="most cells of one workbook")
    g.add_argument("--earliest-date", default=EARLIEST_DATE, metavar="YYYY-MM-DD",
                   help="earlier sampling and analysis dates are rejected as implausible")


def read_caps(args):
    """The :class:`tracescreen.io.rawtable.ReadCaps` of the arguments (UserError for a cap below 1)."""
    import datetime as dt

    from tracescreen.io.caps import ReadCaps

    values = {"max_columns": args.max_columns, "workbook_mb": args.max_workbook_mb,
              "workbook_rows": args.max_workbook_rows, "workbook_cells": args.max_workbook_cells}
    for k, v in values.items():
        if not v >= 1:
            raise UserError(f"--{k.replace('_', '-').replace('workbook', 'max-workbook')}: needs a number >= 1")
    try:
        dt.date.fromisoformat(args.earliest_date)
    except ValueError:
        raise UserError(f"--earliest-date {args.earliest_date!r}: not a date (YYYY-MM-DD)") from None
    return ReadCaps(**values)


def add_format_option(p: argparse.ArgumentParser) -> None:
    """Add ``--format``: the file format of the output tables."""
    from tracescreen.report.formats import FORMATS

    group(p, "output").add_argument("--format", choices=FORMATS, default=None,
                   help="file format of the output tables: csv (the default; spreadsheets), parquet (text "
                        "dictionary-encoded, dates as dates, the same columns; for tables past a spreadsheet's "
                        "1,048,576 rows; the only format of --engine dask) or xlsx (one workbook per table)")


def load_options(args):
    """How to read the lab files (:class:`tracescreen.io.loading.LoadOptions`) from the arguments."""
    from tracescreen.io.columns import load_column_map
    from tracescreen.io.loading import LoadOptions

    return LoadOptions(column_map=load_column_map(args.columns) if args.columns else None,
                       date_order=args.date_order, decimal_comma=args.decimal_comma,
                       encoding=args.encoding, default_fraction=args.default_fraction, sheet=args.sheet,
                       caps=read_caps(args), earliest_date=args.earliest_date)


def pipeline_inputs(args, limits: bool = True):
    """The run's :class:`tracescreen.pipeline.Inputs` from the data options (user errors raise)."""
    from tracescreen.pipeline import Inputs

    workspace = getattr(args, "workspace", None)
    dataset = getattr(args, "dataset", None)
    if sum(bool(x) for x in (workspace, args.results, dataset)) > 1:
        raise UserError("give lab result files, --workspace DIR or --dataset DIR, not several")
    if not workspace and not dataset and not args.results and getattr(args, "results_required", True):
        raise UserError("no lab result files given (give files, --workspace DIR or --dataset DIR)")
    return Inputs(results=tuple(args.results), limits=tuple(args.limits) if limits else (),
                  sites=getattr(args, "sites", None), workspace=workspace, reading=load_options(args),
                  qc_files=tuple(getattr(args, "qc", None) or ()), dataset=dataset,
                  calibration_files=tuple(getattr(args, "calibration", None) or ()))


def results_from_args(args, sites=None):
    """The lab results a command uses: the lab files given, or the current results of ``--workspace``
    (results of sites not in ``sites`` then rejected, as the loader does); the loader's warnings are shown."""
    from tracescreen.pipeline import read_results

    loaded = read_results(pipeline_inputs(args, limits=False), sites)
    for msg in loaded.warnings:
        warn(msg)
    return loaded


def announce(data) -> None:
    """Warnings every reading command gives: no sites file, and what the loader noted."""
    for msg in data.loaded.warnings:
        warn(msg)
    if data.sites is None:
        warn("no --sites file: every limit table applies to every site")


def run_options(args) -> dict:
    """The command's options as given (what a run manifest records)."""
    return {k: v for k, v in vars(args).items() if k not in ("func",) and not callable(v)}


def output_folder(args):
    """The command's :class:`tracescreen.report.output_folder.OutputFolder` at ``--out`` (checked at once)."""
    from tracescreen.report.output_folder import OutputFolder

    return OutputFolder(args.out, args.command, run_options(args))


def rejection_problems(rejected, n: int = 5, values: str = r"'[^']*\d[^']*'"):
    """The ``n`` most common problems of rejected rows (a row's reason lists its problems, ``; ``-joined),
    with the row's own values left out (``'5/21/2024'`` -> ``'...'``) so that like problems count together.

    ``values`` is the pattern of the quoted values left out: by default those with a digit (dates,
    numbers), so that a quoted word that is the problem itself stays; :func:`set_aside_kinds` leaves
    every quoted value out.

    >>> import pandas as pd
    >>> rejection_problems(pd.DataFrame({"reason": ["date '5/1/24' is not a date (ISO; or mdy); unit is empty",
    ...                                             "date '6/2/24' is not a date (ISO; or mdy)"]}))
    [("date '...' is not a date (ISO; or mdy)", 2), ('unit is empty', 1)]
    """
    if rejected is None or not len(rejected):
        return []
    problems = rejected["reason"].astype(str).str.split(r";\s(?![^()]*\))", regex=True).explode()  # not in (...)
    problems = problems.str.replace(values, "'...'", regex=True).str.strip()
    return list(problems[problems != ""].value_counts().head(n).items())


def set_aside_kinds(set_aside, n: int = 5):
    """The ``n`` commonest kinds of rows set aside (not screened), every quoted value left out, so that
    analytes outside the registry count as one kind whatever their names.

    >>> import pandas as pd
    >>> set_aside_kinds(pd.DataFrame({"reason": ["analyte 'Escherichia coli' is not in the analyte registry",
    ...                                          "analyte 'Ammonia' is not in the analyte registry"]}))
    [("analyte '...' is not in the analyte registry", 2)]
    """
    return rejection_problems(set_aside, n, values=r"'[^']*'")


def print_rejections(rejected, where: str = "rejected.csv", n: int = 5, set_aside=None,
                     aside_where: str = "not_screened.csv") -> None:
    """The most common problems of the rejected rows, so a first run on a new lab file says what to fix;
    then, with ``set_aside``, the commonest kinds of rows set aside (why rows were not screened)."""
    top = rejection_problems(rejected, n)
    if top:
        print(f"Most common problems of the rejected rows (every row with its reasons: {where}):")
        for text, count in top:
            print(f"  {count:>6}  {text}")
    kinds = set_aside_kinds(set_aside, n)
    if kinds:
        print(f"Rows set aside, not screened, by kind (every row with its reason: {aside_where}):")
        for text, count in kinds:
            print(f"  {count:>6}  {text}")


def print_caution(stream=None) -> None:
    print(f"\nCAUTION: {CAUTION}", file=stream or sys.stdout)


def warn(msg: str) -> None:
    print(f"tracescreen: warning: {msg}", file=sys.stderr)
