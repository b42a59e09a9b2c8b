"""Laboratory QC rows -> the QC table (one row per QC measurement, numbers in µg/L and %).

QC rows come from

* the lab file itself: the loader sets them aside (``LoadResult.set_aside``) with their original
  cells, so the spike, recovery and limit columns are all still there (:func:`qc_from_cells`);
* the lab's method blanks kept as QC results (``sample_type == "lab_blank"`` in the accepted
  results; :func:`qc_from_results`);
* a separate QC file (a QC summary of the batch), CSV or XLSX (:func:`read_qc_file`).

Columns are recognised by header, without configuration: the loader's canonical columns
(:mod:`tracescreen.io.columns`, and a ``--columns`` mapping) plus the QC columns of
:data:`QC_HEADER_VARIANTS`. Where several headers carry one quantity (``qc_spike_added`` on a
matrix spike row, ``qc_dup_spike_added`` on its duplicate's row), the first non-empty one counts.

Numbers: ``NA``, ``N/A``, ``NaN``, ``null`` and ``-`` are empty (R and database exports write
them); a ``%`` sign is dropped; ``<1`` (an RPD below 1) is read as the bound 1.

References
----------
.. [1] Recovery of a spike: %R = 100 (Xs − Xu) / K, Xs the spiked sample, Xu the unspiked sample,
   K the amount added: US EPA SW-846 Method 1312 (1990) section 8.2.4.
"""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np
import pandas as pd

from tracescreen.io.analytes import match_analytes
from tracescreen.io.cells import FRACTION_VOCAB, parse_dates, parse_vocabulary, to_number
from tracescreen.io.columns import ColumnMap, header_key, recognise_columns
from tracescreen.io.qualifiers import NONDETECT_MEANINGS, has_meaning, read_column
from tracescreen.io.units import factors_for
from tracescreen.retest.labqc.elements import classify


class QcFileError(ValueError):
    """A QC file that cannot be read (the message names the file)."""


#: QC columns beyond the loader's canonical ones, with the header spellings recognised (compared
#: after removing case, spaces and punctuation), most specific first. Drawn from a real laboratory
#: deliverable (``tests/data/bwam_qaqc_ramapo_2018_lab_edd_metals_qc.csv``) and common practice.
QC_HEADER_VARIANTS: dict[str, tuple[str, ...]] = {
    "parent_sample_id": ("parentsamplecode", "originalsampleid", "sourcesampleid", "parentlabsampleid"),
    "sample_id": ("qcsample", "qcsampleid", "syssamplecode", "qcid"),
    "qc_type": ("qctype", "qcsampletype", "qccode", "sampletypecode"),
    "true_value": ("truevalue", "trueconc", "trueconcentration", "expectedvalue", "expectedconc",
                   "expected", "certifiedvalue", "nominalvalue", "nominalconc", "nominal"),
    "spike_added": ("qcspikeadded", "spikeadded", "spikeamount", "amountadded", "spikelevel", "spike",
                    "qcdupspikeadded"),
    "spike_measured": ("qcspikemeasured", "spikemeasured", "spikeresult", "spikedresult", "found",
                       "qcdupspikemeasured"),
    "original_result": ("qcoriginalconc", "originalconc", "originalresult", "sampleresult",
                        "unspikedresult", "parentresult", "sourceresult", "qcduporiginalconc"),
    "duplicate_result": ("duplicateresult", "dupresult", "replicateresult"),
    "recovery": ("qcspikerecovery", "percentrecovery", "recovery", "recoverypercent", "pctrecovery",
                 "pctrec", "percentrec", "rec", "qcdupspikerecovery"),
    "recovery_low": ("qcspikelcl", "lcl", "lowercontrollimit", "lowerlimit", "reclimitlow",
                     "recoverylimitlow", "recoverylow", "lowerrecoverylimit", "reclow", "lowlimit"),
    "recovery_high": ("qcspikeucl", "ucl", "uppercontrollimit", "upperlimit", "reclimithigh",
                      "recoverylimithigh", "recoveryhigh", "upperrecoverylimit", "rechigh", "highlimit"),
    "rpd": ("qcrpd", "rpd", "relativepercentdifference"),
    "rpd_limit": ("qcrpdcl", "rpdlimit", "rpdcl", "rpdcontrollimit", "maxrpd", "rpdmax"),
    "percent_difference": ("percentdifference", "pctdifference", "pctd", "percentd"),
    "lab_flag": ("qcspikestatus", "qcdupspikestatus", "qcrpdstatus", "qcstatus", "qcflag", "passfail"),
    "method": ("labanlmethodname", "analyticalmethod", "methodname", "methodcode", "methodid", "method",
               "resultanalyticalmethodmethodidentifier", "testmethod"),
    "prep_batch": ("prepbatch", "prepbatchid", "preparationbatch", "preparationbatchid", "digestionbatch"),
    "run": ("analyticalrun", "analysisrun", "runid", "run", "runbatch", "analyticalsequence", "sequence",
            "sequenceid", "instrumentrun"),
    "prepared_at": ("prepdate", "preparationdate", "preparationstartdate", "digestiondate", "dateprepared"),
    "quantitation_limit": ("quantitationlimit", "quantlimit", "crql", "reportinglimit", "rl", "pql", "loq",
                           "mrl"),
    "dilution": ("dilutionfactor", "dilution", "df"),
    "internal_standard": ("internalstandard", "internalstd", "istd", "isname"),
}

