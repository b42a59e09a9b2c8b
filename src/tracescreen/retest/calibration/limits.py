"""Detection and quantitation limits from calibration data and from the MDL procedure.

From a calibration curve [ICHQ2R2]_: LOD = 3.3 σ / S and LOQ = 10 σ / S, S the slope and σ the
residual standard deviation of the fit (or the standard deviation of blank responses, when
replicate calibration blanks are given: ``sigma_from``).

The US EPA method detection limit, 40 CFR Part 136 Appendix B, Revision 2 (2017) [CFR136B]_:

* MDL_s = t(n − 1, 0.99) · S_s from n ≥ 7 spiked samples (S_s their standard deviation);
* MDL_b from method blanks: not applicable when no blank gives a numerical result; the highest
  blank result when only some do; X̄_b + t(n − 1, 0.99) · S_b when all do (X̄_b taken as zero when
  negative); the 99th percentile of the blank results when there are more than 100 [memory];
* MDL = the larger of MDL_s and MDL_b.

t(n − 1, 0.99) is the one-sided 99th percentile of Student's t (``scipy.stats.t.ppf``); the
procedure's table prints it to three decimals (n = 7: 3.143).

References
----------
.. [ICHQ2R2] ICH Q2(R2), Validation of Analytical Procedures (2023): DL = 3.3 σ / S, QL = 10 σ / S.
.. [CFR136B] US EPA, 40 CFR Part 136 Appendix B, Definition and Procedure for the Determination of
   the Method Detection Limit, Revision 2 (82 FR 40939, 28 August 2017): definition and MDL_s seen
   (ecfr.io); the MDL_b rules from memory.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
from scipy import stats

MDL_COLUMNS = ["analyte", "n_spiked", "spiked_mean_ug_L", "spiked_sd_ug_L", "t_99", "mdl_s_ug_L", "n_blank",
               "n_blank_numeric", "mdl_b_ug_L", "mdl_b_rule", "mdl_ug_L", "note"]
MIN_SPIKED = 7


def t99(n) -> np.ndarray:
    """One-sided 99 % Student t for n replicates (n − 1 degrees of freedom).

    >>> round(float(t99(7)), 3)
    3.143
    """
    n = np.asarray(n, dtype=float)
    with np.errstate(invalid="ignore"):
        return np.where(n >= 2, stats.t.ppf(0.99, np.maximum(n - 1, 1)), np.nan)


def lod_loq(sigma, slope) -> tuple[np.ndarray, np.ndarray]:
    """Detection and quantitation limits from a calibration [concentration units of the slope]:
    3.3 σ / |S| and 10 σ / |S|.

    >>> lod_loq(0.1, 0.5)
    (0.66, 2.0)
    """
    s = np.abs(np.asarray(slope, dtype=float))
    sig = np.asarray(sigma, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        lod, loq = 3.3 * sig / s, 10.0 * sig / s
    if lod.ndim == 0:
        return float(np.round(lod, 12)), float(np.round(loq, 12))
    return lod, loq


def curve_limits(fits: pd.DataFrame, points: pd.DataFrame | None = None) -> pd.DataFrame:
    """LOD and LOQ of each fitted curve: σ = the SD of replicate calibration-blank responses of the
    curve when there are at least two, else the residual SD of the fit."""
    sigma = fits["residual_sd"].to_numpy(float).copy()
    src = np.full(len(fits), "residual SD of the fit", dtype=object)
    if points is not None and "kind" in points.columns:
        blanks = points[points["kind"] == "calibration_blank"]
        if len(blanks):
            sd = blanks.groupby(["analyte", "run"])["response"].agg(["std", "count"])
            key = pd.MultiIndex.from_frame(fits[["analyte", "run"]].astype(str))
            sd.index = pd.MultiIndex.from_arrays([sd.index.get_level_values(0).astype(str),
                                                  sd.index.get_level_values(1).astype(str)])
            got = sd.reindex(key)
            use = (got["count"] >= 2).to_numpy() & np.isfinite(got["std"].to_numpy())
            sigma[use] = got["std"].to_numpy()[use]
            src[use] = "SD of calibration-blank responses"
    lod, loq = lod_loq(sigma, fits["slope"].to_numpy(float))
    return fits.assign(sigma=sigma, sigma_from=src, lod_ug_L=lod, loq_ug_L=loq)


def mdl(spiked: pd.DataFrame, blanks: pd.DataFrame | None = None) -> pd.DataFrame:
    """The 40 CFR 136 Appendix B (rev. 2) MDL per analyte.

    Parameters
    ----------
    spiked : pandas.DataFrame
        ``analyte, result_ug_L``: results of the spiked samples (at least 7 per analyte).
    blanks : pandas.DataFrame, optional
        ``analyte, result_ug_L``: method blank results (NaN for a blank with no numerical result).

    Returns
    -------
    pandas.DataFrame
        :data:`MDL_COLUMNS`, one row per analyte.
    """
    s = spiked.groupby("analyte")["result_ug_L"].agg(["count", "mean", "std"])
    out = pd.DataFrame({"analyte": s.index.astype(str), "n_spiked": s["count"].to_numpy(),
                        "spiked_mean_ug_L": s["mean"].to_numpy(), "spiked_sd_ug_L": s["std"].to_numpy()})
    out["t_99"] = t99(out["n_spiked"])
    out["mdl_s_ug_L"] = out["t_99"] * out["spiked_sd_ug_L"]
    if blanks is not None and len(blanks):
        b = blanks.assign(num=np.isfinite(blanks["result_ug_L"].to_numpy(float)))
        agg = b.groupby("analyte").agg(n_blank=("num", "size"), n_blank_numeric=("num", "sum"))
        num = b[b["num"]].groupby("analyte")["result_ug_L"]
        st = num.agg(["mean", "std", "max", "count"]).join(num.quantile(0.99).rename("p99"))
        agg = agg.join(st)
        all_num = (agg["n_blank_numeric"] == agg["n_blank"]) & (agg["n_blank"] >= 2)
        xb = agg["mean"].clip(lower=0)
        mdl_b = np.select([agg["n_blank_numeric"] == 0, agg["n_blank"] > 100, ~all_num],
                          [np.nan, agg["p99"], agg["max"]], xb + t99(agg["n_blank"]) * agg["std"])
        rule = np.select([agg["n_blank_numeric"] == 0, agg["n_blank"] > 100, ~all_num],
                         ["no blank gave a numerical result: MDL_b not applicable",
                          "more than 100 blanks: 99th percentile of the blank results",
                          "some blanks gave numerical results: the highest blank result"],
                         "all blanks gave numerical results: mean (0 if negative) + t(n-1, 0.99) x SD")
        agg = agg.assign(mdl_b_ug_L=mdl_b, mdl_b_rule=rule)
        out = out.merge(agg[["n_blank", "n_blank_numeric", "mdl_b_ug_L", "mdl_b_rule"]].reset_index(),
                        on="analyte", how="outer")
    else:
        out = out.assign(n_blank=0, n_blank_numeric=0, mdl_b_ug_L=np.nan, mdl_b_rule="no method blanks given")
    out["n_blank"] = out["n_blank"].fillna(0).astype(int)
    out["n_blank_numeric"] = out["n_blank_numeric"].fillna(0).astype(int)
    out["n_spiked"] = out["n_spiked"].fillna(0).astype(int)
    out["mdl_ug_L"] = np.fmax(out["mdl_s_ug_L"].to_numpy(float), out["mdl_b_ug_L"].to_numpy(float))
    out["note"] = np.where(out["n_spiked"] < MIN_SPIKED,
                           f"fewer than {MIN_SPIKED} spiked samples: the procedure needs at least {MIN_SPIKED}", "")
    return out[MDL_COLUMNS].sort_values("analyte").reset_index(drop=True)
