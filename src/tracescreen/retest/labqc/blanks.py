"""Calibration blanks (ICB, CCB) and preparation (method) blanks.

A blank is judged against its detection limit: clean (not detected, or |blank| below the
detection limit), contaminated (positive, at or above it) or negative (at or below −DL). What a
contaminated blank does to a result depends on the result, so the qualifier is decided result by
result (:func:`blank_qualifiers`), with the tiers of [USEPA2020NFG]_ (from memory; see
``data/lab_qc_windows.yaml``):

Positive blank B (≥ DL), quantitation limit QL:

* detected result x ≤ QL: ``U`` (reported at the quantitation limit);
* QL < x ≤ B, when B > QL: ``U`` (the result is not distinguishable from the blank);
* otherwise not qualified (the guideline leaves results above the blank to professional
  judgement; the narrative lists them);
* non-detects: not qualified.

Without a quantitation limit (neither the blank row nor the file gives one), the older rule of
the guidelines applies: detected results below 5 × the blank are ``U`` (the rule of the retest
check ``blank_contamination``, common practice).

Negative blank (≤ −DL): non-detects ``UJ``; detected results below 10 × |B| ``J-`` (the blank
suggests the instrument reads low).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.retest.labqc.verdicts import concat, fmt, verdict_rows
from tracescreen.retest.labqc.windows import Window, load_windows

BLANK_ELEMENTS = ("calibration_blank", "method_blank")
OLD_RULE_MULTIPLE = 5.0
"""Detected results below this multiple of a positive blank are U when no quantitation limit is
known (earlier editions of the guidelines; common practice)."""


def review_blanks(qc: pd.DataFrame, windows: dict[str, Window] | None = None) -> pd.DataFrame:
    """Verdict rows for calibration and method blanks: ``above`` (contaminated), ``below``
    (negative), ``within`` (clean), ``not_judged`` (no detection limit and no result)."""
    w = windows or load_windows()
    parts = []
    for element in BLANK_ELEMENTS:
        sub = qc[qc["element"] == element]
        if sub.empty:
            continue
        window = w[element]
        det = sub["detected"].to_numpy(bool)
        b = np.where(det, sub["result_ug_L"].to_numpy(float), 0.0)
        dl = sub["detection_limit_ug_L"].to_numpy(float)
        edge = np.where(np.isfinite(dl), dl, 0.0)
        value = np.where(det | np.isfinite(dl), b, np.nan)
        detail = np.where(det, "blank " + fmt(b) + " µg/L", "blank not detected") + ", DL " + np.where(
            np.isfinite(dl), fmt(dl), "not given") + ", QL " + np.where(
            sub["quantitation_limit_ug_L"].notna(), fmt(sub["quantitation_limit_ug_L"]), "not given")
        v = verdict_rows(sub, _blank_window(window), element, value, -edge, edge, "guideline", detail=detail)
        # contaminated at or above the DL (the judge's window is closed at both ends)
        at_dl = det & np.isclose(b, edge) & (edge > 0)
        v.loc[at_dl, ["verdict", "detect_qualifier", "nondetect_qualifier"]] = ["above", "U", ""]
        at_neg = det & np.isclose(b, -edge) & (edge > 0)
        v.loc[at_neg, ["verdict", "detect_qualifier", "nondetect_qualifier"]] = ["below", "J-", "UJ"]
        v.loc[(v["verdict"] == "below").to_numpy() & ~det, "verdict"] = "within"
        v["rule"] = np.select([v["verdict"] == "above", v["verdict"] == "below", v["verdict"] == "within"],
                              ["blank contaminated: " + fmt(value) + " µg/L >= DL " + fmt(dl) + " µg/L",
                               "negative blank: " + fmt(value) + " µg/L <= -DL " + fmt(dl) + " µg/L",
                               "blank clean (below its detection limit)"],
                              "blank not judged (no result and no detection limit)") + f" ({window.source})"
        parts.append(v)
    return concat(parts)


def _blank_window(window: Window) -> Window:
    from dataclasses import replace

    from tracescreen.retest.labqc.windows import Tier

    return replace(window, below=(Tier(None, "J-", "UJ"),), above=(Tier(None, "U", ""),))


def blank_qualifiers(links: pd.DataFrame) -> np.ndarray:
    """The qualifier a blank gives each linked result (``""`` = none).

    Parameters
    ----------
    links : pandas.DataFrame
        One row per (blank verdict, result): ``verdict``, ``value`` (the blank, µg/L),
        ``quantitation_limit_ug_L`` (the blank row's), ``result_detected``, ``result_value_ug_L``,
        ``negative_detect_multiple``.
    """
    b = links["value"].to_numpy(float)
    ql = links["quantitation_limit_ug_L"].to_numpy(float)
    det = links["result_detected"].to_numpy(bool)
    x = links["result_value_ug_L"].to_numpy(float)
    pos = (links["verdict"] == "above").to_numpy()
    neg = (links["verdict"] == "below").to_numpy()
    has_ql = np.isfinite(ql)
    with np.errstate(invalid="ignore"):
        u_tiers = has_ql & ((x <= ql) | ((b > ql) & (x <= b)))
        u_old = ~has_ql & (x < OLD_RULE_MULTIPLE * b)
        out = np.full(len(links), "", dtype=object)
        out[pos & det & (u_tiers | u_old)] = "U"
        mult = links["negative_detect_multiple"].to_numpy(float)
        out[neg & ~det] = "UJ"
        out[neg & det & (x < mult * np.abs(b))] = "J-"
    return out


def blank_rule(links: pd.DataFrame, qualifier: np.ndarray) -> np.ndarray:
    """The rule that gave each blank qualifier, in words."""
    ql = links["quantitation_limit_ug_L"].to_numpy(float)
    x = fmt(links["result_value_ug_L"])
    b = fmt(links["value"])
    return np.select(
        [qualifier == "UJ", qualifier == "J-",
         (qualifier == "U") & ~np.isfinite(ql),
         (qualifier == "U") & (links["result_value_ug_L"].to_numpy(float) <= ql),
         qualifier == "U"],
        ["non-detect with a negative blank " + b + " µg/L",
         "result " + x + " below 10 x |negative blank " + b + "| µg/L",
         "result " + x + f" < {OLD_RULE_MULTIPLE:g} x blank " + b + " µg/L (no quantitation limit given)",
         "result " + x + " <= QL " + fmt(ql) + " µg/L with blank " + b + " µg/L >= DL",
         "result " + x + " <= blank " + b + " µg/L > QL " + fmt(ql)],
        "")
