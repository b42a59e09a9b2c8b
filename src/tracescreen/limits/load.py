"""Limit tables: loading and checking (evaluation: :mod:`tracescreen.limits.evaluate`).

A limit table is a YAML file with its full citation and entries (see README, "Limit tables").
:func:`load_limits` reads one file or every ``*.yaml``/``*.yml`` in a folder and returns a
:class:`LimitSet` with one row per table and one row per entry, values converted to µg/L.
Mistakes (a missing citation, an unknown analyte, unit or key, a negative value, overlapping dates)
raise :class:`LimitTableError` naming the file, the entry and the key.

Hardness-dependent entries use the US EPA form (:func:`limits.evaluate.hardness_formula_limit`); the
other computed forms are declared in :mod:`tracescreen.limits.forms`.
"""

from __future__ import annotations

import datetime as dt
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd
import yaml

from tracescreen._internal.yamlfiles import SAFE_LOADER
from tracescreen.io import analytes, units
from tracescreen.limits import forms, scope
from tracescreen.limits.evaluate import (  # noqa: F401  (re-exported: evaluation used to live here)
    evaluate,
    evaluate_pairs,
    hardness_formula_limit,
    is_formula,
)
from tracescreen.limits.schema import (  # noqa: F401  (re-exported: the format is declared there)
    BASES,
    CF_KEYS,
    ENTRY_KEYS_OPTIONAL,
    ENTRY_KEYS_REQUIRED,
    EXTRA_ENTRY_KEYS,
    FORMULA_KEYS,
    FRACTIONS,
    SETTINGS,
    TABLE_CHECKS,
    TABLE_KEYS_OPTIONAL,
    TABLE_KEYS_REQUIRED,
    VALUE_KEYS,
    LimitTableError,
)

ENTRY_COLUMNS = [
    "entry_id", "table_id", "use", "source", "analyte", "fraction", "basis", "duration", "value_ug_L",
    "hf_m", "hf_b", "hf_cf", "hf_cf_intercept", "hf_cf_ln_slope", "hardness_min", "hardness_max",
    "effective_from", "effective_to", "note", "form_kind", "form", "inputs", "scope",
] + [f"scope_{a}" for a in scope.ATTRIBUTES]


@dataclass
class LimitSet:
    """Loaded limit tables: ``tables`` (one row per table) and ``entries`` (one row per entry)."""

    tables: pd.DataFrame
    entries: pd.DataFrame

    @property
    def uses(self) -> list[str]:
        """The water uses the loaded tables protect, in table order."""
        return sorted(set(self.tables["use"]))


def _date(value, where: str, key: str):
    if value is None:
        return pd.NaT
    if isinstance(value, dt.datetime):
        return pd.Timestamp(value)
    if isinstance(value, dt.date):
        return pd.Timestamp(value)
    try:
        return pd.Timestamp(dt.date.fromisoformat(str(value)))
    except ValueError:
        raise LimitTableError(f"{where}: key '{key}': '{value}' is not a date (YYYY-MM-DD)") from None


def _number(value, where: str, key: str, allow_negative: bool = False) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise LimitTableError(f"{where}: key '{key}': '{value}' is not a number")
    if not np.isfinite(value) or (not allow_negative and value < 0):
        raise LimitTableError(f"{where}: key '{key}': {value} must be a finite number >= 0")
    return float(value)


def _check_keys(mapping: dict, keys: tuple[str, ...], label: str, where: str) -> None:
    """Exactly ``keys`` in ``mapping``: unknown or missing keys are load errors."""
    for k in mapping:
        if k not in keys:
            raise LimitTableError(f"{label}: {where}: unknown key '{k}' (allowed: {', '.join(keys)})")
    for k in keys:
        if k not in mapping:
            raise LimitTableError(f"{label}: {where}: missing key '{k}'")


def _check_entry_keys(e, label: str) -> None:
    """An entry is a mapping with every required key and no unknown one."""
    if not isinstance(e, dict):
        raise LimitTableError(f"{label}: an entry must be a mapping of keys")
    allowed = set(ENTRY_KEYS_REQUIRED) | set(ENTRY_KEYS_OPTIONAL) | set(_extra_entry_keys())
    for k in e:
        if k not in allowed:
            raise LimitTableError(f"{label}: unknown key '{k}' (allowed: {', '.join(sorted(allowed))})")
    for k in ENTRY_KEYS_REQUIRED:
        if k not in e or e[k] in (None, ""):
            raise LimitTableError(f"{label}: missing key '{k}'")


