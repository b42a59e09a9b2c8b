"""Fuzz tests of the loaders: lab files, the sites file and the column mapping (hypothesis).

Properties (issue 20, "Fuzzing in the suite"): no exception escapes except the loader's own one-line
user error; every accepted value is finite and every accepted date in range; rows read = accepted + set
aside + rejected, and rows read + blank rows = the data lines written; every row not accepted has a
reason. The lab files are random in their headers (spellings, order, extra and repeated columns), cells
(numbers, ``<DL``, non-detect words, qualifiers, units, dates with times, offsets and seconds, control
characters, long cells), quoting (stray and unclosed quotes), delimiters, title rows and encodings.

Run size: a fixed, derandomized profile (same cases every run, no example database) of
:data:`LAB_FILES` files with 84 to 140 rows each: at least 10,000 fuzzed rows in about a minute
(whatever the draws: hypothesis also draws constants found in the project's own code, so the
sizes drawn move when that code changes).
"""

from __future__ import annotations

import csv
import io
import math
from datetime import datetime, timedelta

import numpy as np
import pytest
from hypothesis import HealthCheck, Phase, given, settings
from hypothesis import strategies as st

from tracescreen.io.analytes import registry
from tracescreen.io.caps import ReadCaps
from tracescreen.io.loading import LoadError, LoadOptions, load_results
from tracescreen.io.mapping import ColumnMapError, load_column_map
from tracescreen.io.sites import SitesError, load_sites

LAB_FILES = 120
# no shrinking: a failing file is reported as generated (shrinking files of a hundred rows takes minutes)
PROFILE = settings(max_examples=LAB_FILES, deadline=None, derandomize=True, database=None,
                   suppress_health_check=list(HealthCheck), phases=(Phase.explicit, Phase.generate))

ANALYTES = [a.name for a in registry()][:12] + ["Hardness", "pH", "Unobtainium", "", "Pb", "7439-92-1",
                                                "Lead, dissolved", "Dissolved Zinc"]
UNITS = ["ug/L", "µg/L", "mg/L", "ng/L", "ppb", "ppm", "g/m3", "mg/kg", "ug/L as Pb", "%", "", "NA", "uS/cm"]
QUALIFIERS = ["", "", "U", "J", "UJ", "R", "J+", "<", "ND", "B", "zz", "U,J", "Not Detected"]
FRACTIONS = ["total", "dissolved", "T", "D", "Total Recoverable", "", "suspended", "both"]
SAMPLE_TYPES = ["", "", "Normal", "Field Duplicate", "Field Blank", "Method Blank", "LCS", "xx"]
HEADERS = {  # canonical column -> spellings a lab might use
    "site_id": ["site_id", "Site", "Location", "MonitoringLocationIdentifier"],
    "sample_id": ["sample_id", "Sample ID", "Sample No"],
    "sampled_at": ["sampled_at", "Sample Date", "Date"],
    "analyte": ["analyte", "Parameter", "Analyte"],
    "fraction": ["fraction", "Fraction"],
    "result": ["result", "Result", "Value"],
    "unit": ["unit", "Units", "Unit"],
    "detection_limit": ["detection_limit", "DL", "MDL"],
    "qualifier": ["qualifier", "Qualifier", "Flag"],
    "sample_type": ["sample_type", "Sample Type"],
    "hardness_mg_L": ["hardness_mg_L", "Hardness"],
    "uncertainty": ["uncertainty", "Uncertainty"],
    "analysed_at": ["analysed_at", "Date Analysed"],
}
REQUIRED = ["site_id", "sample_id", "sampled_at", "analyte", "result", "unit"]
OPTIONAL = [c for c in HEADERS if c not in REQUIRED]

