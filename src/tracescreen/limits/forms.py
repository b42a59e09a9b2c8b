"""The forms a computed limit takes, read from a table's entry and evaluated on water-chemistry inputs.

A limit is a fixed ``value``, the US EPA ``hardness_formula`` (:func:`limits.load.hardness_formula_limit`),
or one of the forms declared here, each a mapping of parameters (never evaluated text):

``formula``
    ``factor · base^(intercept + Σ coefficient·t(input))`` with ``base`` e or 10 and ``t`` the
    logarithm in that base (``log: true``) or the input itself: e.g. the Canadian zinc guideline
    exp(0.947 ln H − 0.815 pH + 0.398 ln DOC + 4.625) [CCME-Zn-2018]_.
``power_law``
    ``value · (input / reference)^exponent``: the Australian and New Zealand hardness-modified
    values ``TV · (H/30)^a`` [ANZECC-2000]_.
``steps``
    pieces over one input, each a value, a formula or a power law, bounded by ``below`` (x < b),
    ``up_to`` (x ≤ b), ``from`` (x ≥ b) or ``over`` (x > b): e.g. the Canadian copper guideline,
    2 µg/L below hardness 82, a formula from 82 to 180, 4 µg/L over 180 [CCME-1987]_.
``lookup``
    values by class of one input (``rows``) or of two (``rows`` × ``columns``), classes cut at
    ``bounds``: e.g. the EU cadmium EQS by five hardness classes [EU-EQS-2013]_.

Any computed form may state ``valid_range`` per input with ``outside_range`` (``clamp``,
``no_limit`` or ``{value: v}``) and ``unknown_input: {value: v}`` (the value when an input is not
known). Inputs (:data:`INPUTS`): hardness [mg/L as CaCO3], pH [pH units], dissolved organic carbon
[mg/L], temperature [°C]. Without a needed input (and no stated value for that case) the limit
is not computed and the remark names the input (:data:`REMARKS`).

:func:`parse_form` checks an entry's form and returns a plain spec (nested tuples and dicts);
:func:`evaluate` gives the limit (in the table's unit) and a remark code per row, vectorised
over the rows of one entry.

References
----------
.. [CCME-Zn-2018] Canadian Council of Ministers of the Environment (2018). Canadian Water Quality
   Guidelines for the Protection of Aquatic Life: Zinc.
.. [CCME-1987] Canadian Council of Resource and Environment Ministers (1987). Canadian Water
   Quality Guidelines (copper, lead, nickel: hardness-dependent values).
.. [ANZECC-2000] ANZECC & ARMCANZ (2000). Australian and New Zealand Guidelines for Fresh and Marine
   Water Quality, Volume 1, Section 3.4.3 (hardness-modified trigger values), as adopted by ANZG (2018).
.. [EU-EQS-2013] Directive 2008/105/EC as amended by Directive 2013/39/EU, Annex I Part A.
"""

from __future__ import annotations

import math

import numpy as np

from tracescreen.limits.schema import LimitTableError

#: Input name -> (words, unit). Screening takes each from the sample, else the site's default.
INPUTS = {
    "hardness": ("hardness", "mg/L as CaCO3"),
    "ph": ("pH", "pH units"),
    "doc": ("dissolved organic carbon", "mg/L"),
    "temperature": ("temperature", "°C"),
}
INPUT_NAMES = tuple(INPUTS)
#: Entry keys that each declare one computed form.
FORM_KEYS = ("formula", "power_law", "steps", "lookup")
#: Keys of a computed entry that qualify its form.
QUALIFIER_KEYS = ("valid_range", "outside_range", "unknown_input")

_KINDS = (
    "{w} unknown: limit not computed",
    "{w} unknown: the value the document states for unknown {w} used",
    "{w} outside the valid range: limit not computed",
    "{w} outside the valid range: the value the document states outside the range used",
    "{w} outside the valid range: {w} taken at the range's bound",
)
#: Remark texts by code: 0 none, then one per (kind, input).
REMARKS = ("",) + tuple(k.format(w=INPUTS[i][0]) for k in _KINDS for i in INPUT_NAMES)


