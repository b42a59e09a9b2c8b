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
TABLE_KEYS_OPTIONAL = ("url", "notes", "settings", "effective_from", "effective_to", "default_scope")
ENTRY_KEYS_REQUIRED = ("analyte", "fraction")
#: Keys that each give an entry's limit (exactly one per entry): a fixed value, the US EPA hardness
#: formula, or a computed form of limits/forms.py.
VALUE_KEYS = ("value", "hardness_formula", "formula", "power_law", "steps", "lookup")
ENTRY_KEYS_OPTIONAL = VALUE_KEYS + ("hardness_range", "valid_range", "outside_range", "unknown_input",
                                    "basis", "duration", "effective_from", "effective_to", "note", "scope")
FORMULA_KEYS = ("m", "b", "cf")
CF_KEYS = ("intercept", "ln_hardness")
FRACTIONS = ("total", "dissolved")

#: Bases whose value is a statistic of a period of results (screening/periods.py computes them).
PERIOD_BASES = ("running_annual_mean", "percentile", "period_mean")
#: Bases of comparison an entry may use, with what each means.
BASES = {
    "single_sample": "each result is compared with the limit",
    "running_annual_mean": "mean of the site's results in the 12 months ending at each sample",
    "percentile": "percentile of the site's results in each monitoring period",
    "period_mean": "mean of the site's results in each period (e.g. the calendar-year mean of an annual-average EQS)",
}

#: Criteria rounding (screening/decision.py): none, or to the significant figures as written.
ROUNDING_CHOICES = ("none", "significant_figures")
#: How non-detects enter a period statistic (screening/periods.py).
NONDETECT_RULES = ("zero", "half_dl", "dl", "kaplan_meier")
#: Monitoring periods of a percentile basis.
PERIODS = ("calendar_year", "half_year", "quarter", "month")
#: Percentile readings (screening/percentiles.PERCENTILE_METHODS maps each to its procedure).
PERCENTILE_METHOD_NAMES = ("epa_lcr", "epa_lcr_next_whole", "nearest_rank", "linear", "hazen", "weibull")
#: What ``infrequent_basis`` may say: where a point is sampled once a year or less, each single
#: result decides instead of the running annual mean (40 CFR 141.23(i)(2)).
INFREQUENT_BASES = ("single_sample",)

#: Site attributes an entry may be scoped by (``scope:``), with the values each may take; the
#: sites file has a column of the same name. A site without the attribute gets every entry (or the
#: table's ``default_scope``). Sources of the words: lotic/lentic, US EPA selenium criterion 2016
#: (EPA 822-R-16-006); tap / entry point / source / well / distribution, 40 CFR 141.2 and
#: 141.23(a) sampling points, 141.86 (tap samples); inland / other surface waters, Directive
#: 2008/105/EC Annex I; species protection levels 99/95/90/80 %, ANZG (2018).
SCOPE_ATTRIBUTES: dict[str, tuple[str, ...]] = {
    "water_body_type": ("lotic", "lentic"),
    "sampling_point_type": ("tap", "entry_point", "distribution", "source", "well"),
    "water_category": ("inland", "other"),
    "protection_level": ("99", "95", "90", "80"),
}

#: Table settings and the values each may take.
SETTINGS: dict[str, tuple[str, ...]] = {
    "rounding": ROUNDING_CHOICES,
    "criteria_significant_figures": (),  # a whole number: computed criteria are rounded to it
    "nondetect_rule": NONDETECT_RULES,
    "percentile_method": PERCENTILE_METHOD_NAMES,
}
#: Entry keys beyond the plain ones: rounding and percentile bases.
EXTRA_ENTRY_KEYS: tuple[str, ...] = ("significant_figures", "percentile", "period", "percentile_method",
                                      "infrequent_basis")


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
        if basis == "period_mean":
            if r.get("period") not in PERIODS:
                raise LimitTableError(f"{label}: key 'period': '{r.get('period')}' is not one of {', '.join(PERIODS)}")
            extra = [k for k in given if k != "period"]
            if extra:
                raise LimitTableError(f"{label}: key '{extra[0]}' only applies with basis 'percentile'")
            continue
        if basis != "percentile":
            if given:
                raise LimitTableError(
                    f"{label}: key '{given[0]}' only applies with basis 'percentile' or 'period_mean'")
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
        if method.startswith("epa_lcr") and float(p) != 90.0:
            raise LimitTableError(f"{label}: key 'percentile_method': epa_lcr is defined for the 90th percentile only")


def check_criteria_rounding(table: dict, rows: list[dict], name: str) -> None:
    """Load-time check of the setting ``criteria_significant_figures`` (a whole number >= 1)."""
    s = (table.get("settings") or {}).get("criteria_significant_figures")
    if s is not None and (isinstance(s, bool) or not isinstance(s, int) or s < 1):
        raise LimitTableError(
            f"{name}: settings: key 'criteria_significant_figures': '{s}' must be a whole number >= 1")


def check_infrequent_basis(table: dict, rows: list[dict], name: str) -> None:
    """``infrequent_basis`` only on running-annual-mean entries, and only ``single_sample``."""
    for i, r in enumerate(rows, start=1):
        v = r.get("infrequent_basis")
        if v is None:
            continue
        label = f"{name}: entry {i} ({r['analyte']})"
        if r["basis"] != "running_annual_mean":
            raise LimitTableError(f"{label}: key 'infrequent_basis' only applies with basis 'running_annual_mean'")
        if v not in INFREQUENT_BASES:
            raise LimitTableError(f"{label}: key 'infrequent_basis': '{v}' is not one of {', '.join(INFREQUENT_BASES)}")


#: Checks run on each loaded table, ``check(table, rows, file_name)``, in this order.
TABLE_CHECKS = (check_significant_figures, check_period_keys, check_criteria_rounding, check_infrequent_basis)