#: Columns of the QC table (:func:`qc_from_cells`), in order. Concentrations in µg/L.
QC_COLUMNS = [
    "file", "sheet", "row", "qc_type", "element", "qc_sample_id", "parent_sample_id", "lab", "batch",
    "prep_batch", "run", "method", "technique", "analyte", "fraction", "analysed_at", "prepared_at",
    "result_ug_L", "detected", "true_value_ug_L", "spike_added_ug_L", "original_ug_L", "duplicate_ug_L",
    "reported_recovery", "recovery_low", "recovery_high", "reported_rpd", "rpd_limit",
    "reported_percent_difference", "lab_flag", "detection_limit_ug_L", "quantitation_limit_ug_L",
    "dilution", "internal_standard",
]

_EMPTY = {"", "na", "n/a", "nan", "null", "none", "-", "--"}
_NUMERIC = ("true_value", "spike_added", "spike_measured", "original_result", "duplicate_result", "recovery",
            "recovery_low", "recovery_high", "rpd", "rpd_limit", "percent_difference", "dilution")
_CONCENTRATIONS = ("true_value", "spike_added", "spike_measured", "original_result", "duplicate_result")


def recognise_qc_columns(headers: list[str], column_map: ColumnMap | None = None) -> dict[str, list[str]]:
    """``{column: [headers]}`` for the canonical and QC columns of a file's headers.

    The loader's recognition (and the user's mapping) decides the canonical columns; the QC
    columns take the remaining headers, every matching one in order of :data:`QC_HEADER_VARIANTS`.
    """
    found = {k: [v] for k, v in recognise_columns(headers, column_map).items()}
    taken = {h for hs in found.values() for h in hs}
    keys = {h: header_key(h) for h in headers if h not in taken}
    for col, variants in QC_HEADER_VARIANTS.items():
        hs = [h for v in variants for h, k in keys.items() if k == v]
        if hs:
            found.setdefault(col, []).extend(h for h in hs if h not in found.get(col, []))
    return found


def _text(cells: pd.DataFrame, headers: list[str] | None) -> pd.Series:
    """First non-empty cell across ``headers`` (``NA`` and the like count as empty)."""
    out = pd.Series("", index=cells.index, dtype=object)
    for h in headers or ():
        s = cells[h].fillna("").astype(str).str.strip()
        s = s.where(~s.str.lower().isin(_EMPTY), "")
        out = out.where(out != "", s)
    return out


def qc_number(text: pd.Series) -> pd.Series:
    """Numbers of QC cells: ``NA``-like cells empty, ``%`` dropped, ``<1`` read as 1.

    >>> list(qc_number(pd.Series(["101", "NA", "<1", "12.5%", ">130", ""])))
    [101.0, nan, 1.0, 12.5, 130.0, nan]
    """
    s = text.fillna("").astype(str).str.strip()
    s = s.where(~s.str.lower().isin(_EMPTY), "")
    s = s.str.replace(r"^[<>]=?\s*", "", regex=True).str.replace(r"\s*%$", "", regex=True)
    return to_number(s)


def _technique(method: pd.Series, analyte: pd.Series) -> np.ndarray:
    """``icp_ms``, ``icp_aes``, ``cvaa`` (mercury) or ``""`` from the method cell and the analyte."""
    m = method.fillna("").astype(str).str.upper()
    out = np.full(len(m), "", dtype=object)
    out[m.str.contains(r"200\.7|6010", regex=True).to_numpy()] = "icp_aes"
    out[m.str.contains(r"200\.8|6020", regex=True).to_numpy()] = "icp_ms"
    cv = m.str.contains(r"245\.|7470|7471|1631", regex=True).to_numpy()
    out[cv | ((out == "") & (analyte == "mercury").to_numpy())] = "cvaa"
    return out