def _remark(kind: int, name: str) -> int:
    return 1 + kind * len(INPUT_NAMES) + INPUT_NAMES.index(name)


UNKNOWN, UNKNOWN_VALUE, OUTSIDE, OUTSIDE_VALUE, CLAMPED = range(5)


# --- reading -----------------------------------------------------------------------------------


def _num(v, where: str, positive: bool = False) -> float:
    if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
        raise LimitTableError(f"{where}: '{v}' is not a number")
    if positive and v <= 0:
        raise LimitTableError(f"{where}: {v} must be > 0")
    return float(v)


def _mapping(v, where: str, allowed: tuple[str, ...], required: tuple[str, ...] = ()) -> dict:
    if not isinstance(v, dict):
        raise LimitTableError(f"{where}: must be a mapping with keys {', '.join(allowed)}")
    for k in v:
        if k not in allowed:
            raise LimitTableError(f"{where}: unknown key '{k}' (allowed: {', '.join(allowed)})")
    for k in required:
        if k not in v:
            raise LimitTableError(f"{where}: missing key '{k}'")
    return v


def _input(v, where: str) -> str:
    name = str(v).strip().lower()
    if name not in INPUTS:
        raise LimitTableError(f"{where}: input '{v}' is not one of {', '.join(INPUT_NAMES)}")
    return name


def _formula(f, where: str) -> dict:
    f = _mapping(f, where, ("base", "intercept", "terms", "factor"), ("intercept", "terms"))
    base = str(f.get("base", "e"))
    if base not in ("e", "10"):
        raise LimitTableError(f"{where}.base: '{base}' must be e or 10")
    terms = f["terms"]
    if not isinstance(terms, list) or not terms:
        raise LimitTableError(f"{where}.terms: must be a list of {{input, coefficient, log}}")
    parsed = []
    for j, t in enumerate(terms, start=1):
        tw = f"{where}.terms[{j}]"
        t = _mapping(t, tw, ("input", "coefficient", "log"), ("input", "coefficient"))
        log = t.get("log", False)
        if not isinstance(log, bool):
            raise LimitTableError(f"{tw}.log: '{log}' must be true or false")
        parsed.append((_input(t["input"], tw + ".input"), _num(t["coefficient"], tw + ".coefficient"), log))
    return {"kind": "formula", "base": base, "intercept": _num(f["intercept"], where + ".intercept"),
            "terms": tuple(parsed), "factor": _num(f.get("factor", 1.0), where + ".factor", positive=True)}


def _power_law(p, where: str) -> dict:
    p = _mapping(p, where, ("input", "reference", "exponent", "value"), ("input", "reference", "exponent", "value"))
    return {"kind": "power_law", "input": _input(p["input"], where + ".input"),
            "reference": _num(p["reference"], where + ".reference", positive=True),
            "exponent": _num(p["exponent"], where + ".exponent"), "value": _num(p["value"], where + ".value")}


_LOWER = {"from": True, "over": False}   # key -> bound included
_UPPER = {"up_to": True, "below": False}


def _piece_body(p: dict, where: str) -> dict:
    bodies = [k for k in ("value", "formula", "power_law") if k in p]
    if len(bodies) != 1:
        raise LimitTableError(f"{where}: give exactly one of value, formula or power_law")
    k = bodies[0]
    if k == "value":
        return {"kind": "value", "value": _num(p["value"], where + ".value")}
    return _formula(p[k], f"{where}.{k}") if k == "formula" else _power_law(p[k], f"{where}.{k}")