def _hardness_formula(e: dict, label: str, row: dict) -> None:
    """Put an entry's hardness formula (m, b, cf and the optional hardness range) into ``row``."""
    f = e["hardness_formula"]
    if not isinstance(f, dict):
        raise LimitTableError(f"{label}: key 'hardness_formula' must be a mapping with m, b, cf")
    _check_keys(f, FORMULA_KEYS, label, "hardness_formula")
    row["hf_m"] = _number(f["m"], label, "hardness_formula.m", allow_negative=True)
    row["hf_b"] = _number(f["b"], label, "hardness_formula.b", allow_negative=True)
    cf = f["cf"]
    if isinstance(cf, dict):
        _check_keys(cf, CF_KEYS, label, "hardness_formula.cf")
        row["hf_cf_intercept"] = _number(cf["intercept"], label, "hardness_formula.cf.intercept", True)
        row["hf_cf_ln_slope"] = _number(cf["ln_hardness"], label, "hardness_formula.cf.ln_hardness", True)
    else:
        row["hf_cf"] = _number(cf, label, "hardness_formula.cf")
    rng = e.get("hardness_range")
    if rng is not None:
        if not (isinstance(rng, list) and len(rng) == 2):
            raise LimitTableError(f"{label}: key 'hardness_range' must be [min, max] in mg/L as CaCO3")
        lo = np.nan if rng[0] is None else _number(rng[0], label, "hardness_range")
        hi = np.nan if rng[1] is None else _number(rng[1], label, "hardness_range")
        if lo > hi:
            raise LimitTableError(f"{label}: key 'hardness_range': min {lo} is above max {hi}")
        row["hardness_min"], row["hardness_max"] = lo, hi


def _parse_entry(e, i: int, name: str, table: dict, factor: float) -> dict:
    label = f"{name}: entry {i}" + (f" ({e.get('analyte')})" if isinstance(e, dict) and e.get("analyte") else "")
    _check_entry_keys(e, label)
    canon = analytes.resolve(str(e["analyte"]))
    if canon is None:
        raise LimitTableError(f"{label}: key 'analyte': '{e['analyte']}' is not in the analyte registry")
    fraction = str(e["fraction"]).strip().lower()
    if fraction not in FRACTIONS:
        raise LimitTableError(f"{label}: key 'fraction': '{e['fraction']}' must be total or dissolved")
    basis = str(e.get("basis", "single_sample"))
    if basis not in BASES:
        raise LimitTableError(f"{label}: key 'basis': '{basis}' is not one of {', '.join(BASES)}")
    given = [k for k in VALUE_KEYS if k in e]
    if len(given) != 1:
        raise LimitTableError(f"{label}: give exactly one of {', '.join(repr(k) for k in VALUE_KEYS)}"
                              + (f" (found {', '.join(given)})" if given else ""))
    has_v, has_f = given[0] == "value", given[0] == "hardness_formula"
    spec = forms.parse_form(e, label)
    row = {"table_id": table["id"], "use": table["use"], "source": table["source"], "analyte": canon,
           "fraction": fraction, "basis": basis, "duration": str(e.get("duration") or ""),
           "value_ug_L": np.nan, "hf_m": np.nan, "hf_b": np.nan, "hf_cf": np.nan,
           "hf_cf_intercept": np.nan, "hf_cf_ln_slope": np.nan, "hardness_min": np.nan,
           "hardness_max": np.nan, "note": str(e.get("note") or ""),
           "effective_from": _date(e.get("effective_from"), label, "effective_from"),
           "effective_to": _date(e.get("effective_to"), label, "effective_to"),
           "unit_factor": factor, "form_kind": given[0], "form": spec,
           "inputs": ",".join(spec["inputs"]) if spec else ("hardness" if has_f else "")}
    row.update(scope.parse_scope(e.get("scope"), label))
    if has_v:
        row["value_ug_L"] = units.clean_decimal(np.array([_number(e["value"], label, "value") * factor]))[0]
    elif has_f:
        _hardness_formula(e, label, row)
    if not has_f and "hardness_range" in e:
        raise LimitTableError(f"{label}: key 'hardness_range' only applies with 'hardness_formula'")
    if pd.notna(row["effective_from"]) and pd.notna(row["effective_to"]) and row["effective_to"] < row["effective_from"]:
        raise LimitTableError(f"{label}: key 'effective_to' is before 'effective_from'")
    row.update({k: e[k] for k in _extra_entry_keys() if k in e})
    return row


