"""Bad and hostile lab files: nothing silently wrong, a message instead of a traceback, every row counted.

Each case here was found by an attack on the loader (issue 20) and failed before its fix. Where a
value is checked, its source is named: ISO 8601 (dates), IEEE 754 (``1e309`` overflows to
infinity), RFC 4180 (CSV quoting: a quoted field ends at the next unescaped quote), the Unicode
standard (UTF-16 byte-order mark FF FE), ECMA-48 (ESC, 0x1B, starts a terminal control sequence).
"""

from __future__ import annotations

import time

import numpy as np
import pytest

from tests.lab_files import write_csv
from tracescreen.io.loading import LoadError, LoadOptions, load_results
from tracescreen.report.writers import write_csv as write_output

HEADER = "site_id,sample_id,sampled_at,analyte,fraction,result,unit,detection_limit,hardness_mg_L\n"


def _row(i: int, date: str = "2021-03-04", result: str = "5", dl: str = "1", hardness: str = "100") -> str:
    return f"S1,A{i},{date},Lead,total,{result},ug/L,{dl},{hardness}\n"


def _counts(loaded):
    f = loaded.files
    return int(f["rows_read"].sum()), len(loaded.accepted), len(loaded.set_aside), len(loaded.rejected)


def _conserved(loaded):
    read, acc, aside, rej = _counts(loaded)
    assert read == acc + aside + rej
    assert (loaded.rejected["reason"].astype(str) != "").all()


@pytest.mark.parametrize("date", ["0201-03-04", "1899-12-31", "9999-12-31", "2300-01-01 10:00"])
def test_dates_outside_the_plausible_range_are_rejected(tmp_path, date):
    """0201-03-04 used to wrap to 1954-10-31 22:43 (pandas nanoseconds span 1677-2262) and be accepted."""
    p = write_csv(tmp_path, HEADER + _row(1, date) + _row(2))
    loaded = load_results([p])
    _conserved(loaded)
    assert loaded.accepted["sample_id"].astype(str).tolist() == ["A2"]
    reason = loaded.rejected["reason"].iloc[0]
    assert f"sampled_at '{date}' is outside the plausible dates" in reason
    assert loaded.accepted["sampled_at"].min() >= np.datetime64("1900-01-01")


def test_earliest_date_is_an_option(tmp_path):
    p = write_csv(tmp_path, HEADER + _row(1, "1885-06-01"))
    assert len(load_results([p]).accepted) == 0
    assert len(load_results([p], LoadOptions(earliest_date="1850-01-01")).accepted) == 1


def test_analysis_date_out_of_range_rejected(tmp_path):
    p = write_csv(tmp_path, HEADER.strip() + ",analysed_at\n" + _row(1).strip() + ",0201-03-04\n")
    loaded = load_results([p])
    assert len(loaded.accepted) == 0 and "analysed_at '0201-03-04'" in loaded.rejected["reason"].iloc[0]


@pytest.mark.parametrize("column, row", [
    ("result", _row(1, result="1e309")),
    ("result", _row(1, result="<1e309")),
    ("detection limit", _row(1, result="<1e309", dl="")),
    ("detection_limit", _row(1, dl="1e309")),
    ("hardness", _row(1, hardness="1e309")),
    ("hardness", _row(1, hardness="0")),
    ("hardness", _row(1, hardness="250000")),
    ("result", _row(1, result="2e12")),  # 2,000 kg/L: more than the mass of a litre of water
])
def test_non_finite_and_impossible_numbers_are_rejected(tmp_path, column, row):
    """1e309 overflows to infinity (IEEE 754 double max is about 1.8e308); it used to be accepted as a
    result, detection limit or hardness, and a hardness of 0 gave every hardness-formula limit 0."""
    p = write_csv(tmp_path, HEADER + row + _row(2))
    loaded = load_results([p])
    _conserved(loaded)
    assert loaded.accepted["sample_id"].astype(str).tolist() == ["A2"]
    for c in ("value_ug_L", "detection_limit_ug_L", "hardness_mg_L", "uncertainty_ug_L"):
        v = loaded.accepted[c].to_numpy(dtype=float)
        assert not np.isinf(v).any()