def _steps(s, where: str) -> dict:
    s = _mapping(s, where, ("input", "pieces"), ("input", "pieces"))
    pieces = s["pieces"]
    if not isinstance(pieces, list) or len(pieces) < 2:
        raise LimitTableError(f"{where}.pieces: needs a list of at least two pieces")
    out = []
    prev_upper = None
    for j, p in enumerate(pieces, start=1):
        pw = f"{where}.pieces[{j}]"
        p = _mapping(p, pw, ("value", "formula", "power_law") + tuple(_LOWER) + tuple(_UPPER))
        lo = [k for k in _LOWER if k in p]
        hi = [k for k in _UPPER if k in p]
        if len(lo) > 1 or len(hi) > 1:
            raise LimitTableError(f"{pw}: at most one lower bound (from | over) and one upper (below | up_to)")
        if j == 1 and lo:
            raise LimitTableError(f"{pw}: the first piece has no lower bound (it starts at the lowest values)")
        if j == len(pieces) and hi:
            raise LimitTableError(f"{pw}: the last piece has no upper bound (it runs to the highest values)")
        if j > 1 and not lo:
            raise LimitTableError(f"{pw}: needs a lower bound, 'from' or 'over'")
        if j < len(pieces) and not hi:
            raise LimitTableError(f"{pw}: needs an upper bound, 'below' or 'up_to'")
        lower = (_num(p[lo[0]], f"{pw}.{lo[0]}"), _LOWER[lo[0]]) if lo else None
        upper = (_num(p[hi[0]], f"{pw}.{hi[0]}"), _UPPER[hi[0]]) if hi else None
        if lower is not None:  # must continue the previous piece exactly, with the bound on one side
            if lower[0] != prev_upper[0] or lower[1] == prev_upper[1]:
                b = f"{prev_upper[0]:g}"
                raise LimitTableError(f"{pw}: the lower bound must continue the previous piece (after 'below: {b}' "
                                      f"comes 'from: {b}'; after 'up_to: {b}' comes 'over: {b}')")
        if lower is not None and upper is not None and upper[0] <= lower[0]:
            raise LimitTableError(f"{pw}: the upper bound {upper[0]:g} is not above the lower bound {lower[0]:g}")
        prev_upper = upper
        out.append((upper, _piece_body(p, pw)))
    return {"kind": "steps", "input": _input(s["input"], where + ".input"), "pieces": tuple(out)}


def _axis(a, where: str) -> tuple[str, tuple[float, ...]]:
    a = _mapping(a, where, ("input", "bounds"), ("input", "bounds"))
    b = a["bounds"]
    if not isinstance(b, list) or not b:
        raise LimitTableError(f"{where}.bounds: must be a list of increasing numbers")
    bounds = tuple(_num(x, f"{where}.bounds") for x in b)
    if any(y <= x for x, y in zip(bounds, bounds[1:])):
        raise LimitTableError(f"{where}.bounds: {list(bounds)} must increase")
    return _input(a["input"], where + ".input"), bounds


def _lookup(t, where: str) -> dict:
    t = _mapping(t, where, ("rows", "columns", "values", "bound_belongs_to"), ("rows", "values"))
    rows = _axis(t["rows"], where + ".rows")
    cols = _axis(t["columns"], where + ".columns") if "columns" in t else None
    side = str(t.get("bound_belongs_to", "upper_class"))
    if side not in ("upper_class", "lower_class"):
        raise LimitTableError(f"{where}.bound_belongs_to: '{side}' must be upper_class or lower_class")
    v = t["values"]
    n_r = len(rows[1]) + 1
    if cols is None:
        if not isinstance(v, list) or len(v) != n_r:
            raise LimitTableError(f"{where}.values: needs {n_r} values ({len(rows[1])} bounds make {n_r} classes)")
        table = np.array([[_num(x, f"{where}.values")] for x in v])
    else:
        n_c = len(cols[1]) + 1
        if not isinstance(v, list) or len(v) != n_r or any(not isinstance(r, list) or len(r) != n_c for r in v):
            raise LimitTableError(f"{where}.values: needs {n_r} rows of {n_c} values (rows x columns classes)")
        table = np.array([[_num(x, f"{where}.values") for x in r] for r in v])
    return {"kind": "lookup", "rows": rows, "columns": cols, "values": table, "upper": side == "upper_class"}


