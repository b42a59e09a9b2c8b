"""Recognising the columns of a lab or portal file: which header holds which tracescreen column.

Lab files name their columns in many ways (``Site``, ``Location``, ``Station``; ``LOD``, ``MDL``,
``Detection Limit`` ...); exchange layouts have fixed names (:mod:`tracescreen.io.wqx`,
:mod:`tracescreen.io.nwis`). :func:`recognise` maps a file's headers to tracescreen's columns:

1. a header the column mapping names (``--columns``, :mod:`tracescreen.io.mapping`) always wins;
   a header the mapping lists under ``ignore`` is never read;
2. every other header is compared, without case, spaces or punctuation, with the spellings below;
   where two headers claim one column, the spelling listed first wins and a note names both
   (e.g. a lab file with ``SAMPLE_ID`` and ``LAB_SAMPLE_ID``, or ``DL`` and ``LOD``).
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from tracescreen.io import nwis, wqx

REQUIRED = ("site_id", "sample_id", "sampled_at", "analyte", "result", "unit")
OPTIONAL = (
    "fraction", "detection_limit", "quantitation_limit", "detection_limit_unit", "quantitation_limit_unit",
    "limit_type", "limit_value", "limit_unit", "limit_type_2", "limit_value_2", "limit_unit_2",
    "qualifier", "remark_code", "value_qualifier", "detection_condition", "result_status", "review_status",
    "sample_type", "medium", "parent_sample_id", "lab", "batch", "analysed_at", "hardness_mg_L", "uncertainty",
    "parameter_code", "parameter_name", "sampled_time", "sampled_time_zone",
)
CANONICAL = REQUIRED + OPTIONAL

#: Header spellings of laboratory deliverables recognised without configuration (compared after
#: :func:`header_key`), common practice; within a column the first spelling listed is preferred.
LAB_HEADERS: dict[str, tuple[str, ...]] = {
    "site_id": ("siteid", "site", "sitecode", "location", "locationid", "locationcode", "station", "stationid",
                "stationcode", "samplepoint", "samplingpoint", "monitoringpoint", "monitoringsite", "sitename"),
    "sample_id": ("sampleid", "sample", "samplenumber", "sampleno", "samplecode", "fieldsampleid", "samplename",
                  "labsampleid", "labreference", "labref"),
    "sampled_at": ("sampledat", "sampledate", "date", "datesampled", "samplingdate", "collectiondate",
                   "datecollected", "collectdate", "sampledatetime", "collectdatetime", "collectiondatetime",
                   "datetime", "sampletaken", "datetaken"),
    "analyte": ("analyte", "parameter", "determinand", "chemical", "chemicalname", "characteristic", "constituent",
                "element", "metal", "analytename", "parametername", "test", "cas", "casnumber", "casno", "casrn"),
    "fraction": ("fraction", "samplefraction", "fractiontype", "filtration", "filtered", "filtrationstatus"),
    "result": ("result", "value", "resultvalue", "concentration", "conc", "measuredvalue", "reportedresult",
               "reportedvalue", "finalresult"),
    "unit": ("unit", "units", "resultunit", "resultunits", "uom", "unitofmeasure"),
    "detection_limit": ("detectionlimit", "dl", "mdl", "lod", "limitofdetection", "methoddetectionlimit", "sdl",
                        "idl"),
    "quantitation_limit": ("quantitationlimit", "loq", "limitofquantitation", "reportinglimit", "rl", "pql", "lor",
                           "limitofreporting", "mrl", "practicalquantitationlimit"),
    "detection_limit_unit": ("detectionlimitunit", "detectionlimitunits", "dlunit", "dlunits", "mdlunit",
                             "mdlunits"),
    "quantitation_limit_unit": ("quantitationlimitunit", "quantitationlimitunits", "reportinglimitunit",
                                "reportinglimitunits", "rlunit", "rlunits", "loqunit", "loqunits"),
    "limit_type": ("limittype", "limitdefinition", "detectionlimittype", "dltype", "reportinglimittype"),
    "limit_value": ("repdl", "reportedlimit", "reporteddetectionlimit", "reportingdetectionlimit", "limitvalue"),
    "limit_unit": ("limitunit", "limitunits", "repdlunit", "repdlunits"),
    "qualifier": ("qualifier", "qual", "flag", "labqualifier", "resultqualifier", "dataqualifier", "labflag",
                  "qualifiers", "validationqualifier", "resultflag", "labqualifiers"),
    "remark_code": ("remarkcode", "remark"),
    "detection_condition": ("detectioncondition", "detectionconditiontext"),
    "result_status": ("resultstatus",),
    "sample_type": ("sampletype", "type", "qctype", "sampleclass", "qcsampletype"),
    "medium": ("medium", "matrix", "samplematrix", "media"),
    "parent_sample_id": ("parentsampleid", "parentsample", "parent", "duplicateof", "parentid"),
    "lab": ("lab", "laboratory", "labname"),
    "batch": ("batch", "batchid", "labbatch", "analyticalbatch", "anlbatch", "batchno", "batchnumber"),
    "analysed_at": ("analysedat", "analyzedat", "analysisdate", "dateanalysed", "dateanalyzed", "analysed",
                    "analyzed", "rundate", "rundatetime", "analysisdatetime"),
    "hardness_mg_L": ("hardnessmgl", "hardness", "hardnessascaco3", "totalhardness", "hardnessmgcaco3l",
                      "hardnessmglascaco3", "hardnesscaco3", "hardnessmglcaco3"),
    "uncertainty": ("uncertainty", "expandeduncertainty", "measurementuncertainty", "mu", "uncert",
                    "uncertaintyk2"),
    "parameter_code": ("parametercode",),
    "sampled_time": ("sampletime", "timesampled", "samplingtime", "collectiontime", "timecollected", "collecttime"),
    "sampled_time_zone": ("timezone", "timezonecode"),
}


def header_key(header: str) -> str:
    """Compare headers without case, spaces or punctuation: ``"Sample Date"`` -> ``"sampledate"``."""
    s = str(header).strip().lower().replace("µ", "u").replace("μ", "u")
    return re.sub(r"[^a-z0-9]+", "", s)


def _variants() -> dict[str, tuple[str, int]]:
    """Header key -> (column, rank): exchange layouts first (their names are exact), then lab
    spellings, then each column's own name."""
    out: dict[str, tuple[str, int]] = {}
    for table in (wqx.HEADERS, nwis.HEADERS, LAB_HEADERS):
        for column, keys in table.items():
            if column not in CANONICAL:
                raise ValueError(f"header spellings for an unknown column {column!r}")
            for k in keys:
                out.setdefault(k, (column, len(out)))
    for c in CANONICAL:
        out.setdefault(header_key(c), (c, len(out)))
    return out


