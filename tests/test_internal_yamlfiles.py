"""The shared YAML reader (``_internal/yamlfiles.py``) and every user YAML file read through it.

Sources of the rules: YAML 1.2.2 (2021) section 3.2.1.1 (mapping keys are unique) and 10.3.2 (core
schema: ``1e-2`` is a float); PyYAML documentation (the safe loader builds no Python objects); the
"billion laughs" alias expansion is a well-known attack on XML and YAML parsers (common practice:
refuse or cap aliases in untrusted files).
"""

import textwrap
import time

import pytest

from tracescreen._internal.yamlfiles import YamlError, parse_yaml
from tracescreen.io.mapping import ColumnMapError, load_column_map
from tracescreen.io.network import NetworkError, read_design
from tracescreen.limits.load import LimitTableError, load_limits

TABLE = """\
id: t1
name: Test table
source: "Test body (2020). A test document, table 1."
use: drinking_water
unit: mg/L
entries:
  - analyte: lead
    fraction: total
    value: 0.01
"""

#: An alias of an alias of ... nine levels, 9 ** 9 = 387 million strings when built.
BILLION_LAUGHS = 'a: &a ["lol","lol","lol","lol","lol","lol","lol","lol","lol"]\n' + "".join(
    f"{b}: &{b} [{', '.join(['*' + a] * 9)}]\n" for a, b in zip("abcdefgh", "bcdefghi"))


def _write(tmp_path, text, name="t.yaml"):
    p = tmp_path / name
    p.write_text(textwrap.dedent(text), encoding="utf-8")
    return p


def test_duplicate_key_in_a_limit_entry_names_file_entry_and_key(tmp_path):
    """value: 0.01 then value: 1000 used to load as a 1000 mg/L limit (last key won, silently)."""
    p = _write(tmp_path, TABLE + "    value: 1000\n", "dup.yaml")
    with pytest.raises(LimitTableError) as exc:
        load_limits(p)
    msg = str(exc.value)
    assert "dup.yaml" in msg and "entry 1" in msg and "key 'value' is given twice" in msg and "line 10" in msg


def test_duplicate_table_key_refused(tmp_path):
    with pytest.raises(LimitTableError, match="key 'unit' is given twice"):
        load_limits(_write(tmp_path, TABLE.replace("unit: mg/L\n", "unit: mg/L\nunit: ug/L\n")))


def test_exponent_without_dot_is_a_number(tmp_path):
    """``value: 1e-2`` is 0.01 mg/L = 10 µg/L (YAML 1.2 core schema float; YAML 1.1 needed a dot)."""
    ls = load_limits(_write(tmp_path, TABLE.replace("value: 0.01", "value: 1e-2")))
    assert ls.entries["value_ug_L"].tolist() == [10.0]


def test_impossible_date_names_entry_and_key(tmp_path):
    """2021-02-30 used to raise ValueError from the YAML timestamp constructor (a traceback)."""
    with pytest.raises(LimitTableError) as exc:
        load_limits(_write(tmp_path, TABLE + "    effective_from: 2021-02-30\n", "d.yaml"))
    assert "d.yaml: entry 1 (lead): key 'effective_from': '2021-02-30' is not a date" in str(exc.value)


def test_alias_bomb_refused_quickly(tmp_path):
    """A billion-laughs alias in a table's notes used to run past 4 GB; now refused at once."""
    text = TABLE + "notes: *i\n"
    p = _write(tmp_path, BILLION_LAUGHS + text, "bomb.yaml")
    t0 = time.perf_counter()
    with pytest.raises(LimitTableError, match="bomb.yaml: line 1: .*alias"):
        load_limits(p)
    assert time.perf_counter() - t0 < 5


def test_plain_alias_refused_in_mapping_and_design(tmp_path):
    m = _write(tmp_path, "columns: &c\n  Site: site_id\ndefaults: *c\n", "map.yaml")
    with pytest.raises(ColumnMapError, match="map.yaml: line 1: .*alias"):
        load_column_map(m)
    d = _write(tmp_path, BILLION_LAUGHS, "design.yaml")
    with pytest.raises(NetworkError, match="design.yaml: line 1: .*alias"):
        read_design(d)


def test_duplicate_key_in_column_mapping(tmp_path):
    m = _write(tmp_path, "columns:\n  Site: site_id\n  Site: sample_id\n", "map.yaml")
    with pytest.raises(ColumnMapError, match=r"map.yaml: line 3 \(columns\): key 'Site' is given twice"):
        load_column_map(m)


@pytest.mark.parametrize("text, message", [
    ("x: !!python/object/apply:os.system ['true']\n", "not valid YAML"),
    ("x: [1, 2\n", "line 2: not valid YAML"),
    ("x: " + "[" * 80 + "]" * 80 + "\n", "nested more than"),
    ("x: " + "9" * 5000 + "\n", "not usable YAML"),
])
def test_hostile_yaml_is_a_message(text, message):
    with pytest.raises(YamlError, match=message):
        parse_yaml(text, "h.yaml")


def test_anchors_without_aliases_are_fine():
    assert parse_yaml("a: &x 1\nb: 2\n", "t.yaml") == {"a": 1, "b": 2}
