"""Fuzz test of the limit-table loader: random YAML, repeated keys, aliases, Python tags, odd values.

Property (issue 20): ``load_limits`` either returns tables whose every fixed value is finite and >= 0 and
whose every hardness formula gives a finite limit above 0 at plausible hardness, or raises
``LimitTableError`` with a one-line message naming the file; nothing else escapes. The YAML rules checked
are those of YAML 1.2.2 (unique keys) and PyYAML's safe loader (no object tags).
"""

from __future__ import annotations

import numpy as np
from hypothesis import HealthCheck, Phase, given, settings
from hypothesis import strategies as st

from tracescreen.limits.evaluate import hardness_formula_limit
from tracescreen.limits.load import LimitTableError, load_limits

VALUES = st.one_of(
    st.sampled_from(["0.01", "1e-2", "10", "-1", "0", "1e309", ".inf", ".nan", "'5'", "five", "null", "[1, 2]",
                     "{a: 1}", "2021-02-30", "2021-03-04", "!!python/object/apply:os.system ['true']", "*a", "&a 3",
                     "0x1F", "1_000", "'1e-2'", "~", "yes", "9" * 50]),
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.text(st.characters(codec="utf-8", exclude_categories=("Cs",), exclude_characters="\n\r"), max_size=10)
    .map(lambda t: '"' + t.replace("\\", "\\\\").replace('"', '\\"') + '"'),
)
ENTRY_KEYS = ["analyte", "fraction", "value", "basis", "duration", "effective_from", "effective_to", "note",
              "hardness_formula", "hardness_range", "scope", "colour", "value"]
ANALYTES = ["lead", "Pb", "zinc", "arsenic", "unobtainium", "'7439-92-1'", "copper"]


@st.composite
def tables(draw):
    lines = ["id: fuzz", "name: Fuzz table", 'source: "Invented body (2024). A fuzzed table."',
             f"use: {draw(st.sampled_from(['drinking_water', 'x', '']))}", f"unit: {draw(st.sampled_from(['mg/L', 'ug/L', 'kg', '']))}"]
    for k in draw(st.lists(st.sampled_from(["url", "notes", "effective_from", "settings", "id", "extra"]), max_size=3)):
        lines.append(f"{k}: {draw(VALUES)}")
    lines.append("entries:")
    for _ in range(draw(st.integers(0, 5))):
        lines.append(f"  - analyte: {draw(st.sampled_from(ANALYTES))}")
        lines.append(f"    fraction: {draw(st.sampled_from(['total', 'dissolved', 'both', 'T']))}")
        kind = draw(st.sampled_from(["value", "formula", "random"]))
        if kind == "value":
            lines.append(f"    value: {draw(VALUES)}")
        elif kind == "formula":
            m, b = draw(VALUES), draw(VALUES)
            cf = draw(st.sampled_from(["0.96", "{intercept: 1.46203, ln_hardness: -0.145712}", "-1", "1e309"]))
            lines.append(f"    hardness_formula: {{m: {m}, b: {b}, cf: {cf}}}")
        for k in draw(st.lists(st.sampled_from(ENTRY_KEYS), max_size=3)):
            lines.append(f"    {k}: {draw(VALUES)}")
    if draw(st.booleans()):  # a duplicated or aliased line somewhere
        i = draw(st.integers(0, len(lines) - 1))
        lines.insert(i, lines[i])
    return "\n".join(lines) + "\n"


@settings(max_examples=500, deadline=None, derandomize=True, database=None, suppress_health_check=list(HealthCheck),
          phases=(Phase.explicit, Phase.generate, Phase.shrink))
@given(tables())
def test_fuzzed_limit_tables(tmp_path_factory, text):
    p = tmp_path_factory.mktemp("lim") / "fuzz.yaml"
    p.write_text(text, encoding="utf-8")
    try:
        ls = load_limits(p)
    except LimitTableError as exc:
        msg = str(exc)
        assert msg and "\n" not in msg.strip() and "fuzz.yaml" in msg
        return
    e = ls.entries
    fixed = e["value_ug_L"].to_numpy(dtype=float)
    fixed = fixed[~np.isnan(fixed)]
    assert np.isfinite(fixed).all() and (fixed >= 0).all()
    hf = e[~e["hf_m"].isna()]
    for r in hf.itertuples():
        v = hardness_formula_limit(r.hf_m, r.hf_b, r.hf_cf, r.hf_cf_intercept, r.hf_cf_ln_slope,
                                   np.array([1.0, 100.0, 10_000.0]), r.hardness_min, r.hardness_max)
        assert np.isfinite(v).all() and (v > 0).all()
