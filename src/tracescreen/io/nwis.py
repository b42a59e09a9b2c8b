"""USGS NWIS water-quality layouts: parameter codes and names, remark, reporting-level, medium and
data-quality codes.

An NWIS water-quality download names each result by a five-digit parameter code (``parm_cd``;
WQX files carry it as ``USGSPCode``) and, in some outputs, a parameter name (``parm_nm``
"Lead, water, filtered, micrograms per liter", or a short name with ``wf`` / ``wu``). Code or name
say the analyte, the fraction (filtered = dissolved, unfiltered = total, recoverable = total) and
the unit; :func:`fill_from_codes` fills the analyte, fraction and unit of rows that do not give
them (a row that gives them keeps its own, and a fraction that disagrees is left to the usual
checks). The codes the tool reads are data (``data/nwis_parameters.yaml``); the fraction words of
the names are in ``data/fractions.yaml`` (``nwis_name_words``).

Other NWIS columns are read with code lists kept as data: ``remark_cd`` with the NWIS remark codes
(``data/qualifiers.yaml``: ``<`` is a non-detect; NWIS ``R`` there is a radiochemical non-detect),
``rpt_lev_cd`` with ``rpt_lev_va`` as a typed reported limit (``data/limit_types.yaml``: ``LRL`` is a
reporting level, ``DLDQC`` a detection limit), ``medium_cd`` (``data/media.yaml``: ``WSQ``/``WGQ``/
``OAQ`` are quality-control samples) and ``dqi_cd`` (``data/result_status.yaml``: ``R`` is *reviewed
and accepted*, not rejected).
"""

from __future__ import annotations

import functools
import re
from importlib import resources

import numpy as np
import pandas as pd

from tracescreen._internal.yamlfiles import parse_yaml

#: Header spellings (after :func:`~tracescreen.io.columns.header_key`) -> tracescreen column.
#: Column names of NWIS water-quality output (rdb): seen in the header of a NWISWeb download
#: (src/tracescreen/data/nwis_parameters.yaml, source qwdata_header) and in the inldata
#: documentation (data/limit_types.yaml, source inldata_rpt_lev).
HEADERS: dict[str, tuple[str, ...]] = {
    "site_id": ("siteno",),
    "sampled_at": ("sampledt", "samplestartdt"),
    "sampled_time": ("sampletm",),
    "sampled_time_zone": ("tzcd", "samplestarttimedatumcd"),
    "parameter_code": ("parmcd", "parametercd", "pcode"),
    "parameter_name": ("parmnm", "parmshortnm", "parameternm"),
    "remark_code": ("remarkcd",),
    "result": ("resultva",),
    "unit": ("unitcd",),
    "limit_value": ("rptlevva",),
    "limit_type": ("rptlevcd",),
    "sample_type": ("sampletypecd", "samptypecd"),
    "medium": ("mediumcd",),
    "review_status": ("dqicd",),
    "value_qualifier": ("valqualtx", "valqualcd"),
    "analysed_at": ("anldt",),
}

STATUS_NAMESPACES = ("nwis",)

_UNIT_WORDS = {  # unit words at the end of an NWIS parameter name -> unit text
    "micrograms per liter": "ug/L", "milligrams per liter": "mg/L", "nanograms per liter": "ng/L",
}
_SPECIES_WORDS = {"calcium carbonate": "CaCO3"}


@functools.lru_cache(maxsize=1)
def parameter_table() -> pd.DataFrame:
    """``code, analyte, fraction, unit`` of every parameter code of ``data/nwis_parameters.yaml``
    (hardness, code 00900, has analyte ``hardness`` and no fraction)."""
    text = resources.files("tracescreen").joinpath("data/nwis_parameters.yaml").read_text("utf-8")
    rows = parse_yaml(text, "nwis_parameters.yaml")["parameters"]
    t = pd.DataFrame([{k: r.get(k) for k in ("code", "analyte", "fraction", "unit")} for r in rows])
    t["code"] = t["code"].astype(str).str.zfill(5)
    t["analyte"] = np.where(t["analyte"] == "hardness", "Hardness, water", t["analyte"])
    return t.fillna("").set_index("code")


@functools.lru_cache(maxsize=1)
def _fraction_phrases() -> tuple[str, ...]:
    """The fraction phrases of NWIS names (``data/fractions.yaml``, ``nwis_name_words``), longest first."""
    text = resources.files("tracescreen").joinpath("data/fractions.yaml").read_text("utf-8")
    words = [str(e["code"]) for e in parse_yaml(text, "fractions.yaml")["nwis_name_words"]]
    return tuple(sorted(set(words), key=len, reverse=True))


