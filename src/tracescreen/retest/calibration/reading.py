"""The calibration file: standards, calibration blanks and MDL study results, one row per point.

Layout (CSV or XLSX, one header row; headers recognised in common spellings, case and punctuation
ignored):

====================  =======================================================================
column                meaning
====================  =======================================================================
``analyte``           metal (name, symbol or CAS), required
``run``               calibration run or curve id (optional; one curve per analyte and run)
``kind``              ``standard``, ``calibration_blank``, ``mdl_spike``, ``mdl_blank``, ``sample``
                      (optional: a point with concentration 0 is a calibration blank, others
                      standards)
``concentration``     nominal concentration of a standard or spike level
``response``          instrument response (absorbance, counts, intensity) of a standard or blank
``result``            measured concentration of an MDL spiked sample or method blank, or the
                      reported result of a sample
``sample_id``         the sample of a ``sample`` row (its response is recomputed on the curve)
``unit``              concentration unit (default µg/L)
====================  =======================================================================

Rows that cannot be used are listed with their row number and reason (nothing is dropped
silently): rows read = points + rejected.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from tracescreen.io.analytes import match_analytes
from tracescreen.io.columns import header_key
from tracescreen.io.units import factors_for
from tracescreen.retest.labqc.reading import csv_records, qc_number

POINT_COLUMNS = ["file", "sheet", "row", "analyte", "run", "kind", "sample_id", "concentration_ug_L", "response",
                 "result_ug_L"]
KINDS = ("standard", "calibration_blank", "mdl_spike", "mdl_blank", "sample")

HEADERS = {
    "analyte": ("analyte", "element", "metal", "parameter", "chemicalname", "characteristicname", "analytename"),
    "run": ("run", "runid", "calibrationid", "curve", "curveid", "sequence", "batch", "calibrationrun"),
    "sample_id": ("sampleid", "labsampleid", "samplename", "sample", "samplecode"),
    "kind": ("kind", "type", "pointtype", "standardtype", "sampletype", "qctype"),
    "concentration": ("concentration", "conc", "nominalconcentration", "nominal", "standardconcentration",
                      "stdconc", "trueconcentration", "truevalue", "expected", "spikelevel", "level"),
    "response": ("response", "absorbance", "abs", "signal", "intensity", "counts", "cps", "area", "peakarea"),
    "result": ("result", "measured", "measuredconcentration", "found", "resultvalue"),
    "unit": ("unit", "units", "concentrationunit"),
}
KIND_WORDS = {
    "standard": "standard", "std": "standard", "calibrationstandard": "standard", "cal": "standard",
    "calstd": "standard", "calibration": "standard",
    "calibrationblank": "calibration_blank", "blank": "calibration_blank", "calblank": "calibration_blank",
    "icb": "calibration_blank", "s0": "calibration_blank", "std0": "calibration_blank",
    "mdlspike": "mdl_spike", "spike": "mdl_spike", "spiked": "mdl_spike", "mdlspiked": "mdl_spike",
    "spikedblank": "mdl_spike", "mdlblank": "mdl_blank", "methodblank": "mdl_blank", "mb": "mdl_blank",
    "sample": "sample", "unknown": "sample", "fieldsample": "sample",
}


class CalibrationFileError(ValueError):
    """A calibration file that cannot be read (the message names the file)."""


@dataclass
class CalibrationData:
    """Points of a calibration file and the rows that could not be used."""

    points: pd.DataFrame     # POINT_COLUMNS
    rejected: pd.DataFrame   # file, sheet, row, reason
    rows_read: int


def _records(p: Path, encoding: str) -> dict[str, pd.DataFrame]:
    try:
        if p.suffix.lower() in (".xlsx", ".xlsm"):
            return pd.read_excel(p, sheet_name=None, header=None, dtype=str)
        return {"": csv_records(p.read_text(encoding=encoding))}
    except (UnicodeDecodeError, ValueError, OSError) as exc:
        raise CalibrationFileError(f"{p.name}: cannot read ({exc.__class__.__name__}: {str(exc)[:120]})") from None


def read_calibration(path: str | Path, encoding: str = "utf-8") -> CalibrationData:
    """Read a calibration file (see the module docstring).

    Raises
    ------
    CalibrationFileError
        Missing file, unreadable file, or no header row naming ``analyte`` and ``concentration``
        or ``result``.
    """
    p = Path(path)
    if not p.is_file():
        raise CalibrationFileError(f"{p}: calibration file not found")
    lookup = {v: k for k, vs in HEADERS.items() for v in vs}
    points, rejected, read = [], [], 0
    for sheet, raw in _records(p, encoding).items():
        raw = raw.fillna("").astype(str)
        h = None
        for i in range(min(20, len(raw))):
            found = {lookup.get(header_key(c)) for c in raw.iloc[i]} - {None}
            if "analyte" in found and ({"concentration", "result"} & found):
                h = i
                break
        if h is None:
            continue
        cols: dict[str, str] = {}
        for j, c in enumerate(raw.iloc[h]):
            k = lookup.get(header_key(c))
            if k and k not in cols:
                cols[k] = j
        body = raw.iloc[h + 1:]
        body = body[(body != "").any(axis=1)]
        read += len(body)
        rows = body.index.to_numpy() + 1

        def col(k):
            return body.iloc[:, cols[k]].str.strip() if k in cols else pd.Series("", index=body.index)

        names, _ = match_analytes(col("analyte"))
        unit = col("unit").where(col("unit") != "", "ug/L")
        factor = factors_for(unit)
        conc = qc_number(col("concentration")).to_numpy() * factor
        result = qc_number(col("result")).to_numpy() * factor
        resp = qc_number(col("response")).to_numpy()
        kind_text = col("kind").str.lower().str.replace(r"[\s_\-]+", "", regex=True)
        kind = kind_text.map(KIND_WORDS).to_numpy(dtype=object)
        default = np.where(np.nan_to_num(conc, nan=1.0) == 0, "calibration_blank", "standard")
        kind = np.where(kind_text.to_numpy() == "", default, kind)
        why = np.select(
            [pd.isna(names), pd.isna(kind), np.isnan(factor),
             np.isin(kind, ["standard", "calibration_blank"]) & (np.isnan(conc) | np.isnan(resp)),
             (kind == "mdl_spike") & np.isnan(result),
             (kind == "sample") & np.isnan(resp)],
            ["analyte '" + col("analyte") + "' is not in the analyte registry",
             "kind '" + col("kind") + "' is not one of " + ", ".join(KINDS),
             "unit '" + unit + "' is not a concentration unit",
             "a standard or blank needs a concentration and a response",
             "an MDL spiked sample needs a result",
             "a sample needs a response to recompute"], "")
        ok = why == ""
        rejected.append(pd.DataFrame({"file": p.name, "sheet": sheet, "row": rows[~ok], "reason": why[~ok]}))
        points.append(pd.DataFrame({"file": p.name, "sheet": sheet, "row": rows[ok],
                                    "analyte": names[ok].astype(str), "run": col("run").to_numpy()[ok],
                                    "sample_id": col("sample_id").to_numpy()[ok],
                                    "kind": kind[ok], "concentration_ug_L": conc[ok], "response": resp[ok],
                                    "result_ug_L": result[ok]}))
    if not points:
        raise CalibrationFileError(f"{p.name}: no header row naming an analyte and a concentration or result "
                                   "column in the first 20 rows")
    return CalibrationData(pd.concat(points, ignore_index=True)[POINT_COLUMNS],
                           pd.concat(rejected, ignore_index=True), read)
