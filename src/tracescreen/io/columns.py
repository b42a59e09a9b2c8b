"""Recognising the columns of a lab file.

Lab files name their columns in many ways (``Site``, ``Location``, ``Station``; ``LOR``, ``MDL``,
``Detection Limit`` ...). :func:`recognise_columns` maps the headers of a file to tracescreen's
canonical columns without configuration; a small YAML mapping (``--columns FILE``) covers other
layouts::

    # columns.yaml
    columns:            # lab header -> canonical column
      Point Ref: site_id
      Lab No: sample_id
    defaults:           # optional constant values for columns the file lacks
      lab: Eastbank Analytical
      fraction: total

``defaults`` apply only to files that contain at least one of the mapped headers, so one mapping
can be given for a run that mixes several laboratories' layouts.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from pathlib import Path

import yaml

from tracescreen._internal.yamlfiles import SAFE_LOADER

REQUIRED = ("site_id", "sample_id", "sampled_at", "analyte", "result", "unit")
OPTIONAL = (
    "fraction",
    "detection_limit",
    "qualifier",
    "remark_code",
    "detection_condition",
    "result_status",
    "sample_type",
    "parent_sample_id",
    "lab",
    "batch",
    "analysed_at",
    "hardness_mg_L",
    "uncertainty",
    "parameter_code",
    "sampled_time",
    "sampled_time_zone",
)
CANONICAL = REQUIRED + OPTIONAL

#: Header spellings recognised without configuration (compared after removing case, spaces and
#: punctuation). Drawn from common laboratory report layouts (common practice).
HEADER_VARIANTS: dict[str, tuple[str, ...]] = {
    "site_id": ("monitoringlocationidentifier", "siteno", "siteid", "site", "sitecode", "location", "locationid", "locationcode", "station",
                "stationid", "stationcode", "samplepoint", "samplingpoint", "monitoringpoint",
                "monitoringsite", "sitename"),
    "sample_id": ("activityidentifier", "sampleid", "sample", "samplenumber", "sampleno", "samplecode", "labsampleid",
                  "fieldsampleid", "samplename", "labreference", "labref"),
    "sampled_at": ("activitystartdate", "sampledt", "sampledat", "sampledate", "date", "datesampled", "samplingdate", "collectiondate",
                   "datecollected", "sampledatetime", "datetime", "sampletaken", "datetaken"),
    "analyte": ("characteristicname", "analyte", "parameter", "determinand", "chemical", "chemicalname", "characteristic",
                "constituent", "element", "metal", "analytename", "parametername", "test", "cas",
                "casnumber", "casno", "casrn"),
    "fraction": ("resultsamplefractiontext", "fraction", "samplefraction", "fractiontype", "filtration", "filtered", "filtrationstatus"),
    "result": ("resultmeasurevalue", "resultva", "result", "value", "resultvalue", "concentration", "conc", "measuredvalue",
               "reportedresult", "reportedvalue", "finalresult"),
    "unit": ("resultmeasuremeasureunitcode", "unitcd", "unit", "units", "resultunit", "resultunits", "uom", "unitofmeasure"),
    "detection_limit": ("detectionquantitationlimitmeasuremeasurevalue", "rptlevva", "detectionlimit", "dl", "lor", "mdl", "rl", "reportinglimit", "limitofreporting",
                        "lod", "loq", "limitofdetection", "methoddetectionlimit", "pql", "mrl"),
    "qualifier": ("qualifier", "qual", "flag", "labqualifier", "resultqualifier", "dataqualifier",
                  "labflag", "qualifiers", "validationqualifier", "measurequalifiercode"),
    # USGS NWIS remark code column (remark_cd) and WQX ResultDetectionConditionText
    "remark_code": ("remarkcd", "remarkcode", "remark"),
    "detection_condition": ("resultdetectionconditiontext", "detectioncondition", "detectionconditiontext"),
    # WQX ResultStatusIdentifier (Accepted, Final, Preliminary, Rejected, Validated ...)
    "result_status": ("resultstatusidentifier", "resultstatus"),
    "sample_type": ("activitytypecode", "sampletypecd", "sampletype", "type", "qctype", "sampleclass", "qcsampletype"),
    "parent_sample_id": ("parentsampleid", "parentsample", "parent", "duplicateof", "parentid"),
    "lab": ("lab", "laboratory", "labname", "laboratoryname"),
    "batch": ("batch", "batchid", "labbatch", "analyticalbatch", "batchno", "batchnumber"),
    "analysed_at": ("analysisstartdate", "analysedat", "analyzedat", "analysisdate", "dateanalysed", "dateanalyzed",
                    "analysed", "analyzed", "analysed_date"),
    "hardness_mg_L": ("hardnessmgl", "hardness", "hardnessascaco3", "totalhardness",
                      "hardnessmgcaco3l", "hardnessmglascaco3", "hardnesscaco3", "hardnessmglcaco3"),
    "uncertainty": ("uncertainty", "expandeduncertainty", "measurementuncertainty", "mu", "uncert",
                    "uncertaintyk2"),
    # USGS parameter code: NWIS parm_cd, WQX USGSPCode (io/parameter_codes.py)
    "parameter_code": ("parmcd", "usgspcode", "parametercd", "parametercode", "pcode"),
    # time of sampling beside a date column: WQX ActivityStartTime/Time, NWIS sample_tm
    "sampled_time": ("activitystarttimetime", "sampletm", "sampletime", "timesampled", "samplingtime",
                     "collectiontime", "timecollected"),
    # its time zone (WQX ActivityStartTime/TimeZoneCode, NWIS tz_cd / sample_start_time_datum_cd):
    # read, not applied; dates are kept in the local clock time as reported (README)
    "sampled_time_zone": ("activitystarttimetimezonecode", "tzcd", "samplestarttimedatumcd", "timezone",
                          "timezonecode"),
}


def header_key(header: str) -> str:
    """Compare headers without case, spaces or punctuation: ``"Sample Date"`` -> ``"sampledate"``."""
    s = str(header).strip().lower().replace("µ", "u").replace("μ", "u")
    return re.sub(r"[^a-z0-9]+", "", s)


_VARIANT_LOOKUP = {v: canon for canon, vs in HEADER_VARIANTS.items() for v in vs}
for _c in CANONICAL:
    _VARIANT_LOOKUP.setdefault(header_key(_c), _c)


class ColumnMapError(ValueError):
    """A column-mapping file that cannot be used."""


@dataclass(frozen=True)
class ColumnMap:
    """A user's column mapping: lab header -> canonical column, plus constant defaults."""

    columns: dict[str, str] = field(default_factory=dict)
    defaults: dict[str, str] = field(default_factory=dict)
    path: str = ""