def _extra_entry_keys() -> tuple[str, ...]:
    """Entry keys beyond the plain ones (rounding, percentile bases): :data:`schema.EXTRA_ENTRY_KEYS`."""
    return EXTRA_ENTRY_KEYS


def _value_texts(text: str) -> list[str | None]:
    """Each entry's ``value`` exactly as written (``0.010`` keeps its trailing zero), by entry position."""
    try:
        root = yaml.compose(text, Loader=SAFE_LOADER)
    except yaml.YAMLError:
        return []
    entries = next((v for k, v in getattr(root, "value", []) if getattr(k, "value", None) == "entries"), None)
    texts = []
    for node in getattr(entries, "value", []) or []:
        pairs = node.value if isinstance(node, yaml.MappingNode) else []
        texts.append(next((v.value for k, v in pairs if k.value == "value" and isinstance(v, yaml.ScalarNode)), None))
    return texts


def _check_overlaps(entries: pd.DataFrame, name: str) -> None:
    if entries.empty:
        return
    lo = pd.to_datetime(entries["effective_from"]).astype("datetime64[ns]").fillna(pd.Timestamp.min)
    hi = pd.to_datetime(entries["effective_to"]).astype("datetime64[ns]").fillna(pd.Timestamp.max)
    keys = ["analyte", "fraction", "basis", "duration", "scope"]
    for _, g in entries.assign(_lo=lo, _hi=hi).groupby(keys, sort=False):  # few groups per table
        if len(g) < 2:
            continue
        g = g.sort_values("_lo")
        clash = g["_lo"].to_numpy()[1:] <= g["_hi"].to_numpy()[:-1]
        if clash.any():
            j = int(np.flatnonzero(clash)[0]) + 1
            r = g.iloc[j]
            raise LimitTableError(
                f"{name}: entry {r['entry_id'].rsplit(':', 1)[1]} ({r['analyte']}, {r['fraction']}"
                f"{', ' + r['duration'] if r['duration'] else ''}{', ' + r['scope'] if r['scope'] else ''}): "
                f"in force on the same days as another "
                f"entry; set effective_from/effective_to so that one entry applies on each date")


def _table_dates(row: dict, table: dict, label: str) -> None:
    """An entry is in force only while its table is: the table's dates bound the entry's."""
    t_lo, t_hi = table["effective_from"], table["effective_to"]
    if pd.notna(t_lo):
        if pd.notna(row["effective_to"]) and row["effective_to"] < t_lo:
            raise LimitTableError(f"{label}: key 'effective_to' is before the table's effective_from")
        row["effective_from"] = t_lo if pd.isna(row["effective_from"]) else max(row["effective_from"], t_lo)
    if pd.notna(t_hi):
        if pd.notna(row["effective_from"]) and row["effective_from"] > t_hi:
            raise LimitTableError(f"{label}: key 'effective_from' is after the table's effective_to")
        row["effective_to"] = t_hi if pd.isna(row["effective_to"]) else min(row["effective_to"], t_hi)


def _read_yaml(p: Path):
    """The YAML document of a limit-table file (a missing file, bad text or YAML raise LimitTableError)."""
    name = p.name
    try:
        return yaml.load(p.read_text(encoding="utf-8"), Loader=SAFE_LOADER)
    except FileNotFoundError:
        raise LimitTableError(f"{p}: limit table not found") from None
    except UnicodeDecodeError:
        raise LimitTableError(f"{name}: not UTF-8 text") from None
    except yaml.YAMLError as exc:
        mark = getattr(exc, "problem_mark", None)
        where = f" at line {mark.line + 1}" if mark is not None else ""
        raise LimitTableError(f"{name}: not valid YAML{where}") from None


