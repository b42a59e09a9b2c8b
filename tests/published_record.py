"""The record of one published limit value and the kinds of check a record can carry
(the data of ``published_values.py`` and its regional parts)."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Published:
    analyte: str
    fraction: str
    value: float | None  # fixed value in `unit`; None for a hardness-formula criterion
    unit: str
    document: str
    status: str
    duration: str = ""
    basis: str = "single_sample"
    effective_from: str | None = None  # ISO date, inclusive
    effective_to: str | None = None  # ISO date, inclusive
    # hardness formula: exp(m ln H + b) * CF; CF = cf, or cf_intercept + cf_ln_slope * ln H (capped at 1)
    m: float | None = None
    b: float | None = None
    cf: float | None = None
    cf_intercept: float | None = None
    cf_ln_slope: float | None = None
    at_100: float | None = None  # published criterion at hardness 100 mg/L as CaCO3 (2 significant figures)
    at_100_source: str = ""
    scope: str = ""  # site attributes the entry is scoped by, as limits.scope.scope_text writes them
    form: dict | None = None  # a computed form (formula, power_law, steps, lookup) as written in the YAML
    worked: tuple = ()  # ((inputs dict, value, where), ...) published or remembered worked values


def status_kind(status: str) -> str:
    """``law``, ``secondary`` or ``memory``: the kind of check a status records."""
    if status.startswith("checked (law"):
        return "law"
    if status.startswith("checked (secondary"):
        return "secondary"
    if status.startswith("memory"):
        return "memory"
    raise ValueError(f"status must start with 'checked (law', 'checked (secondary' or 'memory': {status!r}")
