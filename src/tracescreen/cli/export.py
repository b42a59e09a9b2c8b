"""``tracescreen export``: write a workspace's current results as Parquet, partitioned by year."""

from __future__ import annotations

from .common import print_caution
from .parser import group

EXAMPLES = ["tracescreen export --workspace out/demo-workspace --parquet out/demo-parquet"]


def register(sub) -> None:
    p = sub.add_parser(
        "export", help="write the workspace's current results as Parquet, one folder per year",
        description="Write the current results of the workspace, with their provenance (file, sheet, "
                    "row, import, the file's SHA-256), as a Parquet dataset partitioned by sampling "
                    "year (DIR2/year=2021/part-0.parquet), for use in other tools.")
    group(p, "inputs").add_argument("--workspace", required=True, metavar="DIR", help="workspace folder")
    out = group(p, "output")
    out.add_argument("--parquet", required=True, metavar="DIR2", help="new (or empty) folder to write")
    out.add_argument("--history", action="store_true",
                   help="include superseded results (column superseded_by names the import that replaced them)")
    p.set_defaults(func=run)


def run(args) -> int:
    from tracescreen.store.parquet import export_parquet
    from tracescreen.store.workspace import open_workspace

    with open_workspace(args.workspace) as ws:
        files = export_parquet(ws, args.parquet, history=args.history)
    years = sorted({p.parent.name.removeprefix("year=") for p in files})
    print(f"Wrote {len(files)} Parquet files to {args.parquet}"
          + (f" (years {years[0]}-{years[-1]})" if years else " (no results)"))
    print_caution()
    return 0
