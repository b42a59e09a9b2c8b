"""Limit entries scoped by site attributes (water-body type, sampling-point type, water category,
level of protection).

An entry may say ``scope: {water_body_type: lotic}`` (or a list of values); it then applies only at
sites whose attribute in the sites file is one of those values. A site without the attribute gets
every entry, or, where the table states ``default_scope`` (e.g. ANZG ``{protection_level: 95}``, the
level the guidelines recommend for slightly to moderately disturbed ecosystems), the entries of the
default. The attributes and their values are declared in :data:`schema.SCOPE_ATTRIBUTES`.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.limits.schema import SCOPE_ATTRIBUTES, LimitTableError

ATTRIBUTES = tuple(SCOPE_ATTRIBUTES)


def _values(v, where: str, attr: str) -> tuple[str, ...]:
    items = v if isinstance(v, list) else [v]
    out = []
    for x in items:
        t = str(x).strip().lower()
        if t not in SCOPE_ATTRIBUTES[attr]:
            raise LimitTableError(f"{where}: '{x}' is not one of {', '.join(SCOPE_ATTRIBUTES[attr])}")
        out.append(t)
    return tuple(sorted(set(out)))


def _parse(value, where: str) -> dict[str, tuple[str, ...]]:
    if value is None:
        return {}
    if not isinstance(value, dict) or not value:
        raise LimitTableError(f"{where}: must be a mapping of site attributes ({', '.join(ATTRIBUTES)})")
    out = {}
    for k, v in value.items():
        if k not in SCOPE_ATTRIBUTES:
            raise LimitTableError(f"{where}: unknown site attribute '{k}' (allowed: {', '.join(ATTRIBUTES)})")
        out[k] = _values(v, f"{where}.{k}", k)
    return out


def scope_text(parsed: dict[str, tuple[str, ...]]) -> str:
    """``water_body_type: lotic; protection_level: 95`` (empty for an unscoped entry)."""
    return "; ".join(f"{k}: {' or '.join(v)}" for k, v in parsed.items())


def parse_scope(value, label: str) -> dict:
    """Entry columns for an entry's ``scope`` key: ``scope`` (text) and ``scope_<attribute>`` (tuple)."""
    parsed = _parse(value, f"{label}: key 'scope'")
    row = {"scope": scope_text(parsed)}
    row.update({f"scope_{a}": parsed.get(a, ()) for a in ATTRIBUTES})
    return row


def parse_default_scope(value, name: str) -> dict[str, str]:
    """A table's ``default_scope``: one value per attribute."""
    parsed = _parse(value, f"{name}: key 'default_scope'")
    for k, v in parsed.items():
        if len(v) != 1:
            raise LimitTableError(f"{name}: key 'default_scope.{k}': give one value")
    return {k: v[0] for k, v in parsed.items()}


def site_attribute_columns(sites: pd.DataFrame | None) -> list[str]:
    """The scope attributes (water-body type, sampling point, ...) the sites table gives."""
    return [a for a in ATTRIBUTES if sites is not None and a in sites.columns]


def keep_pairs(pairs: pd.DataFrame, entries: pd.DataFrame, tables: pd.DataFrame,
               sites: pd.DataFrame | None) -> np.ndarray:
    """Which (site, entry) pairs the entries' scopes allow.

    ``pairs`` has ``site_id`` and ``_e`` (entry position). One test per distinct (site value,
    entry scope) combination, not per pair.
    """
    keep = np.ones(len(pairs), dtype=bool)
    if not len(pairs):
        return keep
    defaults = dict(zip(tables["table_id"], tables["default_scope"])) if "default_scope" in tables else {}
    e_pos = pairs["_e"].to_numpy()
    table_of = entries["table_id"].astype(str).to_numpy(dtype=object)[e_pos]
    by_site = sites.drop_duplicates("site_id").set_index("site_id") if sites is not None else None
    for a in ATTRIBUTES:
        allowed = entries[f"scope_{a}"].to_numpy(dtype=object)[e_pos] if f"scope_{a}" in entries else None
        if allowed is None:
            continue
        scoped = np.fromiter((len(t) > 0 for t in entries[f"scope_{a}"]), dtype=bool, count=len(entries))[e_pos]
        if not scoped.any():
            continue
        if by_site is not None and a in by_site.columns:
            site_val = pairs["site_id"].map(by_site[a]).fillna("").astype(str).to_numpy(dtype=object)
        else:
            site_val = np.full(len(pairs), "", dtype=object)
        default = np.array([(defaults.get(t) or {}).get(a, "") for t in table_of], dtype=object)
        value = np.where(site_val == "", default, site_val)
        v_code, v_text = pd.factorize(value)
        combo, codes = np.unique(v_code.astype(np.int64) * len(entries) + e_pos, return_inverse=True)
        ok = np.array([v == "" or not entries[f"scope_{a}"].iat[e] or v in entries[f"scope_{a}"].iat[e]
                       for v, e in zip(v_text[combo // len(entries)], combo % len(entries))],
                      dtype=bool)  # distinct (value, entry) pairs only
        keep &= ok[codes.ravel()] | ~scoped
    return keep