numbers = st.one_of(
    st.floats(min_value=-1e3, max_value=1e6, allow_nan=False).map(lambda x: f"{x:.6g}"),
    st.integers(0, 10_000).map(str),
    st.sampled_from(["1e309", "-1e309", "1e-400", "nan", "inf", "1,5", "0", "-0", "1.2.3", "5e", ".5", "0x10",
                     "1e308", "9" * 400, "  7  ", "٣", "1_000"]),
)
results = st.one_of(numbers, numbers.map(lambda x: "<" + x), numbers.map(lambda x: "> " + x),
                    st.sampled_from(["ND", "n.d.", "BDL", "<DL", "", "NA", "-", "Not Detected", "trace"]))
_day0 = datetime(1850, 1, 1)
dates = st.one_of(
    st.integers(0, 200 * 366).map(lambda d: (_day0 + timedelta(days=d)).strftime("%Y-%m-%d")),
    st.tuples(st.integers(0, 200 * 366), st.integers(0, 86_399)).map(
        lambda p: (_day0 + timedelta(days=p[0], seconds=p[1])).strftime("%Y-%m-%d %H:%M:%S")),
    st.sampled_from(["0201-03-04", "9999-12-31", "2021-02-30", "2021-13-01", "04/03/2021", "2021-03-04T10:30:00+01",
                     "2021-03-04T10:30:00-05:00", "2021-03-04 10:30 EST", "2021-03-04Z", "yesterday", "",
                     "2021-03-04 25:61", "1677-09-21", "2262-04-12", "2021-03-04T10:30:00.123456789"]),
)
# no quote or delimiter in random text: the only quote of a file is its one stray quote, so rows read = lines
texts = st.text(st.characters(codec="utf-8", exclude_categories=("Cs",), exclude_characters='";,\t\r\n'), max_size=12)
cells = {
    "site_id": st.one_of(st.sampled_from(["S1", "S2", "KR01", ""]), texts),
    "sample_id": st.one_of(st.integers(0, 60).map(lambda i: f"A{i}"), texts),
    "sampled_at": dates,
    "analyte": st.one_of(st.sampled_from(ANALYTES), texts),
    "fraction": st.sampled_from(FRACTIONS),
    "result": results,
    "unit": st.one_of(st.sampled_from(UNITS), texts),
    "detection_limit": st.one_of(numbers, st.just("")),
    "qualifier": st.one_of(st.sampled_from(QUALIFIERS), texts),
    "sample_type": st.sampled_from(SAMPLE_TYPES),
    "hardness_mg_L": st.one_of(numbers, st.just("")),
    "uncertainty": st.one_of(numbers, numbers.map(lambda x: x + "%"), st.just("")),
    "analysed_at": st.one_of(dates, st.just("")),
}


@st.composite
def lab_files(draw):
    """(bytes, encoding option, number of data lines written)."""
    cols = REQUIRED + draw(st.lists(st.sampled_from(OPTIONAL), unique=True, max_size=len(OPTIONAL)))
    cols = draw(st.permutations(cols))
    headers = [draw(st.sampled_from(HEADERS[c])) for c in cols]
    if draw(st.booleans()):  # an extra column, sometimes repeating a header
        headers.append(draw(st.sampled_from(headers + ["Comment", ""])))
        cols.append("extra")
    n = draw(st.integers(84, 140))  # 84 x 120 files >= 10,000 rows whatever the draws
    rows = []
    stray = False  # one stray quote per file at most (two can close each other into a valid quoted cell)
    for _ in range(n):
        row = [draw(cells[c]) if c in cells else draw(texts) for c in cols]
        kind = draw(st.sampled_from(["ok"] * 12 + ["short", "long", "blank", "stray_quote", "control", "huge"]))
        if kind == "stray_quote":
            kind, stray = ("ok", stray) if stray else (kind, True)
        if kind == "short":
            row = row[: max(1, len(row) - 2)]
        elif kind == "long":
            row = row + ["x", "y"]
        elif kind == "blank":
            row = [""] * len(row)
        elif kind == "control":
            row[0] = "\x1b[31m" + row[0] + "\x00\x07"
        elif kind == "huge":
            row[-1] = "h" * 140_000
        rows.append((kind, row))
    delim = draw(st.sampled_from([",", ";", "\t"]))
    out = io.StringIO()
    title = draw(st.integers(0, 2))
    for k in range(title):
        out.write(f"Invented Laboratory - report page {k + 1}\n")
    w = csv.writer(out, delimiter=delim, lineterminator="\n")
    w.writerow(headers)
    for kind, row in rows:
        clean = [c.replace("\n", " ").replace("\r", " ") for c in row]  # one line per record
        if kind == "stray_quote":
            out.write(delim.join(clean[:1] + ['"' + clean[1] if len(clean) > 1 else '"']) + "\n")
        else:
            w.writerow(clean)
    text = out.getvalue()
    encoding = draw(st.sampled_from(["utf-8", "utf-8-sig", "utf-16", "latin-1"]))
    data = text.encode(encoding, errors="replace")
    option = "latin-1" if encoding == "latin-1" else "utf-8"
    return data, option, n, title


