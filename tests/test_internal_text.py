"""Numbers and dates as text (tracescreen._internal.text)."""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen._internal.text import format_number


def test_format_number_significant_figures():
    """Four significant figures, no trailing .0, NaN empty (display convention)."""
    out = format_number(pd.Series([0.123456, 123456.0, 2.0, np.nan, 0.0, -3.14159]))
    assert list(out) == ["0.1235", "123500", "2", "", "0", "-3.142"]


def test_format_number_of_many_numbers_equals_one_by_one():
    """Long columns are formatted once per distinct number: the same text as formatting each row alone
    (the short-column path, the reference), with repeats, zeros of both signs, NaN and infinities."""
    rng = np.random.default_rng(8)
    v = np.round(rng.lognormal(0, 3, 3000), int(rng.integers(0, 4)))
    v[::7], v[::11], v[::13], v[::17] = np.nan, 0.0, -0.0, np.inf
    v[::19] = -v[::19]
    s = pd.Series(v, index=np.arange(len(v))[::-1])
    for digits in (2, 3, 4):
        got = format_number(s, digits)
        one_by_one = [format_number([x], digits)[0] for x in v]
        assert list(got) == one_by_one and got.index.equals(s.index) and got.dtype == object
