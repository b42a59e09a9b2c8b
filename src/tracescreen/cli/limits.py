"""``tracescreen limits``: what applies on a date for given water chemistry, entry by entry.

For a table (or all the tables given), a date and given inputs (``--hardness 50 --ph 7.5 --doc 2``),
every entry in force with its computed value, unit, basis, scope and source, and the limit in words.
Users check their tables with it before screening.
"""

from __future__ import annotations

import datetime as dt

from tracescreen.limits.schema import SCOPE_ATTRIBUTES

from . import UserError
from .common import print_caution
from .parser import group

EXAMPLES = [
    "tracescreen limits --limits limits/us_epa_nrwqc_freshwater_aquatic_life.yaml --date 2024-06-30 "
    "--hardness 100 --analyte copper --analyte zinc",
]


def register(sub) -> None:
    p = sub.add_parser(
        "limits", help="list the limits in force on a date, computed for given hardness, pH, DOC",
        description="List every entry of the limit tables in force on DATE, with its limit computed for the "
                    "given water chemistry (hardness as CaCO3, pH, dissolved organic carbon, temperature) "
                    "and site attributes, its unit, basis, duration, scope and source, and the limit in words. "
                    "An entry whose inputs are not given shows no value and says which input is missing.")
    lim, inputs = group(p, "limits"), group(p, "inputs")
    lim.add_argument("--limits", required=True, metavar="PATH", action="append",
                     help="limit table (YAML) or folder of tables; repeat for several")
    lim.add_argument("--table", metavar="ID", action="append", help="show only this table id (repeat for several)")
    inputs.add_argument("--date", default=dt.date.today().isoformat(), metavar="YYYY-MM-DD",
                        help="sampling date (default today)")
    inputs.add_argument("--hardness", type=float, metavar="MG_L", help="hardness [mg/L as CaCO3]")
    inputs.add_argument("--ph", type=float, metavar="PH", help="pH [pH units]")
    inputs.add_argument("--doc", type=float, metavar="MG_L", help="dissolved organic carbon [mg/L]")
    inputs.add_argument("--temperature", type=float, metavar="C", help="temperature [°C]")
    inputs.add_argument("--site-attribute", metavar="NAME=VALUE", action="append", default=[],
                        help="site attribute that scopes entries: " + "; ".join(
                            f"{k} ({', '.join(v)})" for k, v in SCOPE_ATTRIBUTES.items()))
    lim.add_argument("--analyte", metavar="NAME", action="append", help="show only this analyte (repeat for several)")
    inputs.add_argument("--sites", metavar="FILE", help="sites CSV; with --site, take that site's uses, default "
                        "hardness, pH, DOC, temperature and attributes (options given here win)")
    inputs.add_argument("--site", metavar="ID", help="a site id of --sites")
    group(p, "output").add_argument("--out", metavar="FILE.csv", help="also write the rows as CSV")
    p.set_defaults(func=run)


def _attributes(items: list[str]) -> dict[str, str]:
    out = {}
    for item in items:
        name, sep, value = item.partition("=")
        name, value = name.strip(), value.strip().lower()
        if not sep or name not in SCOPE_ATTRIBUTES:
            names = ", ".join(SCOPE_ATTRIBUTES)
            raise UserError(f"--site-attribute '{item}': give NAME=VALUE with NAME one of {names}")
        if value not in SCOPE_ATTRIBUTES[name]:
            raise UserError(f"--site-attribute '{item}': {name} is one of {', '.join(SCOPE_ATTRIBUTES[name])}")
        out[name] = value
    return out


def _site(args) -> tuple[dict, dict, tuple]:
    """The inputs, attributes and uses of ``--site`` in ``--sites``."""
    import numpy as np

    from tracescreen.io.sites import load_sites

    if not (args.site and args.sites):
        raise UserError("give both --sites FILE and --site ID")
    sites = load_sites(args.sites).set_index("site_id")
    if args.site not in sites.index:
        raise UserError(f"--site '{args.site}' is not in {args.sites}")
    row = sites.loc[args.site]
    columns = {"hardness": "hardness_mg_L", "ph": "ph", "doc": "doc_mg_L", "temperature": "temperature_C"}
    inputs = {k: float(row[c]) for k, c in columns.items() if c in row.index and not np.isnan(row[c])}
    attributes = {a: str(row[a]) for a in SCOPE_ATTRIBUTES if a in row.index and str(row[a])}
    return inputs, attributes, tuple(row["uses"])


def run(args) -> int:
    import numpy as np

    from tracescreen.limits.in_force import entries_in_force
    from tracescreen.limits.load import load_limits

    try:
        day = dt.date.fromisoformat(args.date)
    except ValueError:
        raise UserError(f"--date '{args.date}' is not a date (YYYY-MM-DD)") from None
    for name, lo, hi in (("hardness", 0, 10000), ("ph", 0, 14), ("doc", 0, 1000), ("temperature", -5, 100)):
        v = getattr(args, name)
        if v is not None and not (lo <= v <= hi):
            raise UserError(f"--{name} {v:g} is outside {lo}-{hi}")
    limits = load_limits(args.limits)
    inputs = {k: getattr(args, k) for k in ("hardness", "ph", "doc", "temperature")}
    attributes, tables = _attributes(args.site_attribute), args.table
    if args.site or args.sites:
        site_inputs, site_attributes, uses = _site(args)
        inputs = {k: v if v is not None else site_inputs.get(k) for k, v in inputs.items()}
        attributes = {**site_attributes, **attributes}
        in_use = limits.tables.loc[limits.tables["use"].isin(uses), "table_id"].tolist()
        tables = [t for t in (tables or in_use) if t in in_use]
        if not tables:
            raise UserError(f"no loaded limit table (of those chosen) protects a use of site {args.site} "
                            f"({', '.join(uses) or 'no uses'})")
    try:
        rows = entries_in_force(limits, day, inputs, attributes, tables)
    except ValueError as exc:
        raise UserError(str(exc)) from None
    if args.analyte:
        from tracescreen.io.analytes import resolve

        wanted = {resolve(a) or a for a in args.analyte}
        rows = rows[rows["analyte"].isin(wanted)]
    given = ", ".join(f"{k} {v:g}" for k, v in inputs.items() if v is not None) or "no water chemistry given"
    print(f"Limits in force on {day.isoformat()} ({given}): {len(rows)} entries")
    for tid, g in rows.groupby("table_id", sort=False):
        print(f"\n{tid}: {g['source'].iloc[0]}")
        for r in g.itertuples():
            value = "—" if np.isnan(r.limit_ug_L) else f"{r.limit_ug_L:.4g} µg/L"
            label = ", ".join(x for x in (r.fraction, r.duration, r.basis if r.basis != "single_sample" else "",
                                          r.scope) if x)
            print(f"  {r.analyte:<14} {value:>14}  {label}")
            print(f"  {'':<14} {'':>14}  = {r.limit}" + (f"  [{r.remark}]" if r.remark else ""))
    if args.out:
        from tracescreen.report.writers import write_csv

        write_csv(rows, args.out)
        print(f"\nWrote {args.out}")
    print_caution()
    return 0
