"""Water hardness for each sample, for hardness-dependent limits.

Order of preference for a sample's hardness (mg/L as CaCO3):

1. the sample's own ``hardness_mg_L`` (any row of the same sample that reports it);
2. calcium and magnesium results of the same sample, by Standard Methods 2340 B
   (:func:`hardness_from_calcium_magnesium`), using total results where both fractions exist;
3. the site's default ``hardness_mg_L`` from the sites file;
4. otherwise unknown: hardness-dependent limits cannot be computed for that sample.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen._internal.coded import nested_codes

#: Molar-mass ratios CaCO3/Ca and CaCO3/Mg (Standard Methods 2340 B): 100.087/40.078, 100.087/24.305.
CA_TO_CACO3 = 2.497
MG_TO_CACO3 = 4.118


def hardness_from_calcium_magnesium(calcium_mg_L, magnesium_mg_L):
    """Total hardness by calculation.

    Parameters
    ----------
    calcium_mg_L, magnesium_mg_L : array-like
        Calcium and magnesium concentrations [mg/L].

    Returns
    -------
    array-like
        Hardness [mg/L as CaCO3] = 2.497·Ca + 4.118·Mg.

    References
    ----------
    [SM2340B]_ (docs/references.md)
    """
    return CA_TO_CACO3 * np.asarray(calcium_mg_L, dtype=float) + MG_TO_CACO3 * np.asarray(magnesium_mg_L, dtype=float)


def sample_hardness(results: pd.DataFrame, sites: pd.DataFrame | None = None) -> pd.DataFrame:
    """Hardness used for each result row, and where it came from.

    Returns
    -------
    DataFrame aligned with ``results``: ``hardness_used_mg_L`` [mg/L as CaCO3] and
    ``hardness_origin`` (``sample``, ``calcium_magnesium``, ``site_default`` or ``none``).
    """
    codes, n_s = nested_codes(_codes(results["site_id"]), _codes(results["sample_id"]))
    own = np.full(n_s, np.nan)
    h = results["hardness_mg_L"].to_numpy(dtype=float)
    has = ~np.isnan(h)
    np.fmax.at(own, codes[has], h[has]) if has.any() else None

    det = results["detected"].to_numpy(dtype=bool)
    val_mg = results["value_ug_L"].to_numpy(dtype=float) / 1000.0

    def per_sample(name: str) -> np.ndarray:
        out = np.full(n_s, np.nan)
        is_name = (results["analyte"] == name).to_numpy(dtype=bool)
        if not is_name.any():
            return out
        for fr in ("dissolved", "total"):  # total written last, so it wins where both exist
            m = is_name & (results["fraction"] == fr).to_numpy(dtype=bool) & det
            if m.any():
                tmp = np.full(n_s, np.nan)
                np.fmax.at(tmp, codes[m], val_mg[m])
                out = np.where(np.isnan(tmp), out, tmp)
        return out

    ca, mg = per_sample("calcium"), per_sample("magnesium")
    calc = hardness_from_calcium_magnesium(ca, mg)

    used = own[codes]
    origin = np.where(np.isnan(used), ORIGINS.index("none"), ORIGINS.index("sample")).astype(np.int8)
    c = calc[codes]
    fill = np.isnan(used) & ~np.isnan(c)
    used[fill] = c[fill]
    origin[fill] = ORIGINS.index("calcium_magnesium")
    if sites is not None and "hardness_mg_L" in sites:
        site_default = sites.drop_duplicates("site_id").set_index("site_id")["hardness_mg_L"]
        default = pd.Series(results["site_id"]).map(site_default).to_numpy(dtype=float)
        fill = np.isnan(used) & ~np.isnan(default)
        used[fill] = default[fill]
        origin[fill] = ORIGINS.index("site_default")
    origin_text = pd.Categorical.from_codes(origin, categories=pd.Index(ORIGINS, dtype="str"))
    return pd.DataFrame({"hardness_used_mg_L": used, "hardness_origin": origin_text}, index=results.index)


#: Where a hardness came from (``hardness_origin``).
ORIGINS = ("calcium_magnesium", "none", "sample", "site_default")


def _codes(col: pd.Series) -> np.ndarray:
    """Integer code per row (categorical codes, or factorised text; missing text is its own code)."""
    if isinstance(col.dtype, pd.CategoricalDtype):
        return col.cat.codes.to_numpy().astype(np.int64) + 1  # -1 (missing) -> 0
    return pd.factorize(col, use_na_sentinel=False)[0].astype(np.int64)
