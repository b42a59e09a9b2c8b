"""Acceptance windows of the laboratory QC elements, and judging a value against its window.

The defaults are data (``src/tracescreen/data/lab_qc_windows.yaml``): for each element its
measure, window, the tiers below and above the window with the qualifier each tier gives to
detected results and to non-detects, the scope of results it speaks for, and its source with
whether the number was read in that source (``checked: seen``) or is from memory.

A laboratory's own limits (recovery limits, RPD limit) replace the window; the tiers outside the
window (the guideline's expanded limits, e.g. 30 % for a matrix spike) still decide between an
estimated and a rejected result [USEPA2020NFG]_.

Edges: a value exactly on a window edge is within the window; values are compared with a relative
tolerance of :data:`tracescreen.vocabulary.REL_TOL` so that arithmetic on reported numbers cannot
move a value across an edge (100·(44500 − 43100)/2000 is 70.000000000000001 in binary).
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import yaml

from tracescreen._internal.yamlfiles import SAFE_LOADER
from tracescreen.vocabulary import REL_TOL

WINDOWS_FILE = Path(__file__).resolve().parents[2] / "data" / "lab_qc_windows.yaml"

VERDICTS = ("within", "below", "above", "not_judged")
"""Verdict of one QC value: within its window, below it, above it, or not judged (see ``rule``)."""

SCOPES = ("batch", "bracket", "sample", "low_results", "none")


@dataclass(frozen=True)
class Tier:
    """One tier outside a window: values down to (or up to) ``bound`` (inclusive; None = beyond)."""

    bound: float | None
    detect: str
    nondetect: str


@dataclass(frozen=True)
class Window:
    """The default acceptance window of one QC element, with its tiers and source."""

    element: str
    name: str
    measure: str
    low: float | None
    high: float | None
    below: tuple[Tier, ...] = ()
    above: tuple[Tier, ...] = ()
    params: dict = field(default_factory=dict)
    scope: str = "batch"
    source: str = ""
    where: str = ""
    checked: str = "memory"
    citation: str = ""

    def label(self, low: float | None = None, high: float | None = None) -> str:
        """The window in words, e.g. ``75-125 %`` or ``<= 20 %``."""
        lo = self.low if low is None else low
        hi = self.high if high is None else high
        unit = "" if self.measure == "result_in_ql" else " %"
        if lo is None or (isinstance(lo, float) and np.isnan(lo)):
            return f"<= {hi:g}{unit}"
        if hi is None or (isinstance(hi, float) and np.isnan(hi)):
            return f">= {lo:g}{unit}"
        return f"{lo:g}-{hi:g}{unit}"


def _tiers(items, key: str) -> tuple[Tier, ...]:
    out = []
    for t in items or ():
        out.append(Tier(None if t.get(key) is None else float(t[key]), str(t.get("detect") or ""),
                        str(t.get("nondetect") or "")))
    return tuple(out)


def _num(v) -> float | None:
    return None if v is None else float(v)


@functools.lru_cache(maxsize=4)
def load_windows(path: str | None = None) -> dict[str, Window]:
    """The QC windows file as ``{element: Window}`` (cached).

    Parameters
    ----------
    path : str, optional
        Another windows file of the same form (a project's own plan); default the shipped one.
    """
    from tracescreen.retest.labqc.reading import QcFileError

    p = Path(path) if path else WINDOWS_FILE
    try:
        data = yaml.load(p.read_text(encoding="utf-8"), Loader=SAFE_LOADER)
        sources = data.get("sources") or {}
        out = {}
        for element, e in (data.get("elements") or {}).items():
            lo, hi = (e.get("window") or [None, None])
            scope = e.get("scope", "batch")
            if scope not in SCOPES:
                raise ValueError(f"element {element}: unknown scope {scope!r}")
            out[element] = Window(element, e["name"], e["measure"], _num(lo), _num(hi),
                                  _tiers(e.get("below"), "down_to"), _tiers(e.get("above"), "up_to"),
                                  dict(e.get("params") or {}), scope, e.get("source", ""), e.get("where", ""),
                                  e.get("checked", "memory"), " ".join(str(sources.get(e.get("source"), "")).split()))
    except (OSError, yaml.YAMLError, AttributeError, KeyError, TypeError, ValueError) as exc:
        raise QcFileError(f"{p.name}: not a usable QC windows file ({exc.__class__.__name__}: {exc})") from None
    missing = set(SAME_WINDOW.values()) | {"ms", "lcs", "ccv", "icv"} - set(out)
    if missing - set(out):
        raise QcFileError(f"{p.name}: QC windows file lacks element(s) {', '.join(sorted(missing - set(out)))}")
    return out


#: Elements judged with another element's window (a duplicate spike is judged as its spike).
SAME_WINDOW = {"msd": "ms", "lcsd": "lcs"}
#: Elements with their own window for mercury by cold-vapour atomic absorption.
MERCURY_WINDOW = {"icv": "icv_mercury", "ccv": "ccv_mercury"}


def window_for(element: str, mercury: bool = False, windows: dict[str, Window] | None = None) -> Window:
    """The default window of an element (mercury by CVAA has its own calibration windows)."""
    w = windows or load_windows()
    name = SAME_WINDOW.get(element, element)
    if mercury and name in MERCURY_WINDOW:
        name = MERCURY_WINDOW[name]
    return w[name]


def _below(x: np.ndarray, edge: np.ndarray) -> np.ndarray:
    """X < edge beyond the relative tolerance (NaN edge: never)."""
    with np.errstate(invalid="ignore"):
        return x < edge - REL_TOL * np.maximum(np.abs(edge), 1.0)


def _above(x: np.ndarray, edge: np.ndarray) -> np.ndarray:
    with np.errstate(invalid="ignore"):
        return x > edge + REL_TOL * np.maximum(np.abs(edge), 1.0)


def judge(values, low, high, window: Window) -> dict[str, np.ndarray]:
    """Judge values against a window with its tiers, vectorised.

    Parameters
    ----------
    values : array-like of float
        The measure (recovery %, RPD %, ...); NaN is ``not_judged``.
    low, high : array-like of float
        Window edges per value (the lab's own where given, else the window's); NaN = no edge.
    window : Window
        Gives the tiers and qualifiers.

    Returns
    -------
    dict of numpy arrays
        ``verdict`` (:data:`VERDICTS`), ``detect_qualifier``, ``nondetect_qualifier`` (``""`` =
        none) and ``tier`` (the tier's range in words, ``""`` within).

    Examples
    --------
    >>> w = load_windows()["ms"]
    >>> r = judge([75.0, 74.9, 29.9, 125.0, 125.1], [75.0] * 5, [125.0] * 5, w)
    >>> list(r["verdict"]), list(r["detect_qualifier"]), list(r["nondetect_qualifier"])
    (['within', 'below', 'below', 'within', 'above'], ['', 'J-', 'J-', '', 'J+'], ['', 'UJ', 'R', '', ''])
    """
    x = np.asarray(values, dtype=float)
    n = len(x)
    lo = np.broadcast_to(np.asarray(low, dtype=float), (n,))
    hi = np.broadcast_to(np.asarray(high, dtype=float), (n,))
    verdict = np.where(np.isnan(x), "not_judged", "within").astype(object)
    det = np.full(n, "", dtype=object)
    nd = np.full(n, "", dtype=object)
    tier = np.full(n, "", dtype=object)
    below = _below(x, lo)
    above = _above(x, hi)
    verdict[below] = "below"
    verdict[above] = "above"
    for side, mask, tiers in (("below", below, window.below), ("above", above, window.above)):
        left = mask.copy()
        edge = lo if side == "below" else hi
        prev = edge
        for t in tiers:
            if t.bound is None:
                hit = left
            elif side == "below":
                hit = left & ~_below(x, np.full(n, t.bound))
            else:
                hit = left & ~_above(x, np.full(n, t.bound))
            det[hit], nd[hit] = t.detect, t.nondetect
            tier[hit] = _tier_text(side, prev[hit], t.bound)
            left &= ~hit
            if t.bound is not None:
                prev = np.full(n, t.bound)
    return {"verdict": verdict, "detect_qualifier": det, "nondetect_qualifier": nd, "tier": tier}


def _tier_text(side: str, edge: np.ndarray, bound: float | None) -> np.ndarray:
    e = np.array([f"{v:g}" for v in edge], dtype=object)
    if bound is None:
        return ("< " if side == "below" else "> ") + e
    return (f"{bound:g} to < " + e) if side == "below" else ("> " + e + f" to {bound:g}")
