"""Which laboratory QC element a row is, from its QC-type (sample-type) cell.

The vocabulary is data (``src/tracescreen/data/lab_qc_elements.yaml``): each code with its element,
its source and whether it was seen in that source. Codes are matched case-insensitively after
trimming, one lookup per distinct cell.

``SD`` is ambiguous in real deliverables: a matrix spike duplicate in some (the NYSDEC-format
deliverable in ``tests/data`` has ``SD`` rows with the duplicate spike amounts), a serial dilution
in others. A row coded ``SD`` is read as a spike duplicate when it gives a spike amount, otherwise
as a serial dilution.
"""

from __future__ import annotations

import functools
from pathlib import Path

import numpy as np
import pandas as pd

from tracescreen._internal.yamlfiles import read_yaml

ELEMENTS_FILE = Path(__file__).resolve().parents[2] / "data" / "lab_qc_elements.yaml"

ELEMENTS = (
    "icv", "ccv", "low_check", "calibration_blank", "method_blank", "ics_a", "ics_ab", "lcs", "lcsd",
    "ms", "msd", "post_digestion_spike", "lab_duplicate", "serial_dilution", "internal_standard",
)
"""Every QC element, in the order a review lists them (calibration first, sample-specific last)."""

FAMILIES = {
    "icv": "calibration_checks", "ccv": "calibration_checks", "low_check": "calibration_checks",
    "calibration_blank": "blanks", "method_blank": "blanks",
    "ics_a": "interference", "ics_ab": "interference", "serial_dilution": "interference",
    "internal_standard": "interference",
    "lcs": "spikes", "lcsd": "spikes", "ms": "spikes", "msd": "spikes", "post_digestion_spike": "spikes",
    "lab_duplicate": "precision",
}
"""The module that judges each element (precision also judges MS/MSD and LCS/LCSD pairs)."""


def _key(text) -> str:
    return " ".join(str(text).strip().lower().split())


@functools.lru_cache(maxsize=1)
def vocabulary() -> pd.DataFrame:
    """The QC-type vocabulary: ``code, element, source, checked, note`` (one row per code)."""
    data = read_yaml(ELEMENTS_FILE)
    rows = [{"code": str(c["code"]), "element": c["element"], "source": c.get("source", ""),
             "checked": c.get("checked", "memory"), "note": c.get("note", "")} for c in data["codes"]]
    out = pd.DataFrame(rows)
    bad = set(out["element"]) - set(ELEMENTS)
    if bad:
        raise ValueError(f"{ELEMENTS_FILE.name}: unknown element(s) {sorted(bad)}")
    return out


@functools.lru_cache(maxsize=1)
def _lookup() -> dict[str, str]:
    v = vocabulary()
    return dict(zip(v["code"].map(_key), v["element"]))


def classify(codes: pd.Series, has_spike: np.ndarray | None = None) -> np.ndarray:
    """The element of each QC-type cell (``""`` where the code is not a laboratory QC element).

    Parameters
    ----------
    codes : pandas.Series of str
        The QC-type or sample-type cells as written.
    has_spike : numpy bool array, optional
        Whether each row gives a spike amount; decides ``SD`` (spike duplicate or serial dilution).

    Examples
    --------
    >>> import pandas as pd, numpy as np
    >>> list(classify(pd.Series(["MS", " lcs ", "N", "SD", "SD"]), np.array([1, 1, 0, 1, 0], bool)))
    ['ms', 'lcs', '', 'msd', 'serial_dilution']
    """
    s = pd.Series(codes, dtype=object).fillna("")
    cat = pd.Categorical(s.astype(str))
    table = _lookup()
    per_code = np.array([table.get(_key(c), "") for c in cat.categories] + [""], dtype=object)
    out = per_code[np.where(cat.codes < 0, len(cat.categories), cat.codes)]
    if has_spike is not None:
        is_sd = (s.astype(str).str.strip().str.upper() == "SD").to_numpy()
        out = np.where(is_sd & ~np.asarray(has_spike, dtype=bool), "serial_dilution", out)
    return out.astype(object)