def _check_loaded(loaded, n_lines, title):
    f = loaded.files
    read = int(f["rows_read"].sum())
    assert read == len(loaded.accepted) + len(loaded.set_aside) + len(loaded.rejected)
    assert read + int(f["blank_rows"].sum()) + int(f["header_row"].sum()) - title - 1 == n_lines
    acc = loaded.accepted
    for c in ("value_ug_L", "detection_limit_ug_L", "hardness_mg_L", "uncertainty_ug_L", "quantitation_limit_ug_L"):
        v = acc[c].to_numpy(dtype=float)
        assert np.isfinite(v[~np.isnan(v)]).all(), c
    if len(acc):
        assert acc["sampled_at"].min() >= np.datetime64("1900-01-01")
        assert acc["sampled_at"].max() <= np.datetime64(datetime.now() + timedelta(days=2))
        assert not acc["sampled_at"].isna().any()
    for t in (loaded.rejected, loaded.set_aside):
        assert (t["reason"].astype(str).str.strip() != "").all()
        assert not t["reason"].astype(str).str.contains("\x1b").any()


def test_fuzzed_lab_files(tmp_path):
    rows = {"n": 0, "files": 0, "refused": 0}

    @PROFILE
    @given(lab_files())
    def one(case):
        data, encoding, n_lines, title = case
        p = tmp_path / "fuzz.csv"
        p.write_bytes(data)
        rows["n"] += n_lines  # every fuzzed row is a case: read, or its file refused with one line
        try:
            loaded = load_results([p], LoadOptions(encoding=encoding))
        except LoadError as exc:  # a whole-file problem: one line naming the file
            msg = str(exc)
            assert "\n" not in msg and msg.startswith("fuzz.csv")
            rows["refused"] += 1
            rows.setdefault("why", []).append(msg.split(": ", 1)[-1][:60])
            return
        _check_loaded(loaded, n_lines, title)
        rows["files"] += 1

    one()
    assert rows["n"] >= 10_000 and rows["files"] > rows["refused"], \
        (rows["n"], rows["files"], sorted(set(rows.get("why", []))))  # the run's size (issue 20: at least 10,000 cases)


def test_fuzzed_workbook_caps_are_one_line(tmp_path):
    """Workbooks past the caps are refused with one line (the caps: io/caps.py)."""
    from openpyxl import Workbook

    wb = Workbook()
    ws = wb.active
    ws.append(["site_id", "sample_id", "sampled_at", "analyte", "fraction", "result", "unit"])
    for i in range(3000):
        ws.append(["S1", f"A{i}", "2021-03-04", "Lead", "total", 5, "ug/L"])
    p = tmp_path / "wb.xlsx"
    wb.save(p)
    assert len(load_results([p]).accepted) == 3000
    for caps, message in ((ReadCaps(workbook_rows=1000), "more than 1,000 rows"),
                          (ReadCaps(workbook_cells=5000), "more than 5,000 cells"),
                          (ReadCaps(workbook_mb=0.01), "expands to")):
        with pytest.raises(LoadError, match=message) as exc:
            load_results([p], LoadOptions(caps=caps))
        assert "\n" not in str(exc.value)