def qc_from_cells(cells: pd.DataFrame, column_map: ColumnMap | None = None, date_order: str = "iso",
                  only_qc: bool = True) -> pd.DataFrame:
    """The QC table from original cells (the loader's set-aside rows, or a QC file's rows).

    Parameters
    ----------
    cells : pandas.DataFrame
        ``file, sheet, row`` and the original columns as text (other provenance columns such as
        ``reason`` are ignored).
    column_map : ColumnMap, optional
        The user's ``--columns`` mapping.
    date_order : {"iso", "dmy", "mdy"}
        How to read dates that are not ISO 8601 (as for the lab files).
    only_qc : bool
        Keep only rows whose QC type is a laboratory QC element (default).

    Returns
    -------
    pandas.DataFrame
        :data:`QC_COLUMNS`. Rows of analytes outside the registry keep the analyte as written.
    """
    if cells is None or cells.empty:
        return empty_qc()
    ignore = {"file", "sheet", "row", "reason"}
    headers = [c for c in cells.columns if c not in ignore]
    cols = recognise_qc_columns(headers, column_map)

    def t(name):
        return _text(cells, cols.get(name))

    n = {k: qc_number(t(k)) for k in _NUMERIC}
    result = qc_number(t("result"))
    qc_type = t("qc_type").where(lambda s: s != "", t("sample_type"))
    element = classify(qc_type, (n["spike_added"].notna()).to_numpy())
    keep = element != "" if only_qc else np.ones(len(cells), dtype=bool)
    factor = pd.Series(factors_for(t("unit")), index=cells.index)
    label = t("analyte")
    names, label_fraction = match_analytes(label)
    analyte = pd.Series(np.where(pd.isna(names), label, names), index=cells.index, dtype=object)
    frac, _ = parse_vocabulary(t("fraction"), FRACTION_VOCAB)
    fraction = np.where(pd.isna(frac), np.where(pd.isna(label_fraction), "", label_fraction), frac)
    analysed, _ = parse_dates(t("analysed_at"), date_order)
    prepared, _ = parse_dates(t("prepared_at"), date_order)
    nondetect = has_meaning(read_column(t("qualifier"), "qualifier")["meanings"], NONDETECT_MEANINGS)
    detect_flag = _text(cells, [h for h in headers if header_key(h) == "detectflag"]).str.upper()
    measured = n["spike_measured"].where(n["spike_measured"].notna(), result)
    res_text = t("result").str.lower()
    censored = res_text.str.match(r"^\s*<") | res_text.isin(["nd", "n.d.", "not detected", "bdl", "u"])
    detected = measured.notna() & ~nondetect & (detect_flag != "N") & ~censored.to_numpy()
    dl = qc_number(t("detection_limit")).fillna(result.where(censored)) * factor
    conc = {"true_value_ug_L": n["true_value"] * factor, "spike_added_ug_L": n["spike_added"] * factor,
            "original_ug_L": n["original_result"] * factor, "duplicate_ug_L": n["duplicate_result"] * factor}
    out = pd.DataFrame({
        "file": cells["file"].astype(str) if "file" in cells else "",
        "sheet": cells["sheet"].fillna("").astype(str) if "sheet" in cells else "",
        "row": cells["row"] if "row" in cells else np.arange(len(cells)) + 2,
        "qc_type": qc_type, "element": element,
        "qc_sample_id": t("sample_id"), "parent_sample_id": t("parent_sample_id"),
        "lab": t("lab"), "batch": t("batch"), "prep_batch": t("prep_batch"), "run": t("run"),
        "method": t("method"), "technique": _technique(t("method"), analyte),
        "analyte": analyte, "fraction": fraction,
        "analysed_at": analysed, "prepared_at": prepared,
        "result_ug_L": (measured * factor).where(detected, np.nan), "detected": detected.to_numpy(),
        **conc,
        "reported_recovery": n["recovery"], "recovery_low": n["recovery_low"], "recovery_high": n["recovery_high"],
        "reported_rpd": n["rpd"], "rpd_limit": n["rpd_limit"],
        "reported_percent_difference": n["percent_difference"], "lab_flag": t("lab_flag"),
        "detection_limit_ug_L": dl, "quantitation_limit_ug_L": qc_number(t("quantitation_limit")) * factor,
        "dilution": n["dilution"], "internal_standard": t("internal_standard"),
    })
    # a blank or check read below zero is a measured number, not a non-detect
    neg = result.notna() & (result < 0)
    out.loc[neg.to_numpy(), "result_ug_L"] = (result * factor)[neg]
    out.loc[neg.to_numpy(), "detected"] = True
    out = out[QC_COLUMNS]
    return out[keep].reset_index(drop=True)


