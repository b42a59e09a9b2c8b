"""USGS parameter codes (NWIS ``parm_cd``, WQX ``USGSPCode``) give the analyte, fraction and unit.

An NWIS water-quality download names each result by a five-digit parameter code; the code alone
says the analyte, whether the water was filtered (dissolved) or not (total) and the unit
(``01049`` lead, water, filtered, µg/L). The codes tracescreen reads are data
(``data/nwis_parameters.yaml``, each with its source). Where a file has a parameter-code column,
the code fills the analyte, fraction and unit of rows that do not give them; a row that gives
them keeps its own (and a fraction that disagrees with the code is left to the usual checks).
"""

from __future__ import annotations

import functools
from importlib import resources

import numpy as np
import pandas as pd
import yaml

from tracescreen._internal.yamlfiles import SAFE_LOADER


@functools.lru_cache(maxsize=1)
def parameter_table() -> pd.DataFrame:
    """``code, analyte, fraction, unit`` of every parameter code of ``data/nwis_parameters.yaml``
    (hardness, code 00900, has analyte ``hardness`` and no fraction)."""
    text = resources.files("tracescreen").joinpath("data/nwis_parameters.yaml").read_text("utf-8")
    rows = yaml.load(text, Loader=SAFE_LOADER)["parameters"]
    t = pd.DataFrame([{k: r.get(k) for k in ("code", "analyte", "fraction", "unit")} for r in rows])
    t["code"] = t["code"].astype(str).str.zfill(5)
    t["analyte"] = np.where(t["analyte"] == "hardness", "Hardness, water", t["analyte"])
    return t.fillna("").set_index("code")


def fill_from_codes(cells: pd.DataFrame, found: dict[str, str]) -> tuple[pd.DataFrame, dict[str, str]]:
    """Add analyte, fraction and unit columns filled from the parameter-code column.

    Parameters
    ----------
    cells : DataFrame of str
        A raw table's cells.
    found : dict
        ``{canonical column: header}`` as recognised; must hold ``parameter_code`` for anything
        to happen.

    Returns
    -------
    (cells, found)
        With columns ``__<name>_from_parameter_code__`` (the file's own text where it has one,
        else the code's) and ``found`` pointing at them. Unchanged without a code column.
    """
    if "parameter_code" not in found:
        return cells, found
    code = cells[found["parameter_code"]].fillna("").astype(str).str.strip()
    codes, uniq = pd.factorize(code)
    table = parameter_table()
    key = pd.Index(np.asarray(uniq, dtype=object)).astype(str).str.replace(r"^[Pp]", "", regex=True).str.zfill(5)
    per = table.reindex(key).fillna("")
    # a code not in the table (nutrients, field readings...) names itself, so that the row is set
    # aside as an analyte tracescreen does not screen, with the code in the reason
    per["analyte"] = np.where((per["analyte"] == "") & (key != "00000"), "USGS parameter code " + key, per["analyte"])
    cells = cells.copy()
    found = dict(found)
    for col in ("analyte", "fraction", "unit"):
        from_code = per[col].to_numpy(dtype=object)[codes] if len(uniq) else np.zeros(0, dtype=object)
        if col in found:
            own = cells[found[col]].fillna("").astype(str).str.strip().to_numpy(dtype=object)
            from_code = np.where(own != "", own, from_code)
        name = f"__{col}_from_parameter_code__"
        cells[name] = pd.Series(from_code, index=cells.index, dtype=object).astype(str)
        found[col] = name
    return cells, found
