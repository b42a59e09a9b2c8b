"""A limit entry in words, the same everywhere: the `limits` command, the dashboard's Limit tables page
and the report call :func:`limit_in_words` (and :func:`entry_words` for the qualifiers).

Symbols: H hardness [mg/L as CaCO3], pH, DOC dissolved organic carbon [mg/L], T temperature [°C];
``ln`` the natural logarithm, ``log10`` the decimal one.

>>> limit_in_words({"value_ug_L": 10.0})
'10 µg/L'
>>> limit_in_words({"form": {"kind": "power_law", "input": "hardness", "reference": 30.0, "exponent": 0.85,
...                          "value": 1.4, "inputs": ("hardness",), "valid_range": {}, "outside": None,
...                          "unknown_value": None}}, unit="µg/L")
'1.4 × (H/30)^0.85 µg/L'
"""

from __future__ import annotations

import math

SYMBOLS = {"hardness": "H", "ph": "pH", "doc": "DOC", "temperature": "T"}


def _fmt(v) -> str:
    return f"{float(v):.10g}"


def _ok(v) -> bool:
    return v is not None and not (isinstance(v, float) and math.isnan(v))


def _signed(v: float) -> str:
    return f"{'+' if v >= 0 else '−'} {_fmt(abs(v))}"


def _formula(s: dict) -> str:
    log = "ln" if s["base"] == "e" else "log10"
    parts = []
    for name, coef, is_log in s["terms"]:
        x = f"{log} {SYMBOLS[name]}" if is_log else SYMBOLS[name]
        parts.append(f"{_fmt(coef)}·{x}" if not parts else f"{_signed(coef)}·{x}")
    body = " ".join(parts) + f" {_signed(s['intercept'])}"
    text = f"exp({body})" if s["base"] == "e" else f"10^({body})"
    return text if s["factor"] == 1.0 else f"{_fmt(s['factor'])} × {text}"


def _power(s: dict) -> str:
    return f"{_fmt(s['value'])} × ({SYMBOLS[s['input']]}/{_fmt(s['reference'])})^{_fmt(s['exponent'])}"


def _body(s: dict, unit: str) -> str:
    k = s["kind"]
    if k == "value":
        return f"{_fmt(s['value'])} {unit}"
    if k == "formula":
        return f"{_formula(s)} {unit}"
    if k == "power_law":
        return f"{_power(s)} {unit}"
    if k == "steps":
        x = SYMBOLS[s["input"]]
        parts, lower = [], None
        for upper, body in s["pieces"]:
            lo = "" if lower is None else f"{_fmt(lower[0])} {'≤' if not lower[1] else '<'} "
            hi = "" if upper is None else f" {'≤' if upper[1] else '<'} {_fmt(upper[0])}"
            cond = f"{lo}{x}{hi}" if (lo or hi) else f"any {x}"
            if lo and not hi:
                cond = f"{x} {'>' if lower[1] else '≥'} {_fmt(lower[0])}"
            parts.append(f"{_body(body, unit)} for {cond}")
            lower = upper
        return "; ".join(parts)
    if k == "lookup":
        return _lookup(s, unit)
    raise ValueError(k)


def _classes(axis, upper: bool) -> list[str]:
    name, bounds = axis
    x = SYMBOLS[name]
    lt, ge = ("<", "≥") if upper else ("≤", ">")
    out = [f"{x} {lt} {_fmt(bounds[0])}"]
    out += [f"{_fmt(a)} {'≤' if upper else '<'} {x} {lt} {_fmt(b)}" for a, b in zip(bounds, bounds[1:])]
    out.append(f"{x} {ge} {_fmt(bounds[-1])}")
    return out


def _lookup(s: dict, unit: str) -> str:
    rows = _classes(s["rows"], s["upper"])
    if s["columns"] is None:
        return "by class: " + "; ".join(f"{c}: {_fmt(v)}" for c, v in zip(rows, s["values"][:, 0])) + f" {unit}"
    cols = _classes(s["columns"], s["upper"])
    cells = [f"{r}, {c}: {_fmt(s['values'][i, j])}" for i, r in enumerate(rows) for j, c in enumerate(cols)]
    return "by class: " + "; ".join(cells) + f" {unit}"