def qc_from_results(results: pd.DataFrame) -> pd.DataFrame:
    """Method blanks from accepted results (``sample_type == "lab_blank"``) as QC rows."""
    if results is None or results.empty or "sample_type" not in results.columns:
        return empty_qc()
    b = results[results["sample_type"].astype(str) == "lab_blank"]
    if b.empty:
        return empty_qc()
    n = len(b)
    det = b["detected"].astype(bool).to_numpy()

    def col(c, default=""):
        return b[c].astype(object).fillna(default).astype(str).to_numpy() if c in b.columns else np.full(n, default)

    out = pd.DataFrame({c: np.full(n, np.nan) for c in QC_COLUMNS})
    out = out.astype({c: object for c in ("file", "sheet", "qc_type", "element", "qc_sample_id", "parent_sample_id",
                                           "lab", "batch", "prep_batch", "run", "method", "technique", "analyte",
                                           "fraction", "lab_flag", "internal_standard")})
    for c in ("prep_batch", "run", "method", "technique", "parent_sample_id", "lab_flag", "internal_standard"):
        out[c] = ""
    out["file"], out["sheet"], out["row"] = col("file"), col("sheet"), b["row"].to_numpy()
    out["qc_type"], out["element"] = "lab_blank", "method_blank"
    out["qc_sample_id"], out["lab"], out["batch"] = col("sample_id"), col("lab"), col("batch")
    out["analyte"], out["fraction"] = col("analyte"), col("fraction")
    out["analysed_at"] = b["analysed_at"].to_numpy() if "analysed_at" in b.columns else pd.NaT
    out["prepared_at"] = pd.NaT
    out["result_ug_L"] = np.where(det, b["value_ug_L"].to_numpy(dtype=float), np.nan)
    out["detected"] = det
    out["detection_limit_ug_L"] = b["detection_limit_ug_L"].to_numpy(dtype=float)
    return out[QC_COLUMNS].reset_index(drop=True)


def empty_qc() -> pd.DataFrame:
    """An empty QC table with the right columns."""
    return pd.DataFrame({c: pd.Series(dtype=float if c.endswith(("_ug_L", "recovery", "_low", "_high", "rpd",
                                                                    "limit", "difference", "dilution"))
                                      else "datetime64[ns]" if c.endswith("_at") else
                                      bool if c == "detected" else "int64" if c == "row" else object)
                         for c in QC_COLUMNS})


def csv_records(text: str) -> pd.DataFrame:
    """A CSV text as a table of text cells, rows of any length (a title block above the header)."""
    lines = text.lstrip("\ufeff").splitlines()
    head = "\n".join(lines[:20])
    delim = max((",", ";", "\t"), key=head.count)
    records = list(csv.reader(lines, delimiter=delim))
    width = max((len(r) for r in records), default=0)
    return pd.DataFrame([r + [""] * (width - len(r)) for r in records], dtype=object)


def read_qc_file(path: str | Path, column_map: ColumnMap | None = None, date_order: str = "iso",
                 encoding: str = "utf-8", only_qc: bool = True) -> pd.DataFrame:
    """The QC table of a separate QC file (CSV, or every sheet of an XLSX workbook).

    The header row is the first of the first 20 rows that names at least three recognised columns.
    With ``only_qc=False`` every data row is returned, ``element`` ``""`` where the QC type is not
    a known element (so that a caller can list them: nothing is dropped silently).

    Raises
    ------
    QcFileError
        The file is missing, unreadable, or has no recognisable QC columns (the message names it).
    """
    p = Path(path)
    if not p.is_file():
        raise QcFileError(f"{p}: QC file not found")
    try:
        if p.suffix.lower() in (".xlsx", ".xlsm"):
            sheets = pd.read_excel(p, sheet_name=None, header=None, dtype=str)
        else:
            sheets = {"": csv_records(p.read_text(encoding=encoding))}
    except (UnicodeDecodeError, csv.Error, ValueError, OSError) as exc:
        raise QcFileError(f"{p.name}: cannot read the QC file ({exc.__class__.__name__}: {str(exc)[:120]})") from None
    parts = []
    for sheet, raw in sheets.items():
        raw = raw.fillna("").astype(str)
        h = next((i for i in range(min(20, len(raw)))
                  if len(recognise_qc_columns([c for c in raw.iloc[i] if c.strip()], column_map)) >= 3), None)
        if h is None:
            continue
        headers = [c.strip() or f"column_{i + 1}" for i, c in enumerate(raw.iloc[h])]
        body = raw.iloc[h + 1:].copy()
        body.columns = headers
        body = body[(body != "").any(axis=1)]
        body.insert(0, "row", body.index.to_numpy() + 1)
        body.insert(0, "sheet", sheet)
        body.insert(0, "file", p.name)
        parts.append(body.reset_index(drop=True))
    if not parts:
        raise QcFileError(f"{p.name}: no recognisable QC columns (QC type, analyte, result, recovery ...) "
                         "in the first 20 rows; give a column mapping with --columns")
    return qc_from_cells(pd.concat(parts, ignore_index=True), column_map, date_order, only_qc=only_qc)