def _qualifiers(e: dict, where: str, inputs: set[str]) -> dict:
    q = {"valid_range": {}, "outside": None, "unknown_value": None}
    vr = e.get("valid_range")
    if vr is not None:
        vr = _mapping(vr, f"{where}: key 'valid_range'", INPUT_NAMES)
        for k, r in vr.items():
            kw = f"{where}: key 'valid_range.{k}'"
            if k not in inputs:
                raise LimitTableError(f"{kw}: the form does not use {k}")
            if not (isinstance(r, list) and len(r) == 2):
                raise LimitTableError(f"{kw}: must be [min, max]")
            lo = -np.inf if r[0] is None else _num(r[0], kw)
            hi = np.inf if r[1] is None else _num(r[1], kw)
            if lo > hi:
                raise LimitTableError(f"{kw}: min {lo:g} is above max {hi:g}")
            q["valid_range"][k] = (lo, hi)
        out = e.get("outside_range")
        if out is None:
            raise LimitTableError(f"{where}: key 'valid_range' needs 'outside_range' (clamp | no_limit | {{value: v}})")
        if isinstance(out, dict):
            given = _mapping(out, f"{where}: key 'outside_range'", ("value",), ("value",))["value"]
            q["outside"] = ("value", _num(given, f"{where}: key 'outside_range.value'"))
        elif out in ("clamp", "no_limit"):
            q["outside"] = (out, np.nan)
        else:
            raise LimitTableError(f"{where}: key 'outside_range': '{out}' must be clamp, no_limit or {{value: v}}")
    elif "outside_range" in e:
        raise LimitTableError(f"{where}: key 'outside_range' only applies with 'valid_range'")
    if "unknown_input" in e:
        u = _mapping(e["unknown_input"], f"{where}: key 'unknown_input'", ("value",), ("value",))
        q["unknown_value"] = _num(u["value"], f"{where}: key 'unknown_input.value'")
    return q


def form_inputs(spec: dict) -> tuple[str, ...]:
    """The inputs a form uses, in :data:`INPUT_NAMES` order."""
    used: set[str] = set()

    def walk(s):
        k = s["kind"]
        if k == "formula":
            used.update(t[0] for t in s["terms"])
        elif k == "power_law":
            used.add(s["input"])
        elif k == "steps":
            used.add(s["input"])
            for _, body in s["pieces"]:
                walk(body)
        elif k == "lookup":
            used.add(s["rows"][0])
            if s["columns"] is not None:
                used.add(s["columns"][0])

    walk(spec)
    return tuple(n for n in INPUT_NAMES if n in used)


def parse_form(e: dict, where: str) -> dict | None:
    """The computed form of entry ``e`` (None when it has none), checked; errors name entry and key."""
    given = [k for k in FORM_KEYS if k in e]
    if not given:
        extra = [k for k in QUALIFIER_KEYS if k in e]
        if extra:
            raise LimitTableError(f"{where}: key '{extra[0]}' only applies to a computed form ({', '.join(FORM_KEYS)})")
        return None
    if len(given) > 1:
        raise LimitTableError(f"{where}: give one form, not {' and '.join(given)}")
    k = given[0]
    kw = f"{where}: key '{k}'"
    spec = {"formula": _formula, "power_law": _power_law, "steps": _steps, "lookup": _lookup}[k](e[k], kw)
    spec["inputs"] = form_inputs(spec)
    spec.update(_qualifiers(e, where, set(spec["inputs"])))
    return spec


# --- evaluating --------------------------------------------------------------------------------


def _log(x: np.ndarray, base: str) -> np.ndarray:
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.log(x) if base == "e" else np.log10(x)


