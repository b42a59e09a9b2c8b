"""Screening in parts of whole sites (tracescreen.screening.parts) gives the rows of one call of screen().

Reference: the engine's own unpartitioned screening of the demo scenario (the property under test is
that partitioning changes nothing but the memory needed; common practice for chunked processing).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from tracescreen.report.writers import write_csv
from tracescreen.screening.parts import join_frames, screen_in_parts, site_parts

PERIOD_KEY = ["limit_table", "site_id", "analyte", "fraction", "basis", "period"]


def _period_keys(screened, periods):
    """Per screening row, the key of the period value it refers to ("" when none)."""
    key = periods.set_index("period_id")[PERIOD_KEY].astype(str).agg("|".join, axis=1)
    ids = screened["period_id"]
    return np.where(ids.notna(), key.reindex(ids.fillna(-1).astype(int)).to_numpy(), "")


def test_parts_give_the_same_rows_in_input_order(demo_loaded, tmp_path):
    acc, limits, sites = demo_loaded.loaded.accepted, demo_loaded.limits, demo_loaded.sites
    shuffled = acc.iloc[np.random.default_rng(7).permutation(len(acc))].reset_index(drop=True)
    whole, whole_periods = screen_in_parts(shuffled, limits, sites, with_periods=True)
    parts, parts_periods = screen_in_parts(shuffled, limits, sites, with_periods=True, part_rows=900)
    assert len(site_parts(np.sort(shuffled["site_id"].factorize(sort=True)[0]), 900)) > 3  # really in parts
    cols = [c for c in whole.columns if c != "period_id"]
    a = write_csv(whole[cols], tmp_path / "whole.csv").read_bytes()
    b = write_csv(parts[cols], tmp_path / "parts.csv").read_bytes()
    assert a == b
    # period ids are the run's own numbers: the same period values, numbered part by part
    assert (_period_keys(whole, whole_periods) == _period_keys(parts, parts_periods)).all()
    assert sorted(whole_periods["period_id"]) == sorted(parts_periods["period_id"])
    rest = [c for c in whole_periods.columns if c != "period_id"]
    order = PERIOD_KEY + ["duration", "statistic", "period_end", "n_results", "results"]
    w = whole_periods[rest].sort_values(order).reset_index(drop=True)
    p = parts_periods[rest].sort_values(order).reset_index(drop=True)
    assert write_csv(w, tmp_path / "w.csv").read_bytes() == write_csv(p, tmp_path / "p.csv").read_bytes()


def test_site_parts_cover_all_rows_and_never_split_a_site():
    """Part ranges are contiguous, cover every row, and each site's rows fall in one part (arithmetic)."""
    codes = np.repeat(np.arange(9), [5, 1, 30, 2, 2, 2, 11, 1, 6])
    for part_rows in (1, 3, 7, 20, 100):
        ranges = site_parts(codes, part_rows)
        assert ranges[0][0] == 0 and ranges[-1][1] == len(codes)
        assert all(a[1] == b[0] for a, b in zip(ranges, ranges[1:]))
        part_of = np.concatenate([np.full(hi - lo, i) for i, (lo, hi) in enumerate(ranges)])
        assert all(len(set(part_of[codes == c])) == 1 for c in range(9))


def test_join_frames_equals_concat_and_keeps_text_categorical():
    """Joining frames with differently categorised text gives pandas.concat's values, text as one categorical."""
    a = pd.DataFrame({"site_id": pd.Categorical(["S2", "S1"]), "v": [1.0, 2.0], "lab": ["x", None]})
    b = pd.DataFrame({"site_id": pd.Categorical(["S3", "S2", None]), "v": [3.0, np.nan, 5.0]})
    out = join_frames([a.copy(), b.copy()])
    ref = pd.concat([a.astype({"site_id": object}), b.astype({"site_id": object})], ignore_index=True)
    assert isinstance(out["site_id"].dtype, pd.CategoricalDtype) and isinstance(out["lab"].dtype, pd.CategoricalDtype)
    assert out["site_id"].astype(object).where(out["site_id"].notna(), None).tolist() == \
        ref["site_id"].where(ref["site_id"].notna(), None).tolist()
    np.testing.assert_array_equal(out["v"].to_numpy(), ref["v"].to_numpy())
    assert out["lab"].iloc[0] == "x" and out["lab"].iloc[1:].isna().all()


def test_a_part_holds_only_the_categories_its_rows_use(demo_loaded, tmp_path):
    """Each part's text columns keep only the texts of its own sites' rows (in the run's order), so a
    part's Parquet dictionaries hold no other part's sample ids; the values are the run's (common
    practice: a dictionary page lists the values of its column chunk)."""
    import pyarrow.parquet as pq

    from tracescreen.report.streams import TableStream
    from tracescreen.screening.parts import site_partitions

    acc = demo_loaded.loaded.accepted
    parts = list(site_partitions(acc, 900))
    assert len(parts) > 3
    with TableStream(tmp_path / "t.parquet", "parquet") as out:
        for positions, part in parts:
            for c in ("sample_id", "site_id", "result_text"):
                cats = part[c].cat.categories
                assert len(cats) == part[c].nunique() < len(acc[c].cat.categories)
                assert list(cats) == [x for x in acc[c].cat.categories if x in set(cats)]  # order kept
                assert part[c].astype(str).tolist() == acc[c].iloc[positions].astype(str).tolist()
            out.write(part[["site_id", "sample_id"]])
    f = pq.ParquetFile(tmp_path / "t.parquet")
    for k, (_, part) in enumerate(parts):
        ids = f.read_row_group(k)["sample_id"]
        assert len(ids.chunk(0).dictionary) == part["sample_id"].nunique()
