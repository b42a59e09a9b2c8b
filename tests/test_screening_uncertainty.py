"""The measurement-uncertainty guard band (tracescreen.screening.uncertainty), Eurachem/CITAC 2021 decision zones."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from flag_frames import results as make_results

from tracescreen.screening import uncertainty


@pytest.mark.parametrize("value, u, factor, expected", [
    (12.0, 1.5, 1.0, "exceeds_beyond_uncertainty"),   # 12 - 1.5 = 10.5 > 10
    (11.0, 1.5, 1.0, "exceeds_within_uncertainty"),   # 10 < 11 <= 11.5
    (9.0, 1.5, 1.0, "meets_within_uncertainty"),      # 9 + 1.5 = 10.5 > 10
    (8.5, 1.5, 1.0, "meets_beyond_uncertainty"),      # 8.5 + 1.5 = 10 <= 10 (boundary)
    (12.0, 1.5, 2.0, "exceeds_within_uncertainty"),   # g = 3: 12 - 3 = 9 <= 10
    (12.0, np.nan, 1.0, "uncertainty_not_given"),
])
def test_guard_band_zones(value, u, factor, expected):
    """Eurachem/CITAC (2021) guard band g = f x U around a limit of 10 µg/L: the four zones, worked by hand."""
    res = make_results([{"sampled_at": "2021-01-01", "value": value, "uncertainty_ug_L": u}])
    scr = pd.DataFrame({"detected": [True], "value_ug_L": [value], "limit_ug_L": [10.0],
                        "uncertainty_ug_L": res["uncertainty_ug_L"], "basis": ["single_sample"]})
    out = uncertainty.uncertainty_decision(scr, factor)
    assert out["uncertainty_decision"].tolist() == [expected]
    assert out["guard_band_ug_L"].iloc[0] == pytest.approx(factor * u, nan_ok=True)


def test_guard_band_not_applied_to_nondetects_or_missing_limits():
    """Non-detects and rows without a limit get no uncertainty decision (empty)."""
    scr = pd.DataFrame({"detected": [False, True], "value_ug_L": [np.nan, 5.0], "limit_ug_L": [10.0, np.nan],
                        "uncertainty_ug_L": [1.0, 1.0], "basis": ["single_sample"] * 2})
    assert uncertainty.uncertainty_decision(scr)["uncertainty_decision"].tolist() == ["", ""]
    with pytest.raises(ValueError):
        uncertainty.uncertainty_decision(scr, -1.0)
