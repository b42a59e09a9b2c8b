"""The statistical design of a detection-monitoring programme, and what it implies.

The Unified Guidance designs a programme as a whole (USEPA 2009, ch. 6 and 19 [usepa2009]_):
every well-constituent test shares a target annual **site-wide false positive rate** (SWFPR,
10 % by default); each parametric limit then covers the year's evaluations at the per-test
confidence ``(1 - SWFPR)^(1 / (wells x constituents))``, and each constituent's non-parametric
limit, shared by all wells, the per-constituent rate ``1 - (1 - SWFPR)^(1 / constituents)``
over ``wells x evaluations`` comparisons. A retest plan buys power back. :class:`Design` holds
these choices; :meth:`Design.from_mapping` reads them from a design file's mapping (every key
optional) and checks them.

References
----------
.. [usepa2009] USEPA (2009). Unified Guidance, EPA 530-R-09-007, ch. 6 and 19.
"""

from __future__ import annotations

from dataclasses import dataclass, field, fields, replace

import pandas as pd

from .plans import RetestPlan, parse_plan


class DesignError(ValueError):
    """A design value that cannot be used (the message names the key and the problem)."""


@dataclass(frozen=True)
class Design:
    """Choices of a detection-monitoring design (see :data:`tracescreen.io.network.DESIGN_KEYS`)."""

    swfpr: float = 0.10
    evaluations_per_year: int = 2
    plan: RetestPlan = field(default_factory=lambda: RetestPlan("k-of-m", 1, 2))
    nonparametric_plans: tuple[RetestPlan, ...] = (
        RetestPlan("k-of-m", 1, 2), RetestPlan("k-of-m", 1, 3), RetestPlan("k-of-m", 1, 4),
        RetestPlan("modified-california", 2, 4))
    compliance_wells: int | None = None
    constituents: int | None = None
    comparison: str = "auto"
    background_from: pd.Timestamp | None = None
    background_to: pd.Timestamp | None = None
    min_background: int = 8
    alpha_checks: float = 0.05
    control_chart_k: float = 1.0
    control_chart_h: float = 5.0
    control_chart_scl: float = 4.5
    tolerance_coverage: float = 0.95
    tolerance_confidence: float = 0.95
    ci_level: float = 0.95
    ci_parameter: str = "mean"
    ci_percentile: float = 0.95
    ci_last_n: int = 8

    @property
    def evaluation_interval_days(self) -> float:
        """Days between routine evaluations (a resample must come before the next one)."""
        return 365.25 / self.evaluations_per_year

    @classmethod
    def from_mapping(cls, values: dict, source: str = "design") -> "Design":
        """A design from a mapping of keys to values (as read from a design file or options);
        unset keys keep their defaults. Raises :class:`DesignError` naming ``source`` and key."""
        known = {f.name for f in fields(cls)} | {"order"}
        kw = {}
        for key, raw in values.items():
            if raw is None or (isinstance(raw, str) and raw.strip() == ""):
                continue
            if key not in known:
                raise DesignError(f"{source}: '{key}' is not a design key")
            kw[key] = raw
        order = kw.pop("order", None)
        try:
            out = replace(cls(), **{k: _convert(k, v) for k, v in kw.items()})
            if order is not None:
                o = int(order)
                out = replace(out, plan=out.plan.with_order(o),
                              nonparametric_plans=tuple(p.with_order(1 if o == 1 else 3)
                                                        for p in out.nonparametric_plans))
        except (TypeError, ValueError) as exc:
            raise DesignError(f"{source}: {exc}") from None
        out.check(source)
        return out

    def check(self, source: str = "design") -> None:
        """Raise ValueError naming ``source`` and the setting when the design cannot be used."""
        problems = []
        if not 0 < self.swfpr < 1:
            problems.append(f"swfpr {self.swfpr} is not between 0 and 1")
        if self.evaluations_per_year < 1:
            problems.append("evaluations_per_year must be at least 1")
        if self.plan.order not in (1, 2, 3):
            problems.append("order must be 1, 2 or 3")
        if any(p.order not in (1, 3) for p in self.nonparametric_plans):
            problems.append("non-parametric plans compare single results or medians of 3")
        if self.comparison not in ("auto", "interwell", "intrawell"):
            problems.append(f"comparison '{self.comparison}' is not auto, interwell or intrawell")
        if self.ci_parameter not in ("mean", "median", "percentile"):
            problems.append(f"ci_parameter '{self.ci_parameter}' is not mean, median or percentile")
        for name in ("alpha_checks", "tolerance_coverage", "tolerance_confidence", "ci_level", "ci_percentile"):
            if not 0 < getattr(self, name) < 1:
                problems.append(f"{name} must be between 0 and 1")
        if self.ci_last_n < 3:
            problems.append("ci_last_n must be at least 3")
        if self.min_background < 2:
            problems.append("min_background must be at least 2")
        if (self.background_from is not None and self.background_to is not None
                and self.background_from > self.background_to):
            problems.append("background_from is after background_to")
        if problems:
            raise DesignError(f"{source}: {problems[0]}")


def _convert(key: str, value):
    if key == "plan":
        return value if isinstance(value, RetestPlan) else parse_plan(str(value))
    if key == "nonparametric_plans":
        items = value.split(",") if isinstance(value, str) else list(value)
        return tuple(p if isinstance(p, RetestPlan) else parse_plan(str(p)) for p in items)
    if key in ("background_from", "background_to"):
        ts = pd.Timestamp(str(value))
        if pd.isna(ts):
            raise ValueError(f"{key} '{value}' is not a date")
        return ts
    if key in ("evaluations_per_year", "min_background", "compliance_wells", "constituents", "ci_last_n"):
        f = float(value)
        if f != int(f):
            raise ValueError(f"{key} must be a whole number, not {value}")
        return int(f)
    if key in ("comparison", "ci_parameter"):
        return str(value).strip().lower()
    return float(value)