def load_column_map(path: str | Path) -> ColumnMap:
    """Read a ``--columns`` YAML file (see the module docstring for its form)."""
    p = Path(path)
    try:
        data = yaml.load(p.read_text(encoding="utf-8"), Loader=SAFE_LOADER)
    except FileNotFoundError:
        raise ColumnMapError(f"{p}: column-mapping file not found") from None
    except (yaml.YAMLError, UnicodeDecodeError) as exc:
        raise ColumnMapError(f"{p}: not a readable YAML file ({exc.__class__.__name__})") from None
    if not isinstance(data, dict):
        raise ColumnMapError(f"{p}: expected a mapping with 'columns' and optional 'defaults'")
    unknown = set(data) - {"columns", "defaults"}
    if unknown:
        raise ColumnMapError(f"{p}: unknown key(s) {sorted(unknown)}; allowed: columns, defaults")
    cols = data.get("columns") or {}
    defaults = data.get("defaults") or {}
    if not isinstance(cols, dict) or not isinstance(defaults, dict):
        raise ColumnMapError(f"{p}: 'columns' and 'defaults' must be mappings")
    for lab_header, canon in cols.items():
        if canon not in CANONICAL:
            raise ColumnMapError(
                f"{p}: column '{lab_header}' maps to unknown column '{canon}'; known: {', '.join(CANONICAL)}"
            )
    for canon in defaults:
        if canon not in CANONICAL:
            raise ColumnMapError(f"{p}: default for unknown column '{canon}'")
    return ColumnMap({str(k): str(v) for k, v in cols.items()},
                     {str(k): "" if v is None else str(v) for k, v in defaults.items()}, str(p))


def recognise_columns(headers: list[str], column_map: ColumnMap | None = None) -> dict[str, str]:
    """Map a file's headers to canonical columns.

    Returns ``{canonical: header}``. A user mapping wins over the built-in variants; the first
    header that matches a canonical column is used.
    """
    found: dict[str, str] = {}
    user = {header_key(k): v for k, v in (column_map.columns if column_map else {}).items()}
    for h in headers:
        k = header_key(h)
        canon = user.get(k) or _VARIANT_LOOKUP.get(k)
        if canon and canon not in found:
            found[canon] = h
    return found


def score_header_row(cells: list[str], column_map: ColumnMap | None = None) -> int:
    """How many canonical columns a candidate header row names (used to find the header row)."""
    return len(recognise_columns([c for c in cells if c], column_map))


def mapping_applies(headers, column_map: ColumnMap) -> bool:
    """A mapping's ``defaults`` apply only to files that have at least one of its mapped headers."""
    mapped = {header_key(h) for h in column_map.columns}
    return not mapped or any(header_key(h) in mapped for h in headers)