def split_parameter_name(name: str) -> tuple[str, str, str]:
    """(analyte, fraction phrase, unit) of an NWIS parameter name; "" where the name has none.

    >>> split_parameter_name("Lead, water, unfiltered, recoverable, micrograms per liter")
    ('Lead', 'water, unfiltered, recoverable', 'ug/L')
    >>> split_parameter_name("Hardness, water, milligrams per liter as calcium carbonate")
    ('Hardness', '', 'mg/L as CaCO3')
    >>> split_parameter_name("Zinc, wf")
    ('Zinc', 'wf', '')
    """
    parts = [p.strip() for p in str(name).split(",")]
    if not parts or not parts[0]:
        return "", "", ""
    rest = ", ".join(parts[1:])
    unit = ""
    for words, u in _UNIT_WORDS.items():
        m = re.search(rf"{words}(?:\s+as\s+(.+))?$", rest, flags=re.IGNORECASE)
        if m:
            species = (m.group(1) or "").strip()
            unit = u + (f" as {_SPECIES_WORDS.get(species.lower(), species)}" if species else "")
            rest = rest[:m.start()].rstrip(" ,")
            break
    rest = rest.lower()
    fraction = next((p for p in _fraction_phrases() if re.search(rf"(^|,\s*){re.escape(p)}(,|$)", rest)), "")
    return parts[0], fraction, unit


def _per_value(per: pd.DataFrame, codes: np.ndarray, column: str) -> np.ndarray:
    return per[column].to_numpy(dtype=object)[codes] if len(per) else np.zeros(0, dtype=object)


def fill_from_codes(cells: pd.DataFrame, found: dict[str, str]) -> tuple[pd.DataFrame, dict[str, str]]:
    """Add analyte, fraction and unit columns filled from a parameter-code or parameter-name column.

    Parameters
    ----------
    cells : DataFrame of str
        A raw table's cells.
    found : dict
        ``{canonical column: header}`` as recognised; nothing happens without ``parameter_code`` or
        ``parameter_name`` in it.

    Returns
    -------
    (cells, found)
        With columns ``__<name>_from_parameter__`` (the file's own text where it has one, else the
        code's, else the name's) and ``found`` pointing at them. Unchanged without such a column.
    """
    if "parameter_code" not in found and "parameter_name" not in found:
        return cells, found
    from_code = from_name = None
    if "parameter_code" in found:
        code = cells[found["parameter_code"]].fillna("").astype(str).str.strip()
        codes, uniq = pd.factorize(code)
        key = pd.Index(np.asarray(uniq, dtype=object)).astype(str).str.replace(r"^[Pp]", "", regex=True).str.zfill(5)
        per = parameter_table().reindex(key).fillna("")
        # a code not in the table (nutrients, field readings...) names itself, so that the row is
        # set aside as an analyte tracescreen does not screen, with the code in the reason
        unknown = (per["analyte"] == "") & (key != "00000")
        if "parameter_name" in found:
            unknown &= False  # the name says what it is
        per["analyte"] = np.where(unknown, "USGS parameter code " + key, per["analyte"])
        from_code = {c: _per_value(per, codes, c) for c in ("analyte", "fraction", "unit")}
    if "parameter_name" in found:
        name = cells[found["parameter_name"]].fillna("").astype(str)
        codes, uniq = pd.factorize(name)
        split = pd.DataFrame([split_parameter_name(u) for u in uniq] or None,
                             columns=["analyte", "fraction", "unit"])
        from_name = {c: _per_value(split, codes, c) for c in ("analyte", "fraction", "unit")}
    cells = cells.copy()
    found = dict(found)
    for col in ("analyte", "fraction", "unit"):
        filled = np.full(len(cells), "", dtype=object)
        for source in (from_name, from_code):  # later sources win: code over name, own text over both
            if source is not None:
                filled = np.where(source[col] != "", source[col], filled)
        if col in found:
            own = cells[found[col]].fillna("").astype(str).str.strip().to_numpy(dtype=object)
            filled = np.where(own != "", own, filled)
        name = f"__{col}_from_parameter__"
        cells[name] = pd.Series(filled, index=cells.index, dtype=object).astype(str)
        found[col] = name
    return cells, found
