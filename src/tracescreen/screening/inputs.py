"""Water chemistry of each sample for computed limits: pH, dissolved organic carbon, temperature.

Hardness has its own module (:mod:`tracescreen.screening.hardness`). The other inputs a limit form
may need (:data:`tracescreen.limits.forms.INPUTS`) come, in this order of preference, from

1. the sample's own result rows (columns :data:`RESULT_COLUMNS` of the accepted results, filled
   by :mod:`tracescreen.io.chemistry_rows` from the file's pH, DOC and temperature rows; any row of
   the same site and sample id);
2. the site's default in the sites file (columns of the same names);
3. otherwise unknown: the limit is not computed and its note names the missing input.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen._internal.coded import joint_codes
from tracescreen.screening.hardness import _codes

#: Input name -> column of the accepted results and of the sites file holding it.
RESULT_COLUMNS = {"ph": "ph", "doc": "doc_mg_L", "temperature": "temperature_C"}
#: Input name -> column of the screening table with the value used.
USED_COLUMNS = {"ph": "ph_used", "doc": "doc_used_mg_L", "temperature": "temperature_used_C"}
#: Where an input came from.
ORIGINS = ("none", "sample", "site_default")


def sample_inputs(results: pd.DataFrame, sites: pd.DataFrame | None = None) -> dict[str, tuple[np.ndarray, np.ndarray]]:
    """Input name -> (value per result row, origin code per row into :data:`ORIGINS`).

    A sample's value is the mean of the values its rows carry (they normally agree).
    """
    n = len(results)
    codes = None
    out = {}
    site_table = sites.drop_duplicates("site_id").set_index("site_id") if sites is not None else None
    for name, col in RESULT_COLUMNS.items():
        used = np.full(n, np.nan)
        if col in results.columns:
            v = results[col].to_numpy(dtype=float)
            has = ~np.isnan(v)
            if has.any():
                if codes is None:
                    codes, first = joint_codes(_codes(results["site_id"]), _codes(results["sample_id"]))
                total = np.zeros(len(first))
                count = np.zeros(len(first))
                np.add.at(total, codes[has], v[has])
                np.add.at(count, codes[has], 1.0)
                with np.errstate(invalid="ignore", divide="ignore"):
                    used = (total / count)[codes]
        origin = np.where(np.isnan(used), 0, 1).astype(np.int8)
        if site_table is not None and col in site_table.columns:
            default = pd.Series(results["site_id"]).map(site_table[col]).to_numpy(dtype=float)
            fill = np.isnan(used) & ~np.isnan(default)
            used[fill] = default[fill]
            origin[fill] = 2
        out[name] = (used, origin)
    return out
