"""The monitoring network file and the statistical design file.

**Network** (CSV, one row per well; or the same columns in the sites file):

``site_id``
    the well, as in the results.
``role``
    ``background`` (also read: ``upgradient``, ``up-gradient``) or ``compliance`` (also
    ``downgradient``, ``down-gradient``, ``detection``). Wells without a role take no part.
``well_group``
    wells compared with the same background (e.g. one aquifer unit); default ``all``.
``comparison``
    ``interwell``, ``intrawell`` or ``auto`` (empty: the design's choice).
``stage``
    the well's monitoring programme: ``detection``, ``assessment`` or ``corrective``
    (empty: ``detection``). It chooses which confidence-limit decision applies to the well.
``background_from``, ``background_to``
    the well's background window (ISO dates, inclusive; empty: the design's window).
``analyte`` (optional)
    a row that names an analyte (name, symbol or CAS number, as in the analyte registry) gives the
    background window of that constituent at the well only; the well's role and group come from
    its row without an analyte.

**Design** (YAML mapping): the keys of :data:`DESIGN_KEYS`; every key is optional and the command
line can override each one.

Errors name the file, the row (or key) and the problem (:class:`NetworkError`).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from tracescreen._internal.yamlfiles import YamlError, read_yaml

NETWORK_COLUMNS = ("site_id", "role", "well_group", "comparison", "stage", "background_from",
                   "background_to", "analyte")
ROLE_WORDS = {"background": "background", "upgradient": "background", "up-gradient": "background",
              "compliance": "compliance", "downgradient": "compliance", "down-gradient": "compliance",
              "detection": "compliance", "": ""}
COMPARISONS = ("auto", "interwell", "intrawell")
STAGES = ("detection", "assessment", "corrective")

#: Keys a design file may set, with what each means (the command line has one option per key).
DESIGN_KEYS = {
    "swfpr": "target annual site-wide false positive rate (0-1)",
    "evaluations_per_year": "statistical evaluations per year",
    "plan": "retest plan for parametric limits (1-of-2, 1-of-3, modified-california, ...)",
    "order": "results per compared value: 1, or the mean (median) of 2 or 3",
    "nonparametric_plans": "candidate plans for non-parametric limits, tried in order",
    "compliance_wells": "number of compliance wells in the design (default: counted from the network)",
    "constituents": "number of constituents in the design (default: counted from the results)",
    "comparison": "interwell, intrawell or auto",
    "background_from": "start of the background window (ISO date)",
    "background_to": "end of the background window (ISO date)",
    "min_background": "background values needed before a limit is computed",
    "alpha_checks": "significance level of the background checks",
    "control_chart_k": "CUSUM reference value k [SD]",
    "control_chart_h": "CUSUM decision interval h [SD]",
    "control_chart_scl": "Shewhart control limit [SD]",
    "tolerance_coverage": "coverage of tolerance limits",
    "tolerance_confidence": "confidence of tolerance limits",
    "ci_level": "one-sided confidence of the limits compared with standards",
    "ci_parameter": "mean, median or percentile",
    "ci_percentile": "the percentile when ci_parameter is percentile",
    "ci_last_n": "most recent compliance values per well used for confidence limits",
}


class NetworkError(ValueError):
    """A network or design file that cannot be used (message names file, row or key, problem)."""


def _dates(col: pd.Series, p: Path, name: str, rows: np.ndarray, problems: list) -> pd.Series:
    parsed = pd.to_datetime(col.replace("", None), format="ISO8601", errors="coerce")
    bad = (col != "") & parsed.isna()
    problems += [f"{p}: row {r}: {name} '{v}' is not an ISO date (YYYY-MM-DD)"
                 for r, v in zip(rows[bad.to_numpy()], col[bad])]
    return parsed


def read_network(path: str | Path) -> pd.DataFrame:
    """Read a network CSV (or a sites CSV with the network columns).

    Returns
    -------
    DataFrame
        :data:`NETWORK_COLUMNS` (roles, comparisons and stages normalised; dates as datetime64,
        NaT when empty; ``analyte`` canonical, "" on a well's own row): the rows of wells with a
        role, then the per-constituent window rows.
    """
    from tracescreen.io.analytes import resolve

    p = Path(path)
    try:
        df = pd.read_csv(p, dtype=str, keep_default_na=False, encoding="utf-8-sig")
    except FileNotFoundError:
        raise NetworkError(f"{p}: network file not found") from None
    except (UnicodeDecodeError, pd.errors.ParserError, pd.errors.EmptyDataError) as exc:
        raise NetworkError(f"{p}: not a readable CSV file ({exc.__class__.__name__})") from None
    df.columns = [c.strip().lower() for c in df.columns]
    missing = [c for c in ("site_id", "role") if c not in df.columns]
    if missing:
        raise NetworkError(f"{p}: missing column(s) {', '.join(missing)}; expected "
                           f"{', '.join(NETWORK_COLUMNS)}")
    for c in NETWORK_COLUMNS:
        if c not in df.columns:
            df[c] = ""
    df = df[list(NETWORK_COLUMNS)].apply(lambda c: c.str.strip())
    rows = np.arange(len(df)) + 2
    problems: list[str] = []
    named = df["analyte"] != ""
    canonical = df["analyte"].map(lambda a: resolve(a) if a else "")
    bad = named & canonical.isna()
    problems += [f"{p}: row {r}: analyte '{v}' is not in the analyte registry"
                 for r, v in zip(rows[bad.to_numpy()], df["analyte"][bad])]
    df["analyte"] = canonical.fillna("")
    role = df["role"].str.lower().map(ROLE_WORDS)
    bad = role.isna()
    problems += [f"{p}: row {r}: role '{v}' is not background or compliance"
                 for r, v in zip(rows[bad.to_numpy()], df["role"][bad])]
    for c, allowed in (("comparison", COMPARISONS), ("stage", STAGES)):
        low = df[c].str.lower()
        bad = (low != "") & ~low.isin(allowed)
        problems += [f"{p}: row {r}: {c} '{v}' is not one of {', '.join(allowed)}"
                     for r, v in zip(rows[bad.to_numpy()], df[c][bad])]
        df[c] = low
    empty = df["site_id"] == ""
    problems += [f"{p}: row {r}: site_id is empty" for r in rows[empty.to_numpy()]]
    dup = df.duplicated(["site_id", "analyte"]) & ~empty
    problems += [f"{p}: row {r}: site_id '{s}' appears twice" + (f" for {a}" if a else "")
                 for r, s, a in zip(rows[dup.to_numpy()], df["site_id"][dup], df["analyte"][dup])]
    wells = set(df.loc[~named, "site_id"])
    orphan = named & ~df["site_id"].isin(wells)
    problems += [f"{p}: row {r}: window for {a} at '{s}', but '{s}' has no row of its own (role, group)"
                 for r, s, a in zip(rows[orphan.to_numpy()], df["site_id"][orphan], df["analyte"][orphan])]
    out = pd.DataFrame({"site_id": df["site_id"], "role": role.fillna(""),
                        "well_group": df["well_group"].replace("", "all"),
                        "comparison": df["comparison"].replace("", "auto"),
                        "stage": df["stage"].replace("", "detection"), "analyte": df["analyte"]})
    out["background_from"] = _dates(df["background_from"], p, "background_from", rows, problems)
    out["background_to"] = _dates(df["background_to"], p, "background_to", rows, problems)
    late = out["background_from"] > out["background_to"]
    problems += [f"{p}: row {r}: background_from is after background_to" for r in rows[late.to_numpy()]]
    if problems:
        raise NetworkError(problems[0] + (f" (and {len(problems) - 1} more)" if len(problems) > 1 else ""))
    keep = (out["role"] != "") | (out["analyte"] != "")
    return out[keep][list(NETWORK_COLUMNS)].reset_index(drop=True)


def read_design(path: str | Path) -> dict:
    """Read a design YAML file into a dict of :data:`DESIGN_KEYS` (values as written)."""
    p = Path(path)
    try:
        data = read_yaml(p)  # repeated keys, aliases and object tags are refused
    except FileNotFoundError:
        raise NetworkError(f"{p}: design file not found") from None
    except YamlError as exc:
        raise NetworkError(str(exc)) from None
    if data is None:
        return {}
    if not isinstance(data, dict):
        raise NetworkError(f"{p}: a design file is a mapping of keys to values")
    unknown = sorted(set(map(str, data)) - set(DESIGN_KEYS))
    if unknown:
        raise NetworkError(f"{p}: key '{unknown[0]}' is not a design key; known keys: "
                           f"{', '.join(DESIGN_KEYS)}")
    return {str(k): v for k, v in data.items()}
