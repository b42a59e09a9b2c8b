"""Links between views: a row of a table to the chart of its series (site, metal, fraction)."""

from __future__ import annotations

from urllib.parse import urlencode

import pandas as pd

from dashboard.state.frames import text_values


def chart_href(site: str, analyte: str, fraction: str | None = None) -> str:
    """Address of the site-and-metal chart of one series (``fraction`` ``None``: the page's default)."""
    query = {"site": site, "analyte": analyte}
    if fraction:
        query["fraction"] = fraction
    return "/site?" + urlencode(query)


def chart_links(frame: pd.DataFrame) -> dict:
    """A ``chart`` column of Markdown links to each row's series (for a block of grid rows)."""
    if not len(frame):
        return {"chart": []}
    sites, analytes = text_values(frame["site_id"]), text_values(frame["analyte"])
    fractions = text_values(frame["fraction"]) if "fraction" in frame else [""] * len(frame)
    return {"chart": [f"[chart]({chart_href(s, a, f or None)})" for s, a, f in zip(sites, analytes, fractions)]}