def test_uncertainty_overflow_rejected(tmp_path):
    p = write_csv(tmp_path, HEADER.strip() + ",uncertainty\n" + _row(1).strip() + ",1e309\n")
    loaded = load_results([p])
    assert len(loaded.accepted) == 0 and "uncertainty" in loaded.rejected["reason"].iloc[0]


def test_unclosed_quote_costs_one_row_not_the_rest_of_the_file(tmp_path):
    """RFC 4180: a quoted field runs to the next quote; an unclosed one used to fold the other 150
    lines of a 200-row file into one cell ("50 read, 1 rejected")."""
    rows = [_row(i) for i in range(200)]
    rows[49] = 'S1,A49,2021-03-04,"Lead,total,5,ug/L,1,100\n'
    loaded = load_results([write_csv(tmp_path, HEADER + "".join(rows))])
    _conserved(loaded)
    read, acc, aside, rej = _counts(loaded)
    assert (read, acc, aside, rej) == (200, 199, 0, 1)
    bad = loaded.rejected.iloc[0]
    assert bad["row"] == 51 and "quote" in bad["reason"]


def test_multi_line_quoted_cell_keeps_its_row_and_the_next_rows_numbers(tmp_path):
    """A quoted cell with a line break inside a row of the right length is one row (RFC 4180, 2.6);
    the rows after it keep their own line numbers."""
    text = HEADER.strip() + ",comment\n" + _row(1).strip() + ',"first line\nsecond line"\n' + _row(2).strip() + ",\n"
    loaded = load_results([write_csv(tmp_path, text)])
    _conserved(loaded)
    assert loaded.accepted["row"].tolist() == [2, 4]


@pytest.mark.parametrize("where", ["head", "beside_malformed"])
def test_cells_over_128_kb_are_read(tmp_path, where):
    """Python's csv module stops at 131,072 characters per field ('field larger than field limit');
    a long cell in the first 30 lines or beside a malformed row used to end in a traceback."""
    rows = [_row(i) for i in range(40)]
    rows[5] = _row(5).strip() + "," + "x" * 200_000 + "\n"  # one field too many, and huge
    if where == "beside_malformed":
        rows[5] = _row(5)
        rows[35] = f'S1,A35,2021-03-04,Lead,total,5,ug/L,1,"{"y" * 200_000}"\n'
        rows[36] = "S1,A36,2021-03-04,Lead\n"
    t0 = time.perf_counter()
    loaded = load_results([write_csv(tmp_path, HEADER + "".join(rows))])
    assert time.perf_counter() - t0 < 20
    _conserved(loaded)
    assert _counts(loaded)[0] == 40


def test_header_wider_than_the_column_cap_is_refused_early(tmp_path):
    """A 200,000-column header was cut at 1 MB and every row rejected (117 s, 2.7 GB); now one message."""
    wide = HEADER.strip() + "," + ",".join(f"c{i}" for i in range(200_000)) + "\n"
    p = write_csv(tmp_path, wide + _row(1) * 10)
    t0 = time.perf_counter()
    with pytest.raises(LoadError, match="more than the 5000 columns a file may have"):
        load_results([p])
    assert time.perf_counter() - t0 < 10


def test_long_header_under_the_cap_is_read_whole(tmp_path):
    """A header over 1 MB (but under the column cap) is read in full: rows are not all rejected."""
    names = ",".join(f"extra_column_with_a_long_name_{i:04d}_" + "z" * 300 for i in range(4000))  # 1.3 MB
    p = write_csv(tmp_path, HEADER.strip() + "," + names + "\n" + (_row(1).strip() + ",v" * 4000 + "\n") * 3)
    loaded = load_results([p])
    assert len(loaded.accepted) == 3


@pytest.mark.parametrize("encoding, option", [("utf-16", "utf-8"), ("utf-16", "utf-16"), ("utf-16-le", "utf-16-le"),
                                              ("utf-32", "utf-8")])
