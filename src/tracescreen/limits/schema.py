"""What a limit table may say: every table and entry key, basis and setting, declared in one place.

A newcomer asking "which keys may a table have?" reads this file. Nothing is registered at import
time by other modules: the screening stage reads these declarations, and the load-time checks of
the keys that belong to rounding and period statistics live here too, beside the keys they check.
The README section "Limit tables" documents the same format for users.
"""

from __future__ import annotations


class LimitTableError(ValueError):
    """A limit table that cannot be used (message names file, entry and key)."""


TABLE_KEYS_REQUIRED = ("id", "name", "source", "use", "unit", "entries")
TABLE_KEYS_OPTIONAL = ("url", "notes", "settings")
ENTRY_KEYS_REQUIRED = ("analyte", "fraction")
ENTRY_KEYS_OPTIONAL = ("value", "hardness_formula", "hardness_range", "basis", "duration",
                       "effective_from", "effective_to", "note")
FORMULA_KEYS = ("m", "b", "cf")
CF_KEYS = ("intercept", "ln_hardness")
FRACTIONS = ("total", "dissolved")

#: Bases whose value is a statistic of a period of results (screening/periods.py computes them).
PERIOD_BASES = ("running_annual_mean", "percentile")
#: Bases of comparison an entry may use, with what each means.
BASES = {
    "single_sample": "each result is compared with the limit",
    "running_annual_mean": "mean of the site's results in the 12 months ending at each sample",
    "percentile": "percentile of the site's results in each monitoring period",
}

#: Criteria rounding (screening/decision.py): none, or to the significant figures as written.
ROUNDING_CHOICES = ("none", "significant_figures")
#: How non-detects enter a period statistic (screening/periods.py).
NONDETECT_RULES = ("zero", "half_dl", "dl", "kaplan_meier")
#: Monitoring periods of a percentile basis.
PERIODS = ("calendar_year", "half_year", "quarter", "month")
#: Percentile readings (screening/percentiles.PERCENTILE_METHODS maps each to its procedure).
PERCENTILE_METHOD_NAMES = ("epa_lcr", "nearest_rank", "linear", "hazen", "weibull")

#: Table settings and the values each may take.
SETTINGS: dict[str, tuple[str, ...]] = {
    "rounding": ROUNDING_CHOICES,
    "nondetect_rule": NONDETECT_RULES,
    "percentile_method": PERCENTILE_METHOD_NAMES,
}
#: Entry keys beyond the plain ones: rounding and percentile bases.
EXTRA_ENTRY_KEYS: tuple[str, ...] = ("significant_figures", "percentile", "period", "percentile_method")


def check_significant_figures(table: dict, rows: list[dict], name: str) -> None:
    """Load-time check of ``significant_figures`` (a whole number >= 1) on each entry."""
    for i, r in enumerate(rows, start=1):
        s = r.get("significant_figures")
        if s is not None and (isinstance(s, bool) or not isinstance(s, int) or s < 1):
            raise LimitTableError(
                f"{name}: entry {i} ({r['analyte']}): key 'significant_figures': '{s}' must be a whole number >= 1")


def check_period_keys(table: dict, rows: list[dict], name: str) -> None:
    """Load-time checks of the period keys of one table (raises LimitTableError naming entry and key)."""
    settings = table.get("settings") or {}
    for i, r in enumerate(rows, start=1):
        label = f"{name}: entry {i} ({r['analyte']})"
        basis = r["basis"]
        if basis in PERIOD_BASES and "nondetect_rule" not in settings:
            raise LimitTableError(
                f"{label}: basis '{basis}' needs the table setting 'nondetect_rule' "
                f"(settings: {{nondetect_rule: {' | '.join(NONDETECT_RULES)}}})")
        given = [k for k in ("percentile", "period", "percentile_method") if r.get(k) is not None]
        if basis != "percentile":
            if given:
                raise LimitTableError(f"{label}: key '{given[0]}' only applies with basis 'percentile'")
            continue
        p = r.get("percentile")
        if isinstance(p, bool) or not isinstance(p, (int, float)) or not 0 < p < 100:
            raise LimitTableError(f"{label}: key 'percentile': needs a number between 0 and 100 (e.g. 90)")
        if r.get("period") not in PERIODS:
            raise LimitTableError(f"{label}: key 'period': '{r.get('period')}' is not one of {', '.join(PERIODS)}")
        method = r.get("percentile_method") or settings.get("percentile_method")
        if method not in PERCENTILE_METHOD_NAMES:
            raise LimitTableError(
                f"{label}: key 'percentile_method': state one of {', '.join(PERCENTILE_METHOD_NAMES)} "
                f"(on the entry or in the table settings)")
        if method == "epa_lcr" and float(p) != 90.0:
            raise LimitTableError(f"{label}: key 'percentile_method': epa_lcr is defined for the 90th percentile only")


#: Checks run on each loaded table, ``check(table, rows, file_name)``, in this order.
TABLE_CHECKS = (check_significant_figures, check_period_keys)