def _eval_body(s: dict, x: dict[str, np.ndarray]) -> np.ndarray:
    k = s["kind"]
    if k == "value":
        n = len(next(iter(x.values())))
        return np.full(n, s["value"])
    if k == "formula":
        z = np.full(len(next(iter(x.values()))), s["intercept"])
        for name, coef, log in s["terms"]:
            z = z + coef * (_log(x[name], s["base"]) if log else x[name])
        with np.errstate(over="ignore", invalid="ignore"):
            return s["factor"] * (np.exp(z) if s["base"] == "e" else 10.0 ** z)
    if k == "power_law":
        with np.errstate(divide="ignore", invalid="ignore"):
            return s["value"] * (x[s["input"]] / s["reference"]) ** s["exponent"]
    if k == "steps":
        v = x[s["input"]]
        out = np.full(len(v), np.nan)
        placed = np.zeros(len(v), dtype=bool)
        for upper, body in s["pieces"]:
            if upper is None:
                here = ~placed
            else:
                b, inclusive = upper
                here = ~placed & ((v <= b) if inclusive else (v < b))
            if here.any():
                sub = {n: a[here] for n, a in x.items()}
                out[here] = _eval_body(body, sub)
            placed |= here
        return out
    if k == "lookup":
        side = "right" if s["upper"] else "left"  # upper_class: x == bound falls in the class above
        r = np.searchsorted(np.asarray(s["rows"][1]), x[s["rows"][0]], side=side)
        c = (np.searchsorted(np.asarray(s["columns"][1]), x[s["columns"][0]], side=side)
             if s["columns"] is not None else np.zeros(len(r), dtype=np.int64))
        return s["values"][r, c]
    raise ValueError(f"unknown form {k}")


def evaluate(spec: dict, inputs: dict[str, np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
    """Limit (in the table's unit) and remark code (:data:`REMARKS`) for each row of one entry.

    Parameters
    ----------
    spec : dict
        A form from :func:`parse_form`.
    inputs : dict of str -> array of float
        Each input the form uses (:data:`INPUTS` units), aligned rows; NaN where unknown.

    Returns
    -------
    (limit, remark) : float array, int array
        NaN limit where it cannot be computed (the remark says why).
    """
    names = spec["inputs"]
    n = len(inputs[names[0]]) if names else 0
    x = {k: np.asarray(inputs[k], dtype=float).copy() for k in names}
    remark = np.zeros(n, dtype=np.int64)
    unknown_to_value = np.zeros(n, dtype=bool)
    outside_to_value = np.zeros(n, dtype=bool)
    no_limit = np.zeros(n, dtype=bool)
    for k in names:  # the first missing input names the remark
        miss = np.isnan(x[k]) & (remark == 0)
        if spec["unknown_value"] is not None:
            remark[miss] = _remark(UNKNOWN_VALUE, k)
            unknown_to_value |= miss
        else:
            remark[miss] = _remark(UNKNOWN, k)
            no_limit |= miss
    for k, (lo, hi) in spec["valid_range"].items():
        with np.errstate(invalid="ignore"):
            out = ((x[k] < lo) | (x[k] > hi)) & (remark == 0)
        mode, value = spec["outside"]
        if mode == "clamp":
            remark[out] = _remark(CLAMPED, k)
            x[k] = np.clip(x[k], lo, hi)
        elif mode == "value":
            remark[out] = _remark(OUTSIDE_VALUE, k)
            outside_to_value |= out
        else:
            remark[out] = _remark(OUTSIDE, k)
            no_limit |= out
    safe = {k: np.where(np.isnan(a), 1.0, a) for k, a in x.items()}
    limit = _eval_body(spec, safe) if n else np.zeros(0)
    limit = np.where(no_limit, np.nan, limit)
    if spec["unknown_value"] is not None:
        limit = np.where(unknown_to_value, spec["unknown_value"], limit)
    if spec["outside"] is not None and spec["outside"][0] == "value":
        limit = np.where(outside_to_value, spec["outside"][1], limit)
    return limit.astype(float), remark