# -- sites file and column mapping ---------------------------------------------------------------------

site_cells = st.one_of(st.sampled_from(["", "S1", "S2", "freshwater_aquatic", "drinking_water;irrigation", "lotic",
                                        "95", "0", "-91", "1e309", "nan", "52.1", "tap", "a;b;;c"]), texts)


@settings(max_examples=300, deadline=None, derandomize=True, database=None, suppress_health_check=list(HealthCheck))
@given(st.lists(st.sampled_from(["site_id", "name", "latitude", "longitude", "uses", "hardness_mg_L", "ph",
                                 "doc_mg_L", "temperature_C", "water_body_type", "sampling_point_type", "x", "site_id"]),
                min_size=1, max_size=9),
       st.lists(st.lists(site_cells, min_size=0, max_size=11), max_size=8),
       st.sampled_from(["", '"', "\x00"]))
def test_fuzzed_sites_files(tmp_path_factory, header, rows, spoil):
    p = tmp_path_factory.mktemp("sites") / "sites.csv"
    out = io.StringIO()
    w = csv.writer(out, lineterminator="\n")
    w.writerow(header)
    for r in rows:
        w.writerow([c.replace("\n", " ") for c in r])
    p.write_text(out.getvalue() + spoil, encoding="utf-8")
    try:
        sites = load_sites(p)
    except SitesError as exc:
        assert "\n" not in str(exc) and str(exc)
        return
    for c in ("hardness_mg_L", "latitude", "longitude"):
        v = sites[c].to_numpy(dtype=float)
        assert np.isfinite(v[~np.isnan(v)]).all()
        if c == "hardness_mg_L":
            assert (v[~np.isnan(v)] > 0).all()
    assert sites["site_id"].is_unique and (sites["site_id"] != "").all()


yaml_scalar = st.one_of(st.sampled_from(["site_id", "result", "unit", "fraction", "total", "1e-2", "*a", "&a x",
                                         "!!python/object/apply:os.system ['true']", "[", "{", "~", "null", "yes",
                                         "2021-02-30", "'", "|", ">"]), texts)
yaml_keys = st.sampled_from(["columns", "ignore", "defaults", "combine", "values", "derive", "date_order", "x",
                             "Site", "Result", "from", "pattern", "fraction", "sampled_at"])


@st.composite
def yaml_docs(draw, depth=2):
    lines = []
    for _ in range(draw(st.integers(0, 6))):
        key = draw(yaml_keys)
        if depth and draw(st.booleans()):
            inner = draw(yaml_docs(depth - 1))
            lines.append(f"{key}:")
            lines += ["  " + ln for ln in inner.splitlines()]
        else:
            lines.append(f"{key}: {draw(yaml_scalar)}")
    return "\n".join(lines) + "\n"


@settings(max_examples=400, deadline=None, derandomize=True, database=None, suppress_health_check=list(HealthCheck))
@given(yaml_docs())
def test_fuzzed_column_mappings(tmp_path_factory, text):
    """Random YAML (repeated keys, aliases, Python tags, bad values): a ColumnMapError or a usable mapping."""
    p = tmp_path_factory.mktemp("map") / "map.yaml"
    p.write_text(text, encoding="utf-8")
    try:
        cm = load_column_map(p)
    except ColumnMapError as exc:
        assert "\n" not in str(exc).strip() and "map.yaml" in str(exc)
        return
    assert isinstance(cm.columns, dict) and all(isinstance(k, str) for k in cm.columns)
    assert not any(isinstance(v, float) and math.isnan(v) for v in cm.columns.values())
