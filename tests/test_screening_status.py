"""The status rule and the worst status per group (tracescreen.screening.status)."""

from __future__ import annotations

from flag_frames import results as make_results

from tracescreen.limits.load import load_limits
from tracescreen.screening.screen import screen
from tracescreen.screening.status import worst_status
from tracescreen.vocabulary import STATUSES


def test_every_table_of_every_use_applies_and_worst_status_is_the_strictest(tmp_path):
    """A site with drinking_water;freshwater_aquatic gets rows from both tables; worst status follows STATUSES order."""
    lim_dw = tmp_path / "dw.yaml"
    lim_dw.write_text("id: dw\nname: dw\nsource: constructed\nuse: drinking_water\nunit: µg/L\n"
                      "entries:\n  - {analyte: lead, fraction: total, value: 10}\n", encoding="utf-8")
    lim_fw = tmp_path / "fw.yaml"
    lim_fw.write_text("id: fw\nname: fw\nsource: constructed\nuse: freshwater_aquatic\nunit: µg/L\n"
                      "entries:\n  - {analyte: lead, fraction: total, value: 50}\n", encoding="utf-8")
    sites = tmp_path / "sites.csv"
    sites.write_text("site_id,name,latitude,longitude,uses,hardness_mg_L\n"
                     "S1,both,52.0,-3.0,drinking_water;freshwater_aquatic,100\nS2,river,52.1,-3.1,freshwater_aquatic,100\n",
                     encoding="utf-8")
    from tracescreen.io.sites import load_sites

    lim = load_limits([lim_dw, lim_fw])
    res = make_results([{"site_id": "S1", "sampled_at": "2021-01-01", "value": 12.0},
                        {"site_id": "S2", "sampled_at": "2021-01-01", "value": 12.0}])
    out = screen(res, lim, load_sites(sites))
    assert sorted(out.loc[out["site_id"] == "S1", "limit_table"]) == ["dw", "fw"]
    assert out.loc[out["site_id"] == "S2", "limit_table"].tolist() == ["fw"]
    worst = worst_status(out, ["site_id", "sample_id", "analyte"]).set_index("site_id")
    assert worst.loc["S1", "worst_status"] == "exceeds" and worst.loc["S2", "worst_status"] == "meets"
    assert worst.loc["S1", "worst_limit_table"] == "dw" and worst.loc["S1", "n_rows"] == 2
    # documented severity order
    assert STATUSES.index("exceeds") < STATUSES.index("nondetect_inconclusive") < STATUSES.index("meets") \
        < STATUSES.index("nondetect_meets") < STATUSES.index("no_limit") < STATUSES.index("qc_sample")
