"""Numbers and dates as text (tracescreen._internal.text)."""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen._internal.text import format_number


def test_format_number_significant_figures():
    """Four significant figures, no trailing .0, NaN empty (display convention)."""
    out = format_number(pd.Series([0.123456, 123456.0, 2.0, np.nan, 0.0, -3.14159]))
    assert list(out) == ["0.1235", "123500", "2", "", "0", "-3.142"]