def _hardness_formula(get) -> str:
    m, b = get("hf_m"), get("hf_b")
    text = f"exp({_fmt(m)}·ln H {_signed(float(b))})"
    cf, a, slope = get("hf_cf"), get("hf_cf_intercept"), get("hf_cf_ln_slope")
    if _ok(cf) and float(cf) != 1.0:
        text += f" × {_fmt(cf)}"
    elif _ok(a) and _ok(slope):  # CF = a + slope·ln H, never above 1
        text += f" × ({_fmt(a)} {_signed(float(slope))}·ln H)"
    return text


#: µg/L per unit -> the unit's name, for a form written in its table's unit.
_UNIT_OF_FACTOR = {1.0: "µg/L", 1000.0: "mg/L", 0.001: "ng/L", 1e6: "g/L"}


def _getter(entry):
    return entry.get if hasattr(entry, "get") else (lambda k, d=None: getattr(entry, k, d))


def _unit(get, unit: str | None) -> str:
    if unit:
        return unit
    f = get("unit_factor")
    return _UNIT_OF_FACTOR.get(float(f), "µg/L") if _ok(f) else "µg/L"


def limit_in_words(entry, unit: str | None = None) -> str:
    """The limit of one entry (a row of ``LimitSet.entries`` or a mapping) in words.

    A fixed value is given in µg/L; a computed form in its table's unit (``unit``, else read from the
    entry's ``unit_factor``), in which its parameters are written; the US EPA hardness formula in µg/L.
    """
    get = _getter(entry)
    unit = _unit(get, unit)
    form = get("form")
    if isinstance(form, dict):
        return _body(form, unit)
    if _ok(get("value_ug_L")):
        written = get("value_text")  # as the document prints it: 0.010 mg/L keeps its trailing zero
        if written and unit != "µg/L":
            return f"{written} {unit} ({_fmt(get('value_ug_L'))} µg/L)"
        return f"{written or _fmt(get('value_ug_L'))} µg/L"
    if _ok(get("hf_m")) and _ok(get("hf_b")):
        return _hardness_formula(get) + " µg/L"
    return ""


_PERIOD_WORDS = {"calendar_year": "calendar year", "half_year": "half year", "quarter": "quarter", "month": "month"}


def basis_words(entry) -> str:
    """What the limit is compared with, in words ("" for each single result)."""
    get = _getter(entry)
    basis = get("basis") or "single_sample"
    period = _PERIOD_WORDS.get(get("period"), get("period"))
    if basis == "running_annual_mean":
        text = "compared with the running annual mean"
        if get("infrequent_basis") == "single_sample":
            text += " (each result where the site is sampled once a year or less)"
        return text
    if basis == "percentile":
        return f"compared with the {_fmt(get('percentile'))}th percentile of each {period}"
    if basis == "period_mean":
        return f"compared with the mean of each {period}"
    return ""


def entry_words(entry, unit: str | None = None) -> str:
    """The limit in words with its conditions: valid ranges, the value outside them or when an input is
    unknown, hardness bounds of the US EPA form, and site-attribute scope."""
    get = _getter(entry)
    unit = _unit(get, unit)
    parts = [limit_in_words(entry, unit)]
    form = get("form")
    if isinstance(form, dict):
        ranges = [f"{SYMBOLS[k]} {_fmt(lo)}–{_fmt(hi)}" for k, (lo, hi) in form["valid_range"].items()]
        if ranges:
            mode, value = form["outside"]
            what = {"clamp": "inputs taken at the nearest bound", "no_limit": "no limit computed",
                    "value": f"{_fmt(value)} {unit}"}[mode]
            parts.append(f"valid for {', '.join(ranges)}; outside: {what}")
        if form["unknown_value"] is not None:
            names = " or ".join(SYMBOLS[i] for i in form["inputs"])
            parts.append(f"{_fmt(form['unknown_value'])} {unit} when {names} is unknown")
    parts.append(basis_words(entry))
    lo, hi = get("hardness_min"), get("hardness_max")
    if _ok(lo) or _ok(hi):
        lo_t, hi_t = (_fmt(v) if _ok(v) else "…" for v in (lo, hi))
        parts.append(f"H taken within {lo_t}–{hi_t} mg/L as CaCO3")
    sc = get("scope")
    if sc:
        parts.append(f"applies where {sc}")
    return "; ".join(p for p in parts if p)