_VARIANT_LOOKUP = _variants()


@dataclass
class Recognition:
    """Which header holds each tracescreen column (``found``), and notes on headers that competed."""

    found: dict[str, str]
    notes: list[str] = field(default_factory=list)


def recognise(headers: list[str], column_map=None) -> Recognition:
    """Map a file's headers to tracescreen columns (see the module docstring for the rules).

    ``column_map`` is a :class:`tracescreen.io.mapping.ColumnMap` (or None).
    """
    ignored = {header_key(h) for h in getattr(column_map, "ignore", ())}
    user = {header_key(k): v for k, v in (column_map.columns if column_map else {}).items()}
    found: dict[str, str] = {}
    notes: list[str] = []
    for h in headers:
        k = header_key(h)
        if k in user and k not in ignored:
            c = user[k]
            if c in found:
                notes.append(f"columns '{found[c]}' and '{h}' are both mapped to {c}: '{found[c]}' is used")
            else:
                found[c] = h
    candidates: dict[str, list[tuple[int, int, str]]] = {}
    for i, h in enumerate(headers):
        k = header_key(h)
        hit = _VARIANT_LOOKUP.get(k)
        if hit is None or k in ignored or k in user:
            continue
        candidates.setdefault(hit[0], []).append((hit[1], i, h))
    for c, cands in candidates.items():
        cands.sort()
        names = ", ".join(f"'{h}'" for _, _, h in cands)
        if c in found:
            several = len(cands) > 1
            notes.append(f"column{'s' if several else ''} {names} also look{'' if several else 's'} like {c}; "
                         f"the mapped column '{found[c]}' is used")
            continue
        found[c] = cands[0][2]
        if len(cands) > 1:
            notes.append(f"columns {names} all look like {c}: '{cands[0][2]}' is used "
                         "(map or ignore the others with --columns)")
    return Recognition(found, notes)


def recognise_columns(headers: list[str], column_map=None) -> dict[str, str]:
    """``{tracescreen column: header}`` of a file's headers (:func:`recognise` without the notes)."""
    return recognise(headers, column_map).found


def score_header_row(cells: list[str], column_map=None) -> int:
    """How many tracescreen columns a candidate header row names (used to find the header row)."""
    return len(recognise_columns([c for c in cells if c], column_map))


def __getattr__(name: str):
    """The mapping's names, where they used to live (``tracescreen.io.mapping`` holds them now)."""
    if name in ("ColumnMap", "ColumnMapError", "load_column_map", "mapping_applies"):
        from tracescreen.io import mapping

        return getattr(mapping, name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
