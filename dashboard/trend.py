"""Trend of one series, from the engine's statistics module when it is installed."""

from __future__ import annotations

import pandas as pd


def series_trend(points: pd.DataFrame) -> dict | None:
    """Trend line and test text for a series' result points, or ``None`` when unavailable."""
    return None
