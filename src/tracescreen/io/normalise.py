"""Turning one raw table (cells as text) into accepted rows and rows not accepted.

:func:`normalise` recognises the columns of a :class:`~tracescreen.io.files.RawTable`
(:mod:`tracescreen.io.columns`, with the column mapping of :mod:`tracescreen.io.mapping`), codes
each text column once (:class:`tracescreen._internal.coded.CodedText`) and runs every parser on
distinct values (or distinct combinations of result, qualifiers, limits, uncertainty and unit),
never per row; rows take the answers by integer indexing.

Each row not accepted gets a reason. Rows that are not results for screening (lab QC, reference
material, other analytes, unusable results, other media) are *set aside*: their reason starts with
:data:`~tracescreen.io.results.SET_ASIDE_PREFIX`. Everything else not accepted is *rejected*.
A set-aside reason wins over a rejection reason of the same row (a lab QC row with an odd cell
is still lab QC).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen._internal.coded import CodedText, derived_categorical, joint_codes, kept_categorical
from tracescreen._internal.printable import printable_array
from tracescreen.io import (
    analytes,
    censoring,
    chemistry_rows,
    codelists,
    hardness_rows,
    mapping,
    nwis,
    plausible,
    units,
    wqx,
)
from tracescreen.io import cells as parsing
from tracescreen.io.columns import recognise
from tracescreen.io.files import LoadError, LoadOptions, RawTable
from tracescreen.io.results import INPUT_COLUMNS, SET_ASIDE_PREFIX, normalise_empty, not_accepted_frame

_FRACTIONS = np.array(["", "total", "dissolved"], dtype=object)  # fraction codes 0, 1, 2
#: Columns where a missing-value word (``NA``, ``N/A``, ``NaN``, ``null``, ``-``) is an empty cell
#: (files written by R or databases); elsewhere such a word is kept as text.
NA_AS_EMPTY = frozenset({
    "result", "detection_limit", "quantitation_limit", "limit_value", "limit_value_2", "limit_type",
    "limit_type_2", "limit_unit", "limit_unit_2", "detection_limit_unit", "quantitation_limit_unit",
    "qualifier", "remark_code", "value_qualifier", "detection_condition", "uncertainty", "hardness_mg_L",
    "analysed_at", "sampled_time", "sampled_time_zone", "parent_sample_id", "batch", "result_status",
    "review_status", "medium",
})
_NAME_FRACTION_CODE = {"total": 1, "dissolved": 2, "conflict": 3}


class _Rows:
    """Reasons collected per row while a table is read: ``reject`` (errors) and ``aside`` (rows
    that are not results for screening)."""

    def __init__(self, n: int):
        self.reject, self.aside = np.empty(n, dtype=object), np.empty(n, dtype=object)
        self.reject[:], self.aside[:] = "", ""  # (np.full of an object is slower)

    @staticmethod
    def _add(reasons: np.ndarray, mask: np.ndarray, msg) -> None:
        if not mask.any():
            return
        cur = reasons[mask]
        m = np.asarray(msg, dtype=object) if not isinstance(msg, str) else msg
        reasons[mask] = np.where(cur == "", "", cur + "; ") + m

    def error(self, mask, msg) -> None:
        self._add(self.reject, mask, msg)

    def set_aside(self, mask, msg) -> None:
        self._add(self.aside, mask, msg)

    def reasons(self) -> np.ndarray:
        out = self.reject.copy()
        aside = self.aside != ""
        out[aside] = SET_ASIDE_PREFIX + self.aside[aside].astype(str)
        given = out != ""
        out[given] = printable_array(out[given])  # reasons echo cells: control characters shown escaped
        return out


def _quoted(col: CodedText, mask: np.ndarray, before: str, after: str) -> np.ndarray:
    """Messages ``before'text'after`` for the rows in ``mask`` (built only for those rows)."""
    return before + "'" + col.text_at(mask) + "'" + after


def _joined(a: CodedText, b: CodedText, join) -> CodedText:
    """Two text columns joined into one by ``join`` (called once per distinct pair)."""
    pair, first = joint_codes(a.codes, b.codes)
    text = join(pd.Series(a.values.take(a.codes[first]), dtype=object),
                pd.Series(b.values.take(b.codes[first]), dtype=object))
    return mapping.coded_per_value(pair, text)


def _fraction_codes(per_value) -> np.ndarray:
    return np.array([_NAME_FRACTION_CODE.get(v, 0) if isinstance(v, str) else 0 for v in per_value], dtype=np.int8)


def _first_text(*cols: CodedText) -> CodedText:
    """Per row, the first non-empty text of several columns."""
    out = cols[0]
    for c in cols[1:]:
        if (c.values == "").all():  # a column the file does not have
            continue
        out = _joined(out, c, lambda a, b: pd.Series(np.where(a.astype(str) != "", a, b), dtype=object))
    return out


def _factors(text: CodedText) -> np.ndarray:
    """Factor to µg/L per distinct unit text (NaN where unknown or empty)."""
    plain, _ = units.split_species(text.series())
    return units.factors_for(plain)


def normalise(raw: RawTable, options: LoadOptions | None = None,
              site_ids: set[str] | None = None, sites_name: str = "sites file"
              ) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Turn one raw table into accepted rows (contract columns) and rows not accepted (with reasons).

    Returns
    -------
    (accepted, not_accepted)
        ``not_accepted`` holds ``file, sheet, row, reason``, the parsed columns of
        :data:`~tracescreen.io.results.NOT_ACCEPTED_COLUMNS` and the original cells (a lab QC
        row's spike amount, recovery and control-limit columns among them, as the lab wrote them);
        set-aside rows are told apart by their reason.
    """
    opts = options or LoadOptions()
    cm = opts.column_map
    headers = list(raw.cells.columns)
    applies = mapping.mapping_applies(headers, cm)
    rec = recognise(headers, cm)
    where = f"{raw.file}" + (f" [{raw.sheet}]" if raw.sheet else "")
    raw.notes.extend(f"{where}: {note}" for note in rec.notes)
    cells, found = nwis.fill_from_codes(raw.cells, rec.found)  # NWIS parm_cd / parm_nm, WQX USGSPCode
    n = len(cells)
    missing = mapping.missing_required(cells, found, cm, applies)
    if missing:
        raise LoadError(f"{where}: required column(s) {', '.join(missing)} not found (headers: "
                        f"{', '.join(map(str, headers[:12]))}); give a column mapping with --columns")
    if n == 0:  # a header without data rows: nothing accepted, nothing rejected
        return normalise_empty(), not_accepted_frame(raw, np.zeros(0, dtype=bool), np.zeros(0, dtype=object), {})
    date_order = cm.date_order if applies and cm.date_order else opts.date_order

    def col(c: str) -> CodedText:
        text = mapping.column_text(cells, found, c, cm, applies)[0]
        return mapping.missing_as_empty(text) if c in NA_AS_EMPTY else text

    def gives(c: str) -> bool:
        return mapping.gives(cells, found, c, cm, applies)

    rows = _Rows(n)
    structural = np.zeros(n, dtype=bool)  # a line that is not a row of the table: rejected, never set aside
    if "__field_count_error__" in cells.columns:
        fc = cells["__field_count_error__"].to_numpy(dtype=object)
        structural = fc != ""
        rows.error(structural, fc[structural])

    # -- who and when ----------------------------------------------------------------------
    site, sample = col("site_id"), col("sample_id")
    sampled_text = col("sampled_at")
    if gives("sampled_time"):  # a date column and a time column (WQX, NWIS): one date-time
        sampled_text = _joined(sampled_text, col("sampled_time"), parsing.join_date_time)
    if not gives("sample_id"):  # NWIS: a sample is a site and a time
        sample = _joined(site, sampled_text, lambda a, b: a + " " + b)
        raw.notes.append(f"{where}: no sample id column: each sample is identified by its site and "
                         "sampling date and time")
    rows.error(site.equals(""), "site_id is empty")
    rows.error(sample.equals(""), "sample_id is empty")
    if site_ids is not None:
        unknown_site = site.rows(~site.values.isin(site_ids) & (site.values != ""))
        rows.error(unknown_site, _quoted(site, unknown_site, "site ", f" is not in {sites_name}"))
    dates, bad, v_out = parsing.parse_dates_in_range(sampled_text.series(), date_order, opts.earliest_date)
    sampled_at, bad_date, out_date = sampled_text.rows(dates), sampled_text.rows(bad), sampled_text.rows(v_out)
    rows.error(out_date, _quoted(sampled_text, out_date, "sampled_at ", f" is outside the plausible dates "
                                 f"({opts.earliest_date} to today; --earliest-date sets the first)"))
    rows.error(sampled_text.equals(""), "sampled_at is empty")
    hint = "" if date_order != "iso" else \
        " (ISO 8601 expected, e.g. 2021-03-04; use --date-order dmy or mdy for other forms)"
    rows.error(bad_date, _quoted(sampled_text, bad_date, "sampled_at ", " is not a date" + hint))
    rows.error(sampled_text.rows(dates > np.datetime64(pd.Timestamp.now().normalize() + pd.Timedelta(days=1))),
               "sampled_at is in the future")

    # -- what: analyte and fraction ----------------------------------------------------------
    analyte_text = col("analyte")
    names, name_fraction = analytes.match_analytes(analyte_text.series())
    v_no_name = pd.isna(names).astype(bool)
    name_code = analyte_text.rows(_fraction_codes(name_fraction))
    # a label that names both fractions is an error only for an analyte the tool screens
    conflict_name = (name_code == 3) & ~analyte_text.rows(v_no_name)
    rows.error(analyte_text.rows(v_no_name) & analyte_text.equals(""), "analyte is empty")
    is_hardness = analyte_text.rows(hardness_rows.is_hardness_name(analyte_text.series()))
    unk = analyte_text.rows(v_no_name & (analyte_text.values != "")) & ~conflict_name & ~is_hardness
    rows.set_aside(unk, _quoted(analyte_text, unk, "analyte ",
                                " is not in the analyte registry (not screened by tracescreen)"))
    rows.set_aside(is_hardness, "hardness result: used as the hardness of the sample's metal results")
    rows.error(conflict_name, "analyte name names both total and dissolved")

    frac_text = col("fraction")
    v_fraction, v_bad_frac = parsing.parse_vocabulary(frac_text.series(), parsing.FRACTION_VOCAB)
    v_frac_aside = np.array([parsing.FRACTION_SET_ASIDE.get(parsing._code_key(v), "") for v in frac_text.values],
                            dtype=object)
    frac_aside = frac_text.rows(v_frac_aside != "")
    rows.set_aside(frac_aside, _quoted(frac_text, frac_aside, "fraction ", " is not screened: ")
                   + v_frac_aside[frac_text.codes[frac_aside]])
    bad_frac = frac_text.rows(v_bad_frac & (v_frac_aside == ""))
    rows.error(bad_frac, _quoted(frac_text, bad_frac, "fraction ", " is not total or dissolved"))
    given = frac_text.rows(_fraction_codes(v_fraction))
    from_name = np.where(conflict_name, 0, name_code)
    rows.error((given > 0) & (from_name > 0) & (given != from_name), "fraction column and analyte name disagree")
    fraction = np.where(given == 0, from_name, given)
    if opts.default_fraction:
        fraction = np.where(fraction == 0, _NAME_FRACTION_CODE[opts.default_fraction], fraction)
    rows.error((fraction == 0) & ~bad_frac & ~conflict_name & ~frac_aside,
               "fraction not given (no fraction column value, none in the analyte name; "
               "use --default-fraction to set one)")

    # -- units -----------------------------------------------------------------------------------
    limit_unit_text = {k: col(c) for k, c in (("detection", "detection_limit_unit"),
                                              ("quantitation", "quantitation_limit_unit"),
                                              ("reported", "limit_unit"), ("reported_2", "limit_unit_2"))}
    # a non-detect row of a portal file may carry its unit only with its limit
    unit_text = _first_text(col("unit"), limit_unit_text["reported"], limit_unit_text["reported_2"],
                            limit_unit_text["detection"], limit_unit_text["quantitation"])
    v_unit_plain, v_species = units.split_species(unit_text.series())  # "ug/L as Cr" -> ug/L, Cr
    v_factor = units.factors_for(v_unit_plain)
    bad_unit = unit_text.rows(np.isnan(v_factor))
    rows.error(bad_unit & unit_text.equals(""), "unit is empty")
    bu = bad_unit & ~unit_text.equals("")
    rows.error(bu, _quoted(unit_text, bu, "unit ", " is not a concentration unit tracescreen knows"))
    v_species = v_species.to_numpy(dtype=object)
    v_symbol = pd.Series(names, dtype=object).map(analytes.symbol_of()).fillna("")
    # species and element compared without case, per distinct unit and analyte text (codes of one vocabulary)
    same = pd.factorize(pd.concat([pd.Series(v_species, dtype=object), v_symbol]).str.lower().to_numpy())[0]
    wrong_sp = unit_text.rows(v_species != "") & ~is_hardness & ~v_no_name[analyte_text.codes] & \
        (same[:len(v_species)][unit_text.codes] != same[len(v_species):][analyte_text.codes])
    rows.error(wrong_sp, _quoted(unit_text, wrong_sp, "unit ", " states a species other than the element "
                                                                "(a molar-mass conversion is not guessed)"))

    # -- the result, its qualifiers and limits: parsed once per distinct combination ---------------
    texts = {c: col(c) for c in ("result", "qualifier", "remark_code", "detection_condition", "value_qualifier",
                                 "uncertainty", "detection_limit", "quantitation_limit", "limit_value",
                                 "limit_value_2", "limit_type", "limit_type_2")}
    parts = [unit_text, *texts.values(), *limit_unit_text.values()]
    combo, first = joint_codes(*[p.codes for p in parts])

    def at_first(c: CodedText) -> pd.Series:
        return pd.Series(c.values.take(c.codes[first]), dtype="str")

    row_factor = v_factor[unit_text.codes[first]]
    lim = censoring.resolve_limits(
        numbers={"detection": at_first(texts["detection_limit"]), "quantitation": at_first(texts["quantitation_limit"]),
                 "reported": at_first(texts["limit_value"]), "reported_2": at_first(texts["limit_value_2"])},
        factors={k: _factors(t)[t.codes[first]] for k, t in limit_unit_text.items()},
        types={k: censoring.limit_classes(texts[c].values, wqx.LIMIT_TYPE_NAMESPACES)[texts[c].codes[first]]
               for k, c in (("reported", "limit_type"), ("reported_2", "limit_type_2"))},
        row_factor=row_factor, decimal_comma=opts.decimal_comma)
    parsed = censoring.parse_results(
        at_first(texts["result"]), at_first(texts["qualifier"]), lim, opts.decimal_comma,
        remark=at_first(texts["remark_code"]) if gives("remark_code") else None,
        condition=at_first(texts["detection_condition"]) if gives("detection_condition") else None,
        value_qualifier=at_first(texts["value_qualifier"]) if gives("value_qualifier") else None)
    has_aside = ~pd.isna(parsed["set_aside"]).astype(bool)
    rows.set_aside(has_aside[combo], parsed["set_aside"][combo[has_aside[combo]]])
    has_err = ~pd.isna(parsed["error"]).astype(bool)
    rows.error(has_err[combo], parsed["error"][combo[has_err[combo]]])
    unc, v_bad_unc = parsing.parse_uncertainty(at_first(texts["uncertainty"]), parsed["value"], opts.decimal_comma)
    bad_unc = v_bad_unc[combo]
    rows.error(bad_unc, _quoted(texts["uncertainty"], bad_unc, "uncertainty ", " is not a number or a percentage"))

    # -- review status and medium ---------------------------------------------------------------
    for column, namespaces in (("result_status", wqx.STATUS_NAMESPACES), ("review_status", nwis.STATUS_NAMESPACES)):
        status = col(column)
        rejected = status.rows(codelists.classify(status.values, "result_status", namespaces) == "rejected")
        rows.set_aside(rejected, _quoted(status, rejected, f"{column.replace('_', ' ')} ", " (reviewed and rejected)"))
    medium = col("medium")
    v_medium = codelists.classify(medium.values, "media", wqx.MEDIA_NAMESPACES)
    not_water = medium.rows(v_medium == "not_water")
    rows.set_aside(not_water, _quoted(medium, not_water, "medium ", " is not water (water-quality limits do not apply)"))

    # -- sample type -------------------------------------------------------------------------------
    st_text = col("sample_type")
    v_sample_type, v_bad_st = parsing.parse_vocabulary(st_text.series(), parsing.SAMPLE_TYPE_VOCAB)
    st_kind = pd.Series(v_sample_type, dtype=object).fillna("").astype(str)
    v_st_aside = st_kind.str.startswith("set_aside:").to_numpy(dtype=bool)
    st_aside = st_text.rows(v_st_aside)
    v_kinds = st_kind.str.removeprefix("set_aside:").map(lambda k: parsing.SET_ASIDE_KINDS.get(k, k)).to_numpy(dtype=object)
    rows.set_aside(st_aside, v_kinds[st_text.codes[st_aside]] + " (sample type '" + st_text.text_at(st_aside) + "')")
    v_sample_type = np.where(v_st_aside | pd.isna(v_sample_type).astype(bool), "sample", v_sample_type)
    qc_medium = medium.rows(v_medium == "water_qc") & ~st_aside & st_text.rows(v_sample_type == "sample")
    rows.set_aside(qc_medium, _quoted(medium, qc_medium, "quality-control sample of unstated kind (medium ", ")"))
    bad_st = st_text.rows(v_bad_st)
    rows.error(bad_st, _quoted(st_text, bad_st, "sample_type ", " is not a sample type tracescreen knows "
                                                                 "(translate it with the mapping's values section)"))
    # a laboratory blank of a lab deliverable has no site or sampling time: it is lab QC, not an error
    lab_blank_alone = st_text.rows(v_sample_type == "lab_blank") & (site.equals("") | sampled_text.equals(""))
    rows.set_aside(lab_blank_alone, "laboratory blank without a site or sampling date (kept for lab QC review)")
    parent = col("parent_sample_id")
    rows.error(st_text.rows(v_sample_type == "field_duplicate") & parent.equals(""),
               "field duplicate without parent_sample_id")

    an_text = col("analysed_at")
    an_dates, an_bad, an_out = parsing.parse_dates_in_range(an_text.series(), date_order, opts.earliest_date)
    bad_an = an_text.rows(an_bad | an_out)
    rows.error(bad_an, _quoted(an_text, bad_an, "analysed_at ", " is not a date"))

    # -- hardness ---------------------------------------------------------------------------------
    hard_text = col("hardness_mg_L")
    v_hardness = parsing.to_number(hard_text.series(), opts.decimal_comma).to_numpy()
    bad_h = hard_text.rows((hard_text.values != "") & np.isnan(v_hardness))
    rows.error(bad_h, _quoted(hard_text, bad_h, "hardness ", " is not a number"))
    row_hardness = hard_text.rows(v_hardness)
    if is_hardness.any():  # hardness result rows [mg/L as CaCO3] -> hardness of the same sample
        ok_h = is_hardness & parsed["detected"][combo] & pd.isna(parsed["error"][combo]).astype(bool) \
            & ~np.isnan(v_factor[unit_text.codes]) \
            & unit_text.rows(np.isin(v_species, ["", "CaCO3", "caco3"]))
        h_mg_L = parsed["value"][combo] * v_factor[unit_text.codes] / 1000.0
        from_rows = hardness_rows.hardness_of_samples(joint_codes(site.codes, sample.codes)[0], ok_h, h_mg_L)
        row_hardness = np.where(np.isnan(row_hardness), from_rows, row_hardness)

    # pH, DOC and temperature rows -> the inputs of the sample's computed limits
    chem = chemistry_rows.sample_inputs_from_rows(analyte_text, fraction == 2, rows.aside, parsed, combo,
                                                  unit_text.codes, v_unit_plain, v_factor,
                                                  lambda: joint_codes(site.codes, sample.codes)[0])

    # -- impossible numbers: never screened ----------------------------------------------------------
    factor = v_factor[unit_text.codes[first]]  # per combination
    for arr, what in ((parsed["value"], "result"), (parsed["detection_limit"], "detection limit"),
                      (parsed["quantitation_limit"], "quantitation limit"), (unc, "uncertainty")):
        with np.errstate(over="ignore", invalid="ignore"):  # 1e307 mg/L overflows to inf in µg/L
            v_bad, msg = plausible.concentration_problem(arr * factor, what)
        rows.error(v_bad[combo], msg)
    h_bad, msg = plausible.hardness_problem(row_hardness)
    rows.error(h_bad, msg)
    for c in INPUT_COLUMNS:
        in_bad, msg = plausible.input_problem(c, chem[c])
        rows.error(in_bad, msg)
    rows.aside[structural] = ""

    # -- the two tables ----------------------------------------------------------------------------
    reasons = rows.reasons()
    ok = reasons == ""
    # every row accepted (a clean file): the rows' arrays as they are, not 1M-row copies of them
    every = bool(ok.all())
    take = slice(None) if every else ok
    okc = combo[take]
    one = np.zeros(int(ok.sum()), dtype=np.int8)
    acc = pd.DataFrame({
        "file": pd.Categorical.from_codes(one, categories=pd.Index([raw.file], dtype="str")),
        "sheet": pd.Categorical.from_codes(one, categories=pd.Index([raw.sheet], dtype="str")),
        "row": raw.rows[take],
        "site_id": site.categorical(ok),
        "sample_id": sample.categorical(ok),
        "sampled_at": sampled_at[take],
        "analyte": derived_categorical(np.where(v_no_name, "", names), analyte_text.codes, ok),
        "fraction": derived_categorical(_FRACTIONS, fraction, ok),
        "result_text": texts["result"].categorical(ok),
        "unit": unit_text.categorical(ok),
        "value_ug_L": units.clean_decimal(parsed["value"] * factor)[okc],
        "detected": parsed["detected"][okc],
        "detection_limit_ug_L": units.clean_decimal(parsed["detection_limit"] * factor)[okc],
        "qualifier": texts["qualifier"].categorical(ok),
        "sample_type": derived_categorical(v_sample_type, st_text.codes, ok),
        "parent_sample_id": parent.categorical(ok),
        "lab": col("lab").categorical(ok),
        "batch": col("batch").categorical(ok),
        "analysed_at": an_text.rows(an_dates)[take],
        "hardness_mg_L": row_hardness[take],
        "uncertainty_ug_L": units.clean_decimal(unc * factor)[okc],
        "qualifier_meaning": kept_categorical(parsed["meaning"], combo, None if every else ok),
        **{c: chem[c][take] for c in INPUT_COLUMNS},
        "quantitation_limit_ug_L": units.clean_decimal(parsed["quantitation_limit"] * factor)[okc],
    }, copy=False)
    not_ok = ~ok
    nc = combo[not_ok]
    parsed_cols = {
        "analyte": np.where(v_no_name, analyte_text.values, names)[analyte_text.codes[not_ok]],
        "fraction": _FRACTIONS[fraction[not_ok]],
        "sample_type": st_text.text_at(not_ok),
        "batch": col("batch").text_at(not_ok),
        "value_ug_L": units.clean_decimal(parsed["value"] * factor)[nc],
        "detected": parsed["detected"][nc],
        "detection_limit_ug_L": units.clean_decimal(parsed["detection_limit"] * factor)[nc],
        "unit": unit_text.text_at(not_ok),
    }
    return acc, not_accepted_frame(raw, not_ok, reasons[not_ok], parsed_cols)