def _check_table_keys(data, name: str) -> None:
    """A table is a mapping with every required key, no unknown one, a usable id and valid settings."""
    if not isinstance(data, dict):
        raise LimitTableError(f"{name}: a limit table must be a mapping with keys {', '.join(TABLE_KEYS_REQUIRED)}")
    for k in data:
        if k not in TABLE_KEYS_REQUIRED + TABLE_KEYS_OPTIONAL:
            raise LimitTableError(f"{name}: unknown key '{k}' (allowed: {', '.join(TABLE_KEYS_REQUIRED + TABLE_KEYS_OPTIONAL)})")
    for k in TABLE_KEYS_REQUIRED:
        if k not in data or data[k] in (None, "", []):
            what = "citation" if k == "source" else "key"
            raise LimitTableError(f"{name}: missing {what} '{k}'")
    if not re.fullmatch(r"[a-z0-9_]+", str(data["id"])):
        raise LimitTableError(f"{name}: key 'id': '{data['id']}' must use lower-case letters, digits and _")
    if units.factor_to_ug_per_L(str(data["unit"])) is None:
        raise LimitTableError(f"{name}: key 'unit': '{data['unit']}' is not a concentration unit tracescreen knows")
    settings = data.get("settings") or {}
    if not isinstance(settings, dict):
        raise LimitTableError(f"{name}: key 'settings' must be a mapping")
    for k, v in settings.items():
        if k not in SETTINGS:
            raise LimitTableError(f"{name}: settings: unknown key '{k}'" + (f" (allowed: {', '.join(SETTINGS)})" if SETTINGS else ""))
        if SETTINGS[k] and str(v) not in SETTINGS[k]:
            raise LimitTableError(f"{name}: settings: key '{k}': '{v}' is not one of {', '.join(SETTINGS[k])}")
    if not isinstance(data["entries"], list):
        raise LimitTableError(f"{name}: key 'entries' must be a list")


def load_table(path: str | Path) -> tuple[dict, list[dict]]:
    """Read and check one limit-table file; returns (table row, entry rows)."""
    p = Path(path)
    name = p.name
    data = _read_yaml(p)
    _check_table_keys(data, name)
    factor = units.factor_to_ug_per_L(str(data["unit"]))
    settings = data.get("settings") or {}
    table = {"table_id": str(data["id"]), "name": str(data["name"]), "source": " ".join(str(data["source"]).split()),
             "url": str(data.get("url") or ""), "use": str(data["use"]).strip().lower(), "unit": str(data["unit"]),
             "notes": str(data.get("notes") or "").strip(), "path": str(p), "settings": settings,
             "effective_from": _date(data.get("effective_from"), name, "effective_from"),
             "effective_to": _date(data.get("effective_to"), name, "effective_to"),
             "default_scope": scope.parse_default_scope(data.get("default_scope"), name)}
    tctx = {"id": table["table_id"], "use": table["use"], "source": table["source"]}
    rows = []
    texts = _value_texts(p.read_text(encoding="utf-8"))
    for i, e in enumerate(data["entries"], start=1):
        r = _parse_entry(e, i, name, tctx, factor)
        r["entry_id"] = f"{table['table_id']}:{i}"
        r["value_text"] = texts[i - 1] if i <= len(texts) else None
        _table_dates(r, table, f"{name}: entry {i} ({r['analyte']})")
        rows.append(r)
    _check_overlaps(pd.DataFrame(rows), name)
    for check in TABLE_CHECKS:
        check(table, rows, name)
    return table, rows


def load_limits(path: str | Path | list) -> LimitSet:
    """Load one limit table, a folder of them, or a list of files/folders.

    Raises
    ------
    LimitTableError
        On the first problem found (file, entry and key named), or when two files share an ``id``.
    """
    paths = path if isinstance(path, (list, tuple)) else [path]
    files: list[Path] = []
    for p in map(Path, paths):
        if p.is_dir():
            found = sorted(list(p.glob("*.yaml")) + list(p.glob("*.yml")))
            if not found:
                raise LimitTableError(f"{p}: no limit tables (*.yaml) in this folder")
            files += found
        elif p.exists():
            files.append(p)
        else:
            raise LimitTableError(f"{p}: limit table or folder not found")
    tables, entries = [], []
    for f in files:
        t, rows = load_table(f)
        if any(t["table_id"] == x["table_id"] for x in tables):
            raise LimitTableError(f"{f.name}: key 'id': '{t['table_id']}' is used by another table")
        tables.append(t)
        entries += rows
    tdf = pd.DataFrame(tables)
    edf = pd.DataFrame(entries) if entries else pd.DataFrame(columns=ENTRY_COLUMNS)
    extra = [c for c in edf.columns if c not in ENTRY_COLUMNS]
    edf = edf[ENTRY_COLUMNS + extra].reset_index(drop=True)
    for c in ("effective_from", "effective_to"):
        edf[c] = pd.to_datetime(edf[c]).astype("datetime64[ns]")
    return LimitSet(tdf, edf)
