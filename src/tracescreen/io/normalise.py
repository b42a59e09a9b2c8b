"""Turning one raw table (cells as text) into accepted, set-aside and rejected rows.

:func:`normalise` recognises the columns of a :class:`~tracescreen.io.files.RawTable`, codes each
text column once (:class:`tracescreen._internal.coded.CodedText`) and runs every parser on distinct
values (or distinct combinations of result, qualifier, limits, uncertainty and unit), never per
row; rows take the answers by integer indexing.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.io import analytes
from tracescreen.io import cells as parsing
from tracescreen.io import chemistry_rows, hardness_rows, parameter_codes, units
from tracescreen._internal.coded import CodedText, derived_categorical, joint_codes
from tracescreen.io.columns import REQUIRED, mapping_applies, recognise_columns
from tracescreen.io.files import LoadError, LoadOptions, RawTable
from tracescreen.io.results import INPUT_COLUMNS, SET_ASIDE_PREFIX, normalise_empty


def _add(reasons: np.ndarray, mask: np.ndarray, msg) -> None:
    """Append ``msg`` (text or array aligned with mask's True cells) to the reasons of ``mask``."""
    if not mask.any():
        return
    cur = reasons[mask]
    m = np.asarray(msg, dtype=object) if not isinstance(msg, str) else msg
    joined = np.where(cur == "", "", cur + "; ")
    reasons[mask] = joined + m


def _joined(a: CodedText, b: CodedText, join) -> CodedText:
    """Two text columns joined into one by ``join`` (called once per distinct pair)."""
    pair, first = joint_codes(a.codes, b.codes)
    text = join(pd.Series(a.values.take(a.codes[first]), dtype=object),
                pd.Series(b.values.take(b.codes[first]), dtype=object))
    return CodedText.from_series(pd.Series(text.to_numpy(dtype=object)[pair], dtype=object))


def _vocab_equals(col: CodedText, word: str) -> np.ndarray:
    """Per distinct value: does the text equal ``word`` (case and spaces ignored)?"""
    return np.asarray(pd.Series(col.values, dtype=object).astype(str).str.strip().str.lower() == word, dtype=bool)


def _quoted(col: CodedText, mask: np.ndarray, before: str, after: str) -> np.ndarray:
    """Messages ``before'text'after`` for the rows in ``mask`` (built only for those rows)."""
    return before + "'" + col.text_at(mask) + "'" + after


_FRACTIONS = np.array(["", "total", "dissolved"], dtype=object)  # fraction codes 0, 1, 2
_NAME_FRACTION_CODE = {"total": 1, "dissolved": 2, "conflict": 3}


def _fraction_codes(per_value) -> np.ndarray:
    return np.array([_NAME_FRACTION_CODE.get(v, 0) if isinstance(v, str) else 0 for v in per_value], dtype=np.int8)


def normalise(raw: RawTable, options: LoadOptions | None = None,
              site_ids: set[str] | None = None, sites_name: str = "sites file"
              ) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Turn one raw table into accepted rows (contract columns) and rejected rows (with reasons).

    Each text column is coded once (:class:`tracescreen._internal.coded.CodedText`) and every parser runs on
    distinct values (or distinct combinations of result, qualifier, detection limit, uncertainty
    and unit), never per row; rows take the answers by integer indexing.
    """
    opts = options or LoadOptions()
    cells = raw.cells
    n = len(cells)
    found = recognise_columns(list(cells.columns), opts.column_map)
    cells, found = parameter_codes.fill_from_codes(cells, found)  # NWIS parm_cd / WQX USGSPCode
    defaults = opts.column_map.defaults if opts.column_map and mapping_applies(cells.columns, opts.column_map) else {}
    where = f"{raw.file}" + (f" [{raw.sheet}]" if raw.sheet else "")
    no_sample_id = "sample_id" not in found and "sample_id" not in defaults
    if no_sample_id and {"site_id", "sampled_at"} <= set(found):  # NWIS: a sample is a site and a time
        found = {**found, "sample_id": found["site_id"]}
        raw.notes.append(f"{where}: no sample id column: each sample is identified by its site and "
                         "sampling date and time")
    missing = [c for c in REQUIRED if c not in found and c not in defaults]
    if missing:
        raise LoadError(
            f"{where}: required column(s) {', '.join(missing)} not found (headers: "
            f"{', '.join(map(str, cells.columns[:12]))}); give a column mapping with --columns"
        )
    if n == 0:  # a header without data rows: nothing accepted, nothing rejected
        return normalise_empty(), pd.DataFrame(columns=["file", "sheet", "row", "reason", *cells.columns])

    def col(c: str) -> CodedText:
        if c in found:
            return CodedText.from_series(cells[found[c]])
        return CodedText.constant(defaults.get(c, ""), n)

    reasons = np.full(n, "", dtype=object)
    if "__field_count_error__" in cells.columns:
        fc = cells["__field_count_error__"].to_numpy(dtype=object)
        _add(reasons, fc != "", fc[fc != ""])

    site, sample = col("site_id"), col("sample_id")
    if no_sample_id:
        sample = _joined(site, _joined(col("sampled_at"), col("sampled_time"), parsing.join_date_time),
                         lambda a, b: a + " " + b)
    _add(reasons, site.equals(""), "site_id is empty")
    _add(reasons, sample.equals(""), "sample_id is empty")
    if site_ids is not None:
        unknown_site = site.rows(~site.values.isin(site_ids) & (site.values != ""))
        _add(reasons, unknown_site, _quoted(site, unknown_site, "site ", f" is not in {sites_name}"))

    sampled_text = col("sampled_at")
    if "sampled_time" in found:  # a date column and a time column (WQX, NWIS): one date-time
        sampled_text = _joined(sampled_text, col("sampled_time"), parsing.join_date_time)
    dates, bad = parsing.parse_dates(sampled_text.series(), opts.date_order)
    sampled_at, bad_date = sampled_text.rows(dates), sampled_text.rows(bad)
    _add(reasons, sampled_text.equals(""), "sampled_at is empty")
    hint = "" if opts.date_order != "iso" else " (ISO 8601 expected, e.g. 2021-03-04; use --date-order dmy or mdy for other forms)"
    _add(reasons, bad_date, _quoted(sampled_text, bad_date, "sampled_at ", " is not a date" + hint))
    future = sampled_text.rows(dates > np.datetime64(pd.Timestamp.now().normalize() + pd.Timedelta(days=1)))
    _add(reasons, future, "sampled_at is in the future")

    analyte_text = col("analyte")
    names, name_fraction = analytes.match_analytes(analyte_text.series())
    v_no_name = pd.isna(names).astype(bool)
    no_name = analyte_text.rows(v_no_name)
    name_code = analyte_text.rows(_fraction_codes(name_fraction))
    conflict_name = name_code == 3
    _add(reasons, no_name & analyte_text.equals(""), "analyte is empty")
    is_hardness = analyte_text.rows(hardness_rows.is_hardness_name(analyte_text.series()))
    unk = analyte_text.rows(v_no_name & (analyte_text.values != "")) & ~conflict_name & ~is_hardness
    aside = np.full(n, "", dtype=object)  # rows that are not results to screen (set aside, not rejected)
    _add(aside, unk, _quoted(analyte_text, unk, "analyte ", " is not in the analyte registry (not screened by tracescreen)"))
    _add(aside, is_hardness, "hardness result: used as the hardness of the sample's metal results")
    _add(reasons, conflict_name, "analyte name names both total and dissolved")

    frac_text = col("fraction")
    v_fraction, v_bad_frac = parsing.parse_vocabulary(frac_text.series(), parsing.FRACTION_VOCAB)
    bad_frac = frac_text.rows(v_bad_frac)
    _add(reasons, bad_frac, _quoted(frac_text, bad_frac, "fraction ", " is not total or dissolved"))
    given = frac_text.rows(_fraction_codes(v_fraction))
    from_name = np.where(conflict_name, 0, name_code)
    _add(reasons, (given > 0) & (from_name > 0) & (given != from_name), "fraction column and analyte name disagree")
    fraction = np.where(given == 0, from_name, given)
    if opts.default_fraction:
        fraction = np.where(fraction == 0, _NAME_FRACTION_CODE[opts.default_fraction], fraction)
    _add(reasons, (fraction == 0) & ~bad_frac & ~conflict_name,
         "fraction not given (no fraction column value, none in the analyte name; use --default-fraction to set one)")

    unit_text = col("unit")
    v_unit_plain, v_species = units.split_species(unit_text.series())  # "ug/L as Cr" -> ug/L, Cr
    v_factor = units.factors_for(v_unit_plain)
    bad_unit = unit_text.rows(np.isnan(v_factor))
    _add(reasons, bad_unit & unit_text.equals(""), "unit is empty")
    bu = bad_unit & ~unit_text.equals("")
    _add(reasons, bu, _quoted(unit_text, bu, "unit ", " is not a concentration unit tracescreen knows"))
    species = unit_text.rows(v_species.to_numpy(dtype=object))
    symbol = analyte_text.rows(np.asarray(pd.Series(names, dtype=object).map(analytes.symbol_of()).fillna(""),
                                          dtype=object))
    wrong_sp = (species != "") & ~is_hardness & ~v_no_name[analyte_text.codes] & \
        (pd.Series(species, dtype=object).str.lower().to_numpy() != pd.Series(symbol, dtype=object).str.lower().to_numpy())
    _add(reasons, wrong_sp, _quoted(unit_text, wrong_sp, "unit ", " states a species other than the element "
                                                                  "(a molar-mass conversion is not guessed)"))

    # a result, its qualifier, detection limit, uncertainty and unit: parsed once per combination
    qualifier, res_text, dl_text, unc_text = col("qualifier"), col("result"), col("detection_limit"), col("uncertainty")
    remark, condition = col("remark_code"), col("detection_condition")
    combo, first = joint_codes(res_text.codes, qualifier.codes, dl_text.codes, unc_text.codes, unit_text.codes,
                               remark.codes, condition.codes)

    def at_first(c: CodedText) -> pd.Series:
        return pd.Series(c.values.take(c.codes[first]), dtype="str")

    parsed = parsing.parse_results(at_first(res_text), at_first(qualifier), at_first(dl_text), opts.decimal_comma,
                                   remark=at_first(remark) if "remark_code" in found else None,
                                   condition=at_first(condition) if "detection_condition" in found else None)
    pa_side = parsed["set_aside"]
    has_aside = ~pd.isna(pa_side).astype(bool)
    _add(aside, has_aside[combo], pa_side[combo[has_aside[combo]]])
    status_text = col("result_status")
    st_rej = status_text.rows(_vocab_equals(status_text, "rejected"))
    _add(aside, st_rej, "result status 'Rejected' (unusable)")
    perr = parsed["error"]
    has_err = ~pd.isna(perr).astype(bool)
    _add(reasons, has_err[combo], perr[combo[has_err[combo]]])

    st_text = col("sample_type")
    v_sample_type, v_bad_st = parsing.parse_vocabulary(st_text.series(), parsing.SAMPLE_TYPE_VOCAB)
    st_kind = pd.Series(v_sample_type, dtype=object).fillna("").astype(str)
    st_aside = st_text.rows(st_kind.str.startswith("set_aside:").to_numpy(dtype=bool))
    if st_aside.any():
        kinds = st_text.rows(st_kind.str.removeprefix("set_aside:").map(
            lambda k: parsing.SET_ASIDE_KINDS.get(k, k)).to_numpy(dtype=object))
        _add(aside, st_aside, kinds[st_aside] + " (sample type '" + st_text.text_at(st_aside) + "')")
    v_sample_type = np.where(st_kind.str.startswith("set_aside:").to_numpy(dtype=bool), "sample", v_sample_type)
    bad_st = st_text.rows(v_bad_st)
    _add(reasons, bad_st, _quoted(st_text, bad_st, "sample_type ", " is not sample, field_duplicate, "
                                                                   "field_blank or lab_blank"))
    parent = col("parent_sample_id")
    dup_no_parent = st_text.rows(v_sample_type == "field_duplicate") & parent.equals("")
    _add(reasons, dup_no_parent, "field duplicate without parent_sample_id")

    an_text = col("analysed_at")
    an_dates, an_bad = parsing.parse_dates(an_text.series(), opts.date_order)
    bad_an = an_text.rows(an_bad)
    _add(reasons, bad_an, _quoted(an_text, bad_an, "analysed_at ", " is not a date"))

    hard_text = col("hardness_mg_L")
    v_hardness = parsing.to_number(hard_text.series(), opts.decimal_comma).to_numpy()
    bad_h = hard_text.rows(((hard_text.values != "") & np.isnan(v_hardness)) | (v_hardness < 0))
    _add(reasons, bad_h, _quoted(hard_text, bad_h, "hardness ", " is not a non-negative number"))
    row_hardness = hard_text.rows(v_hardness)
    if is_hardness.any():  # hardness result rows [mg/L as CaCO3] -> hardness of the same sample
        ok_h = is_hardness & parsed["detected"][combo] & pd.isna(parsed["error"][combo]).astype(bool) \
            & ~np.isnan(v_factor[unit_text.codes]) & np.isin(species, ["", "CaCO3", "caco3"])
        h_mg_L = parsed["value"][combo] * v_factor[unit_text.codes] / 1000.0
        sample_code, _ = joint_codes(site.codes, sample.codes)
        from_rows = hardness_rows.hardness_of_samples(sample_code, ok_h, h_mg_L)
        row_hardness = np.where(np.isnan(row_hardness), from_rows, row_hardness)

    sample_code, _ = joint_codes(site.codes, sample.codes)  # pH, DOC, temperature rows -> the sample's inputs
    chem = chemistry_rows.sample_inputs_from_rows(analyte_text, fraction == 2, aside, parsed, combo, unit_text.codes,
                                                  v_unit_plain, v_factor, sample_code)

    unc, v_bad_unc = parsing.parse_uncertainty(at_first(unc_text), parsed["value"], opts.decimal_comma)
    bad_unc = v_bad_unc[combo]
    _add(reasons, bad_unc, _quoted(unc_text, bad_unc, "uncertainty ", " is not a number or a percentage"))

    aside_mask = aside != ""
    reasons = np.where(aside_mask, SET_ASIDE_PREFIX + aside.astype(str), reasons).astype(object)
    rejected_mask = reasons != ""
    ok = ~rejected_mask
    okc = combo[ok]
    factor = v_factor[unit_text.codes[first]]  # per combination
    n_ok = int(ok.sum())
    acc = pd.DataFrame({
        "file": pd.Categorical.from_codes(np.zeros(n_ok, dtype=np.int8), categories=pd.Index([raw.file], dtype="str")),
        "sheet": pd.Categorical.from_codes(np.zeros(n_ok, dtype=np.int8), categories=pd.Index([raw.sheet], dtype="str")),
        "row": raw.rows[ok],
        "site_id": site.categorical(ok),
        "sample_id": sample.categorical(ok),
        "sampled_at": sampled_at[ok],
        "analyte": derived_categorical(np.where(v_no_name, "", names), analyte_text.codes, ok),
        "fraction": derived_categorical(_FRACTIONS, fraction, ok),
        "result_text": res_text.categorical(ok),
        "unit": unit_text.categorical(ok),
        "value_ug_L": units.clean_decimal(parsed["value"] * factor)[okc],
        "detected": parsed["detected"][okc],
        "detection_limit_ug_L": units.clean_decimal(parsed["detection_limit"] * factor)[okc],
        "qualifier": qualifier.categorical(ok),
        "sample_type": derived_categorical(np.where(pd.isna(v_sample_type).astype(bool), "sample", v_sample_type),
                                           st_text.codes, ok),
        "parent_sample_id": parent.categorical(ok),
        "lab": col("lab").categorical(ok),
        "batch": col("batch").categorical(ok),
        "analysed_at": an_text.rows(an_dates)[ok],
        "hardness_mg_L": row_hardness[ok],
        "uncertainty_ug_L": units.clean_decimal(unc * factor)[okc],
        "qualifier_meaning": pd.Categorical(parsed["meaning"][okc].astype(str)),
        **{c: chem[c][ok] for c in INPUT_COLUMNS},
    })
    rej_cells = cells.loc[rejected_mask]
    rej_cells = rej_cells.drop(columns=[c for c in rej_cells.columns if str(c).startswith("__")])
    rej = pd.concat([
        pd.DataFrame({"file": raw.file, "sheet": raw.sheet, "row": raw.rows[rejected_mask],
                      "reason": reasons[rejected_mask].astype(str)}),
        rej_cells.reset_index(drop=True),
    ], axis=1)
    return acc, rej

