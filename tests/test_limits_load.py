"""Limit-table loading: the format's rules and its error messages (file, entry, key)."""

import textwrap

import numpy as np
import pytest

from tracescreen.limits.load import LimitTableError, hardness_formula_limit, load_limits

GOOD = """\
id: t1
name: Test table
source: "Test body (2020). A test document, table 1."
use: drinking_water
unit: mg/L
entries:
  - {analyte: As, fraction: total, value: 0.01}
  - {analyte: lead, fraction: total, value: 0.01, effective_to: 2036-01-11}
  - {analyte: lead, fraction: total, value: 0.005, effective_from: 2036-01-12}
"""


def _write(tmp_path, text, name="t.yaml"):
    p = tmp_path / name
    p.write_text(textwrap.dedent(text), encoding="utf-8")
    return p


def test_values_converted_to_ug_per_L(tmp_path):
    """Table unit mg/L: 0.01 mg/L = 10 µg/L (SI prefixes), analyte symbol resolved to its name."""
    ls = load_limits(_write(tmp_path, GOOD))
    assert ls.entries["analyte"].tolist() == ["arsenic", "lead", "lead"]
    assert ls.entries["value_ug_L"].tolist() == [10.0, 10.0, 5.0]
    assert ls.tables.iloc[0]["source"].startswith("Test body")


@pytest.mark.parametrize("change, message", [
    (("source: \"Test body (2020). A test document, table 1.\"\n", ""), "missing citation 'source'"),
    (("unit: mg/L", "unit: mg/kg"), "key 'unit'"),
    (("analyte: As,", "analyte: Unobtainium,"), "entry 1 (Unobtainium): key 'analyte'"),
    (("value: 0.01}", "value: -1}"), "entry 1 (As): key 'value'"),
    (("value: 0.01}", "value: 0.01, colour: red}"), "entry 1 (As): unknown key 'colour'"),
    (("use: drinking_water", "use: drinking_water\nfoo: 1"), "unknown key 'foo'"),
    (("effective_from: 2036-01-12", "effective_from: 2036-01-11"), "in force on the same days"),
    (("fraction: total, value: 0.01}", "fraction: both, value: 0.01}"), "key 'fraction'"),
])
def test_load_errors_name_file_entry_and_key(tmp_path, change, message):
    """Each mistake gives a LimitTableError naming the file, the entry and the key (issue rule)."""
    text = GOOD.replace(*change, 1)
    with pytest.raises(LimitTableError) as exc:
        load_limits(_write(tmp_path, text, "bad.yaml"))
    assert "bad.yaml" in str(exc.value) and message in str(exc.value)


def test_yaml_is_never_executed(tmp_path):
    """A python/object tag is refused by the safe loader (PyYAML safe_load)."""
    with pytest.raises(LimitTableError):
        load_limits(_write(tmp_path, GOOD + "extra: !!python/object/apply:os.system ['true']\n"))


def test_duplicate_table_ids(tmp_path):
    """Two files with the same id are refused."""
    _write(tmp_path, GOOD, "a.yaml")
    _write(tmp_path, GOOD, "b.yaml")
    with pytest.raises(LimitTableError, match="used by another table"):
        load_limits(tmp_path)


def test_hardness_formula_cadmium_acute_worked_values():
    """Cadmium acute (US EPA 2016): 0.94 µg/L at H=50 and 0.49 at H=25, CF = 1.136672 - 0.041838 ln H
    (published-limits fact sheet: worked check from a state criteria calculator; coefficients 40 CFR 131.46)."""
    f = hardness_formula_limit(0.9789, -3.866, np.nan, 1.136672, -0.041838, np.array([50.0, 25.0, 10.0]), 25, 400)
    assert np.round(f[:2], 2).tolist() == [0.94, 0.49]
    assert f[2] == f[1]  # clamped to the 25 mg/L minimum


def test_conversion_factor_never_above_one():
    """The hardness-dependent CF for cadmium and lead is capped at 1 (40 CFR 131.38(b)(2) footnotes)."""
    low = hardness_formula_limit(1.273, -1.460, np.nan, 1.46203, -0.145712, np.array([5.0]))
    # at H = 5, 1.46203 - 0.145712 ln 5 = 1.2275 > 1, so CF = 1
    assert low[0] == pytest.approx(np.exp(1.273 * np.log(5.0) - 1.460))