def test_utf16_and_utf32_text(tmp_path, encoding, option):
    """UTF-16 used to be refused as binary data even with --encoding utf-16. A byte-order mark (Unicode
    standard, FF FE / FE FF) names the encoding; without one, --encoding does."""
    p = tmp_path / "lab16.csv"
    p.write_bytes((HEADER + _row(1) + _row(2)).encode(encoding))
    loaded = load_results([p], LoadOptions(encoding=option))
    assert len(loaded.accepted) == 2


def test_utf16_without_bom_and_without_option_says_what_to_do(tmp_path):
    p = tmp_path / "lab16.csv"
    p.write_bytes((HEADER + _row(1)).encode("utf-16-le"))
    with pytest.raises(LoadError, match="--encoding utf-16-le"):
        load_results([p])


def test_duplicate_header_names_are_named_in_a_warning(tmp_path):
    """Two 'result' columns: the first used to be taken silently."""
    text = "site_id,sample_id,sampled_at,analyte,fraction,result,result,unit\nS1,A1,2021-03-04,Lead,total,5,99,ug/L\n"
    loaded = load_results([write_csv(tmp_path, text, "dup.csv")])
    assert any("dup.csv: columns 6, 7 are all headed 'result'" in w for w in loaded.warnings)


@pytest.mark.parametrize("times", [("10:30:15", "10:30:45"), ("10:30:00.250", "10:30:00.750")])
def test_times_with_seconds_keep_their_seconds_in_outputs(tmp_path, times):
    """Two samples in the same minute used to collapse to one date text in the writer
    ('Categorical categories must be unique'): no outputs at all."""
    p = write_csv(tmp_path, HEADER + _row(1, f"2021-03-04 {times[0]}") + _row(2, f"2021-03-04 {times[1]}"))
    loaded = load_results([p])
    out = write_output(loaded.accepted, tmp_path / "accepted.csv").read_text()
    for t in times:
        assert f"2021-03-04 {t}" in out


@pytest.mark.parametrize("a, b", [("2021-03-04T10:30:00+01", "2021-03-04T11:30:00-05"),
                                  ("2021-03-04T10:30:00-05:00", "2021-03-05"),
                                  ("2021-03-04 10:30 UTC+1", "2021-03-04T10:30:00Z")])
def test_mixed_time_zone_offsets_are_read_as_local_clock_time(tmp_path, a, b):
    """Mixed offsets used to raise pandas' 'Mixed timezones detected'. The README rule: offsets are read,
    not applied (local clock time as reported)."""
    loaded = load_results([write_csv(tmp_path, HEADER + _row(1, a) + _row(2, b))])
    assert len(loaded.accepted) == 2
    assert str(loaded.accepted["sampled_at"].iloc[0]).startswith(a[:10])


def test_control_characters_from_cells_are_shown_escaped_in_reasons(tmp_path):
    """ECMA-48: ESC (0x1B) starts a terminal control sequence; reasons echo cells, so they are escaped."""
    loaded = load_results([write_csv(tmp_path, HEADER + _row(1, result="\x1b[31mRED\x1b[0m"))])
    reason = loaded.rejected["reason"].iloc[0]
    assert "\x1b" not in reason and "\\x1b[31mRED" in reason
    assert loaded.rejected["result"].iloc[0] == "\x1b[31mRED\x1b[0m"  # the original cell is kept as written


@pytest.mark.parametrize("ending", [b"\n", b"\r\n", b"\r"])
@pytest.mark.parametrize("last", [True, False])
def test_line_count_across_count_blocks_matches_python(ending, last):
    """Lines are counted by blocks (numpy); the count equals Python's own line split (str.splitlines of
    \\n, \\r\\n or old-Mac \\r line ends, a last line with or without its end) across block edges."""
    from tracescreen.io.csv_reading import _count_byte, _line_count

    body = ending.join(b"S%d,%d" % (i, i * 7) for i in range(5000)) + (ending if last else b"")
    assert _line_count(body) == len(body.decode().splitlines())
    assert _count_byte(body, ord("\n"), block=4093) == body.count(b"\n")
